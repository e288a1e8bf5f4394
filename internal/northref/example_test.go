package northref_test

import (
	"fmt"
	"time"

	"corvane/internal/northref"
)

// A collar of the fictional Tallowmere prospect, surveyed with a magnetic
// instrument on 20 May 2026: its survey azimuths become grid azimuths as
// grid = magnetic + declination - convergence.
func ExampleCorrections() {
	r, err := northref.Corrections("EPSG:32750", 392259.4, 6464539.2, 30,
		time.Date(2026, 5, 20, 0, 0, 0, 0, time.UTC), true, true)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("collar %.4f, %.4f\n", r.Lat, r.Lon)
	fmt.Printf("declination %+.3f (%s, %.4f)\n", r.Declination, r.Model, r.Year)
	fmt.Printf("convergence %+.4f, scale %.6f\n", r.Convergence, r.ScaleFactor)
	fmt.Printf("magnetic 045.0 -> grid %.2f\n", northref.GridAzimuth(45, r.Declination, r.Convergence))
	// Output:
	// collar -31.9500, 115.8600
	// declination -1.495 (WMM-2025, 2026.3808)
	// convergence +0.6033, scale 0.999743
	// magnetic 045.0 -> grid 42.90
}

// A collar on a local mine grid cannot be placed: the error names the field.
func ExampleCorrections_unplaceable() {
	_, err := northref.Corrections("MINE GRID", 5120, 10240, 300, time.Date(2026, 5, 20, 0, 0, 0, 0, time.UTC), true, false)
	fmt.Println(err)
	// Output:
	// crs "MINE GRID": unknown coordinate system label; corvane can place collars given as EPSG:326NN (WGS 84 / UTM zone NN north) or EPSG:327NN (zone NN south)
}
