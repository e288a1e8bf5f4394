package uncertainty

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"corvane/internal/geom"
)

// The table behind cone95 gives the exact integral of coneOf within 2e-10
// relative over a grid of covariance shapes: every ratio of the
// eigenvalues (dense near the round and the flat ends), several scales and
// orientations.
func TestCone95Table(t *testing.T) {
	worst := 0.0
	for j := 0; j <= 2000; j++ {
		k := float64(j) / 2000
		for _, kk := range []float64{k, k * k * k} {
			for _, scale := range []float64{1e-6, 0.3, 4, 250} {
				for _, th := range []float64{0, 0.4, 1.3, 2.9} {
					s, c := math.Sincos(th)
					l1, l2 := scale, scale*kk
					a, b, cc := l1*c*c+l2*s*s, (l1-l2)*s*c, l1*s*s+l2*c*c
					want, got := coneOf(a, b, cc, 0.95), cone95(a, b, cc)
					if e := math.Abs(got-want) / want; e > worst {
						worst = e
					}
				}
			}
		}
	}
	t.Logf("largest relative difference %.2e", worst)
	if worst > 2e-10 {
		t.Errorf("cone95 off the exact cone by %.2e relative", worst)
	}
	if cone95(0, 0, 0) != 0 || cone95(1e-300, 0, 0) < 0 {
		t.Error("cone95 of no spread")
	}
}

