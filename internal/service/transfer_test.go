package service_test

import (
	"bytes"
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

// TestAGS4RoundTrip: the demo programme exported as AGS4 and imported (its
// DISC rows) into a second project holding the same holes gives the same
// AGS4 back: export -> import -> export is identical in every group but
// PROJ and TRAN (another project, another day). The import turns each
// plane into alpha and beta with the hole model, so this also checks that
// the inverse lands on the plane it came from.
func TestAGS4RoundTrip(t *testing.T) {
	s, ctx := newService(t)
	demo, _ := must2(s.LoadDemo(ctx))
	var a1 bytes.Buffer
	if err := s.WriteTransfer(ctx, demo.ID, service.FormatAGS, service.TransferQuery{}, &a1, nil); err != nil {
		t.Fatal(err)
	}
	q := demo
	q.ID, q.Name = 0, "Round trip"
	q = must(s.CreateProject(ctx, q))
	for _, tc := range must(s.ListTypeCodes(ctx, demo.ID)) {
		tc.ProjectID = q.ID
		mustPut(s.PutTypeCode(ctx, q.ID, tc))
	}
	for _, kind := range []string{"collars", "surveys"} {
		b, err := os.ReadFile("../../testdata/tallowmere/" + kind + ".csv")
		if err != nil {
			t.Fatal(err)
		}
		must(doImport(t, s, ctx, q.ID, kind, string(b), false, ""))
	}
	res := must(s.Import(ctx, q.ID, service.ImportRequest{Kind: service.ImportDiscontinuities, Body: bytes.NewReader(a1.Bytes())}))
	d1, err := ags4.Read(bytes.NewReader(a1.Bytes()), "a1.ags")
	if err != nil {
		t.Fatal(err)
	}
	if res.Created != len(d1.Discontinuities) || res.Created < 100 || res.File != "discontinuities.ags" {
		t.Fatalf("import: %+v, want %d measurements", res, len(d1.Discontinuities))
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

// TestAGS4ImportRefusals: a DISC row that cannot become a measurement (an
// unknown hole or type, no dip direction, a depth past the hole) is refused
// at its file line and heading, and nothing of the file is stored.
func TestAGS4ImportRefusals(t *testing.T) {
	s, ctx := newService(t)
	demo, _ := must2(s.LoadDemo(ctx))
	var a bytes.Buffer
	if err := s.WriteTransfer(ctx, demo.ID, service.FormatAGS, service.TransferQuery{MeasurementQuery: service.MeasurementQuery{Holes: []string{"TM001"}}}, &a, nil); err != nil {
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
			var b bytes.Buffer
			if err := ags4.Write(&b, &bad); err != nil {
				t.Fatal(err)
			}
			_, err := s.Import(ctx, demo.ID, service.ImportRequest{Kind: service.ImportDiscontinuities, File: "bad.ags", Body: &b})
			var e *domain.Error
			if !asErr(err, &e) || e.Kind != domain.Invalid || len(e.Problems) != 1 {
				t.Fatalf("%v, want one located problem", err)
			}
			p := e.Problems[0]
			j, _ := json.Marshal(p)
			if p.Loc.File != "bad.ags" || p.Loc.Line == 0 || p.Loc.Column != c.heading {
				t.Errorf("problem %s, want bad.ags at a line, heading %s", j, c.heading)
			}
			if n := must(s.CountMeasurements(ctx, demo.ID, service.MeasurementQuery{})); n != before {
				t.Errorf("%d measurements stored after a refused import, want %d", n, before)
			}
		})
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
