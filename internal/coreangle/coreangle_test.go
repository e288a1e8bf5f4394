package coreangle

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"

	"corvane/internal/geom"
)

func near(a, b, tol float64) bool { return math.Abs(a-b) <= tol }

var allConventions = func() (cs []Convention) {
	for _, r := range []RefLine{Bottom, Top} {
		for _, a := range []Apex{DownHole, UpHole} {
			for _, s := range []Sense{Clockwise, Anticlockwise} {
				cs = append(cs, Convention{r, a, s})
			}
		}
	}
	return cs
}()

// Derived cases from the project's reference list (references/README.md, section 2,
// "consequences of the conventions"): hole 000/-60, bottom-of-hole line, beta to
// the down-hole apex. beta 90 and 270 tell clockwise from anticlockwise.
func TestDerivedCasesHole000(t *testing.T) {
	h := geom.HoleDirection(0, -60)
	for _, c := range []struct {
		alpha, beta, dd, dip float64
	}{
		{30, 180, 0, 30}, // conventions.md "Check" paragraph
		{20, 0, 0, 80},
		{45, 0, 180, 75},
		{20, 180, 0, 40},
		{70, 180, 180, 10},
		{45, 90, 243.4, 52.2},
		{45, 270, 116.6, 52.2},
	} {
		p, w := Plane(h, c.alpha, c.beta, Convention{})
		if !near(p.Dip, c.dip, 0.05) || !near(p.DipDirection, c.dd, 0.05) {
			t.Errorf("alpha %v beta %v: %.2f/%.2f (dd/dip), want %.1f/%.1f", c.alpha, c.beta, p.DipDirection, p.Dip, c.dd, c.dip)
		}
		if w != 0 {
			t.Errorf("alpha %v beta %v: unexpected warning %q", c.alpha, c.beta, w)
		}
		// references/README.md: top line + up-hole apex gives the same as bottom + down-hole.
		q, _ := Plane(h, c.alpha, c.beta, Convention{RefLine: Top, BetaApex: UpHole})
		if !near(q.Dip, p.Dip, 1e-9) || !near(q.DipDirection, p.DipDirection, 1e-9) {
			t.Errorf("top+uphole %+v != bottom+downhole %+v", q, p)
		}
	}
	// conventions.md "Check" paragraph: alpha 30 with beta 0 is a vertical plane
	// striking east-west.
	p, _ := Plane(h, 30, 0, Convention{})
	if !near(p.Dip, 90, 1e-9) || !near(math.Mod(p.Strike(), 180), 90, 1e-9) {
		t.Errorf("alpha 30 beta 0: %+v, want vertical E-W plane", p)
	}
}

// Common practice: in a vertical hole dip = 90 - alpha and there is no dip direction.
func TestVerticalHole(t *testing.T) {
	for _, h := range []geom.Vec3{geom.HoleDirection(0, -90), geom.HoleDirection(123, -90), geom.HoleDirection(0, 90)} {
		for _, alpha := range []float64{0, 10, 37.5, 60, 90} {
			for _, beta := range []float64{0, 77, 200} {
				p, w := Plane(h, alpha, beta, Convention{})
				if !near(p.Dip, 90-alpha, 1e-9) || !math.IsNaN(p.DipDirection) {
					t.Errorf("vertical hole alpha %v: %+v, want dip %v and no dip direction", alpha, p, 90-alpha)
				}
				if !w.Has(Vertical) || !w.Has(NearVertical) {
					t.Errorf("vertical hole warnings %q", w)
				}
				l, _ := Line(h, alpha, beta, 0, Convention{})
				// gamma 0 is the dip line of the plane, so its plunge is the dip.
				if !near(l.Plunge, 90-alpha, 1e-9) || !math.IsNaN(l.Trend) {
					t.Errorf("vertical hole line %+v", l)
				}
			}
		}
		if _, b, w := Angles(h, geom.Plane{Dip: 30, DipDirection: 10}, Convention{}); !math.IsNaN(b) || !w.Has(Vertical) {
			t.Errorf("Angles in a vertical hole: beta %v, %q", b, w)
		}
		if _, err := Gamma(h, geom.Plane{Dip: 30, DipDirection: 10}, geom.Line{Trend: 10, Plunge: 30}, Convention{}); err != ErrVertical {
			t.Errorf("Gamma in a vertical hole: %v", err)
		}
	}
}