// The exact Jacobian (model.partials read through coords.gradients) and the
// tabulated cone give the regions of the straightforward computation
// (central differences of the transform read in the region coordinates,
// the exact cone integral): over many random readings (holes, angles,
// conventions, error models from tiny to very large, poles and lines near
// and far from the core axis) the covariances agree within 1e-7 of their
// size and the cones, semi-axes and areas within 1e-7 relative, and so does
// every cone of the set's first-order method over random sets. Monte Carlo
// regions from the same draws agree to rounding (1e-12).
func TestFastPathsMatchReference(t *testing.T) {
	r := rand.New(rand.NewPCG(71, 72))
	worst := 0.0 // largest difference, relative to the scale given
	tol := 1e-7
	near := func(got, want, scale float64) bool {
		d := math.Abs(got - want)
		if scale > 0 {
			worst = math.Max(worst, d/scale)
		}
		return d <= tol*scale+1e-12
	}
	for i := 0; i < 3000; i++ {
		scale := math.Pow(10, -2+3*r.Float64())
		sig := Sigmas{Alpha: 2 * scale * r.Float64(), Beta: 3 * scale * r.Float64(), Gamma: 3 * scale * r.Float64(),
			Mark: 10 * scale * r.Float64(), Azimuth: 3 * r.Float64(), Dip: 0.5 * r.Float64()}
		alpha := 90 * r.Float64()
		if i%5 == 0 {
			alpha = 90 - 3*r.Float64() // near the axis: the ellipse shape
		}
		rd := Reading{Hole: geom.HoleDirection(360*r.Float64(), -5-80*r.Float64()), Alpha: alpha, Beta: 360 * r.Float64(),
			Gamma: 360 * r.Float64(), Conv: conventions[r.IntN(len(conventions))], Sigma: sig}
		m, err := newModel(rd)
		if err != nil {
			t.Fatal(err)
		}
		n0, l0 := m.eval(0, 0, 0, 0, 0)
		for which, v := range []geom.Vec3{n0, l0} {
			cs := newCoords(m, v)
			got, want := m.firstOrder(n0, l0, &cs, which), m.refFirstOrder(&cs, which)
			tr := want.cuu + want.cvv
			if !near(got.cuu, want.cuu, tr) || !near(got.cuv, want.cuv, tr) || !near(got.cvv, want.cvv, tr) ||
				!near(got.Cone95, want.Cone95, want.Cone95) || !near(got.Long95, want.Long95, want.Long95) ||
				!near(got.Short95, want.Short95, want.Long95) || !near(got.Area95, want.Area95, math.Pi*want.Long95*want.Long95) {
				t.Fatalf("case %d (%+v) direction %d: fast %+v, reference %+v", i, rd, which, got, want)
			}
		}
	}
	t.Logf("measurements: largest relative difference %.1e", worst)
	// Monte Carlo: the same draws through the fast transform and region
	// coordinates as through the plain ones give the same regions, to
	// rounding.
	worst, tol = 0, 1e-12
	z := newNormals(MC{Draws: 1000, Seed: 5})
	for i := 0; i < 400; i++ {
		sig := Sigmas{Alpha: 4 * r.Float64(), Beta: 5 * r.Float64(), Gamma: 5 * r.Float64(),
			Mark: 20 * r.Float64(), Azimuth: 3 * r.Float64(), Dip: 0.5 * r.Float64()}
		alpha := 90 * r.Float64()
		if i%2 == 0 {
			alpha = 90 - 12*r.Float64() // near the axis, where Monte Carlo is used
		}
		rd := Reading{Hole: geom.HoleDirection(360*r.Float64(), -5-80*r.Float64()), Alpha: alpha, Beta: 360 * r.Float64(),
			Gamma: 360 * r.Float64(), Conv: conventions[r.IntN(len(conventions))], Sigma: sig}
		if i%3 == 0 {
			rd.Gamma = math.NaN()
		}
		sc := scratch{z: z}
		res, err := measure(rd, &sc)
		if err != nil {
			t.Fatal(err)
		}
		m, _ := newModel(rd)
		got := []*Estimate{&res.Pole, res.Line}[:1+btoi(res.Line != nil)]
		cs, est := make([]coords, len(got)), make([]Estimate, len(got))
		for k, e := range got {
			cs[k], est[k] = e.cs, Estimate{FirstOrder: e.FirstOrder, Used: "first-order"}
		}
		refMcRegions(m, cs, z.table(m.sig, nil), est)
		for k := range est {
			if NeedsMonteCarlo(cs[k].phi(), est[k].FirstOrder) {
				est[k].Used = "monte-carlo"
			}
		}
		for k, e := range got {
			g, w := *e.MonteCarlo, *est[k].MonteCarlo
			if !near(g.Cone95, w.Cone95, w.Long95) || !near(g.Long95, w.Long95, w.Long95) || !near(g.Short95, w.Short95, w.Long95) ||
				!near(g.Area95, w.Area95, math.Pi*w.Long95*w.Long95) || !near(g.q, w.q, w.q) || e.Used != est[k].Used {
				t.Fatalf("case %d (%+v) direction %d: fast %+v (%s), reference %+v (%s)", i, rd, k, g, e.Used, w, est[k].Used)
			}
		}
	}
	t.Logf("Monte Carlo: largest relative difference %.1e", worst)
	tol = 1e-7
	worst = 0
	for i := 0; i < 300; i++ {
		lines := i%3 == 0
		n := 2 + r.IntN(60)
		ms := make([]Member, n)
		m := Model{Alpha: 4 * r.Float64(), Beta: 5 * r.Float64(), Gamma: 5 * r.Float64()}
		mu := geom.FromTrendPlunge(360*r.Float64(), 90*r.Float64())
		for j := range ms {
			h := geom.HoleDirection(float64(40*(j%3))+360*r.Float64()*0.1, -30-50*r.Float64())
			p := tangentScatter(r, mu, 15)
			alpha := geom.Deg(math.Asin(math.Min(1, math.Abs(p.Dot(h)))))
			ms[j] = Member{Reading: Reading{Hole: h, Alpha: alpha, Beta: 360 * r.Float64(), Gamma: 360 * r.Float64(),
				Sigma: m.Sigmas([]Instrument{Magnetic, Gyro, UnknownSurvey}[r.IntN(3)], []string{"good", "fair", "poor"}[r.IntN(3)], math.NaN(), 0)}}
			if r.IntN(4) > 0 {
				ms[j].Run = fmt.Sprint(j % 5)
			}
			if r.IntN(4) > 0 {
				ms[j].Survey = fmt.Sprint(j % 3)
			}
		}
		got, err1 := setFirstOrder(ms, lines)
		want, err2 := refSetFirstOrder(ms, lines)
		if err1 != nil || err2 != nil {
			t.Fatal(err1, err2)
		}
		for _, p := range [][2]float64{{got.Measurement95, want.Measurement95}, {got.Shared95, want.Shared95},
			{got.SharedIndependent95, want.SharedIndependent95}, {got.Combined95, want.Combined95}} {
			if !near(p[0], p[1], p[1]) {
				t.Fatalf("set %d: fast %+v, reference %+v", i, got, want)
			}
		}
		if got.Trend != want.Trend || got.Plunge != want.Plunge || got.Fisher95 != want.Fisher95 || got.Dominant != want.Dominant {
			t.Fatalf("set %d: fast %+v, reference %+v", i, got, want)
		}
	}
	t.Logf("sets: largest relative difference %.1e", worst)
}

