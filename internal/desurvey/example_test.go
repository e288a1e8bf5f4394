package desurvey_test

import (
	"fmt"

	"corvane/internal/desurvey"
)

// Desurvey a short curving hole and read its position and direction at 75 m.
func ExamplePath_At() {
	c := desurvey.Collar{East: 5000, North: 8000, Elevation: 420, Azimuth: 45, Dip: -60, Depth: 150}
	st := []desurvey.Station{{Depth: 50, Azimuth: 47, Dip: -59}, {Depth: 100, Azimuth: 50, Dip: -57}}
	p, err := desurvey.New(c, st, desurvey.MinimumCurvature)
	if err != nil {
		panic(err)
	}
	pt, _ := p.At(75)
	az, dip := pt.Dir.AzimuthDip()
	fmt.Printf("E %.2f N %.2f Z %.2f, azimuth %.2f dip %.2f\n", pt.Pos.X, pt.Pos.Y, pt.Pos.Z, az, dip)
	pt, _ = p.At(120)
	fmt.Println("extrapolated:", pt.Extrapolated)
	for _, iv := range p.Intervals() {
		fmt.Printf("%g-%g m: dogleg %.2f deg, %.2f deg/30 m\n", iv.From, iv.To, iv.Dogleg, iv.Severity)
	}
	// Output:
	// E 5027.93 N 8026.40 Z 355.60, azimuth 48.54 dip -58.01
	// extrapolated: true
	// 0-50 m: dogleg 1.42 deg, 0.85 deg/30 m
	// 50-100 m: dogleg 2.55 deg, 1.53 deg/30 m
}
