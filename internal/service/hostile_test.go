package service_test

import (
	"context"
	"errors"
	"strconv"
	"strings"
	"testing"

	"corvane/internal/domain"
	"corvane/internal/service"
)

func TestTextRules(t *testing.T) {
	s, ctx := newService(t)
	checkTextRules(t, s, ctx)
}

// wantField fails unless err is Invalid and names field.
// wantConflictAt fails t unless err is a Conflict located at field.
func wantConflictAt(t testing.TB, err error, field, what string) {
	t.Helper()
	var e *domain.Error
	if !errors.As(err, &e) || e.Kind != domain.Conflict || e.Loc.Field != field {
		t.Errorf("%s: error %v, want Conflict at %s", what, err, field)
	}
}

func wantField(t testing.TB, err error, field, what string) {
	t.Helper()
	var e *domain.Error
	if !errors.As(err, &e) || e.Kind != domain.Invalid {
		t.Errorf("%s: error %v, want Invalid naming %s", what, err, field)
		return
	}
	named := e.Loc.Field == field || e.Loc.Column == field
	for _, p := range e.Problems {
		named = named || p.Loc.Field == field || p.Loc.Column == field
	}
	if !named {
		t.Errorf("%s: error %v does not name %s", what, err, field)
	}
}

// checkTextRules: text is valid UTF-8 without NUL or control characters
// (tab allowed in comments and descriptions), within its documented length;
// a breach is Invalid naming the field and stores nothing, on every store and
// at every door (the use cases and the CSV import). Issue item 6.
func checkTextRules(t *testing.T, s *service.Service, ctx context.Context) {
	huge := strings.Repeat("x", 900_000)
	esc := "TM\x1b[31m9"
	_, err := s.CreateProject(ctx, domain.Project{Name: "text", Description: "a\x00b"})
	wantField(t, err, "description", "project description with NUL")
	_, err = s.CreateProject(ctx, domain.Project{Name: "text", Description: huge})
	wantField(t, err, "description", "project description of 900 kB")
	_, err = s.CreateProject(ctx, domain.Project{Name: "bad\xffname"})
	wantField(t, err, "name", "project name not UTF-8")
	if l := must(s.ListProjects(ctx, domain.Page{})); len(l.Items) != 0 {
		t.Fatalf("refused projects stored: %+v", l.Items)
	}
	p := must(s.CreateProject(ctx, domain.Project{Name: "text", Description: "tab\tallowed"}))
	_, _, err = s.PutTypeCode(ctx, p.ID, domain.TypeCode{Code: "BD", Description: "bed\x00ding"})
	wantField(t, err, "description", "type description with NUL")
	mustPut(s.PutTypeCode(ctx, p.ID, domain.TypeCode{Code: "BD", Description: "bedding"}))

	hole := func(name, crs string) domain.Hole {
		return domain.Hole{Name: name, Azimuth: 90, Dip: -60, FinalDepth: 100, CRS: crs}
	}
	for _, tc := range []struct {
		h     domain.Hole
		field string
	}{
		{hole(esc, ""), "name"},
		{hole("TM\n9", ""), "name"},
		{hole("TM\t9", ""), "name"},
		{hole("TM9", huge), "crs"},
		{hole("TM9", "EPSG:\x0032750"), "crs"},
	} {
		_, err := s.CreateHole(ctx, p.ID, tc.h)
		wantField(t, err, tc.field, "hole "+strings.ToValidUTF8(tc.h.Name, "?"))
	}
	if l := must(s.ListHoles(ctx, p.ID, domain.Page{})); len(l.Items) != 0 {
		t.Fatalf("refused holes stored: %+v", l.Items)
	}
	h := must(s.CreateHole(ctx, p.ID, hole("TM1", "EPSG:32750")))
	_, err = s.CreateRun(ctx, p.ID, h.ID, domain.Run{From: 0, To: 3, Comment: "a\x00b"})
	wantField(t, err, "comment", "run comment with NUL")
	must(s.CreateRun(ctx, p.ID, h.ID, domain.Run{From: 0, To: 3, Comment: "tab\tkept"}))

	meas := func(comment, by string) domain.Measurement {
		return domain.Measurement{HoleID: h.ID, Depth: 1, Alpha: 30, Beta: f64(40), TypeCode: "BD", Comment: comment, LoggedBy: by}
	}
	for _, tc := range []struct {
		m     domain.Measurement
		field string
	}{
		{meas("", huge), "logged_by"},
		{meas("", "ana\x1b"), "logged_by"},
		{meas("bad \xff\xfe", ""), "comment"},
		{meas("nul \x00", ""), "comment"},
		{meas("line\nbreak", ""), "comment"},
		{meas(strings.Repeat("é", domain.MaxCommentLen+1), ""), "comment"},
	} {
		_, err := s.CreateMeasurement(ctx, p.ID, tc.m)
		wantField(t, err, tc.field, "measurement")
	}
	// The limit counts characters, not bytes.
	must(s.CreateMeasurement(ctx, p.ID, meas(strings.Repeat("é", domain.MaxCommentLen), "ana")))
	must(s.CreateMeasurement(ctx, p.ID, meas("tab\tin a comment", "ana")))

	// The CSV door: the same rule, located by line and column; nothing stored.
	csv := "hole_id,depth,alpha,beta,type,comment,logged_by\n" +
		"TM1,2,30,40,BD,fine,ana\n" +
		"TM1,3,30,40,BD,nul \x00 here,ana\n" +
		"TM1,4,30,40,BD,ok,esc\x1b\n" +
		"TM1,5,30,40,BD,\xff\xfe,ana\n"
	_, err = doImport(t, s, ctx, p.ID, "measurements", csv, false, "")
	var e *domain.Error
	if !errors.As(err, &e) || e.Kind != domain.Invalid || len(e.Problems) != 3 {
		t.Errorf("CSV with bad text: %v, want Invalid with 3 row problems", err)
	} else {
		for i, want := range []struct {
			line int
			col  string
		}{{3, "comment"}, {4, "logged_by"}, {5, "comment"}} {
			if got := e.Problems[i].Loc; got.Line != want.line || got.Column != want.col {
				t.Errorf("CSV problem %d at %+v, want line %d column %s", i, got, want.line, want.col)
			}
		}
	}
	_, err = s.Import(ctx, p.ID, service.ImportRequest{Kind: "runs", File: "runs\x1b.csv", Body: strings.NewReader("hole_id,from,to,confidence\nTM1,3,4,good\n")})
	wantField(t, err, "file", "import file name with ESC")
	_, err = s.Import(ctx, p.ID, service.ImportRequest{Kind: "runs", IdempotencyKey: "k\x00", Body: strings.NewReader("hole_id,from,to,confidence\nTM1,3,4,good\n")})
	wantField(t, err, "idempotency_key", "idempotency key with NUL")
	l := must(s.ListMeasurements(ctx, p.ID, service.MeasurementQuery{}, domain.Page{}))
	if len(l.Items) != 2 {
		t.Errorf("%d measurements stored, want the 2 good ones", len(l.Items))
	}
	if rs := must(s.ListRuns(ctx, p.ID, h.ID)); len(rs) != 1 {
		t.Errorf("%d runs stored, want 1", len(rs))
	}
	_, _, err = s.CreateToken(ctx, p.ID, domain.RoleRead, "reader\x1b[0m")
	wantField(t, err, "name", "token name with ESC")
}