func btoi(b bool) int {
	if b {
		return 1
	}
	return 0
}

// FirstOrderTerms read once give, for any set of their members in any
// order, exactly (NaN as NaN) SetMeanFirstOrder (SetMeanLinesFirstOrder) of those
// members: the runs' and surveys' standard errors those of the set's first
// member sharing them, a member that cannot be read failing the sets that
// hold it.
func TestFirstOrderTermsSubsets(t *testing.T) {
	r := rand.New(rand.NewPCG(81, 82))
	for _, lines := range []bool{false, true} {
		ms := make([]Member, 300)
		for j := range ms {
			ms[j] = Member{Reading: Reading{Hole: geom.HoleDirection(360*r.Float64(), -30-50*r.Float64()), Alpha: 90 * r.Float64(),
				Beta: 360 * r.Float64(), Gamma: 360 * r.Float64(),
				Sigma: DefaultModel().Sigmas(Magnetic, []string{"good", "fair", "poor"}[r.IntN(3)], math.NaN(), 0)}}
			if r.IntN(5) > 0 {
				ms[j].Run = fmt.Sprint(r.IntN(30))
			}
			if r.IntN(5) > 0 {
				ms[j].Survey = fmt.Sprint(r.IntN(8))
			}
		}
		ms[7].Hole = geom.Vec3{Z: -1} // vertical
		tm := NewFirstOrderTerms(lines, 0)
		for j := range ms {
			if k := tm.Add(&ms[j]); k != j {
				t.Fatalf("member %d numbered %d", j, k)
			}
		}
		for trial := 0; trial < 100; trial++ {
			idx := r.Perm(len(ms))[:1+r.IntN(len(ms))]
			sub := make([]Member, len(idx))
			for j, i := range idx {
				sub[j] = ms[i]
			}
			got, err1 := tm.SetMean(idx)
			want, err2 := setFirstOrder(sub, lines)
			if fmt.Sprint(got) != fmt.Sprint(want) || (err1 == nil) != (err2 == nil) || err1 != nil && err1.Error() != err2.Error() {
				t.Fatalf("lines %v, set %v: terms %+v (%v), members %+v (%v)", lines, idx, got, err1, want, err2)
			}
		}
		tm.Release()
	}
}

