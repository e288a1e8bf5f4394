package service_test

import (
	"bytes"
	"context"
	"encoding/csv"
	"fmt"
	"strings"
	"testing"

	"corvane/internal/domain"
	"corvane/internal/service"
)

// midImportWriter collects an export; after the first rows have been
// written (the first page), it runs an import to its commit before it lets
// the export go on.
type midImportWriter struct {
	bytes.Buffer
	during func() error
	done   bool
	err    error
}

func (w *midImportWriter) Write(p []byte) (int, error) {
	n, err := w.Buffer.Write(p)
	if !w.done && bytes.Count(w.Bytes(), []byte("\n")) > 1 {
		w.done = true
		w.err = w.during()
	}
	return n, err
}

func measurementRows(n int, comment string) string {
	var b strings.Builder
	b.WriteString("hole_id,depth,alpha,beta,type,comment\n")
	for i := range n {
		// Distinct rows (no duplicates, domain.KeyOf), within a file and
		// between files of different comments.
		fmt.Fprintf(&b, "ZR001,%d.%03d,%d,%d,BD,%s\n", i%190, i/190, 10+i%70, (i+int(comment[0]))%360, comment)
	}
	return b.String()
}

// An export that overlaps an import's commit shows none of it: the export
// reads one snapshot (its pages were separate reads, and showed part of an
// import). The import is larger than a page, and commits between the
// export's first and second pages.
func checkExportDuringImport(t *testing.T, s *service.Service, ctx context.Context) {
	p := must(s.CreateProject(ctx, domain.Project{Name: "snap"}))
	mustPut(s.PutTypeCode(ctx, p.ID, domain.TypeCode{Code: "BD"}))
	must(doImport(t, s, ctx, p.ID, "collars", collarsCSV, false, ""))
	const before, during = 1500, 2500 // the export reads pages of 1000
	if r := must(doImport(t, s, ctx, p.ID, "measurements", measurementRows(before, "before"), false, "")); r.Created != before {
		t.Fatalf("seed import: %+v", r)
	}
	w := &midImportWriter{during: func() error {
		r, err := doImport(t, s, ctx, p.ID, "measurements", measurementRows(during, "during"), false, "")
		if err == nil && r.Created != during {
			err = fmt.Errorf("import created %d", r.Created)
		}
		return err
	}}
	if err := s.ExportMeasurements(ctx, p.ID, service.MeasurementQuery{}, w); err != nil {
		t.Fatal(err)
	}
	if !w.done || w.err != nil {
		t.Fatalf("the import beside the export did not run: done %t, %v", w.done, w.err)
	}
	recs, err := csv.NewReader(&w.Buffer).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	col := map[string]int{}
	for i, c := range recs[0] {
		col[c] = i
	}
	counts := map[string]int{}
	for _, r := range recs[1:] {
		counts[r[col["comment"]]]++
	}
	if counts["before"] != before || counts["during"] != 0 {
		t.Fatalf("export shows %d rows from before and %d of the import committed during it; want %d and 0",
			counts["before"], counts["during"], before)
	}
	// The next export shows the whole import.
	var next bytes.Buffer
	must(0, s.ExportMeasurements(ctx, p.ID, service.MeasurementQuery{}, &next))
	if n := strings.Count(next.String(), ",during,"); n != during {
		t.Fatalf("the export after the import shows %d of its %d rows", n, during)
	}
}

func TestExportDuringImport(t *testing.T) {
	s, ctx := newService(t)
	checkExportDuringImport(t, s, ctx)
}
