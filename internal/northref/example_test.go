package northref_test

import (
	"fmt"
	"time"

	"corvane/internal/northref"
)

// Collar ZR001 of the fictional Zelvorra Reach prospect (in open ocean on
// purpose), surveyed with a magnetic instrument on 20 May 2026: its survey
// azimuths become grid azimuths as grid = magnetic + declination -
// convergence.
func ExampleCorrections() {
	r, err := northref.Corrections("EPSG:32750", 431280.38, 5400038.96, 405.69,
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
	// collar -41.5484, 116.1760
	// declination -6.762 (WMM-2025, 2026.3808)
	// convergence +0.5465, scale 0.999658
	// magnetic 045.0 -> grid 37.69
}

// A collar on a local mine grid cannot be placed: the error names the field.
func ExampleCorrections_unplaceable() {
	_, err := northref.Corrections("MINE GRID", 5120, 10240, 300, time.Date(2026, 5, 20, 0, 0, 0, 0, time.UTC), true, false)
	fmt.Println(err)
	// Output:
	// crs "MINE GRID": unknown coordinate system label; corvane can place collars given as EPSG codes of these families: WGS 84 / UTM EPSG:32601-32660 (zones 1N-60N), 32701-32760 (zones 1S-60S); NAD83 / UTM EPSG:26901-26923 (zones 1N-23N), 3372-3373 (zones 59N-60N); ETRS89 / UTM EPSG:25828-25838 (zones 28N-38N); GDA94 / MGA EPSG:28348-28358 (zones 48S-58S); GDA2020 / MGA EPSG:7846-7859 (zones 46S-59S); SIRGAS 2000 / UTM EPSG:31965-31976 (zones 11N-22N), 6210-6211 (zones 23N-24N), 31977-31985 (zones 17S-25S), 5396 (zone 26S)
}
