package coreangle

import (
	"math"
	"math/rand/v2"
	"testing"

	"corvane/internal/geom"
)

// same reports whether two floats are the same bits (NaN equal to NaN).
func same(a, b float64) bool {
	return math.Float64bits(a) == math.Float64bits(b) || math.IsNaN(a) && math.IsNaN(b)
}

// PlaneAndLine gives, bit for bit, what Plane and Line give one by one, in
// every convention, for random holes and angles and the edge cases: vertical
// and near-vertical holes, horizontal holes, alpha 0, 85 and 90, beta and
// gamma 0 and 360.
func TestPlaneAndLineMatchesPlaneThenLine(t *testing.T) {
	r := rand.New(rand.NewPCG(21, 22))
	holes := []geom.Vec3{{Z: -1}, {Z: 1}, {X: 1}, {Y: -1}, geom.HoleDirection(10, -89.99), geom.HoleDirection(200, -86), geom.HoleDirection(0, 0)}
	angles := []float64{0, 0.005, 45, 84.995, 85, 89.995, 90, 180, 359.995, 360}
	for i := 0; i < 200000; i++ {
		var h geom.Vec3
		if i%4 == 0 {
			h = holes[r.IntN(len(holes))]
		} else {
			h = geom.HoleDirection(r.Float64()*360, -r.Float64()*90)
		}
		alpha, beta, gamma := r.Float64()*90, r.Float64()*360, r.Float64()*360
		if i%3 == 0 {
			alpha, beta, gamma = math.Min(angles[r.IntN(len(angles))], 90), angles[r.IntN(len(angles))], angles[r.IntN(len(angles))]
		}
		c := Convention{RefLine: RefLine(r.IntN(2)), BetaApex: Apex(r.IntN(2)), GammaSense: Sense(r.IntN(2))}
		p, l, w := PlaneAndLine(h, alpha, beta, gamma, c)
		wp, pw := Plane(h, alpha, beta, c)
		wl, lw := Line(h, alpha, beta, gamma, c)
		if !same(p.Dip, wp.Dip) || !same(p.DipDirection, wp.DipDirection) || !same(l.Trend, wl.Trend) || !same(l.Plunge, wl.Plunge) || w != pw || w != lw {
			t.Fatalf("h %v alpha %v beta %v gamma %v %v: PlaneAndLine %v %v %v, Plane %v %v, Line %v %v", h, alpha, beta, gamma, c, p, l, w, wp, pw, wl, lw)
		}
	}
}
