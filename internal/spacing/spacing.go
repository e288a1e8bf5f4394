// Package spacing measures how often the planes of a set cross the holes and
// how far apart they are: the linear frequency along each hole (P10), the
// spacing along the hole and the true spacing along the set's mean pole
// (Terzaghi 1965 correction), their mean, median and spread, and an estimate
// of the fracture area per unit volume (P32) from P10. It also gives what an
// unoriented measurement (alpha without beta) still tells: its angle to the
// core axis, the cone of its possible poles about the hole axis and its
// Terzaghi weight.
//
// Depths are measured depths along the hole, in the project's length unit;
// frequencies are per that unit. Directions are geom.Vec3 in the project
// frame; angles in degrees.
//
// spacing imports only the standard library and corvane's math packages.
package spacing

import (
	"errors"
	"fmt"
	"math"
	"sort"

	"corvane/internal/dirstat"
	"corvane/internal/geom"
)

// Cone is what an unoriented measurement gives: the plane's pole lies
// somewhere on the cone of half-angle Half degrees about the hole axis Axis
// (down-hole unit vector), Half = 90 - alpha. alpha = 90 (a plane square to
// the core) gives Half = 0, the pole along the hole; alpha = 0 a plane
// containing the core axis, poles anywhere on the great circle normal to the
// hole.
type Cone struct {
	Axis  geom.Vec3
	Alpha float64 // angle between the core axis and the plane
	Half  float64 // angle between the hole axis and every possible pole
}

// UnorientedCone returns the cone of possible poles of a plane at alpha
// degrees (0..90) to the core axis of a hole with down-hole direction hole.
func UnorientedCone(hole geom.Vec3, alpha float64) (Cone, error) {
	if !(alpha >= 0 && alpha <= 90) {
		return Cone{}, fmt.Errorf("spacing: alpha %v outside 0..90", alpha)
	}
	if hole.Norm() == 0 {
		return Cone{}, errors.New("spacing: zero hole direction")
	}
	return Cone{Axis: hole.Unit(), Alpha: alpha, Half: 90 - alpha}, nil
}

// AnyPole returns one of the possible poles (the one in the vertical plane
// of the hole, or any for a vertical hole).
func (c Cone) AnyPole() geom.Vec3 {
	ref := geom.Vec3{Z: 1}
	if math.Abs(c.Axis.Z) > 0.999 {
		ref = geom.Vec3{X: 1}
	}
	u := c.Axis.Cross(ref).Unit()
	s, co := math.Sincos(geom.Rad(c.Half))
	return c.Axis.Scale(co).Add(u.Scale(s))
}

// Weight returns the Terzaghi weight of the measurement: every possible pole
// makes the same angle 90 - alpha with the hole, so the weight 1/sin(alpha)
// (capped at maxW) needs no beta. It is [dirstat.TerzaghiWeight] of any pole
// on the cone.
func (c Cone) Weight(maxW float64) float64 {
	return dirstat.TerzaghiWeight(c.AnyPole(), c.Axis, maxW)
}

// Fits reports whether the cone passes within tol degrees of the axis mean:
// whether some pole the measurement may have lies within tol of it. An
// unoriented measurement that fits exactly one set's window can be counted in
// that set's frequency; one that fits several is ambiguous.
func (c Cone) Fits(mean geom.Vec3, tol float64) bool {
	d := geom.AxialAngle(mean, c.Axis)
	return math.Abs(d-c.Half) <= tol
}

// Hit is one plane of a set crossing a hole.
type Hit struct {
	Depth float64
	// Hole is the down-hole unit vector at the depth.
	Hole geom.Vec3
}

// Run is the stretch of one hole sampled for the set: the planes of the set
// found between From and To (the logged length).
type Run struct {
	Hole     string
	From, To float64
	Hits     []Hit
	// Dir is the hole's direction over the run, used for the P32 estimate
	// when the set has no hits in it; zero when unknown.
	Dir geom.Vec3
}

// Dist summarises a list of lengths.
type Dist struct {
	N                      int
	Mean, Median, Min, Max float64
	P10, P25, P75, P90     float64   // percentiles (linear interpolation between order statistics)
	SD                     float64   // sample standard deviation
	CV                     float64   // SD / Mean; 1 for a negative exponential (random) spacing
	StdErr                 float64   // SD / sqrt(N), the standard error of the mean
	Values                 []float64 // the lengths, sorted
}

