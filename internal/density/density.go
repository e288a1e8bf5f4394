// Package density estimates the density of axes (poles of planes, lines) on
// the sphere for contouring nets: Kamb (1959) counting and its smoothed
// exponential form (Vollmer 1995), expressed as multiples of uniform density
// (MUD) and in sigma units, with optional weights per axis.
//
// Both methods take the number of axes N and, like Kamb, choose the kernel so
// that the count expected from N uniformly distributed axes is 3 standard
// deviations:
//
//	Kamb:        a counting cap of area fraction A = 9/(N + 9), half-angle
//	             theta with 1 - cos(theta) = A; kernel 1 inside the cap (either
//	             end of the axis), 0 outside. E = N A, sigma = sqrt(N A (1 - A)).
//	Exponential: kernel W = exp(f (|cos theta| - 1)), f = 2(1 + N/9)
//	             (Vollmer 1995), cut off where W < 1e-6.
//	             E = N m1, sigma = sqrt(N (m2 - m1^2)) with
//	             m1 = (1 - e^-f)/f and m2 = (1 - e^-2f)/(2f), the mean of W and
//	             W^2 over the sphere.
//
// The count at a direction is the (weighted) kernel sum; MUD = count / E and
// sigma units = count / sigma (so uniform data sit at 1 MUD = 3 sigma). With
// weights, the weights are rescaled to sum to N, so MUD keeps its meaning;
// sigma is still that of N unweighted axes (an approximation for weighted
// data).
//
// An Estimator indexes the axes in a uniform grid of cells over the unit cube,
// so each evaluation visits only axes within the kernel's reach: the cost is
// about (number of evaluations) x (axes per cap), not N x evaluations.
//
// density imports only the standard library and internal/geom.
package density

import (
	"errors"
	"fmt"
	"math"

	"corvane/internal/geom"
)

// Method is a density method.
type Method int

// The methods.
const (
	Kamb        Method = iota // Kamb (1959) counting cap
	Exponential               // Vollmer (1995) exponential smoothing
)

// String names the method for reports and legends.
func (m Method) String() string {
	switch m {
	case Kamb:
		return "Kamb (1959) counting"
	case Exponential:
		return "exponential smoothing (Vollmer 1995)"
	}
	return fmt.Sprintf("Method(%d)", int(m))
}

// Parse returns the method named "kamb" or "exponential".
func Parse(s string) (Method, error) {
	switch s {
	case "kamb":
		return Kamb, nil
	case "exponential", "exp", "":
		return Exponential, nil
	}
	return 0, fmt.Errorf("unknown density method %q: want kamb or exponential", s)
}

// cutoff is the relative kernel weight below which the exponential kernel is
// treated as zero.
const cutoff = 1e-6

// KambArea returns Kamb's counting-cap area fraction A = 9/(N + 9) and the
// cap half-angle in degrees, from 1 - cos(theta) = A.
func KambArea(n int) (a, theta float64) {
	a = 9 / (float64(n) + 9)
	return a, geom.Deg(math.Acos(1 - a))
}

// Estimator evaluates the density of a fixed set of axes. It is safe for
// concurrent use once built.
type Estimator struct {
	method   Method
	n        int
	f        float64 // exponential parameter
	cosReach float64 // kernel is zero where |cos| < cosReach
	expected float64
	sigma    float64

	// axes (each folded to z <= 0 and stored with its antipode), rescaled weights
	pts []geom.Vec3
	wts []float64

	// cell index; nil when every evaluation scans all axes
	m      int
	cellSz float64
	start  []int32 // CSR: axes of cell c are pts[start[c]:start[c+1]]
	brute  bool
}

// New builds an estimator for the axes vs with optional weights w (nil for
// none; otherwise one finite weight >= 0 per axis, not all zero). Either end
// of each axis may be given. It returns an error for no axes or bad weights.
func New(method Method, vs []geom.Vec3, w []float64) (*Estimator, error) {
	n := len(vs)
	if n == 0 {
		return nil, errors.New("density: no axes")
	}
	if w != nil && len(w) != n {
		return nil, fmt.Errorf("density: %d weights for %d axes", len(w), n)
	}
	sumW := float64(n)
	if w != nil {
		sumW = 0
		for i, wi := range w {
			if !(wi >= 0) || math.IsInf(wi, 0) {
				return nil, fmt.Errorf("density: weight %d is %v, want a finite value >= 0", i, wi)
			}
			sumW += wi
		}
		if sumW == 0 {
			return nil, errors.New("density: all weights are zero")
		}
	}
	e := &Estimator{method: method, n: n}
	nf := float64(n)
	switch method {
	case Kamb:
		a, _ := KambArea(n)
		e.cosReach = 1 - a
		e.expected = nf * a
		e.sigma = math.Sqrt(nf * a * (1 - a))
	case Exponential:
		f := 2 * (1 + nf/9)
		e.f = f
		e.cosReach = 1 + math.Log(cutoff)/f
		m1 := -math.Expm1(-f) / f
		m2 := -math.Expm1(-2*f) / (2 * f)
		e.expected = nf * m1
		e.sigma = math.Sqrt(nf * (m2 - m1*m1))
	default:
		return nil, fmt.Errorf("density: unknown method %d", int(method))
	}
	scale := nf / sumW
	e.brute = e.cosReach <= 0.05 // reach near or beyond 90 degrees: an index would not help
	if e.brute {
		e.pts = make([]geom.Vec3, 0, n)
		e.wts = make([]float64, 0, n)
		for i, v := range vs {
			e.pts = append(e.pts, v.Unit())
			e.wts = append(e.wts, wAt(w, i)*scale)
		}
		return e, nil
	}
	e.buildIndex(vs, w, scale)
	return e, nil
}

