package desurvey

import (
	"errors"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"corvane/internal/geom"
)

func near(a, b, tol float64) bool { return math.Abs(a-b) <= tol }

// lapeyrouse builds the one-course example of Lapeyrouse, N.J. (2002) Formulas
// and Calculations for Drilling, Production and Workover, 2nd ed.: MD 3500 ft,
// inclination 15 (from vertical), azimuth 20 to MD 3600 ft, inclination 25,
// azimuth 45. Our dip = inclination - 90.
func lapeyrouse(t *testing.T, m Method) *Path {
	t.Helper()
	c := Collar{Azimuth: 20, Dip: 15 - 90, Depth: 3600}
	p, err := NewWith(c, []Station{{3500, 20, 15 - 90}, {3600, 45, 25 - 90}}, Options{Method: m, Unit: Feet})
	if err != nil {
		t.Fatal(err)
	}
	return p
}

// Lapeyrouse (2002), see lapeyrouse: published North/East/TVD increments for the
// course, to the hundredth of a foot.
func TestLapeyrouseCourse(t *testing.T) {
	for _, c := range []struct {
		m          Method
		n, e, tvd  float64
		wantDogleg bool
	}{
		{MinimumCurvature, 27.22, 19.45, 94.01, true},
		{BalancedTangential, 27.10, 19.37, 93.61, false},
		{Tangential, 29.88, 29.88, 90.63, false},
	} {
		p := lapeyrouse(t, c.m)
		a, err := p.At(3500)
		if err != nil {
			t.Fatal(err)
		}
		b, err := p.At(3600)
		if err != nil {
			t.Fatal(err)
		}
		d := b.Pos.Sub(a.Pos)
		if !near(d.Y, c.n, 0.006) || !near(d.X, c.e, 0.006) || !near(-d.Z, c.tvd, 0.006) {
			t.Errorf("%v: N/E/TVD = %.4f %.4f %.4f, want %.2f %.2f %.2f (Lapeyrouse 2002)", c.m, d.Y, d.X, -d.Z, c.n, c.e, c.tvd)
		}
		if b.Extrapolated {
			t.Errorf("%v: the last station itself is not extrapolated", c.m)
		}
	}
}

// Lapeyrouse (2002): dogleg 12.95 degrees (0.22605 rad), 12.95 deg/100 ft. The book
// prints RF = 1.00408, a misprint: its own N/E/TVD need 1.00428 = 2/DL tan(DL/2)
// (noted in the project's reference list), so we test the corrected value.
func TestLapeyrouseDoglegAndRF(t *testing.T) {
	iv := lapeyrouse(t, MinimumCurvature).Intervals()
	last := iv[len(iv)-1]
	if !near(last.Dogleg, 12.95, 0.005) || !near(geom.Rad(last.Dogleg), 0.22605, 0.000005) {
		t.Errorf("dogleg = %v deg, want 12.95 (0.22605 rad)", last.Dogleg)
	}
	if !near(last.Severity, 12.95, 0.005) {
		t.Errorf("severity = %v, want 12.95 deg/100 ft", last.Severity)
	}
	if rf := ratioFactor(geom.Rad(last.Dogleg)); !near(rf, 1.00428, 0.000005) {
		t.Errorf("RF = %v, want 1.00428 (corrected from the misprinted 1.00408)", rf)
	}
	if iv[0].Dogleg != 0 {
		t.Errorf("straight first course has dogleg %v", iv[0].Dogleg)
	}
}

// Lapeyrouse (2002): 6121 ft (incl 32, az 14) to 6332 ft (incl 36, az 8) is a dogleg
// severity of 2.47 deg/100 ft.
func TestLapeyrouseSeverity(t *testing.T) {
	p, err := NewWith(Collar{Azimuth: 14, Dip: 32 - 90, Depth: 7000},
		[]Station{{6121, 14, 32 - 90}, {6332, 8, 36 - 90}}, Options{Unit: Feet})
	if err != nil {
		t.Fatal(err)
	}
	iv := p.Intervals()
	if s := iv[len(iv)-1].Severity; !near(s, 2.47, 0.005) {
		t.Fatalf("severity = %v, want 2.47 deg/100 ft", s)
	}
	// The same course in metres: severity per 30 units (common practice).
	pm, _ := New(Collar{Azimuth: 14, Dip: 32 - 90, Depth: 7000}, []Station{{6121, 14, 32 - 90}, {6332, 8, 36 - 90}}, MinimumCurvature)
	if s := pm.Intervals()[1].Severity; !near(s, 2.47*30/100, 0.002) {
		t.Fatalf("metres severity = %v", s)
	}
}

