package qa

import (
	"math"

	"corvane/internal/geom"
)

// CircularMean summarises a sample of angles (degrees) on the circle.
//
// Method: the sample mean direction and the circular standard error of
// Fisher (1993) "Statistical Analysis of Circular Data", section 4.4 (also
// Mardia & Jupp (2000) "Directional Statistics", section 4.8), from memory:
//
//	C = sum cos(t_i), S = sum sin(t_i), mean = atan2(S, C), Rbar = sqrt(C^2+S^2)/n
//	rho2 = (1/n) sum cos 2(t_i - mean)              (second central trigonometric moment)
//	delta = (1 - rho2) / (2 Rbar^2)                 (sample circular dispersion)
//	SE = sqrt(delta / n)                            (circular standard error, radians)
//	95% interval: mean +- asin(1.96 SE)             (large-sample; none when 1.96 SE >= 1)
//
// The interval is a large-sample approximation; for the small runs usual in
// core logging it is a guide, which is why a reference-pick flag also needs a
// minimum count (the persistent-fabric check uses the error model instead).
type CircularMean struct {
	N    int     `json:"n"`
	Mean float64 `json:"mean"` // degrees in (-180, 180]
	// Rbar is the mean resultant length in [0, 1]; 1 means all angles agree.
	Rbar float64 `json:"mean_resultant_length"`
	// SE is the circular standard error in degrees; +Inf when undefined.
	SE float64 `json:"standard_error"`
	// HalfWidth95 is the half-width of the 95% interval in degrees; 180 when
	// the interval covers the whole circle.
	HalfWidth95 float64 `json:"half_width_95"`
}

// z975 is the 0.975 quantile of the standard normal distribution.
const z975 = 1.959963984540054

// CircMean returns the circular mean of angles in degrees with its standard
// error and 95% interval (see [CircularMean]). An empty sample gives N = 0,
// SE = +Inf and HalfWidth95 = 180.
func CircMean(angles []float64) CircularMean {
	n := len(angles)
	if n == 0 {
		return CircularMean{SE: math.Inf(1), HalfWidth95: 180}
	}
	var c, s float64
	for _, a := range angles {
		sa, ca := math.Sincos(geom.Rad(a))
		c += ca
		s += sa
	}
	mean := math.Atan2(s, c)
	rbar := math.Hypot(c, s) / float64(n)
	var c2 float64
	for _, a := range angles {
		c2 += math.Cos(2 * (geom.Rad(a) - mean))
	}
	rho2 := c2 / float64(n)
	out := CircularMean{N: n, Mean: geom.Deg(mean), Rbar: rbar, SE: math.Inf(1), HalfWidth95: 180}
	if rbar < 1e-12 {
		return out
	}
	delta := (1 - rho2) / (2 * rbar * rbar)
	if delta < 0 { // rounding when all angles are equal
		delta = 0
	}
	se := math.Sqrt(delta / float64(n))
	out.SE = geom.Deg(se)
	if z := z975 * se; z < 1 {
		out.HalfWidth95 = geom.Deg(math.Asin(z))
	}
	return out
}

// Excludes0 reports whether the 95% interval of m leaves out the angle 0.
func (m CircularMean) Excludes0() bool {
	return m.N > 0 && math.Abs(m.Mean) > m.HalfWidth95
}

// wrap180 folds an angle in degrees into (-180, 180].
func wrap180(a float64) float64 {
	a = math.Mod(a, 360)
	if a > 180 {
		a -= 360
	} else if a <= -180 {
		a += 360
	}
	return a
}
