package uncertainty

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"corvane/internal/coreangle"
	"corvane/internal/geom"
)

var conventions = []coreangle.Convention{
	{},
	{RefLine: coreangle.Top},
	{BetaApex: coreangle.UpHole},
	{RefLine: coreangle.Top, BetaApex: coreangle.UpHole, GammaSense: coreangle.Anticlockwise},
}

// The fast transform (rotations of the hole frame, angle addition) must be
// the conversion of internal/coreangle applied to the perturbed angles and
// the perturbed hole direction, under every convention.
func TestEvalMatchesCoreangle(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 2))
	for _, conv := range conventions {
		for i := 0; i < 200; i++ {
			az, dip := 360*r.Float64(), -75+65*r.Float64()
			alpha, beta, gamma := 5+80*r.Float64(), 360*r.Float64(), 180*r.Float64()
			rd := Reading{Hole: geom.HoleDirection(az, dip), Alpha: alpha, Beta: beta, Gamma: gamma, Conv: conv}
			m, err := newModel(rd)
			if err != nil {
				t.Fatal(err)
			}
			var d [5]float64
			for k := range d {
				d[k] = 0.3 * r.NormFloat64() // up to about 50 degrees
			}
			d[3], d[4] = d[3]/6, d[4]/6 // the hole stays between horizontal and vertical
			n, l := m.eval(d[0], d[1], d[2], d[3], d[4])
			h := geom.HoleDirection(az+geom.Deg(d[3]), dip+geom.Deg(d[4]))
			a, b, g := alpha+geom.Deg(d[0]), beta+geom.Deg(d[1]), gamma+geom.Deg(d[2])
			if conv.GammaSense == coreangle.Anticlockwise {
				g = gamma - geom.Deg(d[2])
			}
			// coreangle takes alpha in 0..90: a reading pushed past 90 is the
			// plane with alpha 180 - a and the apex on the other side.
			if a > 90 {
				a, b = 180-a, b+180
			}
			if a < 0 {
				continue // a negative alpha has no coreangle reading
			}
			pl, _ := coreangle.Plane(h, a, geom.NormAzimuth(b), conv)
			if ang := geom.AxialAngle(m.world(n), pl.Normal()); ang > 1e-6 {
				t.Fatalf("%v: pole off by %g deg", conv, ang)
			}
			ln, _ := coreangle.Line(h, a, geom.NormAzimuth(b), geom.NormAzimuth(g), conv)
			if ang := geom.AxialAngle(m.world(l), ln.Vec()); ang > 1e-6 && a < 89.9 {
				t.Fatalf("%v: line off by %g deg (alpha %.1f)", conv, ang, a)
			}
		}
	}
}

func TestFastMath(t *testing.T) {
	for x := -0.7; x <= 0.7; x += 0.001 {
		s, c := sincos(x)
		ws, wc := math.Sincos(x)
		if math.Abs(s-ws) > 1e-9 || math.Abs(c-wc) > 1e-9 {
			t.Fatalf("sincos(%g) = %g %g, want %g %g", x, s, c, ws, wc)
		}
		if d := math.Abs(atan(x/1.3) - math.Atan(x/1.3)); d > 1e-9 {
			t.Fatalf("atan(%g/1.3) off by %g", x, d)
		}
	}
	r := rand.New(rand.NewPCG(5, 6))
	for n := 1; n < 300; n += 7 {
		x := make([]float64, n)
		for i := range x {
			x[i] = float64(r.IntN(50)) // with ties
		}
		sorted := slices.Clone(x)
		slices.Sort(sorted)
		for i := 0; i < n; i += 3 {
			if got := selectKth(slices.Clone(x), i); got != sorted[i] {
				t.Fatalf("n %d: rank %d = %g, want %g", n, i, got, sorted[i])
			}
			if got := selectSplit(slices.Clone(x), make([]float64, n), i); got != sorted[i] {
				t.Fatalf("split, n %d: rank %d = %g, want %g", n, i, got, sorted[i])
			}
			y := slices.Clone(x)
			for j := range y {
				y[j] += r.Float64() // no ties
			}
			want := slices.Sorted(slices.Values(y))[i]
			if got := selectSplit(y, make([]float64, n), i); got != want {
				t.Fatalf("split, n %d without ties: rank %d = %g, want %g", n, i, got, want)
			}
		}
	}
	var buf []float64
	for _, guess := range []float64{0, 6, 8, math.Inf(-1)} {
		if got := kthLargest([]float64{5, 1, 9, 7, 3, 8}, 3, guess, &buf); got != 7 {
			t.Fatalf("third largest (guess %g) = %g, want 7", guess, got)
		}
	}
}