// Exact geometry (no source needed): a hole building at 3 deg/30 m from vertical
// in a fixed azimuth is a circular arc of radius R = 572.957795 m, and minimum
// curvature reproduces it exactly at any station spacing: vertical depth
// R sin(s/R), horizontal offset R (1 - cos(s/R)); 405.142342 and 167.815453 at 450 m.
func TestCircularArc(t *testing.T) {
	const az = 63
	incl := func(s float64) float64 { return s / 10 } // degrees from vertical
	var st []Station
	for _, s := range []float64{0, 17, 90, 91.5, 230, 300, 450} {
		st = append(st, Station{s, az, incl(s) - 90})
	}
	p, err := New(Collar{East: 1000, North: 2000, Elevation: 300, Azimuth: az, Dip: -90, Depth: 450}, st, MinimumCurvature)
	if err != nil {
		t.Fatal(err)
	}
	R := 30 / geom.Rad(3)
	if !near(R, 572.957795, 1e-6) {
		t.Fatalf("R = %v", R)
	}
	for _, s := range []float64{0, 5, 17, 50, 91, 91.5, 150, 229.9, 300, 401, 450} {
		pt, err := p.At(s)
		if err != nil {
			t.Fatal(err)
		}
		v := R * math.Sin(s/R)
		h := R * (1 - math.Cos(s/R))
		gotH := math.Hypot(pt.Pos.X-1000, pt.Pos.Y-2000)
		if !near(300-pt.Pos.Z, v, 1e-9) || !near(gotH, h, 1e-9) {
			t.Errorf("s=%v: vertical %v horizontal %v, want %v %v", s, 300-pt.Pos.Z, gotH, v, h)
		}
		if s > 0 {
			if tr, _ := pt.Pos.Sub(geom.Vec3{X: 1000, Y: 2000, Z: 300}).TrendPlunge(); !near(tr, az, 1e-9) {
				t.Errorf("s=%v: offset trend %v, want %v", s, tr, az)
			}
		}
		if a := geom.Angle(pt.Dir, geom.HoleDirection(az, incl(s)-90)); a > 1e-9 {
			t.Errorf("s=%v: direction off by %v deg", s, a)
		}
	}
	pt, _ := p.At(450)
	if !near(300-pt.Pos.Z, 405.142342, 1e-6) || !near(math.Hypot(pt.Pos.X-1000, pt.Pos.Y-2000), 167.815453, 1e-6) {
		t.Errorf("end = %+v, want vertical 405.142342 horizontal 167.815453", pt.Pos)
	}
	for _, iv := range p.Intervals() {
		if !near(iv.Severity, 3, 1e-9) {
			t.Errorf("interval %v-%v severity %v, want 3 deg/30 m", iv.From, iv.To, iv.Severity)
		}
	}
}

// Sawaryn & Thorogood (2005): a point interpolated inside a course lies on the
// same arc, so splitting the course there and re-running minimum curvature on
// the two halves gives the same end point and the same directions.
func TestInterpolationConsistency(t *testing.T) {
	r := rand.New(rand.NewPCG(7, 11))
	for k := 0; k < 300; k++ {
		c := Collar{East: r.Float64() * 1000, North: r.Float64() * 1000, Elevation: r.Float64() * 500,
			Azimuth: r.Float64() * 360, Dip: -30 - r.Float64()*59, Depth: 1000}
		st := []Station{{0, c.Azimuth, c.Dip}}
		d := 0.0
		for d < 800 {
			d += 5 + r.Float64()*100
			last := st[len(st)-1]
			az := geom.NormAzimuth(last.Azimuth + r.NormFloat64()*8)
			dip := math.Max(-89.5, math.Min(-5, last.Dip+r.NormFloat64()*6))
			st = append(st, Station{d, az, dip})
		}
		p, err := New(c, st, MinimumCurvature)
		if err != nil {
			t.Fatal(err)
		}
		i := 1 + r.IntN(len(st)-1)
		m := st[i-1].Depth + r.Float64()*(st[i].Depth-st[i-1].Depth)
		mid, err := p.At(m)
		if err != nil {
			t.Fatal(err)
		}
		az, dip := mid.Dir.AzimuthDip()
		split := append(append(append([]Station{}, st[:i]...), Station{m, az, dip}), st[i:]...)
		q, err := New(c, split, MinimumCurvature)
		if err != nil {
			t.Fatal(err)
		}
		for _, md := range []float64{m, st[i].Depth, st[len(st)-1].Depth, 1000} {
			a, _ := p.At(md)
			b, _ := q.At(md)
			if a.Pos.Sub(b.Pos).Norm() > 1e-8 || geom.Angle(a.Dir, b.Dir) > 1e-8 {
				t.Fatalf("case %d, md %v: %+v vs split %+v", k, md, a, b)
			}
		}
	}
}

