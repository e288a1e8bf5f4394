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