func TestDepthRules(t *testing.T) {
	s, ctx := newService(t)
	checkDepthRules(t, s, ctx)
}

// checkDepthRules: a hole's final depth cannot shrink above its survey
// stations, runs or measurements (Conflict listing what is deeper, nothing
// changed), and a run cannot pass its hole's end (Conflict naming "to"), at
// every door: the use cases and the CSV imports. Issue item 7.
func checkDepthRules(t *testing.T, s *service.Service, ctx context.Context) {
	p := must(s.CreateProject(ctx, domain.Project{Name: "depths"}))
	mustPut(s.PutTypeCode(ctx, p.ID, domain.TypeCode{Code: "BD"}))
	h := must(s.CreateHole(ctx, p.ID, domain.Hole{Name: "DH1", Azimuth: 90, Dip: -60, FinalDepth: 200}))
	must(s.PutSurvey(ctx, p.ID, h.ID, 0, domain.SurveySet{AzimuthRef: "grid", Stations: []domain.Station{{Depth: 0, Azimuth: 90, Dip: -60}, {Depth: 90, Azimuth: 91, Dip: -59}}}))
	r := must(s.CreateRun(ctx, p.ID, h.ID, domain.Run{From: 100, To: 150}))
	m := must(s.CreateMeasurement(ctx, p.ID, domain.Measurement{HoleID: h.ID, Depth: 180, Alpha: 30, Beta: f64(40), TypeCode: "BD"}))

	shrink := h
	shrink.FinalDepth = 80
	_, err := s.UpdateHole(ctx, p.ID, h.ID, h.Version, shrink)
	var e *domain.Error
	if !errors.As(err, &e) || e.Kind != domain.Conflict {
		t.Fatalf("shrinking the hole below its data: %v, want Conflict", err)
	}
	for _, want := range []string{"survey station at 90", "run " + itoa(r.ID) + " (100-150)", "measurement " + itoa(m.ID) + " at 180"} {
		if !strings.Contains(e.Msg, want) {
			t.Errorf("conflict %q does not list %q", e.Msg, want)
		}
	}
	if len(e.Problems) != 3 || e.Loc.Field != "final_depth" {
		t.Errorf("conflict lists %d rows at %+v, want 3 at final_depth", len(e.Problems), e.Loc)
	}
	shrink.FinalDepth = 170
	_, err = s.UpdateHole(ctx, p.ID, h.ID, h.Version, shrink)
	if !errors.As(err, &e) || e.Kind != domain.Conflict || len(e.Problems) != 1 || !strings.Contains(e.Msg, "measurement") {
		t.Errorf("shrinking above one measurement: %v", err)
	}
	if got := must(s.GetHole(ctx, p.ID, h.ID)); got.FinalDepth != 200 || got.Version != h.Version {
		t.Errorf("refused shrink changed the hole: %+v", got)
	}
	// Down to the deepest datum is fine.
	shrink.FinalDepth = 180
	h = must(s.UpdateHole(ctx, p.ID, h.ID, h.Version, shrink))

	// The collar import keeps the same rule, located at its row.
	_, err = doImport(t, s, ctx, p.ID, "collars", "hole_id,easting,northing,elevation,azimuth,dip,depth\nDH1,0,0,0,90,-60,120\n", false, "")
	if !errors.As(err, &e) || e.Kind != domain.Invalid || len(e.Problems) != 1 || e.Problems[0].Loc.Line != 2 || e.Problems[0].Loc.Column != "depth" ||
		!strings.Contains(e.Problems[0].Msg, "measurement "+itoa(m.ID)) {
		t.Errorf("collar import shrinking the hole: %v", err)
	}
	if got := must(s.GetHole(ctx, p.ID, h.ID)); got.FinalDepth != 180 {
		t.Errorf("refused import changed the hole: %+v", got)
	}

	// A run cannot pass the hole's end: created, edited or imported.
	_, err = s.CreateRun(ctx, p.ID, h.ID, domain.Run{From: 170, To: 181})
	wantConflictAt(t, err, "to", "run past the end")
	r2 := r
	r2.To = 200
	_, err = s.UpdateRun(ctx, p.ID, r.ID, r.Version, r2)
	wantConflictAt(t, err, "to", "run edited past the end")
	_, err = doImport(t, s, ctx, p.ID, "runs", "hole_id,from,to,confidence\nDH1,150,160,good\nDH1,160,190,good\n", false, "")
	if !errors.As(err, &e) || e.Kind != domain.Invalid || len(e.Problems) != 1 || e.Problems[0].Loc.Line != 3 || e.Problems[0].Loc.Column != "to" {
		t.Errorf("run import past the end: %v", err)
	}
	if rs := must(s.ListRuns(ctx, p.ID, h.ID)); len(rs) != 1 || rs[0].To != 150 {
		t.Errorf("refused runs stored: %+v", rs)
	}
	must(s.CreateRun(ctx, p.ID, h.ID, domain.Run{From: 170, To: 180}))
}

func itoa(n int64) string { return strconv.FormatInt(n, 10) }
