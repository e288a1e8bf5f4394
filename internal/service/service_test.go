package service_test

import (
	"bytes"
	"context"
	"encoding/csv"
	"errors"
	"math"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"corvane/internal/domain"
	"corvane/internal/service"
	"corvane/internal/store/sqlite"
)

// newService returns a service over a fresh SQLite store, and a context
// acting as the local command line (site admin).
func newService(t testing.TB) (*service.Service, context.Context) {
	t.Helper()
	path := filepath.Join(t.TempDir(), "svc.db")
	if err := sqlite.Migrate(path, 0); err != nil {
		t.Fatal(err)
	}
	st, err := sqlite.Open(context.Background(), path)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { st.Close() })
	return service.New(st, nil), service.WithActor(context.Background(), service.System)
}

// must returns v, or panics with err (failing the test with a stack).
func must[T any](v T, err error) T {
	if err != nil {
		panic(err)
	}
	return v
}

// mustPut is must for PutTypeCode.
func mustPut(tc domain.TypeCode, _ bool, err error) domain.TypeCode { return must(tc, err) }

func wantKind(t testing.TB, err error, k domain.Kind, what string) {
	t.Helper()
	if got := domain.KindOf(err); err == nil || got != k {
		t.Fatalf("%s: got %v (%v), want %v", what, err, got, k)
	}
}

func f64(v float64) *float64 { return &v }

func near(t testing.TB, what string, got *float64, want, tol float64) {
	t.Helper()
	if got == nil {
		t.Errorf("%s: null, want %v", what, want)
		return
	}
	d := math.Abs(*got - want)
	if d > 180 && want >= 0 && want <= 360 { // azimuths near 0/360
		d = 360 - d
	}
	if d > tol {
		t.Errorf("%s = %.4f, want %.4f (±%v)", what, *got, want, tol)
	}
}

// programme makes a project with a vocabulary and one straight hole of
// azimuth 000 and dip -60 with no survey.
func programme(t testing.TB, s *service.Service, ctx context.Context, p domain.Project) (domain.Project, domain.Hole) {
	t.Helper()
	if p.Name == "" {
		p.Name = "Zelvorra Reach test"
	}
	p = must(s.CreateProject(ctx, p))
	for _, c := range []string{"BD", "JN"} {
		mustPut(s.PutTypeCode(ctx, p.ID, domain.TypeCode{Code: c}))
	}
	mustPut(s.PutTypeCode(ctx, p.ID, domain.TypeCode{Code: "LN", Kind: "line"})) // lineations: gamma required
	h := must(s.CreateHole(ctx, p.ID, domain.Hole{Name: "ZR001", East: 1000, North: 2000, Elevation: 300, Azimuth: 0, Dip: -60, FinalDepth: 200}))
	return p, h
}

// The derived alpha/beta cases for a hole of azimuth 000 and dip -60 with the
// bottom-of-hole line and beta to the down-hole apex: references README
// section 2 ("Consequences of the conventions"), which derives them from
// design/conventions.md. beta 90 and 270 tell clockwise from anticlockwise.
func TestDerivedPlanesReferenceCases(t *testing.T) {
	s, ctx := newService(t)
	p, h := programme(t, s, ctx, domain.Project{})
	cases := []struct{ alpha, beta, dip, dd float64 }{
		{20, 0, 80, 0},
		{45, 0, 75, 180},
		{20, 180, 40, 0},
		{70, 180, 10, 180},
		{45, 90, 52.2, 243.4},
		{45, 270, 52.2, 116.6},
		{30, 180, 30, 0}, // conventions.md "Check": alpha 30 beta 180 dips 30 toward 000
	}
	for _, c := range cases {
		v := must(s.CreateMeasurement(ctx, p.ID, domain.Measurement{HoleID: h.ID, Depth: 50, Alpha: c.alpha, Beta: f64(c.beta), TypeCode: "JN"}))
		d := v.Derived
		if d.Error != "" {
			t.Fatalf("alpha %v beta %v: %s", c.alpha, c.beta, d.Error)
		}
		near(t, "dip", d.Dip, c.dip, 0.05)
		near(t, "dip direction", d.DipDirection, c.dd, 0.05)
		near(t, "strike (right-hand rule)", d.Strike, math.Mod(c.dd+270, 360), 0.05)
		near(t, "pole trend", d.PoleTrend, math.Mod(c.dd+180, 360), 0.05)
		near(t, "pole plunge", d.PolePlunge, 90-c.dip, 0.05)
		near(t, "hole azimuth", d.HoleAzimuth, 0, 1e-9)
		near(t, "hole dip", d.HoleDip, -60, 1e-9)
		// Straight hole: position = collar + depth along (0, cos 60, -sin 60).
		near(t, "northing", d.North, 2000+50*math.Cos(math.Pi/3), 1e-6)
		near(t, "elevation", d.Elevation, 300-50*math.Sin(math.Pi/3), 1e-6)
		if d.AzimuthRef != "grid" {
			t.Errorf("azimuth reference %q, want grid (the default)", d.AzimuthRef)
		}
	}
	// alpha 0 beta 0: conventions.md says beta 0 gives a vertical plane striking east-west... for
	// alpha 0 the plane contains the core axis; check the vertical-hole rule instead below.
}