func TestExtrapolationAndErrors(t *testing.T) {
	p, err := New(Collar{Azimuth: 90, Dip: -60, Depth: 200}, []Station{{50, 90, -60}, {100, 95, -58}}, MinimumCurvature)
	if err != nil {
		t.Fatal(err)
	}
	a, _ := p.At(100)
	b, err := p.At(150)
	if err != nil || !b.Extrapolated || a.Extrapolated {
		t.Fatalf("extrapolation flags: %v %v %v", a.Extrapolated, b.Extrapolated, err)
	}
	if d := b.Pos.Sub(a.Pos).Sub(a.Dir.Scale(50)).Norm(); d > 1e-9 {
		t.Fatalf("extrapolated point off the straight line by %v", d)
	}
	if _, err := p.At(200.0001); !errors.Is(err, ErrPastEnd) {
		t.Fatalf("past end: %v", err)
	}
	for _, bad := range []float64{-1, math.NaN()} {
		if _, err := p.At(bad); err == nil {
			t.Fatalf("At(%v) must fail", bad)
		}
	}
	if p.LastStation() != 100 || p.Depth() != 200 {
		t.Fatal("accessors")
	}
}

func TestNewValidation(t *testing.T) {
	c := Collar{Azimuth: 10, Dip: -60, Depth: 100}
	for _, tc := range []struct {
		c    Collar
		st   []Station
		want string
	}{
		{c, []Station{{10, 0, -60}, {10, 0, -60}}, "repeats"},
		{c, []Station{{20, 0, -60}, {10, 0, -60}}, "sorted"},
		{c, []Station{{10, 0, -95}}, "dip -95"},
		{c, []Station{{10, 361, -60}}, "azimuth 361"},
		{c, []Station{{10, math.NaN(), -60}}, "azimuth NaN"},
		{c, []Station{{0, 0, -60}, {10, 180, 60}}, "station 2 at depth 10"},
		{c, []Station{{math.Inf(1), 0, -60}}, "finite"},
		{c, []Station{{-1, 0, -60}}, "negative"},
		{c, []Station{{120, 0, -60}}, "past the hole's final depth"},
		{Collar{Azimuth: 10, Dip: -60}, nil, "greater than 0"},
		{Collar{Azimuth: 10, Dip: math.NaN(), Depth: 5}, nil, "collar dip"},
		{c, []Station{{0, 0, -60}, {10, 180, 60}}, "opposite"},
	} {
		_, err := New(tc.c, tc.st, MinimumCurvature)
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%+v %+v: err = %v, want %q", tc.c, tc.st, err, tc.want)
		}
	}
	var se *StationError
	if _, err := New(c, []Station{{10, 0, -60}, {5, 0, -60}}, MinimumCurvature); !errors.As(err, &se) || se.Index != 1 || se.Depth != 5 {
		t.Errorf("station error %#v", err)
	}
	// A station at depth 0 replaces the collar direction.
	p, err := New(c, []Station{{0, 200, -45}}, MinimumCurvature)
	if err != nil {
		t.Fatal(err)
	}
	pt, _ := p.At(10)
	if az, dip := pt.Dir.AzimuthDip(); !near(az, 200, 1e-9) || !near(dip, -45, 1e-9) {
		t.Fatalf("direction %v %v", az, dip)
	}
	if _, err := ParseMethod("spline"); err == nil {
		t.Fatal("unknown method accepted")
	}
	if m, err := ParseMethod("balanced-tangential"); err != nil || m != BalancedTangential {
		t.Fatal(m, err)
	}
}

// The ratio factor series matches the closed form where both are accurate.
func TestRatioFactorSeries(t *testing.T) {
	for _, dl := range []float64{0.0019999, 0.002, 0.001, 0.05} {
		exact := 2 / dl * math.Tan(dl/2)
		if !near(ratioFactor(dl), exact, 1e-14) {
			t.Errorf("RF(%v) = %v, closed form %v", dl, ratioFactor(dl), exact)
		}
	}
	if ratioFactor(0) != 1 {
		t.Error("RF(0) != 1")
	}
}

