// Package dirstat summarises sets of directions and axes on the sphere: Fisher
// (1953) statistics with the exact cone of confidence, the orientation tensor
// and its fabric shape measures, the assignment of measurements to sets (by
// user windows or by clustering), Terzaghi (1965) sampling-bias weights and
// the test for a common mean direction of several samples.
//
// Vectors are geom.Vec3 in the project frame (x = East, y = North, z = Up).
// Angles are in degrees. Poles of planes and lines measured on core are axes:
// a pole and its antipode are the same measurement, and every function that
// takes an Axial flag (or works on axes by design) gives the same answer
// whichever end of each axis it is given.
//
// dirstat imports only the standard library, gonum and internal/geom.
// Functions are safe for concurrent use; they do not modify their arguments.
package dirstat

import (
	"errors"
	"fmt"
	"math"

	"corvane/internal/geom"
)

// ErrTooFew is returned when there are fewer measurements than a statistic needs.
var ErrTooFew = errors.New("dirstat: too few measurements")

// Fisher is the Fisher (1953) summary of a set of unit vectors.
//
// With weights w_i (rescaled so that they sum to N, the count, see
// [FisherMean]) the resultant is R = |sum w_i v_i|, the mean direction is the
// resultant normalised, and
//
//	k      = (N - 1) / (N - R)                          (best estimate of the concentration)
//	cos a95 = 1 - (N - R)/R * ((1/0.05)^(1/(N-1)) - 1)  (exact 95% cone, Fisher 1953)
//	spread = sqrt(sum w_i d_i^2 / (N - 1))              (angular standard deviation)
//
// where d_i is the angle between v_i and the mean. The spread formula is the
// estimate of the angular standard deviation given by Butler (1992,
// Paleomagnetism, ch. 6); for comparison Theta63 = 81/sqrt(k) is the angle
// containing 63% of a Fisher distribution.
type Fisher struct {
	N      int     // number of measurements
	SumW   float64 // sum of the weights before rescaling (equals N when unweighted)
	Mean   geom.Vec3
	R      float64 // resultant length, 0..N
	K      float64 // concentration; +Inf when R == N
	Cone95 float64 // half-angle of the 95% cone of confidence, degrees; NaN when undefined
	Spread float64 // angular standard deviation, degrees
	// Theta63 is 81/sqrt(k) in degrees, the approximate angle from the mean that
	// holds 63% of a Fisher distribution.
	Theta63 float64
}

// ConeExact returns the half-angle in degrees of the cone of confidence at
// level 1-p around a Fisher mean of n unit vectors with resultant r, from the
// exact formula of Fisher (1953) (Tauxe, Essentials of Paleomagnetism, ch. 11):
//
//	cos a = 1 - (n - r)/r * ((1/p)^(1/(n-1)) - 1)
//
// It returns NaN for n < 2 or r <= 0, and 180 when the right-hand side falls
// below -1 (the data are too dispersed for a cone at that level).
func ConeExact(n, r, p float64) float64 {
	if n < 2 || r <= 0 || !(p > 0 && p < 1) {
		return math.NaN()
	}
	c := 1 - (n-r)/r*(math.Pow(1/p, 1/(n-1))-1)
	if c < -1 {
		return 180
	}
	if c > 1 {
		c = 1
	}
	return geom.Deg(math.Acos(c))
}

// FisherMean returns the Fisher statistics of the unit vectors vs with
// optional weights w (nil for none; otherwise len(w) == len(vs), each w_i >= 0
// and finite). Weights are rescaled to sum to N, the number of vectors, so that
// k and the cone keep their meaning as statistics of N measurements.
//
// When axial is true each vector is an axis: every v_i is first turned to the
// hemisphere of the principal eigenvector of the orientation tensor (see
// [Tensor]), so the result does not depend on which end of each axis was
// given. The mean of axial data is then folded into the lower hemisphere.
//
// It returns ErrTooFew for no vectors and an error for a bad weight or a zero
// resultant (no mean direction).
func FisherMean(vs []geom.Vec3, w []float64, axial bool) (Fisher, error) {
	return fisherMean(vs, w, axial, true)
}

// FisherMeanNoSpread is [FisherMean] without the spread (Spread is NaN),
// which costs an angle per vector: for callers that need the mean, R, k and
// the cone only.
func FisherMeanNoSpread(vs []geom.Vec3, w []float64, axial bool) (Fisher, error) {
	return fisherMean(vs, w, axial, false)
}

func fisherMean(vs []geom.Vec3, w []float64, axial, spread bool) (Fisher, error) {
	n := len(vs)
	if n == 0 {
		return Fisher{}, ErrTooFew
	}
	if w != nil && len(w) != n {
		return Fisher{}, fmt.Errorf("dirstat: %d weights for %d vectors", len(w), n)
	}
	sumW := float64(n)
	if w != nil {
		sumW = 0
		for i, wi := range w {
			if !(wi >= 0) || math.IsInf(wi, 0) {
				return Fisher{}, fmt.Errorf("dirstat: weight %d is %v, want a finite value >= 0", i, wi)
			}
			sumW += wi
		}
		if sumW == 0 {
			return Fisher{}, errors.New("dirstat: all weights are zero")
		}
	}
	scale := float64(n) / sumW
	weight := func(i int) float64 {
		if w == nil {
			return 1
		}
		return w[i] * scale
	}
	var ref geom.Vec3
	if axial {
		t, err := Tensor(vs, w)
		if err != nil {
			return Fisher{}, err
		}
		ref = t.Vectors[0]
	}
	var sum geom.Vec3
	for i, v := range vs {
		if axial && v.Dot(ref) < 0 {
			v = v.Neg()
		}
		sum = sum.Add(v.Scale(weight(i)))
	}
	r := sum.Norm()
	if r == 0 {
		return Fisher{}, errors.New("dirstat: resultant is zero, no mean direction")
	}
	mean := sum.Scale(1 / r)
	if axial {
		mean = mean.Lower()
	}
	nf := float64(n)
	if r > nf {
		r = nf // rounding
	}
	f := Fisher{N: n, SumW: sumW, Mean: mean, R: r}
	f.K = (nf - 1) / (nf - r)
	if n < 2 {
		f.K = math.NaN()
	}
	f.Cone95 = ConeExact(nf, r, 0.05)
	f.Theta63 = 81 / math.Sqrt(f.K)
	if n >= 2 && spread {
		var s float64
		for i, v := range vs {
			d := geom.Angle(v, mean)
			if axial {
				d = geom.AxialAngle(v, mean)
			}
			s += weight(i) * d * d
		}
		f.Spread = math.Sqrt(s / (nf - 1))
	} else {
		f.Spread = math.NaN()
	}
	return f, nil
}