// Describe returns the summary of vs (which it sorts a copy of). Empty input
// gives N = 0 and NaN values.
func Describe(vs []float64) Dist {
	n := len(vs)
	d := Dist{N: n, Mean: math.NaN(), Median: math.NaN(), Min: math.NaN(), Max: math.NaN(),
		P10: math.NaN(), P25: math.NaN(), P75: math.NaN(), P90: math.NaN(), SD: math.NaN(), CV: math.NaN(), StdErr: math.NaN()}
	if n == 0 {
		return d
	}
	s := append([]float64(nil), vs...)
	sort.Float64s(s)
	d.Values = s
	sum := 0.0
	for _, v := range s {
		sum += v
	}
	d.Mean = sum / float64(n)
	d.Min, d.Max = s[0], s[n-1]
	q := func(p float64) float64 {
		h := p * float64(n-1)
		i := int(math.Floor(h))
		if i >= n-1 {
			return s[n-1]
		}
		return s[i] + (h-float64(i))*(s[i+1]-s[i])
	}
	d.Median, d.P10, d.P25, d.P75, d.P90 = q(0.5), q(0.1), q(0.25), q(0.75), q(0.9)
	if n >= 2 {
		ss := 0.0
		for _, v := range s {
			ss += (v - d.Mean) * (v - d.Mean)
		}
		d.SD = math.Sqrt(ss / float64(n-1))
		d.CV = d.SD / d.Mean
		d.StdErr = d.SD / math.Sqrt(float64(n))
	}
	return d
}

// HoleResult is the set in one run of one hole.
type HoleResult struct {
	Hole     string
	From, To float64
	Count    int
	// P10 is Count / (To - From): crossings per unit length of hole.
	P10 float64
	// Delta is the angle in degrees between the set's mean pole and the
	// hole's mean direction over its hits (over the run's ends' mean hole
	// direction when there are no hits it is NaN).
	Delta float64
	// P10Normal is the Terzaghi-corrected frequency along the set's mean
	// pole: the sum of the hits' weights 1/|cos delta_i| (capped) over the
	// run length.
	P10Normal float64
	// Capped counts hits whose weight reached the cap: there the hole runs
	// within the cap angle of the set's planes and the corrected values are
	// lower bounds of the frequency (upper bounds of the spacing).
	Capped int
	// Apparent are the spacings along the hole between consecutive hits,
	// True the same corrected to the set's mean pole: apparent / w with w
	// the Terzaghi weight for the mean of the two hits' hole directions.
	Apparent, True []float64
	// ExpectedCos is E|n.h| for the set's Fisher distribution and the hole's
	// mean direction (see [AngleFactor]); NaN without hits.
	ExpectedCos float64
}

// SetResult is a set over all its runs.
type SetResult struct {
	Holes []HoleResult
	// Length is the total sampled length, Count the total crossings.
	Length float64
	Count  int
	// P10 is Count / Length (pooled over holes of any direction: compare
	// holes through P10Normal).
	P10 float64
	// P10Normal is the pooled Terzaghi-corrected frequency along the mean
	// pole, sum of weights / Length; MeanSpacing = 1 / P10Normal.
	P10Normal   float64
	MeanSpacing float64
	Capped      int
	// Apparent and True describe the spacings of all holes together.
	Apparent, True Dist
	// P32 is the estimated fracture area per unit volume:
	// Count / sum(L_h * max(E_h, 1/cap)), with E_h = E|n.h| over the set's
	// Fisher distribution for hole h (see [AngleFactor] and [P32Assumptions]);
	// a run without hits takes its direction from Run.Dir (or counts as
	// square to the set when that is zero).
	P32 float64
}

// P32Method names the P32 estimate for reports.
const P32Method = "P32 = P10 * C, angle factor C = 1 / E|cos delta| taken over the set's Fisher " +
	"distribution of poles about its mean for the hole's direction (Mauldon & Mauldon 1997; Wang 2005); " +
	"for a single parallel set C = 1/|cos delta| and P32 = 1/spacing"

// P32Assumptions states what the P32 estimate assumes.
const P32Assumptions = "an estimate, not a measurement: it assumes the fractures are large compared with " +
	"the hole (the hole samples them as a line), that the set's orientations follow a Fisher distribution " +
	"with the estimated mean and concentration, that frequency and orientation are the same throughout the " +
	"domain, and that every crossing was logged; the angle factor is capped like the Terzaghi weight"

