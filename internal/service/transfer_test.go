package service_test

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"math"
	"os"
	"strings"
	"testing"

	"corvane/internal/domain"
	"corvane/internal/exchange/ags4"
	"corvane/internal/service"
)

// TestAGS4RoundTrip: the demo programme with core intervals exported as
// AGS4 and imported (its DISC and CORE rows) into a second project holding
// the same holes gives the same (CORE, DISC and FRAC included)
// AGS4 back: export -> import -> export is identical in every group but
// PROJ and TRAN (another project, another day). The import turns each
// plane into alpha and beta with the hole model, so this also checks that
// the inverse lands on the plane it came from.
func TestAGS4RoundTrip(t *testing.T) {
	s, ctx := newService(t)
	demo, _ := must2(s.LoadDemo(ctx))
	// Core intervals over logged structures: lengths, pieces, nothing but
	// depths, and one interval with no structure in it.
	num := func(v float64) *float64 { return &v }
	hs := must(s.ListHoles(ctx, demo.ID, domain.Page{})).Items
	must(s.PutCoreIntervals(ctx, demo.ID, hs[0].ID, []domain.CoreInterval{
		{From: 9, To: 12, Recovered: num(2.87), Solid: num(2.41), Sound: num(1.93)},
		{From: 12, To: 15.5, Recovered: num(3.5), Solid: num(3.1), Pieces: []float64{0.05, 0.4, 0.12, 0.09, 1.3}},
		{From: 15.5, To: 18},
		{From: 0.5, To: 0.8, Recovered: num(0.1)},
	}))
	must(s.PutCoreIntervals(ctx, demo.ID, hs[1].ID, []domain.CoreInterval{{From: 20, To: 23, Recovered: num(3), Solid: num(2.5), Sound: num(2.25)}}))
	var a1 bytes.Buffer
	if err := s.WriteTransfer(ctx, demo.ID, service.FormatAGS, service.TransferQuery{}, &a1, nil); err != nil {
		t.Fatal(err)
	}
	q := demo
	q.ID, q.Name = 0, "Round trip"
	q = must(s.CreateProject(ctx, q))
	vocab := must(s.ListTypeCodes(ctx, demo.ID))
	for _, tc := range vocab {
		tc.ProjectID = q.ID
		mustPut(s.PutTypeCode(ctx, q.ID, tc))
	}
	for _, kind := range []string{"collars", "surveys"} {
		b, err := os.ReadFile("../../testdata/zelvorra/" + kind + ".csv")
		if err != nil {
			t.Fatal(err)
		}
		must(doImport(t, s, ctx, q.ID, kind, string(b), false, ""))
	}
	// AGS4 DISC rows are planes: the demo's line type (slickenline, which
	// needs gamma) is refused at its DISC_TYPE, every such row located, and
	// nothing is stored.
	_, err := s.Import(ctx, q.ID, service.ImportRequest{Kind: service.ImportDiscontinuities, Body: bytes.NewReader(a1.Bytes())})
	var e *domain.Error
	if !errors.As(err, &e) || len(e.Problems) != 1 || e.Problems[0].Loc.Column != "DISC_TYPE" || !strings.Contains(e.Problems[0].Msg, "line type") {
		t.Fatalf("AGS import of a line type: %v %+v, want the rows refused at DISC_TYPE", err, e)
	}
	if n := must(s.CountMeasurements(ctx, q.ID, service.MeasurementQuery{})); n != 0 {
		t.Fatalf("%d measurements stored by a refused import", n)
	}
	// Taken as a plane type, the same rows import.
	for _, tc := range vocab {
		if tc.Kind == "line" {
			tc.ProjectID, tc.Kind = q.ID, "plane"
			mustPut(s.PutTypeCode(ctx, q.ID, tc))
		}
	}
	res := must(s.Import(ctx, q.ID, service.ImportRequest{Kind: service.ImportDiscontinuities, Body: bytes.NewReader(a1.Bytes())}))
	d1, err := ags4.Read(bytes.NewReader(a1.Bytes()), "a1.ags")
	if err != nil {
		t.Fatal(err)
	}
	if res.Created != len(d1.Discontinuities)+5 || len(d1.Discontinuities) < 100 || res.File != "discontinuities.ags" {
		t.Fatalf("import: %+v, want %d measurements and 5 core intervals", res, len(d1.Discontinuities))
	}
	if len(d1.Cores) != 5 {
		t.Fatalf("%d CORE rows, want 5", len(d1.Cores))
	}
	// CORE percentages of the interval length (TCR 2.87 / 3 m = 96 %, RQD
	// from the pieces >= 0.1 m: (0.4+0.12+1.3) / 3.5 = 52 %), FRAC over the
	// same intervals from the DISC depths in them. Intervals come by depth.
	if c := d1.Cores[1]; c.Hole != hs[0].Name || c.Top != 9 || c.TotalRecovery != 96 || c.SolidRecovery != 80 || c.RQD != 64 {
		t.Errorf("CORE row 2 %+v", c)
	}
	if c := d1.Cores[2]; c.RQD != 52 || !math.IsNaN(d1.Cores[3].TotalRecovery) {
		t.Errorf("CORE rows 3, 4 %+v %+v", c, d1.Cores[3])
	}
	if len(d1.Spacings) < 5 {
		t.Fatalf("%d FRAC rows, want one or more per core interval", len(d1.Spacings))
	}
	for _, sp := range d1.Spacings {
		var in []float64
		for _, x := range d1.Discontinuities {
			if x.Hole == sp.Hole && x.Top >= sp.From && x.Top < sp.To && x.Set == sp.Set {
				in = append(in, x.Top)
			}
		}
		if want := float64(len(in)) / (sp.To - sp.From); math.Abs(sp.Index-want) > 0.005 {
			t.Errorf("FRAC %s %g-%g: fracture index %v, want %d DISC rows over %g m = %v", sp.Hole, sp.From, sp.To, sp.Index, len(in), sp.To-sp.From, want)
		}
		if sp.Hole == hs[0].Name && sp.From == 0.5 && sp.Index != 0 {
			t.Errorf("an interval without structures: FRAC %+v", sp)
		}
	}
	var a2 bytes.Buffer
	if err := s.WriteTransfer(ctx, q.ID, service.FormatAGS, service.TransferQuery{}, &a2, nil); err != nil {
		t.Fatal(err)
	}
	groups := func(b []byte) string {
		var keep []string
		skip := false
		for _, l := range strings.Split(string(b), "\r\n") {
			if strings.HasPrefix(l, `"GROUP"`) {
				skip = l == `"GROUP","PROJ"` || l == `"GROUP","TRAN"`
			}
			if !skip {
				keep = append(keep, l)
			}
		}
		return strings.Join(keep, "\r\n")
	}
	if g1, g2 := groups(a1.Bytes()), groups(a2.Bytes()); g1 != g2 {
		t.Errorf("export -> import -> export differs:\n%.2000s\n----\n%.2000s", g1, g2)
	}
}

