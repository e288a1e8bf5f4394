package service_test

import (
	"bytes"
	"context"
	"encoding/csv"
	"encoding/json"
	"math"
	"regexp"
	"testing"

	"corvane/internal/domain"
	"corvane/internal/service"
)

// negativeZero matches a cell or JSON number that is a negative zero.
// A minus sign right after a letter or digit, or a "-0" followed by one, is part
// of a word (a global id such as "…7a-0c4…"), not a number.
var negativeZero = regexp.MustCompile(`(^|[^0-9A-Za-z.])-0(\.0+)?([^.0-9A-Za-z]|$)`)

// checkNoNegativeZero stores a beta of -0 (typed "-0" in an import and sent
// as -0 to the API) and a gamma of -0.0, and checks that the export and the
// API show 0: no output shows a negative zero, whatever the store gives
// back (PostgreSQL keeps the sign of a float8 zero, SQLite does not).
func checkNoNegativeZero(t *testing.T, s *service.Service, ctx context.Context) {
	p := must(s.CreateProject(ctx, domain.Project{Name: "negzero"}))
	putImportTypes(s, ctx, p.ID)
	must(doImport(t, s, ctx, p.ID, "collars", collarsCSV, false, ""))
	must(doImport(t, s, ctx, p.ID, "surveys", surveysCSV, false, ""))
	must(doImport(t, s, ctx, p.ID, "measurements", "hole_id,depth,alpha,beta,gamma,type\nZR001,10,40,-0,-0.0,LN\n", false, ""))
	h := must(s.ListHoles(ctx, p.ID, domain.Page{}))
	must(s.CreateMeasurement(ctx, p.ID, domain.Measurement{HoleID: h.Items[0].ID, Depth: 20, Alpha: 30, Beta: f64(math.Copysign(0, -1)), TypeCode: "BD"}))

	var buf bytes.Buffer
	if err := s.ExportMeasurements(ctx, p.ID, service.MeasurementQuery{}, &buf); err != nil {
		t.Fatal(err)
	}
	recs, err := csv.NewReader(&buf).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	col := map[string]int{}
	for i, c := range recs[0] {
		col[c] = i
	}
	if len(recs) != 3 {
		t.Fatalf("%d export rows, want 2", len(recs)-1)
	}
	for _, r := range recs[1:] {
		if r[col["beta"]] != "0.00" {
			t.Errorf("beta exported as %q, want 0.00", r[col["beta"]])
		}
		for i, cell := range r {
			if negativeZero.MatchString(cell) {
				t.Errorf("column %s exported as %q, a negative zero", recs[0][i], cell)
			}
		}
	}
	if g := recs[1][col["gamma"]]; g != "0.00" {
		t.Errorf("gamma exported as %q, want 0.00", g)
	}
	ms := must(s.ListMeasurements(ctx, p.ID, service.MeasurementQuery{}, domain.Page{}))
	b, err := json.Marshal(ms.Items)
	if err != nil {
		t.Fatal(err)
	}
	if m := negativeZero.FindString(string(b)); m != "" {
		t.Errorf("the API shows a negative zero %q in %s", m, b)
	}
}

func TestNoNegativeZero(t *testing.T) {
	s, ctx := newService(t)
	checkNoNegativeZero(t, s, ctx)
}