// Measure (and a Measurer) give the answers of the per-measurement path as
// it was before its fast paths (oldMeasure in refmeasure_test.go, kept
// whole), within 1e-9 degrees: every figure of both regions, the measured
// direction, the shape, the method used and the outline drawn on a net. The
// readings sweep what the fast paths distinguish: poles and lines near the
// core axis (the ellipse shape, where the rule sends them to Monte Carlo)
// and far from it (curved), whole-degree angles (alpha 80 puts a pole 10
// degrees from the axis, on the shape's border), lineations with gamma,
// every convention, holes near the vertical and vertical ones (an error
// either way), mark errors up to 85 degrees, zero and large survey errors,
// and Monte Carlo runs of several sizes, seeds and rules.
func TestMeasureMatchesReference(t *testing.T) {
	r := rand.New(rand.NewPCG(91, 92))
	const tol = 1e-9 // degrees
	mcs := []MC{PerMeasurement, Always(PerMeasurement), {Draws: 200, Seed: 3}, {Draws: 4000, Seed: 4, WhenNeeded: true}, {Draws: 7, Seed: 5}, {}}
	n := 6000
	if testing.Short() {
		n = 1500
	}
	var measurers []*Measurer
	var zs []normals
	for _, mc := range mcs {
		measurers = append(measurers, NewMeasurer(mc))
		var z normals
		if mc.Draws > 0 {
			z = newNormals(mc)
		}
		zs = append(zs, z)
	}
	var worst float64
	var counts [4]int // curved, ellipse, Monte Carlo used, vertical
	confs := []string{"good", "fair", "poor", "", "none"}
	insts := []Instrument{Magnetic, Gyro, UnknownSurvey}
	for i := 0; i < n; i++ {
		k := i % len(mcs)
		if i%7 == 6 {
			k = r.IntN(2) // more of the runs every door uses
		}
		rd := randomReading(r, confs, insts)
		want, werr := oldMeasure(rd, zs[k], mcs[k].WhenNeeded)
		got, gerr := measurers[k].Measure(rd)
		if werr != nil || gerr != nil {
			if werr != gerr {
				t.Fatalf("case %d (%+v): error %v, reference %v", i, rd, gerr, werr)
			}
			counts[3]++
			continue
		}
		if k < 2 { // Measure gives the Measurer's answers
			one, err := Measure(rd, mcs[k])
			if err != nil || !sameResult(one, got) {
				t.Fatalf("case %d: Measure %+v (%v), Measurer %+v", i, one, err, got)
			}
		}
		if (got.Line == nil) != (want.Line == nil) {
			t.Fatalf("case %d (%+v): line %v, reference %v", i, rd, got.Line, want.Line)
		}
		pairs := [][2]*Estimate{{&got.Pole, &want.Pole}}
		if got.Line != nil {
			pairs = append(pairs, [2]*Estimate{got.Line, want.Line})
		}
		for which, p := range pairs {
			g, w := p[0], p[1]
			if g.Shape == "curved" {
				counts[0]++
			} else {
				counts[1]++
			}
			if g.Used == "monte-carlo" {
				counts[2]++
			}
			if g.Shape != w.Shape || g.Used != w.Used || g.Draws != w.Draws || (g.MonteCarlo == nil) != (w.MonteCarlo == nil) {
				t.Fatalf("case %d (%+v) direction %d: %s/%s/%d draws, reference %s/%s/%d", i, rd, which, g.Shape, g.Used, g.Draws, w.Shape, w.Used, w.Draws)
			}
			d := math.Max(math.Abs(g.Plunge-w.Plunge), math.Abs(math.Remainder(g.Trend-w.Trend, 360)))
			regions := [][2]*Region{{&g.FirstOrder, &w.FirstOrder}}
			if g.MonteCarlo != nil {
				regions = append(regions, [2]*Region{g.MonteCarlo, w.MonteCarlo})
			}
			for _, q := range regions {
				a, b := q[0], q[1]
				d = math.Max(d, math.Max(math.Abs(a.Cone95-b.Cone95), math.Max(math.Abs(a.Long95-b.Long95), math.Abs(a.Short95-b.Short95))))
				// The area in square degrees, and the orientation, whose
				// error grows as the region rounds (undefined for a circle).
				d = math.Max(d, math.Abs(a.Area95-b.Area95)/(math.Pi*(1+b.Long95+b.Short95)))
				if el := b.Long95*b.Long95 - b.Short95*b.Short95; el > 0 {
					d = math.Max(d, math.Abs(a.Orientation-b.Orientation)*el/(b.Long95*b.Long95+b.Short95*b.Short95))
				}
			}
			if d > tol {
				t.Fatalf("case %d (%+v) direction %d: off the reference by %.2e deg:\n%+v %+v\n%+v %+v", i, rd, which, d, g.FirstOrder, g.MonteCarlo, w.FirstOrder, w.MonteCarlo)
			}
			worst = math.Max(worst, d)
			// The outline drawn on a net.
			wo := oldOutline(rd, which, w.Region(), 12)
			for j, v := range g.Outline(12) {
				if a := geom.Deg(v.Sub(wo[j]).Norm()); a > tol { // the chord: the angle to rounding
					t.Fatalf("case %d direction %d: outline point %d off by %.2e deg", i, which, j, a)
				}
			}
		}
	}
	t.Logf("largest difference %.1e deg; %d curved, %d ellipse, %d using Monte Carlo, %d vertical", worst, counts[0], counts[1], counts[2], counts[3])
	if counts[0] == 0 || counts[1] == 0 || counts[2] == 0 || counts[3] == 0 {
		t.Errorf("the sweep misses a case: %v", counts)
	}
}

