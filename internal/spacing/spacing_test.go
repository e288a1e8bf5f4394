package spacing

import (
	"math"
	"math/rand/v2"
	"sort"
	"testing"

	"corvane/internal/dirstat"
	"corvane/internal/geom"
)

func near(t *testing.T, what string, got, want, tol float64) {
	t.Helper()
	if math.Abs(got-want) > tol || math.IsNaN(got) != math.IsNaN(want) {
		t.Errorf("%s = %v, want %v (tol %v)", what, got, want, tol)
	}
}

// simulate lays planes of one set through points x_i*mean along the mean
// pole, x_i a Poisson process of mean spacing s (negative exponential gaps),
// each plane with its own Fisher-distributed normal, and returns where a
// straight hole from the origin along h, length L, crosses them.
func simulate(rng *rand.Rand, mean, h geom.Vec3, kappa, s, L float64) []Hit {
	reach := L*math.Abs(h.Dot(mean)) + 20*s
	var hits []Hit
	for x := -20 * s; x < reach; x += rng.ExpFloat64() * s {
		n := dirstat.FisherRandom(rng, mean, kappa)
		hn := h.Dot(n)
		if hn == 0 {
			continue
		}
		t := x * mean.Dot(n) / hn // the hole point t*h lies on the plane (p - x mean).n = 0
		if t >= 0 && t <= L {
			hits = append(hits, Hit{Depth: t, Hole: h})
		}
	}
	return hits
}

// TestSpacingRecoversTruth: planes with a known true spacing crossed by holes
// at several angles to the set; the Terzaghi (1965) corrected spacing along
// the mean pole recovers the true spacing within three standard errors of its
// mean, at every angle up to the cap angle of 70 degrees. (Exact
// geometry: a hole at delta to parallel planes s apart meets them s/cos delta
// apart.)
func TestSpacingRecoversTruth(t *testing.T) {
	rng := rand.New(rand.NewPCG(14, 1965))
	mean := geom.Plane{Dip: 50, DipDirection: 120}.Normal()
	const s, kappa = 0.8, 200.0
	// a unit vector perpendicular to the mean, to tilt holes away from it
	perp := mean.Cross(geom.Vec3{Z: 1}).Unit()
	for _, delta := range []float64{0, 30, 55, 68} {
		sd, cd := math.Sincos(geom.Rad(delta))
		h := mean.Scale(cd).Add(perp.Scale(sd)).Unit()
		L := 400 * s / cd // about 400 crossings
		hits := simulate(rng, mean, h, kappa, s, L)
		res, err := Analyse(mean, kappa, []Run{{Hole: "H", From: 0, To: L, Hits: hits}}, dirstat.DefaultTerzaghiCap)
		if err != nil {
			t.Fatal(err)
		}
		hr := res.Holes[0]
		near(t, "delta", hr.Delta, delta, 1e-9)
		se := 3 * res.True.StdErr
		if math.Abs(res.True.Mean-s) > se {
			t.Errorf("delta %v: corrected mean spacing %.4f, truth %v (3 SE %.4f, n %d)", delta, res.True.Mean, s, se, res.True.N)
		}
		// 1/P10Normal estimates the same spacing from the count.
		if math.Abs(res.MeanSpacing-s) > se {
			t.Errorf("delta %v: spacing from P10 along the normal %.4f, truth %v", delta, res.MeanSpacing, s)
		}
		// The spacing along the hole is the truth / cos delta (uncorrected).
		if delta >= 30 && math.Abs(res.Apparent.Mean-s/cd) > 3*res.Apparent.StdErr {
			t.Errorf("delta %v: apparent spacing %.4f, want about %.4f", delta, res.Apparent.Mean, s/cd)
		}
		// Random (Poisson) spacing has a coefficient of variation of 1.
		if math.Abs(res.True.CV-1) > 0.2 {
			t.Errorf("delta %v: CV %.3f, want about 1 for random spacing", delta, res.True.CV)
		}
		// P32 = 1/s for one set (closed form), within the same sampling error.
		if math.Abs(1/res.P32-s) > se {
			t.Errorf("delta %v: 1/P32 = %.4f, want about %v", delta, 1/res.P32, s)
		}
		if hr.Capped != 0 {
			t.Errorf("delta %v: %d capped hits", delta, hr.Capped)
		}
	}
	// Beyond the cap angle the correction is capped: the corrected spacing
	// is an upper bound and the hits are flagged.
	sd, cd := math.Sincos(geom.Rad(80))
	h := mean.Scale(cd).Add(perp.Scale(sd)).Unit()
	hits := simulate(rng, mean, h, 1e6, s, 200*s/cd)
	res, err := Analyse(mean, math.Inf(1), []Run{{Hole: "H", From: 0, To: 200 * s / cd, Hits: hits}}, dirstat.DefaultTerzaghiCap)
	if err != nil {
		t.Fatal(err)
	}
	if res.Capped != res.Count || res.True.Mean < s {
		t.Errorf("at 80 degrees: capped %d of %d, corrected mean %.3f (truth %v; capped correction must overstate)", res.Capped, res.Count, res.True.Mean, s)
	}
}