func TestAtDoesNotAllocate(t *testing.T) {
	p := longHole(t, 500)
	allocs := testing.AllocsPerRun(100, func() { _, _ = p.At(1234.5) })
	if allocs != 0 {
		t.Fatalf("At allocates %v times", allocs)
	}
}

func longHole(tb testing.TB, n int) *Path {
	tb.Helper()
	st := make([]Station, n)
	for i := range st {
		st[i] = Station{Depth: float64(i) * 3, Azimuth: geom.NormAzimuth(40 + float64(i)*0.05), Dip: -70 + float64(i%50)*0.1}
	}
	p, err := New(Collar{Azimuth: 40, Dip: -70, Depth: float64(n) * 3}, st, MinimumCurvature)
	if err != nil {
		tb.Fatal(err)
	}
	return p
}

// BenchmarkAt looks up a depth on a hole with 5,000 survey stations (15 km at 3 m).
func BenchmarkAt(b *testing.B) {
	p := longHole(b, 5000)
	b.ReportAllocs()
	md := 0.0
	for b.Loop() {
		md += 7.77
		if md >= 14990 {
			md = 0
		}
		if _, err := p.At(md); err != nil {
			b.Fatal(err)
		}
	}
}

// atRef is At's minimum-curvature interpolation as it was before the sine
// of each interval's dogleg was kept with the path: the reference At is held
// to bit for bit.
func atRef(p *Path, md float64) Point {
	last := len(p.md) - 1
	if md >= p.md[last] {
		return Point{Depth: md, Pos: p.pos[last].Add(p.dir[last].Scale(md - p.md[last])), Dir: p.dir[last], Extrapolated: md > p.md[last]}
	}
	i := 0
	for p.md[i+1] <= md {
		i++
	}
	s := md - p.md[i]
	L := p.md[i+1] - p.md[i]
	t1, t2 := p.dir[i], p.dir[i+1]
	dl := p.dl[i]
	f := s / L
	var t geom.Vec3
	if dl < 1e-12 {
		t = t1.Scale(1 - f).Add(t2.Scale(f)).Unit()
	} else {
		sd := math.Sin(dl)
		t = t1.Scale(math.Sin((1-f)*dl) / sd).Add(t2.Scale(math.Sin(f*dl) / sd))
	}
	return Point{Depth: md, Dir: t, Pos: p.pos[i].Add(t1.Add(t).Scale(s / 2 * ratioFactor(f*dl)))}
}

// At gives, bit for bit, what it gave before, on random minimum-curvature
// paths (straight intervals, tiny and large doglegs; evenly and unevenly
// spaced stations) at random depths, at every station and just around it.
func TestAtMatchesReference(t *testing.T) {
	r := rand.New(rand.NewPCG(31, 37))
	for k := 0; k < 300; k++ {
		c := Collar{East: r.Float64() * 1e5, North: r.Float64() * 1e6, Elevation: 300, Azimuth: r.Float64() * 360, Dip: -r.Float64() * 90, Depth: 600}
		var st []Station
		az, dip := c.Azimuth, c.Dip
		even := k%2 == 0 // evenly spaced stations, as most surveys are, or not
		step := func() float64 {
			if even {
				return 30
			}
			return 5 + r.Float64()*40
		}
		for d := 0.0; d < 580; d += step() {
			switch r.IntN(3) {
			case 0: // straight on
			case 1:
				az, dip = math.Mod(az+r.NormFloat64()*1e-6+360, 360), math.Max(-90, math.Min(90, dip+r.NormFloat64()*1e-6))
			default:
				az, dip = math.Mod(az+r.NormFloat64()*20+360, 360), math.Max(-90, math.Min(90, dip+r.NormFloat64()*10))
			}
			st = append(st, Station{Depth: d, Azimuth: az, Dip: dip})
		}
		p, err := New(c, st, MinimumCurvature)
		if err != nil {
			continue
		}
		depths := []float64{0, c.Depth}
		for _, s := range st {
			depths = append(depths, s.Depth, math.Nextafter(s.Depth, 0), math.Nextafter(s.Depth, 1e9))
		}
		for i := 0; i < 200; i++ {
			depths = append(depths, r.Float64()*c.Depth)
		}
		for _, md := range depths {
			if md < 0 || md > c.Depth {
				continue
			}
			got, err := p.At(md)
			want := atRef(p, md)
			if err != nil || got != want {
				t.Fatalf("hole %d at %v: %+v %v, before %+v", k, md, got, err, want)
			}
		}
	}
}