// randomReading returns a reading for TestMeasureMatchesReference.
func randomReading(r *rand.Rand, confs []string, insts []Instrument) Reading {
	m := DefaultModel()
	if r.IntN(3) == 0 {
		s := 0.2 + 3*r.Float64()
		m = Model{Alpha: 2 * s, Beta: 3 * s, Gamma: 3 * s, MarkPoor: 40 * s}
	}
	mismatch := math.NaN()
	if r.IntN(3) == 0 {
		mismatch = 120 * r.Float64() * r.Float64() // mark errors up to 85 degrees
	}
	sig := m.Sigmas(insts[r.IntN(len(insts))], confs[r.IntN(len(confs))], mismatch, RoundingSD(5, r.Float64()))
	switch r.IntN(8) {
	case 0:
		sig.Azimuth, sig.Dip = 0, 0 // no survey error: no turns
	case 1:
		sig.Azimuth, sig.Dip = 15*r.Float64(), 5*r.Float64()
	case 2:
		sig.Gamma = 0
	}
	var alpha, beta float64
	switch r.IntN(4) {
	case 0:
		alpha, beta = float64(r.IntN(91)), float64(r.IntN(360))
	case 1:
		alpha, beta = 90-12*r.Float64(), 360*r.Float64() // near the axis
	case 2:
		alpha, beta = 90*r.Float64(), 360*r.Float64()
	default:
		alpha, beta = []float64{0, 80, 90, 89.5, 10}[r.IntN(5)], float64(r.IntN(360))
	}
	dip := -5 - 80*r.Float64()
	switch r.IntN(12) {
	case 0:
		dip = -90 // vertical: an error
	case 1:
		dip = -90 + 0.5*r.Float64()
	case 2:
		dip = 10 * r.Float64() // up-hole
	}
	gamma := math.NaN()
	if r.IntN(2) == 0 {
		gamma = float64(r.IntN(360))
		if r.IntN(2) == 0 {
			gamma = 180 * r.Float64()
		}
	}
	return Reading{Hole: geom.HoleDirection(360*r.Float64(), dip), Alpha: alpha, Beta: beta, Gamma: gamma,
		Conv: conventions[r.IntN(len(conventions))], Sigma: sig}
}

// sameResult reports whether a and b are the same result, figure for
// figure.
func sameResult(a, b Result) bool {
	same := func(x, y *Estimate) bool {
		if x == nil || y == nil {
			return x == y
		}
		if (x.MonteCarlo == nil) != (y.MonteCarlo == nil) || x.MonteCarlo != nil && *x.MonteCarlo != *y.MonteCarlo {
			return false
		}
		return x.Trend == y.Trend && x.Plunge == y.Plunge && x.Shape == y.Shape && x.FirstOrder == y.FirstOrder &&
			x.Draws == y.Draws && x.Used == y.Used
	}
	return same(&a.Pole, &b.Pole) && same(a.Line, b.Line)
}

