package dirstat

import (
	"math"
	"math/rand/v2"

	"corvane/internal/geom"
)

// FisherRandom draws one unit vector from the Fisher (1953) distribution
// with mean direction mean and concentration k > 0, by the inverse of the
// distribution function of cos theta, cos theta = 1 + ln(x + (1 - x) e^(-2k)) / k
// for x uniform on [0, 1), and a uniform azimuth about the mean (Fisher,
// Lewis & Embleton 1987, Statistical Analysis of Spherical Data, from
// memory). It is meant for simulations and tests.
func FisherRandom(rng *rand.Rand, mean geom.Vec3, k float64) geom.Vec3 {
	m := mean.Unit()
	ref := geom.Vec3{X: 1}
	if math.Abs(m.X) > 0.9 {
		ref = geom.Vec3{Y: 1}
	}
	u := m.Cross(ref).Unit()
	v := m.Cross(u)
	x := rng.Float64()
	c := 1 + math.Log(x+(1-x)*math.Exp(-2*k))/k
	s := math.Sqrt(math.Max(0, 1-c*c))
	phi := 2 * math.Pi * rng.Float64()
	return m.Scale(c).Add(u.Scale(s * math.Cos(phi))).Add(v.Scale(s * math.Sin(phi)))
}