func wAt(w []float64, i int) float64 {
	if w == nil {
		return 1
	}
	return w[i]
}

// buildIndex stores each axis and its antipode in a CSR cell grid whose cell
// size is at least the kernel's chord reach.
func (e *Estimator) buildIndex(vs []geom.Vec3, w []float64, scale float64) {
	reach := math.Sqrt(2 * (1 - e.cosReach)) // chord length of the kernel's reach
	m := int(2 / reach)
	if m < 1 {
		m = 1
	}
	if m > 128 {
		m = 128
	}
	e.m = m
	e.cellSz = 2 / float64(m)
	ncell := m * m * m
	cellOf := make([]int32, 2*len(vs))
	counts := make([]int32, ncell+1)
	for i, v := range vs {
		u := v.Unit().Lower()
		for s, p := range [2]geom.Vec3{u, u.Neg()} {
			c := e.cell(p)
			cellOf[2*i+s] = int32(c)
			counts[c+1]++
		}
	}
	for c := 0; c < ncell; c++ {
		counts[c+1] += counts[c]
	}
	e.start = counts
	e.pts = make([]geom.Vec3, 2*len(vs))
	e.wts = make([]float64, 2*len(vs))
	fill := make([]int32, ncell)
	for i, v := range vs {
		u := v.Unit().Lower()
		wi := wAt(w, i) * scale
		for s, p := range [2]geom.Vec3{u, u.Neg()} {
			c := cellOf[2*i+s]
			k := e.start[c] + fill[c]
			fill[c]++
			e.pts[k] = p
			e.wts[k] = wi
		}
	}
}

func (e *Estimator) coord(x float64) int {
	i := int((x + 1) / e.cellSz)
	if i < 0 {
		return 0
	}
	if i >= e.m {
		return e.m - 1
	}
	return i
}

func (e *Estimator) cell(p geom.Vec3) int {
	return (e.coord(p.X)*e.m+e.coord(p.Y))*e.m + e.coord(p.Z)
}

// N returns the number of axes.
func (e *Estimator) N() int { return e.n }

// Method returns the estimator's method.
func (e *Estimator) Method() Method { return e.method }

// Expected returns the count expected at any direction from N uniformly
// distributed axes (the count of 1 MUD).
func (e *Estimator) Expected() float64 { return e.expected }

// Sigma returns the standard deviation of the count under uniform axes.
func (e *Estimator) Sigma() float64 { return e.sigma }

// Count returns the weighted kernel sum at direction v (a unit vector, either
// hemisphere; the result is the same for v and -v).
func (e *Estimator) Count(v geom.Vec3) float64 {
	if e.brute {
		var s float64
		for i, p := range e.pts {
			s += e.wts[i] * e.kernel(math.Abs(p.Dot(v)))
		}
		return s
	}
	reach := math.Sqrt(2 * (1 - e.cosReach))
	x0, x1 := e.coord(v.X-reach), e.coord(v.X+reach)
	y0, y1 := e.coord(v.Y-reach), e.coord(v.Y+reach)
	z0, z1 := e.coord(v.Z-reach), e.coord(v.Z+reach)
	var s float64
	for x := x0; x <= x1; x++ {
		for y := y0; y <= y1; y++ {
			base := (x*e.m + y) * e.m
			lo, hi := e.start[base+z0], e.start[base+z1+1]
			for k := lo; k < hi; k++ {
				c := e.pts[k].Dot(v)
				if c >= e.cosReach {
					s += e.wts[k] * e.kernel(c)
				}
			}
		}
	}
	return s
}

// kernel returns the kernel at |cos theta| = c.
func (e *Estimator) kernel(c float64) float64 {
	if c < e.cosReach {
		return 0
	}
	if e.method == Kamb {
		return 1
	}
	return math.Exp(e.f * (c - 1))
}

// MUD returns the density at v in multiples of uniform density.
func (e *Estimator) MUD(v geom.Vec3) float64 { return e.Count(v) / e.expected }

// Sigmas returns the density at v in sigma units (count / sigma).
func (e *Estimator) Sigmas(v geom.Vec3) float64 { return e.Count(v) / e.sigma }

// Counts evaluates Count at each direction of dirs into out (allocated when
// nil or too short) and returns it.
func (e *Estimator) Counts(dirs []geom.Vec3, out []float64) []float64 {
	if len(out) < len(dirs) {
		out = make([]float64, len(dirs))
	}
	for i, v := range dirs {
		out[i] = e.Count(v)
	}
	return out[:len(dirs)]
}