// Common practice: in a vertical hole dip = 90 - alpha, with no dip direction.
func TestDerivedVerticalHole(t *testing.T) {
	s, ctx := newService(t)
	p, _ := programme(t, s, ctx, domain.Project{})
	h := must(s.CreateHole(ctx, p.ID, domain.Hole{Name: "V1", Dip: -90, FinalDepth: 100}))
	v := must(s.CreateMeasurement(ctx, p.ID, domain.Measurement{HoleID: h.ID, Depth: 10, Alpha: 35, Beta: f64(120), TypeCode: "BD"}))
	near(t, "dip", v.Derived.Dip, 55, 1e-9)
	if v.Derived.DipDirection != nil || v.Derived.Strike != nil {
		t.Errorf("vertical hole has a dip direction: %v", *v.Derived.DipDirection)
	}
	if len(v.Derived.Warnings) == 0 {
		t.Error("vertical hole without a warning")
	}
}

// Derived values are never stale: changing the survey or the project's
// conventions changes what the next read returns.
func TestDerivedFollowSurveyAndConventions(t *testing.T) {
	s, ctx := newService(t)
	// A collar without a crs: the true survey needs the project's
	// convergence for grid output (set to 0 here; unset it is an error).
	p, h := programme(t, s, ctx, domain.Project{Convergence: f64(0)})
	m := must(s.CreateMeasurement(ctx, p.ID, domain.Measurement{HoleID: h.ID, Depth: 50, Alpha: 20, Beta: f64(180), TypeCode: "BD"}))
	near(t, "dip before", m.Derived.Dip, 40, 1e-6)

	// A survey that turns the hole vertical from the collar down.
	must(s.PutSurvey(ctx, p.ID, h.ID, 0, domain.SurveySet{AzimuthRef: "true", Stations: []domain.Station{{Depth: 0, Azimuth: 0, Dip: -90}}}))
	got := must(s.GetMeasurement(ctx, p.ID, m.ID))
	near(t, "dip after the survey changed", got.Derived.Dip, 70, 1e-6) // vertical: 90 - alpha

	// Back to the -60 hole; then the top-of-hole line with beta to the up-hole
	// apex must give the same plane as bottom + down-hole (references README
	// section 2), while top + down-hole differs.
	ss := must(s.GetSurvey(ctx, p.ID, h.ID))
	must(s.PutSurvey(ctx, p.ID, h.ID, ss.Version, domain.SurveySet{AzimuthRef: "true", Stations: []domain.Station{{Depth: 0, Azimuth: 0, Dip: -60}}}))
	p.RefLine, p.BetaApex = "top", "uphole"
	p = must(s.UpdateProject(ctx, p.ID, p.Version, p))
	got = must(s.GetMeasurement(ctx, p.ID, m.ID))
	near(t, "top+uphole dip", got.Derived.Dip, 40, 1e-6)
	near(t, "top+uphole dip direction", got.Derived.DipDirection, 0, 1e-6)
	p.BetaApex = "downhole"
	p = must(s.UpdateProject(ctx, p.ID, p.Version, p))
	got = must(s.GetMeasurement(ctx, p.ID, m.ID))
	if math.Abs(*got.Derived.Dip-40) < 1 && math.Abs(*got.Derived.DipDirection) < 1 {
		t.Error("changing the beta apex did not change the derived plane")
	}

	// Grid output with convergence C: grid = true - C (conventions.md). The
	// survey is in true north, so every azimuth moves by -C.
	p.RefLine, p.BetaApex, p.Convergence = "bottom", "downhole", f64(2.5)
	p = must(s.UpdateProject(ctx, p.ID, p.Version, p))
	got = must(s.GetMeasurement(ctx, p.ID, m.ID))
	near(t, "grid hole azimuth", got.Derived.HoleAzimuth, 357.5, 1e-6)
	near(t, "grid dip direction", got.Derived.DipDirection, 357.5, 1e-6)
	// Magnetic survey with declination D: true = magnetic + D.
	ss = must(s.GetSurvey(ctx, p.ID, h.ID))
	must(s.PutSurvey(ctx, p.ID, h.ID, ss.Version, domain.SurveySet{AzimuthRef: "magnetic", Declination: f64(-4),
		Stations: []domain.Station{{Depth: 0, Azimuth: 10, Dip: -60}}}))
	got = must(s.GetMeasurement(ctx, p.ID, m.ID))
	near(t, "magnetic to grid", got.Derived.HoleAzimuth, 10-4-2.5, 1e-6)
	// A collar without a coordinate system takes the project's convergence.
	if got.Derived.ConvergenceSource != "project" || got.Derived.DeclinationSource != "given" {
		t.Errorf("sources %q, %q", got.Derived.ConvergenceSource, got.Derived.DeclinationSource)
	}
	near(t, "declination reported", got.Derived.Declination, -4, 0)
	near(t, "convergence reported", got.Derived.GridConvergence, 2.5, 0)
}

