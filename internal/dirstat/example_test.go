package dirstat_test

import (
	"fmt"

	"corvane/internal/dirstat"
	"corvane/internal/geom"
)

// Site A of Wessel, Introduction to Statistics and Data Analysis (SOEST), ch. 9:
// declination as trend, inclination as plunge.
func ExampleFisherMean() {
	var vs []geom.Vec3
	for _, d := range [][2]float64{{105, 40}, {130, 49}, {115, 57}, {120, 32}, {118, 55}, {145, 45}} {
		vs = append(vs, geom.FromTrendPlunge(d[0], d[1]))
	}
	f, err := dirstat.FisherMean(vs, nil, true)
	if err != nil {
		panic(err)
	}
	mean := geom.LineOf(f.Mean)
	fmt.Printf("mean %.1f/%.1f R %.3f k %.1f cone95 %.2f\n", mean.Trend, mean.Plunge, f.R, f.K, f.Cone95)
	// Output: mean 122.1/47.1 R 5.863 k 36.4 cone95 11.25
}

func ExampleTerzaghiWeight() {
	hole := geom.HoleDirection(45, -60) // azimuth 045, dip -60
	pole := geom.Plane{Dip: 50, DipDirection: 300}.Normal()
	fmt.Printf("%.4f\n", dirstat.TerzaghiWeight(pole, hole, dirstat.DefaultTerzaghiCap))
	// Output: 1.5248
}
