package service_test

import (
	"bytes"
	"encoding/xml"
	"io"
	"math"
	"strings"
	"testing"

	"corvane/internal/demo"
	"corvane/internal/domain"
	"corvane/internal/fabric"
	"corvane/internal/geom"
	"corvane/internal/service"
)

// Three planes dipping 30, 40 and 50 toward 000 (alpha 30, 20, 10 at beta 180
// in a hole 000/-60: dip = 60 - alpha there, by conventions.md and the
// references README cases) have poles 10 degrees apart on one vertical
// plane. Exact geometry: the mean pole is the middle one, R = 1 + 2 cos 10,
// and Fisher's (1953) k = (N - 1)/(N - R).
func TestStatisticsExactGeometry(t *testing.T) {
	s, ctx := newService(t)
	p, h := programme(t, s, ctx, domain.Project{})
	for _, a := range []float64{30, 20, 10} {
		must(s.CreateMeasurement(ctx, p.ID, domain.Measurement{HoleID: h.ID, Depth: 20, Alpha: a, Beta: f64(180), TypeCode: "BD"}))
	}
	must(s.CreateMeasurement(ctx, p.ID, domain.Measurement{HoleID: h.ID, Depth: 20, Alpha: 45, Beta: f64(90), TypeCode: "JN"}))
	res := must(s.Statistics(ctx, p.ID, service.StatsQuery{MeasurementQuery: service.MeasurementQuery{Types: []string{"BD"}},
		SetQuery: service.SetQuery{Sets: "type"}, Weighting: "terzaghi"}))
	if res.Rows != 3 || res.Planes == nil || len(res.Planes.Sets) != 1 || res.Planes.Sets[0].Name != "BD" || res.Caution == "" {
		t.Fatalf("result %+v", res)
	}
	set := res.Planes.Sets[0]
	u := set.Unweighted
	nearNum(t, "mean dip", u.Mean.Dip, 40, 1e-6)
	nearNum(t, "mean dip direction", u.Mean.DipDirection, 0, 1e-6)
	wantR := 1 + 2*math.Cos(10*math.Pi/180)
	nearNum(t, "R", &u.R, wantR, 1e-6)
	nearNum(t, "k", &u.K, 2/(3-wantR), 1e-4)
	if set.Weighted == nil || set.Count != 3 {
		t.Fatalf("weighted summary missing: %+v", set)
	}
	_, err := s.Statistics(ctx, p.ID, service.StatsQuery{SetQuery: service.SetQuery{Sets: "auto:99"}})
	wantKind(t, err, domain.Invalid, "too many sets")
}

// The demo's structure sets are drawn around known mean planes (package
// demo); the per-type statistics of the loaded demo must find them again to
// within a few degrees (the generator adds noise and sampling bias).
func TestStatisticsRecoverDemoSets(t *testing.T) {
	s, ctx := newService(t)
	p, _, err := s.LoadDemo(ctx)
	if err != nil {
		t.Fatal(err)
	}
	d := demo.Programme()
	res := must(s.Statistics(ctx, p.ID, service.StatsQuery{SetQuery: service.SetQuery{Sets: "type"}}))
	byType := map[string]*fabric.Summary{}
	for _, g := range res.Planes.Sets {
		byType[g.Name] = g.Unweighted
	}
	checked := 0
	for _, set := range d.Sets {
		sm, ok := byType[set.Type]
		if !ok || set.Type == "joint" { // two joint sets share one type code
			continue
		}
		got := geom.Plane{Dip: float64(*sm.Mean.Dip), DipDirection: float64(*sm.Mean.DipDirection)}
		if a := geom.AxialAngle(got.Normal(), set.Mean.Normal()); a > 6 {
			t.Errorf("type %s: mean plane %.1f/%.1f is %.1f degrees from the set's %.1f/%.1f",
				set.Type, got.DipDirection, got.Dip, a, set.Mean.DipDirection, set.Mean.Dip)
		}
		checked++
	}
	if checked == 0 {
		t.Fatal("no demo set checked")
	}
	// Two automatic sets split the joints apart from bedding and faults.
	auto := must(s.Statistics(ctx, p.ID, service.StatsQuery{SetQuery: service.SetQuery{Sets: "auto:4"}}))
	if len(auto.Planes.Sets) != 4 {
		t.Errorf("automatic sets: %d sets", len(auto.Planes.Sets))
	}
}

