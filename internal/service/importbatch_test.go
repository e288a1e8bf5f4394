package service_test

import (
	"context"
	"io"
	"strings"
	"testing"
	"time"

	"corvane/internal/domain"
	"corvane/internal/service"
)

func TestWriteDuringImport(t *testing.T) {
	s, ctx := newService(t)
	checkWriteDuringImport(t, s, ctx)
}

// A logger's single write goes through while a large measurements import
// is still reading its file, and is seen at once; the import's rows are
// seen only when it has read and checked the whole file, then all of them.
// The import's body is a pipe held open, so the import cannot finish before
// the write: with an import that held the store's writer for the whole file
// the write waited for it (for ever: the pipe stays open), and this test
// failed on its deadline. The deadline only stops such a hang; it is long so
// that a slow, loaded machine running the race detector cannot trip it.
func checkWriteDuringImport(t *testing.T, s *service.Service, ctx context.Context) {
	p := must(s.CreateProject(ctx, domain.Project{Name: "busy"}))
	mustPut(s.PutTypeCode(ctx, p.ID, domain.TypeCode{Code: "BD"}))
	must(doImport(t, s, ctx, p.ID, "collars", collarsCSV, false, ""))
	hid := must(s.ResolveHole(ctx, p.ID, "ZR002"))
	const rows = 12000 // more than two of the import's batches
	file := measurementRows(rows, "imported")
	pr, pw := io.Pipe()
	type result struct {
		res service.ImportResult
		err error
	}
	done := make(chan result, 1)
	go func() {
		r, err := s.Import(ctx, p.ID, service.ImportRequest{Kind: "measurements", Body: pr})
		done <- result{r, err}
	}()
	// All but the last line: the import has read, checked and written most
	// of the file and waits for the rest.
	cut := strings.LastIndex(strings.TrimSuffix(file, "\n"), "\n") + 1
	if _, err := io.WriteString(pw, file[:cut]); err != nil {
		t.Fatal(err)
	}
	wctx, cancel := context.WithTimeout(ctx, 2*time.Minute)
	defer cancel()
	v, err := s.CreateMeasurement(wctx, p.ID, domain.Measurement{HoleID: hid, Depth: 5, Alpha: 30, Beta: f64(90), TypeCode: "BD", LoggedBy: "L1", LoggedAt: time.Now()})
	if err != nil {
		t.Fatalf("a single write while an import was open: %v", err)
	}
	if l := must(s.ListMeasurements(ctx, p.ID, service.MeasurementQuery{}, domain.Page{Limit: domain.MaxLimit})); len(l.Items) != 1 || l.Items[0].ID != v.ID {
		t.Fatalf("during the import %d rows are seen, want the single write only", len(l.Items))
	}
	if _, err := io.WriteString(pw, file[cut:]); err != nil {
		t.Fatal(err)
	}
	pw.Close()
	r := <-done
	if r.err != nil || r.res.Created != rows {
		t.Fatalf("import: %+v, %v", r.res, r.err)
	}
	n, after := 0, int64(0)
	for {
		l := must(s.ListMeasurements(ctx, p.ID, service.MeasurementQuery{}, domain.Page{Limit: domain.MaxLimit, After: after}))
		n += len(l.Items)
		if l.Next == 0 {
			break
		}
		after = l.Next
	}
	if n != rows+1 {
		t.Fatalf("after the import %d rows, want %d", n, rows+1)
	}
}

// An import with a bad row at its end leaves nothing, though most of its
// rows had been written into its batch before the bad one was read.
func TestImportBadRowLateLeavesNothing(t *testing.T) {
	s, ctx := newService(t)
	p := must(s.CreateProject(ctx, domain.Project{Name: "late"}))
	mustPut(s.PutTypeCode(ctx, p.ID, domain.TypeCode{Code: "BD"}))
	must(doImport(t, s, ctx, p.ID, "collars", collarsCSV, false, ""))
	file := measurementRows(12000, "x") + "ZR001,10,95,10,BD,x\n"
	_, err := doImport(t, s, ctx, p.ID, "measurements", file, false, "")
	wantKind(t, err, domain.Invalid, "alpha 95 on the last line")
	if !strings.Contains(err.Error(), "1 bad row") {
		t.Errorf("want the one bad row: %v", err)
	}
	if l := must(s.ListMeasurements(ctx, p.ID, service.MeasurementQuery{}, domain.Page{Limit: 10})); len(l.Items) != 0 {
		t.Fatalf("%d rows seen after a failed import", len(l.Items))
	}
	if r := must(doImport(t, s, ctx, p.ID, "measurements", measurementRows(12000, "x"), false, "")); r.Created != 12000 {
		t.Fatalf("the same file without the bad row: %+v", r)
	}
}

// A hole changed while its rows are being imported (its final depth cut
// short, say) is a clash: nothing of the import is kept.
func TestImportHoleChangedMidway(t *testing.T) {
	s, ctx := newService(t)
	p := must(s.CreateProject(ctx, domain.Project{Name: "clash"}))
	mustPut(s.PutTypeCode(ctx, p.ID, domain.TypeCode{Code: "BD"}))
	must(doImport(t, s, ctx, p.ID, "collars", collarsCSV, false, ""))
	hid := must(s.ResolveHole(ctx, p.ID, "ZR001"))
	file := measurementRows(12000, "clash")
	pr, pw := io.Pipe()
	done := make(chan error, 1)
	go func() {
		_, err := s.Import(ctx, p.ID, service.ImportRequest{Kind: "measurements", Body: pr})
		done <- err
	}()
	if _, err := io.WriteString(pw, file[:len(file)/2]); err != nil {
		t.Fatal(err)
	}
	h := must(s.GetHole(ctx, p.ID, hid))
	h.FinalDepth = 150
	must(s.UpdateHole(ctx, p.ID, hid, h.Version, h))
	if _, err := io.WriteString(pw, file[len(file)/2:]); err != nil {
		t.Fatal(err)
	}
	pw.Close()
	wantKind(t, <-done, domain.Conflict, "import across a change of its hole")
	if l := must(s.ListMeasurements(ctx, p.ID, service.MeasurementQuery{}, domain.Page{Limit: 10})); len(l.Items) != 0 {
		t.Fatalf("%d rows kept", len(l.Items))
	}
}