// Model.Sigmas gives the standard errors it gave before (oldSigmas),
// exactly, for any model (negative and zero fields included), rating,
// mismatch, instrument and rounding.
func TestSigmasMatchReference(t *testing.T) {
	r := rand.New(rand.NewPCG(93, 94))
	vals := []float64{0, -0.5, 1e-9, 2, 7.5, math.Inf(1), math.NaN()}
	pickv := func() float64 {
		if r.IntN(2) == 0 {
			return vals[r.IntN(len(vals))]
		}
		return 20 * r.Float64()
	}
	for i := 0; i < 20000; i++ {
		m := Model{Alpha: pickv(), Beta: pickv(), Gamma: pickv(), MarkGood: pickv(), MarkFair: pickv(), MarkPoor: pickv(), MarkUnrated: pickv(),
			Magnetic: SurveyError{pickv(), pickv()}, Gyro: SurveyError{pickv(), pickv()}, Unknown: SurveyError{pickv(), pickv()}}
		k := []Instrument{Magnetic, Gyro, UnknownSurvey, "", "other"}[r.IntN(5)]
		conf := []string{"good", " Fair", "POOR", "", "none", "x"}[r.IntN(6)]
		mismatch, rounding := pickv(), 0.0
		if r.IntN(2) == 0 {
			rounding = pickv()
		}
		got, want := m.Sigmas(k, conf, mismatch, rounding), oldSigmas(m, k, conf, mismatch, rounding)
		if fmt.Sprint(got) != fmt.Sprint(want) || math.Signbit(got.Alpha) != math.Signbit(want.Alpha) {
			t.Fatalf("%+v %q %q %v %v: %+v, before %+v", m, k, conf, mismatch, rounding, got, want)
		}
	}
}

// The Monte Carlo quantiles do not depend on the guess that filters their
// candidates: a guess above the answer (every candidate filtered out, the
// selection starts again from all the values) or below every value gives
// the figures of a good guess, in both shapes and for the Mahalanobis
// radius.
func TestQuantileGuess(t *testing.T) {
	z := newNormals(PerMeasurement)
	k := quantileRank(len(z), 0.95)
	for _, alpha := range []float64{88, 40} {
		rd := Reading{Hole: geom.HoleDirection(30, -60), Alpha: alpha, Beta: 200, Gamma: math.NaN(), Sigma: DefaultModel().Sigmas(UnknownSurvey, "", math.NaN(), 0)}
		m, err := newModel(rd)
		if err != nil {
			t.Fatal(err)
		}
		n0, _ := m.nominal()
		cs := newCoords(m, n0)
		g := m.survey()
		vs := make([]geom.Vec3, len(z))
		g.poles(m, z.table(m.sig, nil), vs)
		dir := g.dir(&cs)
		var first [5]float64
		for i, guess := range []float64{0.9 * (1 - math.Cos(geom.Rad(5))), math.Inf(-1), 0.5, math.Inf(1)} {
			dir.coneGuess = guess
			us, ws, cc, sel := make([]float64, len(z)), make([]float64, len(z)), make([]float64, len(z)), make([]float64, len(z))
			var got [5]float64
			if cs.curved {
				got[0], got[1], got[2], got[3] = dir.curved(vs, us, ws, cc, sel, k)
			} else {
				got[0], got[1], got[2], got[3] = dir.ellipse(vs, us, ws, cc, sel, k)
			}
			got[4] = mahalQuantile(us, ws, 1, 0.3, 2, k, []float64{5, math.Inf(-1), 1e3, math.Inf(1)}[i], sel, cc)
			if i == 0 {
				first = got
				if cs.curved != (alpha == 40) {
					t.Fatalf("alpha %v: curved %v", alpha, cs.curved)
				}
			} else if got != first {
				t.Errorf("alpha %v, guess %v: %v, with a good guess %v", alpha, guess, got, first)
			}
		}
	}
}
