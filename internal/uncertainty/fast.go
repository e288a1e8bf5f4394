package uncertainty

import (
	"math"

	"corvane/internal/geom"
)

// sincos returns sin and cos of the angle x in radians. Small angles (the
// usual size of a measurement error) use their Taylor series to x^9 / x^10,
// whose error is below 3e-10 for |x| < 0.5; larger ones use math.Sincos.
func sincos(x float64) (s, c float64) {
	if x > 0.5 || x < -0.5 {
		return math.Sincos(x)
	}
	x2 := x * x
	s = x * (1 - x2/6*(1-x2/20*(1-x2/42*(1-x2/72))))
	c = 1 - x2/2*(1-x2/12*(1-x2/30*(1-x2/56*(1-x2/90))))
	return s, c
}

// atan2 is math.Atan2 with a fast path for y/x small and x > 0 (an error of
// a few degrees): the series of atan to t^15, error below 1e-10 for
// |t| < 0.2.
func atan2(y, x float64) float64 {
	if x > 0 && y < 0.2*x && y > -0.2*x {
		t := y / x
		t2 := t * t
		return t * (1 - t2*(1.0/3-t2*(1.0/5-t2*(1.0/7-t2*(1.0/9-t2*(1.0/11-t2*(1.0/13-t2/15)))))))
	}
	return math.Atan2(y, x)
}

// rotation is a rotation about a fixed unit axis k by an angle given by its
// sine and cosine (Rodrigues' formula).
func rotate(v, k geom.Vec3, s, c float64) geom.Vec3 {
	kv := k.Dot(v) * (1 - c)
	return geom.Vec3{
		X: v.X*c + (k.Y*v.Z-k.Z*v.Y)*s + k.X*kv,
		Y: v.Y*c + (k.Z*v.X-k.X*v.Z)*s + k.Y*kv,
		Z: v.Z*c + (k.X*v.Y-k.Y*v.X)*s + k.Z*kv,
	}
}

// topK keeps the k largest values pushed into it in a min-heap; after n
// pushes, min() is the (n-k+1)-th smallest value.
type topK struct{ h []float64 }

func (t *topK) reset(k int) {
	if cap(t.h) < k {
		t.h = make([]float64, 0, k)
	}
	t.h = t.h[:0]
	for i := 0; i < k; i++ {
		t.h = append(t.h, math.Inf(-1))
	}
}

func (t *topK) push(v float64) {
	h := t.h
	if v <= h[0] {
		return
	}
	h[0] = v
	i, n := 0, len(h)
	for {
		l := 2*i + 1
		if l >= n {
			return
		}
		m := l
		if r := l + 1; r < n && h[r] < h[l] {
			m = r
		}
		if h[i] <= h[m] {
			return
		}
		h[i], h[m] = h[m], h[i]
		i = m
	}
}

func (t *topK) min() float64 { return t.h[0] }

// quantileRank returns how many of n sorted values lie at or above the
// p-quantile taken as the value of rank ceil(p n) (1-based).
func quantileRank(n int, p float64) int {
	r := int(math.Ceil(p*float64(n) - 1e-9))
	if r < 1 {
		r = 1
	}
	return n - r + 1
}