// The circle holding 95% of an isotropic bivariate normal has radius
// sigma sqrt(-2 ln 0.05) (Rayleigh distribution, exact); of a very elongated
// one, about 1.96 times the long standard deviation (the normal quantile).
func TestConeOf(t *testing.T) {
	if got, want := coneOf(4, 0, 4, 0.95), 2*math.Sqrt(-2*math.Log(0.05)); math.Abs(got-want) > 1e-6 {
		t.Errorf("isotropic: %g, want %g", got, want)
	}
	if got := coneOf(100, 0, 1e-6, 0.95); math.Abs(got-19.6) > 0.01 {
		t.Errorf("elongated: %g, want 19.60", got)
	}
}

// simulate draws a measurement of the true plane (trueH, alpha, beta, gamma)
// with the errors sig and returns the reading as logged.
func simulate(r *rand.Rand, az, dip, alpha, beta, gamma float64, sig Sigmas, conv coreangle.Convention) (Reading, geom.Vec3, geom.Vec3) {
	h := geom.HoleDirection(az, dip)
	pl, _ := coreangle.Plane(h, alpha, beta, conv)
	ln, _ := coreangle.Line(h, alpha, beta, gamma, conv)
	mAz, mDip := az+sig.Azimuth*r.NormFloat64(), dip+sig.Dip*r.NormFloat64()
	a := alpha + sig.Alpha*r.NormFloat64()
	b := beta + sig.Beta*r.NormFloat64() + sig.Mark*r.NormFloat64()
	g := gamma + sig.Gamma*r.NormFloat64()
	a, b = coreangle.Fold(a, b)
	rd := Reading{Hole: geom.HoleDirection(mAz, mDip), Alpha: a, Beta: geom.NormAzimuth(b), Gamma: geom.NormAzimuth(g), Conv: conv, Sigma: sig}
	return rd, pl.Normal(), ln.Vec()
}

// Coverage: measurements simulated with known errors (seeded); the stated
// 95% regions, built from the logged values, must contain the true pole and
// line in 93-97% of cases. 1,000 cases give a standard error of 0.7% on a
// true 95%.
func TestMeasurementCoverage(t *testing.T) {
	cases := []struct {
		name string
		sig  Sigmas
	}{
		{"defaults good mark unknown survey", DefaultModel().Sigmas(UnknownSurvey, "good", math.NaN(), 0)},
		{"poor mark magnetic survey", DefaultModel().Sigmas(Magnetic, "poor", math.NaN(), 0)},
	}
	const trials = 1000
	for ci, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			measurementCoverage(t, ci, c.sig, trials)
		})
	}
}

func measurementCoverage(t *testing.T, ci int, sig Sigmas, trials int) {
	r := rand.New(rand.NewPCG(11, uint64(ci)))
	var in [2][2]int // [pole, line][cone, region], Monte Carlo region in use
	var fo [2]int
	for i := 0; i < trials; i++ {
		az, dip := 360*r.Float64(), -80+60*r.Float64()
		alpha, beta, gamma := 15+60*r.Float64(), 360*r.Float64(), 180*r.Float64()
		rd, truePole, trueLine := simulate(r, az, dip, alpha, beta, gamma, sig, coreangle.Convention{})
		res, err := Measure(rd, MC{Draws: 500, Seed: uint64(i)})
		if err != nil {
			t.Fatal(err)
		}
		for k, e := range []*Estimate{&res.Pole, res.Line} {
			v := truePole
			if k == 1 {
				v = trueLine
			}
			if e.InCone(v) {
				in[k][0]++
			}
			if e.InRegion(v) {
				in[k][1]++
			}
			fr := e.FirstOrder
			u, w := e.cs.of(e.cs.frameOf(v))
			if fr.mahal(u, w) <= fr.q {
				fo[k]++
			}
		}
	}
	for k, what := range []string{"pole", "line"} {
		for j, shape := range []string{"cone", "region"} {
			if f := float64(in[k][j]) / float64(trials); f < 0.93 || f > 0.97 {
				t.Errorf("%s %s holds the truth in %.1f%% of %d cases, want 93-97%%", what, shape, 100*f, trials)
			}
		}
		t.Logf("%s cone %.1f%%, region %.1f%%, first-order region %.1f%%", what,
			100*float64(in[k][0])/float64(trials), 100*float64(in[k][1])/float64(trials), 100*float64(fo[k])/float64(trials))
	}
}