// Common practice: alpha = 90 is a plane perpendicular to the core axis, alpha = 0
// a plane containing it; at any hole direction.
func TestAlphaLimits(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 4))
	for i := 0; i < 1000; i++ {
		h := geom.HoleDirection(r.Float64()*360, -89*r.Float64())
		beta := r.Float64() * 360
		p, w := Plane(h, 90, beta, Convention{})
		if a := geom.AxialAngle(p.Normal(), h); a > 1e-9 {
			t.Fatalf("alpha 90: normal %v deg off the core axis", a)
		}
		if !w.Has(AlphaHigh) {
			t.Fatal("alpha 90 without AlphaHigh")
		}
		p, _ = Plane(h, 0, beta, Convention{})
		if a := geom.AxialAngle(p.Normal(), h); !near(a, 90, 1e-9) {
			t.Fatalf("alpha 0: normal at %v deg to the axis", a)
		}
	}
}

// Hand-derived from conventions.md: hole 000/-60, alpha 30 beta 180 is the plane
// 000/30; gamma 0 is along the ellipse axis toward the down-hole apex, i.e. the dip
// line 000/30; gamma 90 clockwise looking along the down-hole normal is the strike
// line toward east (090/00); anticlockwise gives the same axis; gamma 45 bisects.
func TestLineHandCase(t *testing.T) {
	h := geom.HoleDirection(0, -60)
	for _, c := range []struct {
		gamma, trend, plunge float64
		s                    Sense
	}{
		{0, 0, 30, Clockwise},
		{90, 90, 0, Clockwise},
		{90, 270, 0, Anticlockwise}, // horizontal: either end; compared as an axis below
		{180, 0, 30, Clockwise},
		{45, 90 - geom.Deg(math.Atan(math.Cos(geom.Rad(30)))), geom.Deg(math.Asin(math.Sin(geom.Rad(30)) / math.Sqrt2)), Clockwise},
		{45, 270 + geom.Deg(math.Atan(math.Cos(geom.Rad(30)))), geom.Deg(math.Asin(math.Sin(geom.Rad(30)) / math.Sqrt2)), Anticlockwise},
	} {
		l, _ := Line(h, 30, 180, c.gamma, Convention{GammaSense: c.s})
		if a := geom.AxialAngle(l.Vec(), geom.Line{Trend: c.trend, Plunge: c.plunge}.Vec()); a > 1e-9 {
			t.Errorf("gamma %v %v: %+v, want %v/%v", c.gamma, c.s, l, c.trend, c.plunge)
		}
	}
}

// Independent route: build the core frame by rotation matrices with gonum/mat and
// rotate the normal written in core coordinates into the world. Core frame: x' the
// reference line, y' = h x r, z' the down-hole axis; the normal in that frame is
// (-cos a cos b, -cos a sin b, sin a) by the definition of alpha and beta. The frame
// starts with the axis north and the reference line straight down (bottom of a
// horizontal hole), then turns about East by -plunge and about Up by -azimuth.
func TestAgainstRotationMatrices(t *testing.T) {
	rot := func(axis int, th float64) *mat.Dense {
		s, c := math.Sincos(th)
		switch axis {
		case 0:
			return mat.NewDense(3, 3, []float64{1, 0, 0, 0, c, -s, 0, s, c})
		default:
			return mat.NewDense(3, 3, []float64{c, -s, 0, s, c, 0, 0, 0, 1})
		}
	}
	// Columns: r0 = down, (h x r)0 = west, h0 = north.
	start := mat.NewDense(3, 3, []float64{0, -1, 0, 0, 0, 1, -1, 0, 0})
	r := rand.New(rand.NewPCG(5, 6))
	for i := 0; i < 2000; i++ {
		az, dip := r.Float64()*360, -1-88*r.Float64()
		alpha, beta := r.Float64()*90, r.Float64()*360
		var R, M mat.Dense
		R.Mul(rot(2, -geom.Rad(az)), rot(0, geom.Rad(dip)))
		M.Mul(&R, start)
		sa, ca := math.Sincos(geom.Rad(alpha))
		sb, cb := math.Sincos(geom.Rad(beta))
		var nw mat.VecDense
		nw.MulVec(&M, mat.NewVecDense(3, []float64{-ca * cb, -ca * sb, sa}))
		want := geom.PlaneOf(geom.Vec3{X: nw.AtVec(0), Y: nw.AtVec(1), Z: nw.AtVec(2)})
		var hw mat.VecDense
		hw.MulVec(&M, mat.NewVecDense(3, []float64{0, 0, 1}))
		if a := geom.Angle(geom.Vec3{X: hw.AtVec(0), Y: hw.AtVec(1), Z: hw.AtVec(2)}, geom.HoleDirection(az, dip)); a > 1e-9 {
			t.Fatalf("matrix frame axis off by %v", a)
		}
		got, _ := Plane(geom.HoleDirection(az, dip), alpha, beta, Convention{})
		if a := geom.AxialAngle(got.Normal(), want.Normal()); a > 1e-9 {
			t.Fatalf("hole %v/%v alpha %v beta %v: %+v, matrices give %+v", az, dip, alpha, beta, got, want)
		}
	}
}