func TestNetIsWellFormedSVG(t *testing.T) {
	s, ctx := newService(t)
	p, _, err := s.LoadDemo(ctx)
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := s.Net(ctx, p.ID, service.NetQuery{Show: "poles,planes,lines,sets,density", SetQuery: service.SetQuery{Sets: "type"}}, &buf); err != nil {
		t.Fatal(err)
	}
	dec := xml.NewDecoder(bytes.NewReader(buf.Bytes()))
	for {
		if _, err := dec.Token(); err == io.EOF {
			break
		} else if err != nil {
			t.Fatalf("net is not well-formed XML: %v", err)
		}
	}
	out := buf.String()
	for _, want := range []string{"<svg", "bedding", "fault", p.Name} {
		if !strings.Contains(out, want) {
			t.Errorf("net lacks %q", want)
		}
	}
	err = s.Net(ctx, p.ID, service.NetQuery{Projection: "mercator"}, io.Discard)
	wantKind(t, err, domain.Invalid, "unknown projection")
}

// nearNum checks a report number.
func nearNum(t *testing.T, what string, got *fabric.Num, want, tol float64) {
	t.Helper()
	if got == nil || math.Abs(float64(*got)-want) > tol {
		t.Errorf("%s = %v, want %v", what, got, want)
	}
}

// An unoriented measurement (no beta) is stored, its derived values give the
// hole direction and say unoriented, and the statistics leave it out of the
// set means with a count under the one skip rule (package fabric). A gamma
// without beta is refused, naming the field.
func TestUnorientedMeasurement(t *testing.T) {
	s, ctx := newService(t)
	p, h := programme(t, s, ctx, domain.Project{})
	for _, a := range []float64{30, 20, 10} {
		must(s.CreateMeasurement(ctx, p.ID, domain.Measurement{HoleID: h.ID, Depth: 20, Alpha: a, Beta: f64(180), TypeCode: "BD"}))
	}
	v := must(s.CreateMeasurement(ctx, p.ID, domain.Measurement{HoleID: h.ID, Depth: 21, Alpha: 40, TypeCode: "BD"}))
	d := v.Derived
	if v.Beta != nil || !d.Unoriented || d.Error != "" || d.HoleAzimuth == nil || d.HoleDip == nil || d.Dip != nil || d.DipDirection != nil ||
		d.PoleTrend != nil || d.Strike != nil || !strings.Contains(strings.Join(d.Warnings, "; "), "unoriented") {
		t.Fatalf("unoriented view %+v, derived %+v", v, d)
	}
	res := must(s.Statistics(ctx, p.ID, service.StatsQuery{SetQuery: service.SetQuery{Sets: "type"}}))
	if res.Rows != 4 || res.RowsUsed != 3 || len(res.RowsSkipped) != 1 || res.RowsSkipped[0] != (fabric.SkipCount{Reason: fabric.SkipUnoriented, Count: 1}) {
		t.Fatalf("rows %d used %d skipped %+v", res.Rows, res.RowsUsed, res.RowsSkipped)
	}
	nearNum(t, "mean dip without the unoriented one", res.Planes.Sets[0].Unweighted.Mean.Dip, 40, 1e-6)
	_, err := s.CreateMeasurement(ctx, p.ID, domain.Measurement{HoleID: h.ID, Depth: 22, Alpha: 40, Gamma: f64(10), TypeCode: "BD"})
	wantKind(t, err, domain.Invalid, "gamma without beta")
	if e, ok := err.(*domain.Error); !ok || e.Loc.Field != "gamma" {
		t.Errorf("gamma without beta: %#v", err)
	}
}