// Position at depth through the service against Lapeyrouse (2002), minimum
// curvature worked example (references README section 1): from 3500 ft
// (inclination 15, azimuth 20) to 3600 ft (25, 45) the hole moves North
// 27.22 ft, East 19.45 ft and 94.01 ft down. Inclination from vertical i is
// our dip i - 90.
func TestDerivedPositionMinimumCurvature(t *testing.T) {
	s, ctx := newService(t)
	p, _ := programme(t, s, ctx, domain.Project{LengthUnit: "ft", OutputAzimuthRef: "true"})
	h := must(s.CreateHole(ctx, p.ID, domain.Hole{Name: "L1", Azimuth: 20, Dip: -75, FinalDepth: 4000}))
	must(s.PutSurvey(ctx, p.ID, h.ID, 0, domain.SurveySet{AzimuthRef: "true", Stations: []domain.Station{
		{Depth: 0, Azimuth: 20, Dip: -75}, {Depth: 3500, Azimuth: 20, Dip: -75}, {Depth: 3600, Azimuth: 45, Dip: -65}}}))
	a := must(s.CreateMeasurement(ctx, p.ID, domain.Measurement{HoleID: h.ID, Depth: 3500, Alpha: 45, Beta: f64(0), TypeCode: "BD"}))
	b := must(s.CreateMeasurement(ctx, p.ID, domain.Measurement{HoleID: h.ID, Depth: 3600, Alpha: 45, Beta: f64(0), TypeCode: "BD"}))
	dn := *b.Derived.North - *a.Derived.North
	de := *b.Derived.East - *a.Derived.East
	dz := *a.Derived.Elevation - *b.Derived.Elevation
	for _, c := range []struct {
		what      string
		got, want float64
	}{{"north", dn, 27.22}, {"east", de, 19.45}, {"tvd", dz, 94.01}} {
		if math.Abs(c.got-c.want) > 0.006 {
			t.Errorf("%s = %.4f ft, want %.2f (Lapeyrouse 2002)", c.what, c.got, c.want)
		}
	}
}