// Property: for random holes, planes and lines on them, the inverse then the forward
// conversion give back the same plane and line to 1e-9 degrees, under every
// convention, away from the degenerate cases (near-vertical holes, alpha near 90).
func TestRoundTrip(t *testing.T) {
	r := rand.New(rand.NewPCG(8, 9))
	n := 0
	for n < 20000 {
		dip := -88 + 176*r.Float64() // upward holes too
		if math.Abs(dip) < 0.5 {
			continue
		}
		h := geom.HoleDirection(r.Float64()*360, dip)
		p := geom.Plane{Dip: r.Float64() * 90, DipDirection: r.Float64() * 360}
		c := allConventions[r.IntN(len(allConventions))]
		alpha, beta, w := Angles(h, p, c)
		if alpha > 89.9 || p.Dip < 1e-6 {
			continue
		}
		if w.Has(Vertical) || !(alpha >= 0 && alpha <= 90 && beta >= 0 && beta < 360) {
			t.Fatalf("angles %v %v %q", alpha, beta, w)
		}
		q, _ := Plane(h, alpha, beta, c)
		if !near(q.Dip, p.Dip, 1e-9) || math.Abs(geom.Angle(geom.FromTrendPlunge(q.DipDirection, 0), geom.FromTrendPlunge(p.DipDirection, 0))) > 1e-9 {
			t.Fatalf("%v hole dip %v: plane %+v -> alpha %v beta %v -> %+v", c, dip, p, alpha, beta, q)
		}
		// A line on the plane: rotate the dip vector about the normal.
		th := r.Float64() * math.Pi
		nv, dv := p.Normal(), p.DipVector()
		lv := dv.Scale(math.Cos(th)).Add(nv.Cross(dv).Scale(math.Sin(th)))
		l := geom.LineOf(lv)
		g, err := Gamma(h, p, l, c)
		if err != nil {
			t.Fatal(err)
		}
		if g < 0 || g >= 180 {
			t.Fatalf("gamma %v outside [0,180)", g)
		}
		m, _ := Line(h, alpha, beta, g, c)
		if a := geom.AxialAngle(m.Vec(), l.Vec()); a > 1e-9 {
			t.Fatalf("%v: line %+v -> gamma %v -> %+v (%v deg)", c, l, g, m, a)
		}
		if m2, _ := Line(h, alpha, beta, g+180, c); geom.AxialAngle(m2.Vec(), l.Vec()) > 1e-9 {
			t.Fatalf("gamma+180 gives another line")
		}
		n++
	}
}

