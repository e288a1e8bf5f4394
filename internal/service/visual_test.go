package service_test

import (
	"fmt"
	"strings"
	"testing"
	"time"

	"corvane/internal/domain"
	"corvane/internal/service"
	"corvane/internal/visual"
)

// Types get the visual language's defaults in order, keep a chosen style,
// keep their stored style when replaced without one, and refuse a colour or
// mark the language does not have.
func TestTypeStyles(t *testing.T) {
	s, ctx := newService(t)
	p := must(s.CreateProject(ctx, domain.Project{Name: "styles"}))
	for _, c := range []string{"BD", "JN"} {
		mustPut(s.PutTypeCode(ctx, p.ID, domain.TypeCode{Code: c}))
	}
	fx := mustPut(s.PutTypeCode(ctx, p.ID, domain.TypeCode{Code: "FX", Colour: "#cc79a7", Mark: "star"}))
	if fx.Colour != "#CC79A7" || fx.Mark != "star" {
		t.Fatalf("chosen style not kept: %+v", fx)
	}
	// A type stored later takes the first default no other type uses.
	ln := mustPut(s.PutTypeCode(ctx, p.ID, domain.TypeCode{Code: "LN", Kind: "line"}))
	if ln.Colour != visual.Pair(2).Colour || ln.Mark != visual.Pair(2).Mark {
		t.Errorf("LN got %s %s, want the third default %+v", ln.Colour, ln.Mark, visual.Pair(2))
	}
	got := map[string]domain.TypeCode{}
	for _, tc := range must(s.ListTypeCodes(ctx, p.ID)) {
		got[tc.Code] = tc
	}
	if got["BD"].Colour != visual.Pair(0).Colour || got["JN"].Mark != visual.Pair(1).Mark {
		t.Errorf("defaults in order of creation: BD %+v JN %+v", got["BD"], got["JN"])
	}
	// Replaced without a style (a description change): the style stays.
	mustPut(s.PutTypeCode(ctx, p.ID, domain.TypeCode{Code: "FX", Description: "fault, renamed"}))
	for _, tc := range must(s.ListTypeCodes(ctx, p.ID)) {
		if tc.Code == "FX" && (tc.Colour != "#CC79A7" || tc.Mark != "star" || tc.Description != "fault, renamed") {
			t.Errorf("FX after a replace: %+v", tc)
		}
	}
	_, _, err := s.PutTypeCode(ctx, p.ID, domain.TypeCode{Code: "QZ", Colour: "teal"})
	wantKind(t, err, domain.Invalid, "colour teal")
	_, _, err = s.PutTypeCode(ctx, p.ID, domain.TypeCode{Code: "QZ", Mark: "pentagon"})
	wantKind(t, err, domain.Invalid, "mark pentagon")
	if e, ok := err.(*domain.Error); !ok || e.Loc.Field != "mark" {
		t.Errorf("mark error not located on the field: %v", err)
	}
}

// The lineation rule: a line type needs gamma, a plane type refuses it, on
// create and on update alike; the error names the gamma field.
func TestLineationRule(t *testing.T) {
	s, ctx := newService(t)
	p := must(s.CreateProject(ctx, domain.Project{Name: "kinds"}))
	mustPut(s.PutTypeCode(ctx, p.ID, domain.TypeCode{Code: "BD", Kind: "plane"}))
	mustPut(s.PutTypeCode(ctx, p.ID, domain.TypeCode{Code: "LN", Kind: "line"}))
	h := must(s.CreateHole(ctx, p.ID, domain.Hole{Name: "H1", Azimuth: 0, Dip: -60, FinalDepth: 100}))
	g := 40.0
	for _, c := range []struct {
		what  string
		typ   string
		gamma *float64
		ok    bool
	}{
		{"plane without gamma", "BD", nil, true},
		{"plane with gamma", "BD", &g, false},
		{"line with gamma", "LN", &g, true},
		{"line without gamma", "LN", nil, false},
	} {
		_, err := s.CreateMeasurement(ctx, p.ID, domain.Measurement{HoleID: h.ID, Depth: 10, Alpha: 40, Beta: f64(100), Gamma: c.gamma, TypeCode: c.typ, LoggedBy: "L1"})
		if c.ok {
			if err != nil {
				t.Errorf("%s refused: %v", c.what, err)
			}
			continue
		}
		wantKind(t, err, domain.Invalid, c.what)
		if e, ok := err.(*domain.Error); !ok || e.Loc.Field != "gamma" {
			t.Errorf("%s: error not on the gamma field: %v", c.what, err)
		}
	}
	m := must(s.CreateMeasurement(ctx, p.ID, domain.Measurement{HoleID: h.ID, Depth: 20, Alpha: 40, Beta: f64(100), TypeCode: "BD", LoggedBy: "L1"}))
	m.Measurement.TypeCode = "LN" // a line type now, still without gamma
	_, err := s.UpdateMeasurement(ctx, p.ID, m.ID, m.Version, m.Measurement)
	wantKind(t, err, domain.Invalid, "update to a line type without gamma")
}

