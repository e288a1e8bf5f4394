package geotech

import (
	"math"
	"strings"
	"testing"

	"corvane/internal/coreinterval"
	"corvane/internal/dirstat"
	"corvane/internal/fabric"
	"corvane/internal/geom"
	"corvane/internal/kinematic"
	"corvane/internal/projection"
	"corvane/internal/structdomain"
)

// testInput: a vertical hole with horizontal planes every 2 m from 1 to
// 19 m, one unoriented row at alpha 90 (20 m) and one row the conversion
// could not orient.
func testInput() Input {
	down := geom.Vec3{Z: -1}
	var in Input
	for d := 1.0; d < 20; d += 2 {
		in.Rows = append(in.Rows, Row{HoleID: "H", Depth: d, HasPlane: true, HasHole: true, Hole: down, Alpha: 90})
	}
	in.Rows = append(in.Rows,
		Row{HoleID: "H", Depth: 20, HasHole: true, Hole: down, Alpha: 90, Unoriented: true},
		Row{HoleID: "H", Depth: 21, Alpha: 40, Error: "beta is empty"})
	return in
}

var flatSet = fabric.Sets{Windows: []dirstat.Window{{Name: "flat", Centre: geom.Vec3{Z: -1}, Cone: 10}}}

// TestSpacingReport: exact spacing 2 m along a hole square to the planes.
func TestSpacingReport(t *testing.T) {
	rep, err := Spacing(testInput(), SpacingOptions{Sets: flatSet, Cap: dirstat.DefaultTerzaghiCap})
	if err != nil {
		t.Fatal(err)
	}
	d := rep.Domains[0]
	s := d.Sets[0]
	if s.Count != 11 || s.UnorientedCounted != 1 || float64(s.True.Median) != 2 || d.Unoriented.Total != 1 {
		t.Errorf("set %+v, unoriented %+v", s, d.Unoriented)
	}
	if len(rep.RowsSkipped) != 1 || rep.RowsSkipped[0].Reason != fabric.SkipNotOriented {
		t.Errorf("skipped %+v", rep.RowsSkipped)
	}
	// a domain over the top 10 m: five planes
	rep, err = Spacing(testInput(), SpacingOptions{Sets: flatSet, Cap: 3,
		Domains: []structdomain.Domain{{Name: "top", Parts: []structdomain.Part{{Hole: "H", From: 0, To: 10}}}}})
	if err != nil {
		t.Fatal(err)
	}
	if rep.Domains[0].Sets[0].Count != 5 || float64(rep.Domains[0].Holes[0].Length) != 10 {
		t.Errorf("domain %+v", rep.Domains[0])
	}
	if _, err := Spacing(testInput(), SpacingOptions{Cap: 3}); err != ErrNoSets {
		t.Errorf("no sets: %v", err)
	}
	if _, err := Spacing(testInput(), SpacingOptions{Sets: flatSet, Cap: 0.5}); err == nil {
		t.Error("cap 0.5 accepted")
	}
	n, err := UnorientedNet(testInput(), flatSet, projection.EqualArea, "x")
	if err != nil || len(n.Circles) != 1 || len(n.Poles) != 10 || len(n.Sets) != 1 {
		t.Errorf("net: %v %d circles %d poles", err, len(n.Circles), len(n.Poles))
	}
}