func TestRolesAndProjects(t *testing.T) {
	s, admin := newService(t)
	p, h := programme(t, s, admin, domain.Project{})
	q, _ := programme(t, s, admin, domain.Project{Name: "other"})
	readSecret, _ := mustToken(t, s, admin, p.ID, domain.RoleRead)
	logSecret, _ := mustToken(t, s, admin, p.ID, domain.RoleLog)
	reader := must(s.Authenticate(admin, readSecret))
	logger := must(s.Authenticate(admin, logSecret))
	rctx := service.WithActor(context.Background(), reader)
	lctx := service.WithActor(context.Background(), logger)

	_, err := s.Authenticate(admin, readSecret+"x")
	wantKind(t, err, domain.Unauthorized, "wrong secret")
	_, err = s.GetProject(context.Background(), p.ID)
	wantKind(t, err, domain.Unauthorized, "no actor")
	_, err = s.CreateMeasurement(rctx, p.ID, domain.Measurement{HoleID: h.ID, Depth: 5, Alpha: 10, Beta: f64(10), TypeCode: "BD"})
	wantKind(t, err, domain.Forbidden, "reader logging")
	m := must(s.CreateMeasurement(lctx, p.ID, domain.Measurement{HoleID: h.ID, Depth: 5, Alpha: 10, Beta: f64(10), TypeCode: "BD"}))
	if m.LoggedBy != logger.Name {
		t.Errorf("logged_by %q, want the token's name %q", m.LoggedBy, logger.Name)
	}
	_, err = s.CreateHole(lctx, p.ID, domain.Hole{Name: "X", Dip: -90, FinalDepth: 10})
	wantKind(t, err, domain.Forbidden, "logger creating a hole")
	_, err = s.GetProject(lctx, q.ID)
	wantKind(t, err, domain.Forbidden, "token of another project")
	_, err = s.CreateProject(lctx, domain.Project{Name: "mine"})
	wantKind(t, err, domain.Forbidden, "project token creating a project")
	list := must(s.ListProjects(rctx, domain.Page{}))
	if len(list.Items) != 1 || list.Items[0].ID != p.ID {
		t.Errorf("a project token lists %d projects", len(list.Items))
	}
	// A measurement of another project is not found through this project.
	_, err = s.GetMeasurement(admin, q.ID, m.ID)
	wantKind(t, err, domain.NotFound, "measurement through the wrong project")
}

func mustToken(t testing.TB, s *service.Service, ctx context.Context, pid int64, role domain.Role) (string, domain.Token) {
	t.Helper()
	secret, tk, err := s.CreateToken(ctx, pid, role, "rig 2 "+string(role))
	if err != nil {
		t.Fatal(err)
	}
	if !strings.HasPrefix(secret, "cvt_") || tk.Hash != service.HashToken(secret) || strings.Contains(tk.Hash, secret) {
		t.Fatalf("token %q stored as %q", secret, tk.Hash)
	}
	return secret, tk
}

// HashToken is SHA-256 (FIPS 180-4); the digest of "abc" is the standard's
// own example.
func TestHashTokenIsSHA256(t *testing.T) {
	if got := service.HashToken("abc"); got != "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad" {
		t.Errorf("HashToken(abc) = %s", got)
	}
}

func TestVersionsAndAudit(t *testing.T) {
	s, ctx := newService(t)
	p, h := programme(t, s, ctx, domain.Project{})
	m := must(s.CreateMeasurement(ctx, p.ID, domain.Measurement{HoleID: h.ID, Depth: 5, Alpha: 10, Beta: f64(10), TypeCode: "BD"}))
	upd := m.Measurement
	upd.Alpha = 11
	v2 := must(s.UpdateMeasurement(ctx, p.ID, m.ID, m.Version, upd))
	if v2.Version != 2 || v2.Alpha != 11 {
		t.Fatalf("update: %+v", v2.Measurement)
	}
	upd.Alpha = 12
	_, err := s.UpdateMeasurement(ctx, p.ID, m.ID, m.Version, upd)
	wantKind(t, err, domain.PreconditionFailed, "second logger with the old version")
	_, err = s.UpdateMeasurement(ctx, p.ID, m.ID, v2.Version, domain.Measurement{Depth: 5, Alpha: 10, Beta: f64(10), TypeCode: "NOPE"})
	wantKind(t, err, domain.Invalid, "type outside the vocabulary")
	_, err = s.CreateMeasurement(ctx, p.ID, domain.Measurement{HoleID: h.ID, Depth: 500, Alpha: 10, Beta: f64(10), TypeCode: "BD"})
	wantKind(t, err, domain.Invalid, "depth past the final depth")
	wantKind(t, s.DeleteMeasurement(ctx, p.ID, m.ID, 1), domain.PreconditionFailed, "stale delete")
	if err := s.DeleteMeasurement(ctx, p.ID, m.ID, 2); err != nil {
		t.Fatal(err)
	}
	trail := must(s.ListAudit(ctx, p.ID, domain.Page{}))
	var got []string
	for _, e := range trail.Items {
		if e.Entity == "measurement" {
			got = append(got, e.Action+":"+e.ActorName)
			if e.Action == "update" && (len(e.Before) == 0 || len(e.After) == 0) {
				t.Error("update audit entry without before/after")
			}
		}
	}
	if strings.Join(got, ",") != "create:system,update:system,delete:system" {
		t.Errorf("audit trail %v", got)
	}
}

