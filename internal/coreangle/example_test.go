package coreangle_test

import (
	"fmt"

	"corvane/internal/coreangle"
	"corvane/internal/geom"
)

// A plane logged at alpha 45, beta 90 in a hole drilled toward 000 at -60,
// with the default convention (bottom-of-hole line, beta to the down-hole apex).
func ExamplePlane() {
	h := geom.HoleDirection(0, -60)
	p, w := coreangle.Plane(h, 45, 90, coreangle.Convention{})
	fmt.Printf("dip %.1f toward %.1f, strike %.1f, warnings %q\n", p.Dip, p.DipDirection, p.Strike(), w.String())
	// Output: dip 52.2 toward 243.4, strike 153.4, warnings ""
}

// A lineation at gamma 90 on a plane logged at alpha 30, beta 180: the
// plane's horizontal strike line (a horizontal line has two equal trends).
func ExampleLine() {
	h := geom.HoleDirection(0, -60)
	l, _ := coreangle.Line(h, 30, 180, 90, coreangle.Convention{})
	fmt.Printf("plunge %.1f toward %.1f\n", l.Plunge, l.Trend)
	// Output: plunge 0.0 toward 270.0
}

// The inverse: what a known plane looks like on core.
func ExampleAngles() {
	h := geom.HoleDirection(0, -60)
	alpha, beta, _ := coreangle.Angles(h, geom.Plane{Dip: 30, DipDirection: 0}, coreangle.Convention{})
	fmt.Printf("alpha %.1f beta %.1f\n", alpha, beta)
	// Output: alpha 30.0 beta 180.0
}

// In a vertical hole only the dip is known: dip = 90 - alpha.
func ExamplePlane_vertical() {
	p, w := coreangle.Plane(geom.HoleDirection(0, -90), 70, 123, coreangle.Convention{})
	fmt.Printf("%.1f %v %s\n", p.Dip, p.DipDirection, w)
	// Output: 20.0 NaN near-vertical hole; vertical hole: dip = 90 - alpha, no dip direction
}

func ExampleTrueThickness() {
	fmt.Printf("%.2f m\n", coreangle.TrueThickness(2.4, 30))
	// Output: 1.20 m
}