// Analyse measures the set with mean pole mean (unit axis) and Fisher
// concentration kappa (>= 0; +Inf for parallel planes) in the runs, with
// Terzaghi weights capped at maxW (>= 1, e.g. dirstat.DefaultTerzaghiCap).
// Hits outside a run's From..To are an error, as is a run with To <= From.
// Runs of the same hole must not overlap (a caller checks; they would count
// the same core twice).
func Analyse(mean geom.Vec3, kappa float64, runs []Run, maxW float64) (SetResult, error) {
	if !(maxW >= 1) || math.IsInf(maxW, 0) {
		return SetResult{}, fmt.Errorf("spacing: Terzaghi cap %v, want a finite value >= 1", maxW)
	}
	if mean.Norm() == 0 {
		return SetResult{}, errors.New("spacing: zero mean pole")
	}
	if !(kappa >= 0) {
		return SetResult{}, fmt.Errorf("spacing: concentration %v, want >= 0", kappa)
	}
	mean = mean.Unit()
	var res SetResult
	var sumW, expLen float64
	var allApp, allTrue []float64
	for ri, r := range runs {
		if !(r.To > r.From) {
			return SetResult{}, fmt.Errorf("spacing: run %d of hole %q: to %v is not greater than from %v", ri+1, r.Hole, r.To, r.From)
		}
		hits := append([]Hit(nil), r.Hits...)
		sort.SliceStable(hits, func(a, b int) bool { return hits[a].Depth < hits[b].Depth })
		l := r.To - r.From
		hr := HoleResult{Hole: r.Hole, From: r.From, To: r.To, Count: len(hits), P10: float64(len(hits)) / l,
			Delta: math.NaN(), ExpectedCos: math.NaN()}
		var hsum geom.Vec3
		var w float64
		for i, h := range hits {
			if h.Depth < r.From || h.Depth > r.To {
				return SetResult{}, fmt.Errorf("spacing: hole %q: a plane at %v lies outside the run %v to %v", r.Hole, h.Depth, r.From, r.To)
			}
			if h.Hole.Norm() == 0 {
				return SetResult{}, fmt.Errorf("spacing: hole %q: no hole direction at %v", r.Hole, h.Depth)
			}
			hd := h.Hole.Unit()
			hsum = hsum.Add(hd)
			wi := dirstat.TerzaghiWeight(mean, hd, maxW)
			if wi >= maxW {
				hr.Capped++
			}
			w += wi
			if i > 0 {
				app := h.Depth - hits[i-1].Depth
				mid := hits[i-1].Hole.Unit().Add(hd).Unit()
				hr.Apparent = append(hr.Apparent, app)
				hr.True = append(hr.True, app/dirstat.TerzaghiWeight(mean, mid, maxW))
			}
		}
		hr.P10Normal = w / l
		if len(hits) > 0 {
			hm := hsum.Unit()
			hr.Delta = geom.AxialAngle(mean, hm)
			hr.ExpectedCos = ExpectedCos(mean, kappa, hm)
			expLen += l * math.Max(hr.ExpectedCos, 1/maxW)
		} else if r.Dir.Norm() > 0 {
			expLen += l * math.Max(ExpectedCos(mean, kappa, r.Dir), 1/maxW)
		} else {
			expLen += l // direction unknown: taken as square to the set
		}
		res.Holes = append(res.Holes, hr)
		res.Length += l
		res.Count += len(hits)
		res.Capped += hr.Capped
		sumW += w
		allApp = append(allApp, hr.Apparent...)
		allTrue = append(allTrue, hr.True...)
	}
	if res.Length > 0 {
		res.P10 = float64(res.Count) / res.Length
		res.P10Normal = sumW / res.Length
		res.MeanSpacing = 1 / res.P10Normal
		res.P32 = float64(res.Count) / expLen
	}
	res.Apparent = Describe(allApp)
	res.True = Describe(allTrue)
	return res, nil
}

// ExpectedCos returns E|n.h|, the mean of |cos delta| between the hole
// direction h and a pole n drawn from the Fisher distribution with mean axis
// mean and concentration kappa (0 for uniform, +Inf for all poles at the
// mean). It is the fraction of a set's P32 that a line sample along h sees
// as P10 (Mauldon & Mauldon 1997; Wang 2005): P10 = P32 E|n.h|.
//
// The azimuthal average of |a + b cos phi| is done in closed form, the
// Fisher density of the polar angle by a midpoint rule on its inverse
// distribution function.
func ExpectedCos(mean geom.Vec3, kappa float64, h geom.Vec3) float64 {
	c0 := math.Abs(mean.Unit().Dot(h.Unit()))
	if c0 > 1 {
		c0 = 1
	}
	if math.IsInf(kappa, 1) {
		return c0
	}
	s0 := math.Sqrt(1 - c0*c0)
	const n = 4000
	sum := 0.0
	for i := 0; i < n; i++ {
		x := (float64(i) + 0.5) / n
		var t float64 // cos of the angle between the pole and the mean
		if kappa < 1e-9 {
			t = 2*x - 1
		} else {
			t = 1 + math.Log(x+(1-x)*math.Exp(-2*kappa))/kappa
		}
		st := math.Sqrt(math.Max(0, 1-t*t))
		sum += meanAbsCos(t*c0, st*s0)
	}
	return sum / n
}

// meanAbsCos returns the average over phi of |a + b cos phi|, b >= 0.
func meanAbsCos(a, b float64) float64 {
	if b <= math.Abs(a) {
		return math.Abs(a)
	}
	return (2*math.Sqrt(b*b-a*a) + 2*a*math.Asin(a/b)) / math.Pi
}

// AngleFactor returns C = 1 / max(E|n.h|, 1/maxW): P32 = C P10 for one hole
// (see [ExpectedCos]).
func AngleFactor(mean geom.Vec3, kappa float64, h geom.Vec3, maxW float64) float64 {
	return 1 / math.Max(ExpectedCos(mean, kappa, h), 1/maxW)
}