func TestConvertStateless(t *testing.T) {
	s, ctx := newService(t)
	req := service.ConvertRequest{
		Collars: []service.ConvertCollar{{HoleID: "A", Azimuth: 0, Dip: -60, FinalDepth: 100}},
		Measurements: []service.ConvertMeasurement{
			{HoleID: "A", Depth: 10, Alpha: 45, Beta: f64(90), ApparentThickness: f64(2)},
			{HoleID: "B", Depth: 10, Alpha: 45, Beta: f64(90)},
			{HoleID: "A", Depth: 150, Alpha: 45, Beta: f64(90)},
		},
	}
	resp := must(s.Convert(ctx, req))
	if len(resp.Results) != 3 {
		t.Fatalf("%d results", len(resp.Results))
	}
	// references README section 2: alpha 45 beta 90 in hole 000/-60 gives 243.4/52.2.
	near(t, "dip", resp.Results[0].Derived.Dip, 52.2, 0.05)
	near(t, "dip direction", resp.Results[0].Derived.DipDirection, 243.4, 0.05)
	// true thickness = apparent sin(alpha) (common practice)
	near(t, "true thickness", resp.Results[0].Derived.TrueThickness, 2*math.Sin(math.Pi/4), 1e-9)
	if !strings.Contains(resp.Results[1].Derived.Error, "unknown hole") || !strings.Contains(resp.Results[2].Derived.Error, "past the final depth") {
		t.Errorf("row errors: %q / %q", resp.Results[1].Derived.Error, resp.Results[2].Derived.Error)
	}
	req.Collars[0].Dip = -95
	_, err := s.Convert(ctx, req)
	var e *domain.Error
	if !errors.As(err, &e) || e.Kind != domain.Invalid || e.Loc.Field != "collars[0].dip" {
		t.Errorf("bad collar: %v", err)
	}
	_, err = s.Convert(context.Background(), req)
	wantKind(t, err, domain.Unauthorized, "anonymous convert")
}

const collarsCSV = `hole_id,easting,northing,elevation,azimuth,dip,depth
ZR001,1000,2000,300,0,-60,200
ZR002,1100,2000,305,90,-55,150
`

const surveysCSV = `hole_id,depth,azimuth,dip,azimuth_reference
ZR001,0,0,-60,grid
ZR001,100,0,-60,grid
ZR002,0,90,-55,grid
`

const runsCSV = `hole_id,from,to,confidence,mismatch
ZR001,0,3,good,2
ZR001,3,6,poor,
`

// putImportTypes stores the vocabulary measurementsCSV is logged with: BD
// and JN planes, LN a line (its rows carry gamma, domain.CheckKind).
func putImportTypes(s *service.Service, ctx context.Context, pid int64) {
	for _, tc := range []domain.TypeCode{{Code: "BD"}, {Code: "JN"}, {Code: "LN", Kind: "line"}} {
		mustPut(s.PutTypeCode(ctx, pid, tc))
	}
}

const measurementsCSV = `hole_id,depth,alpha,beta,gamma,apparent_thickness,type,comment,logged_by,logged_at
ZR001,1.5,20,180,,0.5,BD,contact,ana,2026-03-02
ZR001,4.5,45,90,30,,LN,,,
ZR002,10,70,180,,,BD,"quoted, comment",ben,2026-03-03T10:00:00+08:00
`

func doImport(t testing.TB, s *service.Service, ctx context.Context, pid int64, kind, body string, dry bool, key string) (service.ImportResult, error) {
	t.Helper()
	return s.Import(ctx, pid, service.ImportRequest{Kind: kind, Body: strings.NewReader(body), DryRun: dry, IdempotencyKey: key})
}

func TestImportExport(t *testing.T) {
	s, ctx := newService(t)
	checkImportExport(t, s, ctx)
}