// TestPooledHoles: two holes at different angles through the same set pool
// to one frequency along the normal.
func TestPooledHoles(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	mean := geom.Vec3{Z: -1}
	const s = 0.5
	h1 := geom.HoleDirection(0, -90)
	h2 := geom.HoleDirection(90, -45)
	r1 := Run{Hole: "A", From: 0, To: 150, Hits: simulate(rng, mean, h1, 1e6, s, 150)}
	r2 := Run{Hole: "B", From: 0, To: 200, Hits: simulate(rng, mean, h2, 1e6, s, 200)}
	res, err := Analyse(mean, math.Inf(1), []Run{r1, r2}, dirstat.DefaultTerzaghiCap)
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Holes) != 2 || res.Count != res.Holes[0].Count+res.Holes[1].Count || res.Length != 350 {
		t.Fatalf("pooled: %+v", res)
	}
	near(t, "delta B", res.Holes[1].Delta, 45, 1e-9)
	if math.Abs(res.MeanSpacing-s) > 3*res.True.StdErr {
		t.Errorf("pooled spacing %.4f, truth %v", res.MeanSpacing, s)
	}
}

// TestAngleFactorClosedForms: the angle factor of Mauldon & Mauldon (1997) /
// Wang (2005) against its closed forms: a single parallel set gives
// C = 1/|cos delta|; uniformly random orientations give E|cos| = 1/2, C = 2
// (P32 = 2 P10 for an isotropic network, a standard stereological result).
func TestAngleFactorClosedForms(t *testing.T) {
	h := geom.HoleDirection(30, -60)
	for _, pl := range []geom.Plane{{Dip: 10, DipDirection: 0}, {Dip: 45, DipDirection: 200}, {Dip: 80, DipDirection: 95}} {
		n := pl.Normal()
		c := math.Abs(n.Dot(h))
		near(t, "parallel set, kappa inf", AngleFactor(n, math.Inf(1), h, 1e9), 1/c, 1e-12)
		near(t, "parallel set, kappa 1e7", ExpectedCos(n, 1e7, h), c, 2e-4)
		near(t, "uniform", ExpectedCos(n, 0, h), 0.5, 1e-6)
	}
	// Capped: a set parallel to the hole.
	n := geom.Plane{Dip: 60, DipDirection: 30}.Normal() // its dip vector is the hole 030/-60
	near(t, "capped factor", AngleFactor(n, math.Inf(1), h, dirstat.DefaultTerzaghiCap), dirstat.DefaultTerzaghiCap, 1e-9)
	// Monte Carlo check of a dispersed set.
	rng := rand.New(rand.NewPCG(7, 7))
	m := geom.Plane{Dip: 60, DipDirection: 300}.Normal()
	sum := 0.0
	const N = 200000
	for i := 0; i < N; i++ {
		sum += math.Abs(dirstat.FisherRandom(rng, m, 8).Dot(h))
	}
	near(t, "kappa 8 vs Monte Carlo", ExpectedCos(m, 8, h), sum/N, 3e-3)
}