// planeTypes are the demo's plane types: AGS4 DISC rows are planes, and the
// demo's line type would be refused on import (it needs gamma).
var planeTypes = []string{"bedding", "joint", "fault"}

// TestAGS4ImportRefusals: a DISC row that cannot become a measurement (an
// unknown hole or type, no dip direction, a depth past the hole) is refused
// at its file line and heading, and nothing of the file is stored.
func TestAGS4ImportRefusals(t *testing.T) {
	s, ctx := newService(t)
	demo, _ := must2(s.LoadDemo(ctx))
	var a bytes.Buffer
	if err := s.WriteTransfer(ctx, demo.ID, service.FormatAGS, service.TransferQuery{MeasurementQuery: service.MeasurementQuery{Holes: []string{"ZR001"}, Types: planeTypes}}, &a, nil); err != nil {
		t.Fatal(err)
	}
	d, err := ags4.Read(bytes.NewReader(a.Bytes()), "a.ags")
	if err != nil {
		t.Fatal(err)
	}
	before := must(s.CountMeasurements(ctx, demo.ID, service.MeasurementQuery{}))
	for _, c := range []struct {
		name, heading string
		edit          func(*ags4.Discontinuity)
	}{
		{"unknown hole", "LOCA_ID", func(r *ags4.Discontinuity) { r.Hole = "NOPE" }},
		{"unknown type", "DISC_TYPE", func(r *ags4.Discontinuity) { r.Type = "ZZ" }},
		{"unoriented", "DISC_DIP", func(r *ags4.Discontinuity) { r.DipDirection = nan() }},
		{"past the end", "DISC_TOP", func(r *ags4.Discontinuity) { r.Top, r.Base = 9999, 9999 }},
	} {
		t.Run(c.name, func(t *testing.T) {
			bad := *d
			bad.Discontinuities = append([]ags4.Discontinuity(nil), d.Discontinuities...)
			c.edit(&bad.Discontinuities[3])
			if c.name == "unknown hole" {
				bad.Locations = append(bad.Locations, ags4.Location{ID: "NOPE", Type: "RC", East: nan(), North: nan(), GroundLevel: nan(), FinalDepth: 99999})
			}
			if c.name == "unknown type" {
				bad.Abbreviations = append(bad.Abbreviations, ags4.Abbreviation{Heading: "DISC_TYPE", Code: "ZZ", Description: "zz"})
			}
			importRefused(t, s, ctx, demo.ID, &bad, c.heading, before)
		})
	}
}