// Depth order pages by keyset on (depth, id): rows logged out of depth
// order come back in depth order, ties by id, with no row lost or repeated.
func TestListByDepth(t *testing.T) {
	s, ctx := newService(t)
	p, h := programme(t, s, ctx, domain.Project{})
	depths := []float64{50, 10, 30, 10, 70, 20, 30}
	for _, d := range depths {
		must(s.CreateMeasurement(ctx, p.ID, domain.Measurement{HoleID: h.ID, Depth: d, Alpha: 40, Beta: f64(100), TypeCode: "BD", LoggedBy: "L2", LoggedAt: time.Now()}))
	}
	var got []domain.Measurement
	var after int64
	for guard := 0; guard < 10; guard++ {
		l := must(s.ListMeasurements(ctx, p.ID, service.MeasurementQuery{ByDepth: true}, domain.Page{Limit: 3, After: after}))
		for _, v := range l.Items {
			got = append(got, v.Measurement)
		}
		if l.Next == 0 {
			break
		}
		after = l.Next
	}
	if len(got) != len(depths) {
		t.Fatalf("%d rows paged, want %d", len(got), len(depths))
	}
	for i := 1; i < len(got); i++ {
		a, b := got[i-1], got[i]
		if b.Depth < a.Depth || (b.Depth == a.Depth && b.ID < a.ID) {
			t.Fatalf("row %d (%v, id %d) after (%v, id %d)", i, b.Depth, b.ID, a.Depth, a.ID)
		}
	}
	_, err := s.ListMeasurements(ctx, p.ID, service.MeasurementQuery{ByDepth: true}, domain.Page{Limit: 3, After: 999999})
	wantKind(t, err, domain.Invalid, "after an unknown row")
}

// BenchmarkHoleView is what the hole view asks of the service for a hole of
// 12,500 measurements: the first page in depth order (250 rows, derived),
// against every row in pages of 1,000 as the view used to read them.
func BenchmarkHoleView(b *testing.B) {
	s, ctx := newService(b)
	p, h := programme(b, s, ctx, domain.Project{})
	var body strings.Builder
	body.WriteString("hole_id,depth,alpha,beta,type,logged_by\n")
	for i := range 12500 {
		fmt.Fprintf(&body, "%s,%.3f,%d,%d,BD,L1\n", h.Name, float64((i*7919)%12500)*0.016, 20+i%60, (i*37)%360)
	}
	if _, err := doImport(b, s, ctx, p.ID, "measurements", body.String(), false, ""); err != nil {
		b.Fatal(err)
	}
	q := service.MeasurementQuery{Holes: []string{h.Name}, ByDepth: true}
	b.Run("first-page-250-by-depth", func(b *testing.B) {
		for b.Loop() {
			l := must(s.ListMeasurements(ctx, p.ID, q, domain.Page{Limit: 250}))
			if len(l.Items) != 250 {
				b.Fatalf("%d rows", len(l.Items))
			}
		}
	})
	b.Run("all-12500-by-id", func(b *testing.B) {
		for b.Loop() {
			n := 0
			var after int64
			for {
				l := must(s.ListMeasurements(ctx, p.ID, service.MeasurementQuery{Holes: []string{h.Name}}, domain.Page{Limit: 1000, After: after}))
				n += len(l.Items)
				if l.Next == 0 {
					break
				}
				after = l.Next
			}
			if n != 12500 {
				b.Fatalf("%d rows", n)
			}
		}
	})
}