// Small errors: first-order propagation and Monte Carlo agree (cones and
// semi-axes within 5%, Monte Carlo sampling error with 4,000 draws is about
// 2%), and the first-order region is the one used.
func TestFirstOrderAgreesWithMonteCarloForSmallErrors(t *testing.T) {
	sig := Sigmas{Alpha: 0.5, Beta: 0.5, Gamma: 0.5, Mark: 0.5, Azimuth: 0.3, Dip: 0.1}
	r := rand.New(rand.NewPCG(3, 4))
	for i := 0; i < 20; i++ {
		rd := Reading{Hole: geom.HoleDirection(360*r.Float64(), -30-50*r.Float64()), Alpha: 20 + 60*r.Float64(),
			Beta: 360 * r.Float64(), Gamma: 180 * r.Float64(), Sigma: sig}
		res, err := Measure(rd, MC{Draws: 4000, Seed: uint64(i)})
		if err != nil {
			t.Fatal(err)
		}
		for _, e := range []*Estimate{&res.Pole, res.Line} {
			f, m := e.FirstOrder, *e.MonteCarlo
			for _, p := range [][2]float64{{f.Cone95, m.Cone95}, {f.Long95, m.Long95}, {f.Short95, m.Short95}} {
				if math.Abs(p[0]-p[1]) > 0.05*p[1] {
					t.Errorf("case %d: first order %.3f vs Monte Carlo %.3f (%+v vs %+v)", i, p[0], p[1], f, m)
				}
			}
			if e.Used != "first-order" {
				t.Errorf("case %d: used %s", i, e.Used)
			}
		}
	}
}

func TestMeasureDeterministicAndVertical(t *testing.T) {
	rd := Reading{Hole: geom.HoleDirection(40, -60), Alpha: 30, Beta: 200, Gamma: math.NaN(), Sigma: DefaultModel().Sigmas(Gyro, "fair", math.NaN(), 0)}
	a, err := Measure(rd, MC{Draws: 500, Seed: 1})
	if err != nil {
		t.Fatal(err)
	}
	b, _ := Measure(rd, MC{Draws: 500, Seed: 1})
	if *a.Pole.MonteCarlo != *b.Pole.MonteCarlo || a.Line != nil {
		t.Errorf("not reproducible or unexpected line: %+v %+v", a.Pole.MonteCarlo, b.Pole.MonteCarlo)
	}
	all, errs := MeasureAll([]Reading{rd, rd, rd}, MC{Draws: 500, Seed: 1}, 2)
	if errs[0] != nil || *all[0].Pole.MonteCarlo != *a.Pole.MonteCarlo || *all[2].Pole.MonteCarlo != *a.Pole.MonteCarlo {
		t.Errorf("MeasureAll streams: %+v %+v", all[0].Pole.MonteCarlo, all[1].Pole.MonteCarlo)
	}
	ms := NewMeasurer(MC{Draws: 500, Seed: 1})
	for _, m := range []*Measurer{ms, ms.Fork(), ms} {
		c, err := m.Measure(rd)
		if err != nil || *c.Pole.MonteCarlo != *a.Pole.MonteCarlo || c.Pole.FirstOrder != a.Pole.FirstOrder {
			t.Errorf("Measurer differs from Measure: %+v %+v (%v)", c.Pole.MonteCarlo, a.Pole.MonteCarlo, err)
		}
	}
	rd.Hole = geom.Vec3{Z: -1}
	if _, err := Measure(rd, MC{}); err != ErrVertical {
		t.Errorf("vertical hole: %v", err)
	}
}

// Boundary points lie on the edge of the region in use (squared Mahalanobis
// distance equal to its 95% radius), for the curved and the ellipse shapes,
// and are lower-hemisphere lines.
func TestBoundary(t *testing.T) {
	for _, alpha := range []float64{35, 86} {
		rd := Reading{Hole: geom.HoleDirection(200, -70), Alpha: alpha, Beta: 75, Gamma: math.NaN(),
			Sigma: Sigmas{Alpha: 2, Beta: 3, Mark: 7, Azimuth: 1.5, Dip: 0.3}}
		res, err := Measure(rd, MC{Draws: 1000, Seed: 2})
		if err != nil {
			t.Fatal(err)
		}
		e := res.Pole
		r := e.Region()
		pts := e.Boundary(36)
		if len(pts) != 36 {
			t.Fatalf("%d points", len(pts))
		}
		for _, p := range pts {
			if p.Plunge < 0 || p.Plunge > 90 {
				t.Errorf("alpha %v: point %+v not lower hemisphere", alpha, p)
			}
			u, w := e.cs.of(e.cs.frameOf(p.Vec()))
			if d := r.mahal(u, w); math.Abs(d-r.q) > 1e-6*r.q {
				t.Errorf("alpha %v (%s): boundary point at %.6f, region radius %.6f", alpha, e.Shape, d, r.q)
			}
		}
		if want := map[float64]string{35: "curved", 86: "ellipse"}[alpha]; e.Shape != want {
			t.Errorf("alpha %v: shape %s, want %s", alpha, e.Shape, want)
		}
	}
}