// TestAGS4ImportCoreRefusals: a CORE row that cannot become a core
// interval (a percentage past 100, an overlap, past the end of the hole,
// an unknown hole) is refused at its file line and heading, and neither
// the file's intervals nor its discontinuities are stored.
func TestAGS4ImportCoreRefusals(t *testing.T) {
	s, ctx := newService(t)
	demo, _ := must2(s.LoadDemo(ctx))
	h := must(s.ListHoles(ctx, demo.ID, domain.Page{})).Items[0]
	var a bytes.Buffer
	if err := s.WriteTransfer(ctx, demo.ID, service.FormatAGS, service.TransferQuery{MeasurementQuery: service.MeasurementQuery{Holes: []string{h.Name}, Types: planeTypes}}, &a, nil); err != nil {
		t.Fatal(err)
	}
	d, err := ags4.Read(bytes.NewReader(a.Bytes()), "a.ags")
	if err != nil {
		t.Fatal(err)
	}
	before := must(s.CountMeasurements(ctx, demo.ID, service.MeasurementQuery{}))
	core := func(top, base, prec float64) ags4.Core {
		return ags4.Core{Hole: h.Name, Top: top, Base: base, TotalRecovery: prec, SolidRecovery: nan(), RQD: nan(), Diameter: nan()}
	}
	for _, c := range []struct {
		name, heading string
		rows          []ags4.Core
	}{
		{"percentage past 100", "CORE_PREC", []ags4.Core{core(1, 2, 101)}},
		{"overlap", "CORE_TOP", []ags4.Core{core(1, 3, 90), core(2, 4, 90)}},
		{"past the end", "CORE_BASE", []ags4.Core{core(h.FinalDepth, h.FinalDepth+1, 90)}},
		{"unknown hole", "LOCA_ID", []ags4.Core{{Hole: "NOPE", Top: 1, Base: 2, TotalRecovery: nan(), SolidRecovery: nan(), RQD: nan(), Diameter: nan()}}},
	} {
		t.Run(c.name, func(t *testing.T) {
			bad := *d
			bad.Cores = c.rows
			if c.name == "unknown hole" {
				bad.Locations = append(bad.Locations, ags4.Location{ID: "NOPE", Type: "RC", East: nan(), North: nan(), GroundLevel: nan(), FinalDepth: 99999})
			}
			importRefused(t, s, ctx, demo.ID, &bad, c.heading, before)
			if ivs := must(s.CoreIntervals(ctx, demo.ID, h.ID)); len(ivs) != 0 {
				t.Errorf("%d core intervals stored after a refused import", len(ivs))
			}
		})
	}
}

// importRefused imports bad and wants it refused with one problem located
// at a line of bad.ags and heading, and no measurement stored beyond before.
func importRefused(t *testing.T, s *service.Service, ctx context.Context, pid int64, bad *ags4.Data, heading string, before int64) {
	t.Helper()
	var b bytes.Buffer
	if err := ags4.Write(&b, bad); err != nil {
		t.Fatal(err)
	}
	_, err := s.Import(ctx, pid, service.ImportRequest{Kind: service.ImportDiscontinuities, File: "bad.ags", Body: &b})
	var e *domain.Error
	if !asErr(err, &e) || e.Kind != domain.Invalid || len(e.Problems) != 1 {
		t.Fatalf("%v, want one located problem", err)
	}
	p := e.Problems[0]
	j, _ := json.Marshal(p)
	if p.Loc.File != "bad.ags" || p.Loc.Line == 0 || p.Loc.Column != heading {
		t.Errorf("problem %s, want bad.ags at a line, heading %s", j, heading)
	}
	if n := must(s.CountMeasurements(ctx, pid, service.MeasurementQuery{})); n != before {
		t.Errorf("%d measurements stored after a refused import, want %d", n, before)
	}
}

func must2[A, B any](a A, b B, err error) (A, B) {
	if err != nil {
		panic(err)
	}
	return a, b
}

func nan() float64 { return math.NaN() }

func asErr(err error, e **domain.Error) bool { return errors.As(err, e) }

// A project in feet is refused (the formats are metric) before anything is
// written, at the service door as at the command line's.
func TestTransferRefusesFeet(t *testing.T) {
	s, ctx := newService(t)
	p := must(s.CreateProject(ctx, domain.Project{Name: "Feet", LengthUnit: domain.UnitFoot}))
	var b bytes.Buffer
	err := s.WriteTransfer(ctx, p.ID, service.FormatPoints, service.TransferQuery{}, &b, nil)
	var e *domain.Error
	if !asErr(err, &e) || e.Kind != domain.Invalid || !strings.Contains(e.Msg, "metres") || b.Len() != 0 {
		t.Errorf("%v (%d bytes written), want Invalid saying metres and nothing written", err, b.Len())
	}
	_, err = s.Import(ctx, p.ID, service.ImportRequest{Kind: service.ImportDiscontinuities, Body: strings.NewReader("\"GROUP\",\"DISC\"\r\n")})
	if !asErr(err, &e) || e.Kind != domain.Invalid || !strings.Contains(e.Msg, "metres") {
		t.Errorf("AGS4 import into a project in feet: %v", err)
	}
}