// TestUnoriented: alpha alone fixes the angle between the pole and the hole,
// hence the Terzaghi weight 1/sin(alpha) (common practice), whatever beta is.
func TestUnoriented(t *testing.T) {
	h := geom.HoleDirection(45, -60)
	for _, alpha := range []float64{90, 60, 30, 20, 10, 0} {
		c, err := UnorientedCone(h, alpha)
		if err != nil {
			t.Fatal(err)
		}
		near(t, "cone half-angle", geom.AxialAngle(c.AnyPole(), h), 90-alpha, 1e-9)
		w := 1 / math.Sin(geom.Rad(alpha))
		if w > dirstat.DefaultTerzaghiCap {
			w = dirstat.DefaultTerzaghiCap
		}
		near(t, "weight", c.Weight(dirstat.DefaultTerzaghiCap), w, 1e-9)
	}
	// A plane with a known pole measured without beta fits a window around
	// that pole and not one 40 degrees away on the same side of the hole.
	pl := geom.Plane{Dip: 40, DipDirection: 100}
	alpha := 90 - geom.AxialAngle(pl.Normal(), h)
	c, _ := UnorientedCone(h, alpha)
	if !c.Fits(pl.Normal(), 1e-9) {
		t.Error("the cone should pass through the true pole")
	}
	if c.Fits(h, 5) && alpha < 80 {
		t.Error("the cone should not pass near the hole axis")
	}
	if _, err := UnorientedCone(h, 91); err == nil {
		t.Error("alpha 91 accepted")
	}
	if _, err := UnorientedCone(geom.Vec3{}, 30); err == nil {
		t.Error("zero hole accepted")
	}
}

func TestDescribe(t *testing.T) {
	d := Describe([]float64{4, 1, 3, 2, 5})
	if d.N != 5 || d.Mean != 3 || d.Median != 3 || d.Min != 1 || d.Max != 5 || d.P25 != 2 || d.P75 != 4 {
		t.Errorf("%+v", d)
	}
	near(t, "sd", d.SD, math.Sqrt(2.5), 1e-12)
	near(t, "p10", d.P10, 1.4, 1e-12)
	if !sort.Float64sAreSorted(d.Values) {
		t.Error("values not sorted")
	}
	if e := Describe(nil); e.N != 0 || !math.IsNaN(e.Mean) {
		t.Errorf("empty: %+v", e)
	}
}

func TestAnalyseErrors(t *testing.T) {
	m := geom.Vec3{Z: -1}
	h := geom.Vec3{Z: -1}
	if _, err := Analyse(m, 1, []Run{{Hole: "A", From: 2, To: 1}}, 3); err == nil {
		t.Error("to < from accepted")
	}
	if _, err := Analyse(m, 1, []Run{{Hole: "A", From: 0, To: 1, Hits: []Hit{{Depth: 2, Hole: h}}}}, 3); err == nil {
		t.Error("hit outside the run accepted")
	}
	if _, err := Analyse(m, 1, nil, 0.5); err == nil {
		t.Error("cap below 1 accepted")
	}
	// Exact case: vertical hole, horizontal planes at 1, 3 and 4 m.
	res, err := Analyse(m, math.Inf(1), []Run{{Hole: "A", From: 0, To: 5, Hits: []Hit{{4, h}, {1, h}, {3, h}}}}, 3)
	if err != nil {
		t.Fatal(err)
	}
	near(t, "P10", res.P10, 0.6, 1e-12)
	near(t, "median", res.True.Median, 1.5, 1e-12)
	near(t, "P32", res.P32, 0.6, 1e-12)
}