// Clockwise and anticlockwise senses mirror each other: gamma g clockwise is
// -g anticlockwise; the up-hole apex is beta + 180 to the down-hole apex; the top
// line is beta + 180 to the bottom line.
func TestConventionRelations(t *testing.T) {
	r := rand.New(rand.NewPCG(10, 11))
	for i := 0; i < 1000; i++ {
		h := geom.HoleDirection(r.Float64()*360, -10-79*r.Float64())
		a, b, g := r.Float64()*89, r.Float64()*180, r.Float64()*360
		p1, _ := Plane(h, a, b, Convention{})
		p2, _ := Plane(h, a, b+180, Convention{BetaApex: UpHole})
		p3, _ := Plane(h, a, b+180, Convention{RefLine: Top})
		if geom.AxialAngle(p1.Normal(), p2.Normal()) > 1e-9 || geom.AxialAngle(p1.Normal(), p3.Normal()) > 1e-9 {
			t.Fatalf("convention relation broken: %+v %+v %+v", p1, p2, p3)
		}
		l1, _ := Line(h, a, b, g, Convention{})
		l2, _ := Line(h, a, b, 360-g, Convention{GammaSense: Anticlockwise})
		if geom.AxialAngle(l1.Vec(), l2.Vec()) > 1e-9 {
			t.Fatalf("sense relation broken: %+v %+v", l1, l2)
		}
		// The line lies on the plane.
		if x := math.Abs(l1.Vec().Dot(p1.Normal())); x > 1e-12 {
			t.Fatalf("line off plane by %v", x)
		}
	}
}

func TestWarnings(t *testing.T) {
	if _, w := Plane(geom.HoleDirection(0, -86), 40, 10, Convention{}); w != NearVertical {
		t.Errorf("-86 hole: %q", w)
	}
	if _, w := Plane(geom.HoleDirection(0, -84), 40, 10, Convention{}); w != 0 {
		t.Errorf("-84 hole: %q", w)
	}
	if _, w := Plane(geom.HoleDirection(0, -60), 85, 10, Convention{}); w != AlphaHigh {
		t.Errorf("alpha 85: %q", w)
	}
	if s := (NearVertical | Extrapolated).String(); s != "near-vertical hole; extrapolated below last survey station" {
		t.Errorf("String = %q", s)
	}
	if Warn(0).String() != "" || Warn(255).String() == "" {
		t.Error("String of empty/all")
	}
	if _, _, w := Angles(geom.HoleDirection(0, -60), geom.Plane{Dip: 30, DipDirection: 180}, Convention{}); !w.Has(AlphaHigh) {
		t.Error("Angles: plane normal to the axis must warn")
	}
}

func TestCheckAnglesAndGammaErrors(t *testing.T) {
	for _, c := range []struct {
		a, b, g float64
		has     bool
		field   string
	}{
		{-1, 0, 0, false, "alpha"}, {90.5, 0, 0, false, "alpha"}, {math.NaN(), 0, 0, false, "alpha"},
		{10, 361, 0, false, "beta"}, {10, math.NaN(), 0, false, "beta"},
		{10, 10, -5, true, "gamma"}, {10, 10, math.Inf(1), true, "gamma"},
	} {
		err := CheckAngles(c.a, c.b, c.g, c.has)
		if ae, ok := err.(*AngleError); !ok || ae.Field != c.field {
			t.Errorf("%+v: %v, want error on %s", c, err, c.field)
		}
	}
	if CheckAngles(90, 360, math.NaN(), false) != nil || CheckAngles(0, 0, 360, true) != nil {
		t.Error("valid angles rejected")
	}
	h := geom.HoleDirection(30, -50)
	p := geom.Plane{Dip: 40, DipDirection: 200}
	if _, err := Gamma(h, p, p.Pole(), Convention{}); err == nil {
		t.Error("a line along the normal must be an error")
	}
	if _, err := Gamma(h, p, geom.Line{Trend: 200, Plunge: 45}, Convention{}); err == nil {
		t.Error("a line 5 degrees off the plane must be an error")
	}
	if _, err := Gamma(h, p, geom.Line{Trend: 200, Plunge: 40.5}, Convention{}); err != nil {
		t.Errorf("a line 0.5 degrees off the plane is projected: %v", err)
	}
}

// Common practice: true thickness = apparent thickness x sin(alpha).
func TestTrueThickness(t *testing.T) {
	for _, c := range []struct{ app, alpha, want float64 }{{2, 90, 2}, {2, 30, 1}, {5, 0, 0}, {1, 45, math.Sqrt2 / 2}} {
		if got := TrueThickness(c.app, c.alpha); !near(got, c.want, 1e-12) {
			t.Errorf("TrueThickness(%v, %v) = %v, want %v", c.app, c.alpha, got, c.want)
		}
	}
}