// TestSlopeReport: horizontal planes under a 60/180 face with friction 30
// are in no critical zone; planes of 45/180 are all planar cases.
func TestSlopeReport(t *testing.T) {
	p := kinematic.Params{Face: geom.Plane{Dip: 60, DipDirection: 180}, Friction: 30, Lateral: 20}
	in := testInput()
	rep, err := Slope(in, p, flatSet, nil)
	if err != nil {
		t.Fatal(err)
	}
	if rep.All.Poles != 10 || rep.All.Planar.Count != 0 || rep.Unoriented != 1 || rep.Caution != kinematic.Caution {
		t.Errorf("%+v", rep.All)
	}
	for i := range in.Rows {
		if in.Rows[i].HasPlane {
			in.Rows[i].Plane = geom.Plane{Dip: 45, DipDirection: 180}
		}
	}
	rep, err = Slope(in, p, fabric.Sets{}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if rep.All.Planar.Count != 10 || float64(rep.All.Planar.Percent) != 100 || rep.All.Intersections != 0 {
		t.Errorf("%+v", rep.All)
	}
	nets, err := SlopeNets(in, p, fabric.Sets{}, nil, projection.EqualArea, "x")
	if err != nil || len(nets) != len(SlopeChecks) || len(nets[0].Zones) == 0 || nets[0].Face == nil {
		t.Errorf("nets: %v", err)
	}
	if _, err := Slope(Input{Rows: []Row{{Unoriented: true}}}, p, fabric.Sets{}, nil); err == nil || !strings.Contains(err.Error(), "no planes") {
		t.Errorf("no planes: %v", err)
	}
}

func TestDomainsReport(t *testing.T) {
	doms := []structdomain.Domain{
		{Name: "top", Parts: []structdomain.Part{{Hole: "H", From: 0, To: 10}}},
		{Name: "bottom", Parts: []structdomain.Part{{Hole: "H", From: 10, To: math.Inf(1)}}},
	}
	in := testInput()
	// spread the planes a little so that the test has dispersion
	for i := range in.Rows {
		if in.Rows[i].HasPlane {
			in.Rows[i].Plane = geom.Plane{Dip: 5 + float64(i%3), DipDirection: float64(90 * (i % 4))}
		}
	}
	rep, err := Domains(in, flatSet, doms)
	if err != nil {
		t.Fatal(err)
	}
	if len(rep.Domains) != 2 || rep.Domains[0].Sets[0].Count != 5 || rep.Domains[1].Unoriented != 1 {
		t.Errorf("%+v", rep.Domains)
	}
	if tst := rep.Tests[0]; len(tst.Domains) != 2 || tst.DF1 != 2 || tst.DF2 != 16 || !(float64(tst.P) > 0) {
		t.Errorf("test %+v", tst)
	}
	if _, err := Domains(in, flatSet, nil); err == nil {
		t.Error("no domains accepted")
	}
}

// TestIntervalsReport: the Deere & Deere (1988) run (values from memory; see
// coreinterval) through the report, in metres and in feet.
func TestIntervalsReport(t *testing.T) {
	iv := coreinterval.Interval{From: 10, To: 12, Recovered: 1.36, Solid: math.NaN(), Sound: math.NaN(),
		Pieces: []float64{0.38, 0.05, 0.17, 0.04, 0.06, 0.03, 0.20, 0.43}, NaturalBreaks: 8, InducedBreaks: -1}
	rep := Intervals([]IntervalRow{{Line: 2, HoleID: "A", Interval: iv}}, false)
	if float64(rep.Holes[0].Intervals[0].RQD) != 59 || float64(rep.All.RQD) != 59 || rep.Holes[0].Intervals[0].Induced != nil {
		t.Errorf("%+v", rep.Holes[0])
	}
	// the same numbers read as feet: the 0.328 ft threshold drops the 0.17 and 0.20 pieces
	rep = Intervals([]IntervalRow{{HoleID: "A", Interval: iv}}, true)
	if got := float64(rep.All.RQD); math.Abs(got-100*(0.38+0.43)/2) > 1e-6 || rep.LengthUnit != "ft" {
		t.Errorf("feet: RQD %v", got)
	}
}

// TestSlopeReportDomain: with a domain only its rows are checked. Planes of
// 45/180 above 10 m (planar cases under a 60/180 face, friction 30) and flat
// below; the domain "top" (0..10 m) counts the five planar cases out of five
// poles, its set mean is the 45/180 of its members, the set keeps its name,
// and the unoriented row at 20 m is outside it. The nets draw the domain's
// poles only and name the domain.
func TestSlopeReportDomain(t *testing.T) {
	p := kinematic.Params{Face: geom.Plane{Dip: 60, DipDirection: 180}, Friction: 30, Lateral: 20}
	in := testInput()
	for i := range in.Rows {
		if in.Rows[i].HasPlane && in.Rows[i].Depth < 10 {
			in.Rows[i].Plane = geom.Plane{Dip: 45, DipDirection: 180}
		}
	}
	sets := fabric.Sets{Windows: []dirstat.Window{{Name: "all", Centre: geom.Vec3{Z: -1}, Cone: 90}}}
	whole, err := Slope(in, p, sets, nil)
	if err != nil {
		t.Fatal(err)
	}
	if whole.All.Poles != 10 || whole.All.Planar.Count != 5 || whole.Unoriented != 1 || whole.Domain != "" {
		t.Fatalf("whole hole: %+v unoriented %d", whole.All, whole.Unoriented)
	}
	top := structdomain.Domain{Name: "top", Parts: []structdomain.Part{{Hole: "H", From: 0, To: 10}}}
	rep, err := Slope(in, p, sets, &top)
	if err != nil {
		t.Fatal(err)
	}
	if rep.Domain != "top" || rep.All.Poles != 5 || rep.All.Planar.Count != 5 || float64(rep.All.Planar.Percent) != 100 || rep.Unoriented != 0 {
		t.Errorf("domain top: %q %+v unoriented %d", rep.Domain, rep.All, rep.Unoriented)
	}
	if len(rep.Sets) != 1 || rep.Sets[0].Name != "all" || rep.Sets[0].Count != 5 || !rep.Sets[0].Planar ||
		math.Abs(float64(*rep.Sets[0].Mean.Dip)-45) > 1e-9 || math.Abs(float64(*rep.Sets[0].Mean.DipDirection)-180) > 1e-9 {
		t.Errorf("domain top: sets %+v", rep.Sets)
	}
	nets, err := SlopeNets(in, p, sets, &top, projection.EqualArea, "x")
	if err != nil || len(nets[0].Poles) != 5 || nets[0].Subtitle != "x, domain top" || nets[0].Sets[0].Count != 5 {
		t.Errorf("nets of the domain: %v", err)
	}
	far := structdomain.Domain{Name: "far", Parts: []structdomain.Part{{Hole: "other", From: 0, To: math.Inf(1)}}}
	if _, err := Slope(in, p, sets, &far); err == nil || !strings.Contains(err.Error(), "domain far") {
		t.Errorf("empty domain: %v", err)
	}
}
