package service_test

import (
	"os"
	"testing"

	"corvane/internal/demo"
	"corvane/internal/domain"
)

// TestDemoFilesImport: the demo's CSV files import through the CSV import
// doors (which apply domain.CheckKind), given the demo's vocabulary with its
// kinds, every row created; the same as README's first hour does with curl.
func TestDemoFilesImport(t *testing.T) {
	s, ctx := newService(t)
	p := must(s.CreateProject(ctx, domain.Project{Name: "from files", RefLine: "bottom", BetaApex: "downhole", GammaSense: "clockwise"}))
	for _, code := range []string{"bedding", "joint", "fault", demo.LineType} {
		mustPut(s.PutTypeCode(ctx, p.ID, domain.TypeCode{Code: code, Kind: demo.Kind(code)}))
	}
	d := demo.Programme()
	want := map[string]int{"collars": len(d.Collars), "surveys": len(d.Collars), "runs": len(d.Runs), "measurements": len(d.Structures)}
	for _, k := range []struct{ kind, file string }{
		{"collars", demo.CollarsFile}, {"surveys", demo.SurveysFile}, {"runs", demo.RunsFile}, {"measurements", demo.StructuresFile},
	} {
		b, err := os.ReadFile("../../testdata/zelvorra/" + k.file)
		if err != nil {
			t.Fatal(err)
		}
		res, err := doImport(t, s, ctx, p.ID, k.kind, string(b), false, "")
		if err != nil {
			t.Fatalf("%s: %v", k.file, err)
		}
		if res.Created != want[k.kind] {
			t.Errorf("%s: %+v, want %d created", k.file, res, want[k.kind])
		}
	}
}