func TestParse(t *testing.T) {
	if r, err := ParseRefLine("TOP"); err != nil || r != Top {
		t.Error(r, err)
	}
	if a, err := ParseApex("uphole"); err != nil || a != UpHole {
		t.Error(a, err)
	}
	if s, err := ParseSense("Anticlockwise"); err != nil || s != Anticlockwise {
		t.Error(s, err)
	}
	for _, f := range []func() error{
		func() error { _, err := ParseRefLine("left"); return err },
		func() error { _, err := ParseApex("up"); return err },
		func() error { _, err := ParseSense("ccw"); return err },
	} {
		if f() == nil {
			t.Error("bad word accepted")
		}
	}
	if s := (Convention{}).String(); s != "bottom/downhole/clockwise" {
		t.Error(s)
	}
}

func TestPlaneDoesNotAllocate(t *testing.T) {
	h := geom.HoleDirection(30, -55)
	if n := testing.AllocsPerRun(100, func() { _, _ = Plane(h, 40, 120, Convention{}) }); n != 0 {
		t.Fatalf("Plane allocates %v", n)
	}
	if n := testing.AllocsPerRun(100, func() { _, _ = Line(h, 40, 120, 33, Convention{}) }); n != 0 {
		t.Fatalf("Line allocates %v", n)
	}
}

var sinkPlane geom.Plane

// BenchmarkPlane is one alpha/beta -> dip/dip direction conversion.
func BenchmarkPlane(b *testing.B) {
	h := geom.HoleDirection(30, -55)
	b.ReportAllocs()
	beta := 0.0
	for b.Loop() {
		beta += 1.1
		if beta > 360 {
			beta = 0
		}
		sinkPlane, _ = Plane(h, 40, beta, Convention{})
	}
}

var sinkLine geom.Line

// BenchmarkLine is one alpha/beta/gamma -> trend/plunge conversion.
func BenchmarkLine(b *testing.B) {
	h := geom.HoleDirection(30, -55)
	b.ReportAllocs()
	for b.Loop() {
		sinkLine, _ = Line(h, 40, 120, 33, Convention{})
	}
}

// planeOf and lineOf are fast paths of geom.PlaneOf and geom.LineOf; they must agree.
func TestPlaneOfMatchesGeom(t *testing.T) {
	r := rand.New(rand.NewPCG(12, 13))
	for i := 0; i < 10000; i++ {
		n := geom.Vec3{X: r.NormFloat64(), Y: r.NormFloat64(), Z: r.NormFloat64()}.Unit()
		a, b := planeOf(n), geom.PlaneOf(n)
		if !near(a.Dip, b.Dip, 1e-12) || !near(a.DipDirection, b.DipDirection, 1e-10) {
			t.Fatalf("%+v: %+v vs %+v", n, a, b)
		}
		if l, m := lineOf(n), geom.LineOf(n); !near(l.Plunge, m.Plunge, 1e-12) || !near(l.Trend, m.Trend, 1e-10) {
			t.Fatalf("%+v: %+v vs %+v", n, l, m)
		}
	}
	for _, n := range []geom.Vec3{{Z: 1}, {Z: -1}, {X: 1}, {Y: -1}} {
		a, b := planeOf(n), geom.PlaneOf(n)
		if a != b {
			t.Fatalf("%+v: %+v vs %+v", n, a, b)
		}
		if l, m := lineOf(n), geom.LineOf(n); l != m {
			t.Fatalf("%+v: %+v vs %+v", n, l, m)
		}
	}
}

// A plane read with alpha pushed past 90 or below 0 is the same plane as its
// folded reading: checked through the forward conversion.
func TestFold(t *testing.T) {
	h := geom.HoleDirection(35, -55)
	for _, c := range []struct{ a, b float64 }{{95, 40}, {-7, 300}, {45, 10}} {
		a, b := Fold(c.a, c.b)
		if a < 0 || a > 90 {
			t.Fatalf("Fold(%v, %v) alpha %v", c.a, c.b, a)
		}
		// The normal of the raw reading, from the package's formula
		// n = sin(alpha) h - cos(alpha) d, evaluated without range checks.
		n, _, _ := normal(h, c.a, c.b, Convention{})
		p, _ := Plane(h, a, geom.NormAzimuth(b), Convention{})
		if ang := geom.AxialAngle(n, p.Normal()); ang > 1e-9 {
			t.Errorf("Fold(%v, %v) = %v, %v: plane off by %v deg", c.a, c.b, a, b, ang)
		}
	}
}