func checkImportExport(t *testing.T, s *service.Service, ctx context.Context) {
	p := must(s.CreateProject(ctx, domain.Project{Name: "imp"}))
	putImportTypes(s, ctx, p.ID)
	// Dry run writes nothing.
	r := must(doImport(t, s, ctx, p.ID, "collars", collarsCSV, true, ""))
	if r.Created != 2 || !r.DryRun {
		t.Errorf("dry run result %+v", r)
	}
	if l := must(s.ListHoles(ctx, p.ID, domain.Page{})); len(l.Items) != 0 {
		t.Fatalf("dry run wrote %d holes", len(l.Items))
	}
	r = must(doImport(t, s, ctx, p.ID, "collars", collarsCSV, false, ""))
	if r.Created != 2 || r.Rows != 2 {
		t.Errorf("collars %+v", r)
	}
	r = must(doImport(t, s, ctx, p.ID, "collars", collarsCSV, false, ""))
	if r.Updated != 2 || r.Created != 0 {
		t.Errorf("collars again should update: %+v", r)
	}
	r = must(doImport(t, s, ctx, p.ID, "surveys", surveysCSV, false, ""))
	if r.Created != 2 || r.Rows != 3 {
		t.Errorf("surveys %+v", r)
	}
	must(doImport(t, s, ctx, p.ID, "runs", runsCSV, false, ""))
	r = must(doImport(t, s, ctx, p.ID, "measurements", measurementsCSV, false, "upload-1"))
	if r.Created != 3 {
		t.Errorf("measurements %+v", r)
	}
	// A retry with the same key returns the first result and writes nothing.
	again := must(doImport(t, s, ctx, p.ID, "measurements", measurementsCSV, false, "upload-1"))
	if !again.Replayed || again.Created != 3 {
		t.Errorf("retry: %+v", again)
	}
	if n := must(s.CountMeasurements(ctx, p.ID, service.MeasurementQuery{})); n != 3 {
		t.Fatalf("%d measurements after a retried upload, want 3", n)
	}
	_, err := doImport(t, s, ctx, p.ID, "measurements", measurementsCSV+"ZR001,7,10,10,,,BD,,,\n", false, "upload-1")
	wantKind(t, err, domain.Conflict, "same key, other body")

	// Every bad row is reported with line and column; nothing is written.
	bad := `hole_id,depth,alpha,beta,type
ZR001,8,10,10,BD
ZR009,9,10,10,BD
ZR001,9,95,10,BD
ZR001,9,10,10,XX
ZR001,900,10,10,JN
ZR001,abc,10,10,JN
`
	_, err = doImport(t, s, ctx, p.ID, "measurements", bad, false, "")
	var e *domain.Error
	if !errors.As(err, &e) || e.Kind != domain.Invalid {
		t.Fatalf("bad file: %v", err)
	}
	want := map[int]string{3: "hole_id", 4: "alpha", 5: "type", 6: "depth", 7: "depth"}
	if len(e.Problems) != len(want) {
		t.Fatalf("%d problems, want %d: %v", len(e.Problems), len(want), e.Problems)
	}
	for _, pr := range e.Problems {
		if want[pr.Loc.Line] != pr.Loc.Column || pr.Loc.File != "measurements.csv" {
			t.Errorf("problem at %+v: %s", pr.Loc, pr.Msg)
		}
	}
	if n := must(s.CountMeasurements(ctx, p.ID, service.MeasurementQuery{})); n != 3 {
		t.Fatalf("a rejected file wrote rows: %d", n)
	}

	// Every row naming an unknown hole is reported, the second as the first:
	// identical problems as one, with their count and lines.
	for _, f := range []struct{ kind, body, lines string }{
		{"surveys", "hole_id,depth,azimuth,dip\nZR001,0,0,-60\nZR009,0,0,-60\nZR009,50,0,-60\n", "(lines 3-4)"},
		{"runs", "hole_id,from,to,confidence\nZR009,0,3,good\nZR001,6,9,good\nZR009,3,6,good\n", "(lines 2, 4)"},
	} {
		_, err = doImport(t, s, ctx, p.ID, f.kind, f.body, false, "")
		if !errors.As(err, &e) || e.Kind != domain.Invalid {
			t.Fatalf("%s with an unknown hole: %v", f.kind, err)
		}
		if len(e.Problems) != 1 {
			t.Fatalf("%s: %d problems, want one summary: %v", f.kind, len(e.Problems), e.Problems)
		}
		pr := e.Problems[0]
		if pr.Loc.Column != "hole_id" || !strings.Contains(pr.Msg, `"ZR009"`) || !strings.HasPrefix(pr.Msg, "2 rows: ") ||
			!strings.HasSuffix(pr.Msg, f.lines) || !strings.HasPrefix(e.Msg, "2 bad rows") {
			t.Errorf("%s: %s: problem at %+v: %s", f.kind, e.Msg, pr.Loc, pr.Msg)
		}
	}

	// Filters.
	l := must(s.ListMeasurements(ctx, p.ID, service.MeasurementQuery{Holes: []string{"ZR001"}, Types: []string{"LN"}}, domain.Page{}))
	if len(l.Items) != 1 || l.Items[0].Depth != 4.5 || l.Items[0].Gamma == nil {
		t.Fatalf("filtered list %+v", l.Items)
	}
	if l.Items[0].Derived.RunConfidence != "poor" || !contains(l.Items[0].Derived.Warnings, "orientation run rated poor") {
		t.Errorf("run confidence %q warnings %v", l.Items[0].Derived.RunConfidence, l.Items[0].Derived.Warnings)
	}
	_, err = s.ListMeasurements(ctx, p.ID, service.MeasurementQuery{Holes: []string{"NOPE"}}, domain.Page{})
	wantKind(t, err, domain.Invalid, "unknown hole in filter")

	// Export with derived values.
	var buf bytes.Buffer
	if err := s.ExportMeasurements(ctx, p.ID, service.MeasurementQuery{}, &buf); err != nil {
		t.Fatal(err)
	}
	recs, err := csv.NewReader(&buf).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if len(recs) != 4 {
		t.Fatalf("%d export lines", len(recs))
	}
	col := map[string]int{}
	for i, n := range recs[0] {
		col[n] = i
	}
	first := recs[1]
	// Row 1: alpha 20 beta 180 in hole 000/-60 (grid survey, grid output) -> 000/40
	// (references README section 2); true thickness 0.5 sin 20.
	if first[col["hole_id"]] != "ZR001" || first[col["dip"]] != "40.00" || first[col["dip_direction"]] != "0.00" {
		t.Errorf("export row %v", first)
	}
	if tt, _ := strconv.ParseFloat(first[col["true_thickness"]], 64); math.Abs(tt-0.5*math.Sin(20*math.Pi/180)) > 1e-3 {
		t.Errorf("true thickness %v", tt)
	}
	if recs[3][col["comment"]] != "quoted, comment" || recs[3][col["logged_by"]] != "ben" || recs[3][col["logged_at"]] != "2026-03-03T02:00:00Z" {
		t.Errorf("export row 3 %v", recs[3])
	}
}

