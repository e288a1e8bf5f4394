package service_test

import (
	"context"
	"errors"
	"fmt"
	"strings"
	"testing"

	"corvane/internal/domain"
	"corvane/internal/service"
)

func TestImportDuplicates(t *testing.T) {
	s, ctx := newService(t)
	checkImportDuplicates(t, s, ctx)
}

// checkImportDuplicates: the same measurements file imported twice is
// refused the second time with one summarised, located problem, unless the
// upload says skip or keep; a row repeating an earlier row of the file is
// refused naming that line; a dry run reports the duplicates.
func checkImportDuplicates(t *testing.T, s *service.Service, ctx context.Context) {
	p := must(s.CreateProject(ctx, domain.Project{Name: "dups"}))
	putImportTypes(s, ctx, p.ID)
	must(doImport(t, s, ctx, p.ID, "collars", collarsCSV, false, ""))
	imp := func(body, mode string, dry bool) (service.ImportResult, error) {
		return s.Import(ctx, p.ID, service.ImportRequest{Kind: "measurements", Body: strings.NewReader(body), DryRun: dry, Duplicates: mode})
	}
	must(imp(measurementsCSV, "", false))
	count := func() int64 { return must(s.CountMeasurements(ctx, p.ID, service.MeasurementQuery{})) }

	for _, dry := range []bool{true, false} {
		_, err := imp(measurementsCSV, "", dry)
		var e *domain.Error
		if !errors.As(err, &e) || e.Kind != domain.Invalid || len(e.Problems) != 1 {
			t.Fatalf("second import (dry run %t): %v, want one summarised problem", dry, err)
		}
		if pr := e.Problems[0]; pr.Msg != "3 rows: "+domain.DuplicateStoredMsg+" (lines 2-4)" || pr.Loc.Line != 2 || pr.Loc.File != "measurements.csv" {
			t.Errorf("second import (dry run %t): %v", dry, pr)
		}
	}
	if n := count(); n != 3 {
		t.Fatalf("%d rows after a refused import, want 3", n)
	}
	// A lower-case type and beta 360 are the same measurement as LN and 0.
	again := "hole_id,depth,alpha,beta,gamma,type\nZR001,4.5,45,90,30,ln\nZR001,7,30,360,,BD\nZR001,7,30,0,,BD\nZR001,8,30,0,,BD\n"
	res, err := imp(again, domain.DuplicatesSkip, true)
	if err != nil || res.Duplicates != 2 || res.Skipped != 2 || res.Created != 2 {
		t.Errorf("dry run with skip: %+v, %v; want 2 duplicates skipped, 2 to create", res, err)
	}
	_, err = imp(again, "", false)
	var e *domain.Error
	if !errors.As(err, &e) || len(e.Problems) != 2 || e.Problems[0].Loc.Line != 2 || e.Problems[1].Loc.Line != 4 ||
		!strings.Contains(e.Problems[1].Msg, "as line 3") {
		t.Fatalf("refused: %v %v", err, e.Problems)
	}
	res = must(imp(again, domain.DuplicatesSkip, false))
	if res.Created != 2 || res.Skipped != 2 || count() != 5 {
		t.Errorf("skip: %+v, %d rows; want 2 created, 5 stored", res, count())
	}
	res = must(imp(again, domain.DuplicatesKeep, false))
	if res.Created != 4 || res.Duplicates != 4 || count() != 9 {
		t.Errorf("keep: %+v, %d rows; want 4 created, 9 stored", res, count())
	}
	if _, err := imp(again, "maybe", false); !domain.IsKind(err, domain.Invalid) {
		t.Errorf("duplicates=maybe: %v, want an Invalid error", err)
	}
}

// TestImportDuplicatesAcrossBatches: a file of several write batches, two
// holes taking turns, with rows repeating stored rows in its first and last
// batch (the second after the hole was read by depth twice, so read whole),
// a row repeating an earlier row two batches back, and a bad row just after
// a duplicate: every duplicate is found, the problems are listed in line
// order, and skip leaves out exactly the duplicates.
func TestImportDuplicatesAcrossBatches(t *testing.T) {
	s, ctx := newService(t)
	p := must(s.CreateProject(ctx, domain.Project{Name: "dups-batches"}))
	putImportTypes(s, ctx, p.ID)
	must(doImport(t, s, ctx, p.ID, "collars", collarsCSV, false, ""))
	var stored strings.Builder
	stored.WriteString("hole_id,depth,alpha,beta,type\n")
	for d := 0.5; d <= 100; d += 0.5 {
		fmt.Fprintf(&stored, "ZR001,%.1f,30,0,JN\n", d)
	}
	must(doImport(t, s, ctx, p.ID, "measurements", stored.String(), false, ""))

	const rows = 16000 // more than three write batches of the import
	file := func(badType bool) string {
		lines := make([]string, rows)
		for i := range lines {
			hole := []string{"ZR001", "ZR002"}[i%2]
			lines[i] = fmt.Sprintf("%s,%.2f,%d,%d,BD", hole, float64(i/2)*0.01, 10+i%70, (i*7)%360)
		}
		lines[100] = "ZR001,10,30,0,JN"   // stored; line 102
		lines[12000] = "ZR001,95,30,0,JN" // stored; line 12002
		lines[7000] = lines[5]            // as line 7; line 7002
		if badType {
			lines[102] = "ZR002,3,40,10,XX" // line 104
		}
		return "hole_id,depth,alpha,beta,type\n" + strings.Join(lines, "\n") + "\n"
	}
	imp := func(body, mode string) (service.ImportResult, error) {
		return s.Import(ctx, p.ID, service.ImportRequest{Kind: "measurements", Body: strings.NewReader(body), Duplicates: mode})
	}

	_, err := imp(file(true), "")
	var e *domain.Error
	if !errors.As(err, &e) || len(e.Problems) != 3 {
		t.Fatalf("refused import: %v, want three problems", err)
	}
	want := []struct {
		line int
		msg  string
	}{
		{102, "2 rows: " + domain.DuplicateStoredMsg + " (lines 102, 12002)"},
		{104, `type "XX" is not in`},
		{7002, "as line 7;"},
	}
	for i, w := range want {
		if pr := e.Problems[i]; pr.Loc.Line != w.line || !strings.Contains(pr.Msg, w.msg) {
			t.Errorf("problem %d: line %d %q, want line %d containing %q", i, pr.Loc.Line, pr.Msg, w.line, w.msg)
		}
	}
	if n := must(s.CountMeasurements(ctx, p.ID, service.MeasurementQuery{})); n != 200 {
		t.Fatalf("%d rows stored after a refused import, want the 200 stored before", n)
	}
	res := must(imp(file(false), domain.DuplicatesSkip))
	if res.Duplicates != 3 || res.Skipped != 3 || res.Created != rows-3 {
		t.Errorf("skip: %+v; want 3 duplicates skipped, %d created", res, rows-3)
	}
	if n := must(s.CountMeasurements(ctx, p.ID, service.MeasurementQuery{})); n != 200+rows-3 {
		t.Errorf("%d rows stored, want %d", n, 200+rows-3)
	}
}