// No error at all: zero regions, no NaN.
func TestExactReading(t *testing.T) {
	rd := Reading{Hole: geom.HoleDirection(10, -45), Alpha: 30, Beta: 60, Gamma: 20}
	res, err := Measure(rd, MC{Draws: 200, Seed: 1})
	if err != nil {
		t.Fatal(err)
	}
	for _, e := range []*Estimate{&res.Pole, res.Line} {
		for _, r := range []Region{e.FirstOrder, *e.MonteCarlo} {
			if r.Cone95 > 1e-9 || r.Long95 > 1e-9 || math.IsNaN(r.Area95) || math.IsNaN(r.q) {
				t.Errorf("exact reading: %+v", r)
			}
		}
	}
}

// Outline is the boundary unfolded: the same axes as Boundary, on the
// region's boundary, and continuous (neighbouring points a few degrees
// apart) even for a pole near the horizontal whose region crosses it, where
// Boundary's lower-hemisphere points jump to the antipode.
func TestOutlineContinuous(t *testing.T) {
	rd := Reading{Hole: geom.HoleDirection(0, -45), Alpha: 45, Beta: 0, Gamma: math.NaN(),
		Sigma: Sigmas{Alpha: 2, Beta: 3, Mark: 10, Azimuth: 3, Dip: 0.5}}
	res, err := Measure(rd, PerMeasurement)
	if err != nil {
		t.Fatal(err)
	}
	e := res.Pole
	if e.Plunge > 5 {
		t.Fatalf("pole plunge %v: the case needs a pole near the horizontal", e.Plunge)
	}
	const n = 72
	out, bnd := e.Outline(n), e.Boundary(n)
	up, jumps := 0, 0
	for i, v := range out {
		if geom.AxialAngle(v, bnd[i].Vec()) > 1e-9 {
			t.Fatalf("point %d: outline %v, boundary %v", i, v, bnd[i])
		}
		if v.Z > 0 {
			up++
		}
		if geom.Angle(v, out[(i+1)%n]) > 5 {
			t.Errorf("outline points %d and %d are %.1f deg apart", i, i+1, geom.Angle(v, out[(i+1)%n]))
		}
		if geom.Angle(bnd[i].Vec(), bnd[(i+1)%n].Vec()) > 90 {
			jumps++
		}
	}
	if up == 0 || jumps == 0 {
		t.Errorf("the region does not cross the horizontal (%d points above, %d jumps in the boundary)", up, jumps)
	}
}

// Forks of one Measurer share the tables of the draws' sines and cosines (a
// request's fork finds what earlier requests made) and still give Measure's
// answers, forked and measuring at the same time (run with -race).
func TestForksShareTables(t *testing.T) {
	mc := MC{Draws: 500, Seed: 3}
	ms := NewMeasurer(mc)
	var rds []Reading
	for i := 0; i < 8; i++ {
		rds = append(rds, Reading{Hole: geom.HoleDirection(40*float64(i), -60), Alpha: 20 + 8*float64(i), Beta: 200, Gamma: 30,
			Sigma: DefaultModel().Sigmas(Gyro, []string{"good", "fair", "poor"}[i%3], math.NaN(), 0)})
	}
	want := make([]Result, len(rds))
	for i, rd := range rds {
		var err error
		if want[i], err = Measure(rd, mc); err != nil {
			t.Fatal(err)
		}
	}
	done := make(chan *Measurer)
	for g := 0; g < 4; g++ {
		go func() {
			f := ms.Fork()
			for i, rd := range rds {
				got, err := f.Measure(rd)
				if err != nil || *got.Pole.MonteCarlo != *want[i].Pole.MonteCarlo || *got.Line.MonteCarlo != *want[i].Line.MonteCarlo {
					t.Errorf("fork, reading %d: %+v, want %+v (%v)", i, got.Pole.MonteCarlo, want[i].Pole.MonteCarlo, err)
				}
			}
			done <- f
		}()
	}
	var forks []*Measurer
	for g := 0; g < 4; g++ {
		forks = append(forks, <-done)
	}
	if n := len(ms.sc.tables.m); n != 3 { // one table per rating's standard errors
		t.Errorf("shared tables: %d, want 3", n)
	}
	for _, f := range forks {
		if f.sc.tables != ms.sc.tables {
			t.Errorf("a fork keeps tables of its own")
		}
	}
}