func contains(xs []string, x string) bool {
	for _, v := range xs {
		if v == x {
			return true
		}
	}
	return false
}

// An import reads its key with its project (Store.ImportInputs): a key
// answers only for its own project while that project is there, and an
// import without a body is refused whether or not its key is known.
func TestImportKeyAndProject(t *testing.T) {
	s, ctx := newService(t)
	p := must(s.CreateProject(ctx, domain.Project{Name: "keys"}))
	first := must(doImport(t, s, ctx, p.ID, "collars", collarsCSV, false, "k"))
	again := must(doImport(t, s, ctx, p.ID, "collars", collarsCSV, false, "k"))
	if !again.Replayed || again.Created != first.Created {
		t.Fatalf("replay %+v of %+v", again, first)
	}
	_, err := s.Import(ctx, p.ID, service.ImportRequest{Kind: "collars", IdempotencyKey: "k"})
	wantKind(t, err, domain.Invalid, "a known key without a body")
	_, err = doImport(t, s, ctx, p.ID+1000, "collars", collarsCSV, false, "k")
	wantKind(t, err, domain.NotFound, "the key in a project that does not exist")
	_, err = s.Import(ctx, p.ID+1000, service.ImportRequest{Kind: "collars", IdempotencyKey: "k"})
	wantKind(t, err, domain.NotFound, "no project and no body")
	p = must(s.GetProject(ctx, p.ID))
	if err := s.DeleteProject(ctx, p.ID, p.Version); err != nil {
		t.Fatal(err)
	}
	_, err = doImport(t, s, ctx, p.ID, "collars", collarsCSV, false, "k")
	wantKind(t, err, domain.NotFound, "the key of a deleted project")
}
