// Package storetest is the one conformance suite every [domain.Store]
// implementation must pass. A store's own test calls [Run] with a function
// that returns a fresh, migrated, empty store for each subtest.
package storetest

import (
	"context"
	"corvane/internal/uncertainty"
	"encoding/json"
	"errors"
	"fmt"
	"sort"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"github.com/google/go-cmp/cmp"

	"corvane/internal/domain"
)

// Run runs the conformance suite. newStore must return an empty store with
// the current schema; the suite closes it.
func Run(t *testing.T, newStore func(t *testing.T) domain.Store) {
	tests := []struct {
		name string
		fn   func(t *testing.T, s domain.Store)
	}{
		{"Projects", testProjects},
		{"TypeCodes", testTypeCodes},
		{"Holes", testHoles},
		{"Survey", testSurvey},
		{"KindSets", testKindSets},
		{"Runs", testRuns},
		{"Measurements", testMeasurements},
		{"MeasurementFilters", testMeasurementFilters},
		{"CoreIntervals", testCoreIntervals},
		{"Transactions", testTransactions},
		{"Snapshot", testSnapshot},
		{"Exclusive", testExclusive},
		{"Audit", testAudit},
		{"Tokens", testTokens},
		{"Idempotency", testIdempotency},
		{"Cascade", testCascade},
		{"ConcurrentWriters", testConcurrentWriters},
		{"ChangeLog", testChangeLog},
		{"ImportBatchChangeLog", testImportBatchChangeLog},
		{"SyncState", testSyncState},
		{"KindSetLog", testKindSetLog},
		{"ImportBatches", testImportBatches},
		{"MeasurementKeys", testMeasurementKeys},
		{"ModelStamp", testModelStamp},
		{"LogInputs", testLogInputs},
		{"ImportInputs", testImportInputs},
		{"MeasurementStamp", testMeasurementStamp},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			s := newStore(t)
			t.Cleanup(func() { s.Close() })
			tc.fn(t, s)
		})
	}
}

func ctx(t *testing.T) context.Context { return t.Context() }

func wantKind(t *testing.T, err error, k domain.Kind, what string) {
	t.Helper()
	if err == nil {
		t.Fatalf("%s: got nil error, want %v", what, k)
	}
	var e *domain.Error
	if !errors.As(err, &e) {
		t.Fatalf("%s: error %v (%T) is not a *domain.Error", what, err, err)
	}
	if e.Kind != k {
		t.Fatalf("%s: kind %v (%v), want %v", what, e.Kind, err, k)
	}
}

func must(t *testing.T, err error) {
	t.Helper()
	if err != nil {
		t.Fatal(err)
	}
}

func diff(t *testing.T, what string, want, got any) {
	t.Helper()
	if d := cmp.Diff(want, got); d != "" {
		t.Errorf("%s mismatch (-want +got):\n%s", what, d)
	}
}

func f64(v float64) *float64 { return &v }

func st(depth, azimuth, dip float64) domain.Station {
	return domain.Station{Depth: depth, Azimuth: azimuth, Dip: dip}
}

func newProject(t *testing.T, s domain.Store, name string) domain.Project {
	t.Helper()
	p := domain.Project{Name: name}
	must(t, p.Normalize())
	must(t, s.CreateProject(ctx(t), &p))
	must(t, s.PutTypeCode(ctx(t), domain.TypeCode{ProjectID: p.ID, Code: "BD", Description: "bedding", Kind: "plane"}))
	must(t, s.PutTypeCode(ctx(t), domain.TypeCode{ProjectID: p.ID, Code: "JN", Description: "joint", Kind: "plane"}))
	return p
}

func newHole(t *testing.T, s domain.Store, projectID int64, name string) domain.Hole {
	t.Helper()
	h := domain.Hole{AzimuthRef: "true", ProjectID: projectID, Name: name, East: 500100.5, North: 7100200.25, Elevation: 412.5,
		Azimuth: 45, Dip: -60, FinalDepth: 300, CRS: "EPSG:32750", Started: "2026-03-01",
		Declination: f64(1.25), GridConvergence: f64(-0.5), SurveyDate: "2026-03-04"}
	must(t, s.CreateHole(ctx(t), &h))
	return h
}

func testProjects(t *testing.T, s domain.Store) {
	c := ctx(t)
	p := domain.Project{Name: "Zelvorra Reach", Description: "fictional prospect", RefLine: "top", BetaApex: "uphole",
		GammaSense: "anticlockwise", LengthUnit: "ft", OutputAzimuthRef: "true", Declination: f64(1.5), Convergence: f64(-0.75),
		ErrorModel: uncertainty.Model{Beta: 4.5, MarkPoor: 20, Gyro: uncertainty.SurveyError{Azimuth: 0.25}}, PersistentFabric: "BD",
		MagneticModel: "igrf", SurveyPriority: "gyro,magnetic", LocalGrid: json.RawMessage(`{"name":"mine grid","grid_crs":"EPSG:28350","rotation":-37.25,"origin":{"local_easting":5000,"local_northing":10000,"easting":391250,"northing":6465480}}`)}
	must(t, s.CreateProject(c, &p))
	if p.ID == 0 || p.Version != 1 || p.CreatedAt.IsZero() || !p.CreatedAt.Equal(p.UpdatedAt) {
		t.Fatalf("create did not set id/version/times: %+v", p)
	}
	got, err := s.GetProject(c, p.ID)
	must(t, err)
	diff(t, "GetProject", p, got)
	got, err = s.GetProjectByName(c, "Zelvorra Reach")
	must(t, err)
	diff(t, "GetProjectByName", p, got)

	_, err = s.GetProject(c, p.ID+1000)
	wantKind(t, err, domain.NotFound, "missing project")
	dup := domain.Project{Name: "Zelvorra Reach", RefLine: "bottom", BetaApex: "downhole", GammaSense: "clockwise", LengthUnit: "m", OutputAzimuthRef: "grid", MagneticModel: "auto"}
	wantKind(t, s.CreateProject(c, &dup), domain.Conflict, "duplicate project name")

	// Project defaults are unset until someone sets them; the error model
	// back to every default and the persistent fabric unset round-trip too,
	// and the north-reference and survey settings through an update: a new
	// model choice, no local grid, another survey priority.
	p.Description, p.Declination, p.ErrorModel, p.PersistentFabric = "changed", nil, uncertainty.Model{}, ""
	p.MagneticModel, p.LocalGrid, p.SurveyPriority = "wmm", nil, "magnetic"
	must(t, s.UpdateProject(c, &p, 1))
	if p.Version != 2 {
		t.Fatalf("version after update = %d, want 2", p.Version)
	}
	got, _ = s.GetProject(c, p.ID)
	diff(t, "after update", p, got)
	stale := p
	stale.Description = "lost update"
	wantKind(t, s.UpdateProject(c, &stale, 1), domain.PreconditionFailed, "stale update")
	got, _ = s.GetProject(c, p.ID)
	if got.Description != "changed" {
		t.Errorf("stale update wrote %q", got.Description)
	}
	missing := p
	missing.ID = 99999
	wantKind(t, s.UpdateProject(c, &missing, 1), domain.NotFound, "update of missing project")

	// Keyset pages.
	for i := range 4 {
		q := domain.Project{Name: fmt.Sprintf("P%d", i)}
		must(t, q.Normalize())
		must(t, s.CreateProject(c, &q))
	}
	page1, err := s.ListProjects(c, domain.Page{Limit: 3})
	must(t, err)
	page2, err := s.ListProjects(c, domain.Page{Limit: 3, After: page1[len(page1)-1].ID})
	must(t, err)
	if len(page1) != 3 || len(page2) != 2 || page2[0].ID <= page1[2].ID {
		t.Fatalf("pages: %d then %d", len(page1), len(page2))
	}
	wantKind(t, s.DeleteProject(c, p.ID, 1), domain.PreconditionFailed, "stale delete")
	must(t, s.DeleteProject(c, p.ID, 2))
	_, err = s.GetProject(c, p.ID)
	wantKind(t, err, domain.NotFound, "deleted project")
	wantKind(t, s.DeleteProject(c, p.ID, 2), domain.NotFound, "delete twice")
}

func testTypeCodes(t *testing.T, s domain.Store) {
	c := ctx(t)
	p := newProject(t, s, "vocab")
	must(t, s.PutTypeCode(c, domain.TypeCode{ProjectID: p.ID, Code: "BD", Description: "bedding plane", Kind: "plane"}))
	must(t, s.PutTypeCode(c, domain.TypeCode{ProjectID: p.ID, Code: "LN", Description: "lineation", Kind: "line"}))
	must(t, s.PutTypeCode(c, domain.TypeCode{ProjectID: p.ID, Code: "BD", Description: "bedding plane", Kind: "plane", Colour: "#CC79A7", Mark: "star"}))
	got, err := s.ListTypeCodes(c, p.ID)
	must(t, err)
	diff(t, "vocabulary", []domain.TypeCode{
		// Each put counts as a change: BD was made with the project, then replaced twice.
		{ProjectID: p.ID, Code: "BD", Description: "bedding plane", Kind: "plane", Colour: "#CC79A7", Mark: "star", Version: 3},
		{ProjectID: p.ID, Code: "JN", Description: "joint", Kind: "plane", Version: 1},
		{ProjectID: p.ID, Code: "LN", Description: "lineation", Kind: "line", Version: 1},
	}, got)
	h := newHole(t, s, p.ID, "H1")
	m := domain.Measurement{ProjectID: p.ID, HoleID: h.ID, Depth: 10, Alpha: 30, Beta: f64(100), TypeCode: "JN", LoggedAt: time.Now()}
	must(t, s.CreateMeasurement(c, &m))
	wantKind(t, s.DeleteTypeCode(c, p.ID, "JN"), domain.Conflict, "delete code in use")
	must(t, s.DeleteTypeCode(c, p.ID, "LN"))
	wantKind(t, s.DeleteTypeCode(c, p.ID, "LN"), domain.NotFound, "delete missing code")
	bad := domain.Measurement{ProjectID: p.ID, HoleID: h.ID, Depth: 10, Alpha: 30, Beta: f64(100), TypeCode: "NOPE", LoggedAt: time.Now()}
	wantKind(t, s.CreateMeasurement(c, &bad), domain.Conflict, "measurement with unknown code")
}

func testHoles(t *testing.T, s domain.Store) {
	c := ctx(t)
	p := newProject(t, s, "holes")
	q := newProject(t, s, "other")
	h := newHole(t, s, p.ID, "ZR001")
	got, err := s.GetHole(c, h.ID)
	must(t, err)
	diff(t, "GetHole", h, got)
	got, err = s.GetHoleByName(c, p.ID, "ZR001")
	must(t, err)
	diff(t, "GetHoleByName", h, got)
	_, err = s.GetHoleByName(c, q.ID, "ZR001")
	wantKind(t, err, domain.NotFound, "hole in other project")
	dup := domain.Hole{AzimuthRef: "grid", ProjectID: p.ID, Name: "ZR001", Dip: -90}
	wantKind(t, s.CreateHole(c, &dup), domain.Conflict, "duplicate hole name")
	newHole(t, s, q.ID, "ZR001") // the same name in another project is fine
	orphan := domain.Hole{AzimuthRef: "grid", ProjectID: 424242, Name: "X", Dip: -90}
	wantKind(t, s.CreateHole(c, &orphan), domain.Conflict, "hole of missing project")

	h.Dip, h.Finished = -55.5, "2026-03-09"
	// The per-hole corrections round trip, unset as well as set.
	h.Declination, h.GridConvergence, h.SurveyDate = nil, f64(0.25), ""
	must(t, s.UpdateHole(c, &h, 1))
	got, _ = s.GetHole(c, h.ID)
	diff(t, "updated hole", h, got)
	wantKind(t, s.UpdateHole(c, &h, 1), domain.PreconditionFailed, "stale hole update")
	for i := range 3 {
		newHole(t, s, p.ID, fmt.Sprintf("TM10%d", i))
	}
	all, err := s.ListHoles(c, p.ID, domain.Page{})
	must(t, err)
	if len(all) != 4 {
		t.Fatalf("ListHoles: %d holes, want 4", len(all))
	}
	must(t, s.DeleteHole(c, h.ID, h.Version))
	_, err = s.GetHole(c, h.ID)
	wantKind(t, err, domain.NotFound, "deleted hole")
}

// A hole's survey sets by kind: one per kind, replaced whole, versioned,
// at most one preferred (preferring one moves the other on), listed in kind
// order, deleted with the hole; the hole's survey set is untouched.
func testKindSets(t *testing.T, s domain.Store) {
	c := ctx(t)
	p := newProject(t, s, "kind sets")
	h := newHole(t, s, p.ID, "K1")
	sets, err := s.ListKindSets(c, h.ID)
	must(t, err)
	if len(sets) != 0 {
		t.Fatalf("new hole has sets %+v", sets)
	}
	mag := domain.KindSet{HoleID: h.ID, Kind: "magnetic", Instrument: "magnetic", AzimuthRef: "magnetic", SurveyDate: "2023-08-01",
		Declination: f64(-1.25), Preferred: true, Stations: []domain.Station{st(0, 45, -60), st(30, 46, -59)}}
	must(t, s.PutKindSet(c, &mag, 0))
	gyro := domain.KindSet{HoleID: h.ID, Kind: "gyro", Instrument: "gyro", AzimuthRef: "true", SurveyDate: "2024-02-10",
		Stations: []domain.Station{st(0, 44, -60), st(10, 44.5, -59.5), st(40, 45, -59)}}
	must(t, s.PutKindSet(c, &gyro, 0))
	if mag.Version != 1 || gyro.Version != 1 {
		t.Fatalf("versions %d %d", mag.Version, gyro.Version)
	}
	again := gyro
	wantKind(t, s.PutKindSet(c, &again, 0), domain.PreconditionFailed, "create over an existing gyro set")
	sets, err = s.ListKindSets(c, h.ID)
	must(t, err)
	if len(sets) != 2 {
		t.Fatalf("sets %+v", sets)
	}
	diff(t, "gyro set", gyro, sets[0])
	diff(t, "magnetic set", mag, sets[1])

	// Preferring the gyro set moves the magnetic set on.
	gyro.Preferred = true
	must(t, s.PutKindSet(c, &gyro, 1))
	sets, _ = s.ListKindSets(c, h.ID)
	if !sets[0].Preferred || sets[1].Preferred || sets[1].Version != 2 || sets[0].Version != 2 {
		t.Errorf("after preferring gyro: %+v", sets)
	}
	stale := mag
	wantKind(t, s.PutKindSet(c, &stale, 1), domain.PreconditionFailed, "magnetic set at its old version")
	// Replaced whole: fewer stations.
	gyro.Stations = []domain.Station{st(0, 44, -60)}
	must(t, s.PutKindSet(c, &gyro, 2))
	sets, _ = s.ListKindSets(c, h.ID)
	diff(t, "replaced gyro set", gyro, sets[0])
	wantKind(t, s.DeleteKindSet(c, h.ID, "gyro", 1), domain.PreconditionFailed, "delete at a stale version")
	must(t, s.DeleteKindSet(c, h.ID, "gyro", 3))
	wantKind(t, s.DeleteKindSet(c, h.ID, "gyro", 3), domain.NotFound, "delete a deleted set")
	wantKind(t, s.PutKindSet(c, &domain.KindSet{HoleID: h.ID + 1000, Kind: "gyro", AzimuthRef: "true"}, 0), domain.NotFound, "set of a missing hole")
	if _, err := s.GetSurvey(c, h.ID); !domain.IsKind(err, domain.NotFound) {
		t.Errorf("the hole's survey set appeared: %v", err)
	}
	cur, err := s.GetHole(c, h.ID)
	must(t, err)
	must(t, s.DeleteHole(c, h.ID, cur.Version))
	sets, err = s.ListKindSets(c, h.ID)
	if err != nil || len(sets) != 0 {
		t.Errorf("sets of a deleted hole: %+v %v", sets, err)
	}
}

func testSurvey(t *testing.T, s domain.Store) {
	c := ctx(t)
	p := newProject(t, s, "survey")
	h := newHole(t, s, p.ID, "S1")
	_, err := s.GetSurvey(c, h.ID)
	wantKind(t, err, domain.NotFound, "no survey yet")
	ss := domain.SurveySet{HoleID: h.ID, AzimuthRef: "magnetic", SurveyDate: "2026-03-05", Declination: f64(2.25), DeclinationSource: "computed",
		Instrument: "gyro", Stations: []domain.Station{st(0, 45, -60), st(50, 46.5, -59), st(100, 48, -58.25)}}
	must(t, s.PutSurvey(c, &ss, 0))
	if ss.Version != 1 {
		t.Fatalf("first survey version %d", ss.Version)
	}
	got, err := s.GetSurvey(c, h.ID)
	must(t, err)
	diff(t, "GetSurvey", ss, got)
	again := ss
	wantKind(t, s.PutSurvey(c, &again, 0), domain.PreconditionFailed, "create over existing survey")

	// Replace as a whole: fewer stations, other reference.
	repl := domain.SurveySet{HoleID: h.ID, AzimuthRef: "true", Stations: []domain.Station{st(0, 44, -61), st(120, 50, -57)}}
	must(t, s.PutSurvey(c, &repl, 1))
	got, _ = s.GetSurvey(c, h.ID)
	diff(t, "replaced survey", repl, got)
	if got.Instrument != "unknown" {
		t.Errorf("survey written without an instrument reads back %q, want unknown", got.Instrument)
	}
	if got.Declination != nil || got.DeclinationSource != "" {
		t.Errorf("replaced survey without a declination kept %v from %q", got.Declination, got.DeclinationSource)
	}
	wantKind(t, s.PutSurvey(c, &repl, 1), domain.PreconditionFailed, "stale survey")
	// The declination's source is stored beside it and replaced with it.
	given := domain.SurveySet{HoleID: h.ID, AzimuthRef: "magnetic", Declination: f64(-1.5), DeclinationSource: "given",
		Stations: []domain.Station{st(0, 44, -61)}}
	must(t, s.PutSurvey(c, &given, 2))
	got, _ = s.GetSurvey(c, h.ID)
	diff(t, "survey with a given declination", given, got)
	if got.DeclinationSource != "given" || got.Declination == nil || *got.Declination != -1.5 {
		t.Errorf("given declination read back as %v from %q", got.Declination, got.DeclinationSource)
	}
	none := domain.SurveySet{HoleID: 777777, AzimuthRef: "true"}
	wantKind(t, s.PutSurvey(c, &none, 0), domain.NotFound, "survey of missing hole")
	must(t, s.DeleteSurvey(c, h.ID, 3))
	_, err = s.GetSurvey(c, h.ID)
	wantKind(t, err, domain.NotFound, "deleted survey")
}

func testRuns(t *testing.T, s domain.Store) {
	c := ctx(t)
	p := newProject(t, s, "runs")
	h := newHole(t, s, p.ID, "R1")
	r2 := domain.Run{HoleID: h.ID, From: 3, To: 6, Confidence: "fair", Comment: "broken zone"}
	r1 := domain.Run{HoleID: h.ID, From: 0, To: 3, Confidence: "good", Mismatch: f64(4.5)}
	must(t, s.CreateRun(c, &r2))
	must(t, s.CreateRun(c, &r1))
	got, err := s.GetRun(c, r1.ID)
	must(t, err)
	diff(t, "GetRun", r1, got)
	list, err := s.ListRuns(c, h.ID)
	must(t, err)
	diff(t, "runs by depth", []domain.Run{r1, r2}, list)
	r2.Confidence, r2.Mismatch = "poor", f64(12)
	must(t, s.UpdateRun(c, &r2, 1))
	got, _ = s.GetRun(c, r2.ID)
	diff(t, "updated run", r2, got)
	wantKind(t, s.DeleteRun(c, r2.ID, 1), domain.PreconditionFailed, "stale run delete")
	must(t, s.DeleteRun(c, r2.ID, 2))
	_, err = s.GetRun(c, r2.ID)
	wantKind(t, err, domain.NotFound, "deleted run")
}

func testMeasurements(t *testing.T, s domain.Store) {
	c := ctx(t)
	p := newProject(t, s, "meas")
	h := newHole(t, s, p.ID, "M1")
	logged := time.Date(2026, 3, 2, 10, 30, 15, 123456789, time.FixedZone("AWST", 8*3600))
	m := domain.Measurement{ProjectID: p.ID, HoleID: h.ID, Depth: 12.34, Alpha: 35, Beta: f64(210.5), Gamma: f64(80),
		TypeCode: "BD", ApparentThickness: f64(0.12), Comment: "sharp contact", LoggedBy: "ana", LoggedAt: logged}
	must(t, s.CreateMeasurement(c, &m))
	if !m.LoggedAt.Equal(logged.Truncate(time.Microsecond)) {
		t.Errorf("logged_at kept as %v, want %v to the microsecond", m.LoggedAt, logged)
	}
	got, err := s.GetMeasurement(c, m.ID)
	must(t, err)
	diff(t, "GetMeasurement", m, got)
	plain := domain.Measurement{ProjectID: p.ID, HoleID: h.ID, Depth: 13, Alpha: 60, Beta: f64(0), TypeCode: "JN", LoggedAt: logged}
	must(t, s.CreateMeasurement(c, &plain))
	got, _ = s.GetMeasurement(c, plain.ID)
	if got.Gamma != nil || got.ApparentThickness != nil || got.Beta == nil || *got.Beta != 0 {
		t.Errorf("nil optionals came back as %v, %v; beta 0 as %v", got.Gamma, got.ApparentThickness, got.Beta)
	}
	// An unoriented measurement (no beta) keeps its missing beta, one at a
	// time and in bulk.
	unor := domain.Measurement{ProjectID: p.ID, HoleID: h.ID, Depth: 14, Alpha: 50, TypeCode: "JN", LoggedAt: logged}
	must(t, s.CreateMeasurement(c, &unor))
	got, _ = s.GetMeasurement(c, unor.ID)
	diff(t, "unoriented measurement", unor, got)
	again := unor
	again.GlobalID = "" // a new row: the store makes its global id
	if _, err := s.CreateMeasurements(c, []domain.Measurement{again}); err != nil {
		t.Fatal(err)
	}
	ms, err := s.ListMeasurements(c, domain.MeasurementFilter{ProjectID: p.ID, MinDepth: f64(14), MaxDepth: f64(14)}, domain.Page{})
	must(t, err)
	if len(ms) != 2 || ms[0].Beta != nil || ms[1].Beta != nil {
		t.Errorf("unoriented measurements listed as %+v", ms)
	}
	unor.Beta = f64(33)
	must(t, s.UpdateMeasurement(c, &unor, 1))
	got, _ = s.GetMeasurement(c, unor.ID)
	diff(t, "unoriented measurement given a beta", unor, got)
	must(t, s.DeleteMeasurement(c, unor.ID, 2))
	must(t, s.DeleteMeasurement(c, ms[1].ID, 1))
	m.Alpha, m.Gamma = 36, nil
	must(t, s.UpdateMeasurement(c, &m, 1))
	got, _ = s.GetMeasurement(c, m.ID)
	diff(t, "updated measurement", m, got)
	wantKind(t, s.UpdateMeasurement(c, &m, 1), domain.PreconditionFailed, "stale measurement update")
	wantKind(t, s.DeleteMeasurement(c, m.ID, 1), domain.PreconditionFailed, "stale measurement delete")
	must(t, s.DeleteMeasurement(c, m.ID, 2))
	_, err = s.GetMeasurement(c, m.ID)
	wantKind(t, err, domain.NotFound, "deleted measurement")

	bulk := make([]domain.Measurement, 250)
	for i := range bulk {
		bulk[i] = domain.Measurement{ProjectID: p.ID, HoleID: h.ID, Depth: float64(i), Alpha: float64(i % 90), Beta: f64(float64(i % 360)),
			TypeCode: "JN", LoggedBy: "bulk", LoggedAt: logged}
		if i%2 == 0 {
			bulk[i].Gamma = f64(float64(i % 180))
		}
	}
	n, err := s.CreateMeasurements(c, bulk)
	must(t, err)
	if n != 250 {
		t.Fatalf("CreateMeasurements wrote %d, want 250", n)
	}
	cnt, err := s.CountMeasurements(c, domain.MeasurementFilter{ProjectID: p.ID})
	must(t, err)
	if cnt != 251 {
		t.Fatalf("count %d, want 251", cnt)
	}
	// Page through everything: no row lost or repeated.
	seen := map[int64]bool{}
	var after int64
	for {
		page, err := s.ListMeasurements(c, domain.MeasurementFilter{ProjectID: p.ID}, domain.Page{Limit: 40, After: after})
		must(t, err)
		for _, x := range page {
			if seen[x.ID] {
				t.Fatalf("measurement %d on two pages", x.ID)
			}
			seen[x.ID] = true
		}
		if len(page) < 40 {
			break
		}
		after = page[len(page)-1].ID
	}
	if len(seen) != 251 {
		t.Fatalf("paged %d rows, want 251", len(seen))
	}
	// Page in depth order by keyset on (depth, id): no row lost or repeated,
	// depths never decreasing, ties broken by id.
	seen = map[int64]bool{}
	var last domain.Measurement
	for {
		page, err := s.ListMeasurementsByDepth(c, domain.MeasurementFilter{ProjectID: p.ID}, last.Depth, domain.Page{Limit: 40, After: last.ID})
		must(t, err)
		for _, x := range page {
			if seen[x.ID] {
				t.Fatalf("measurement %d on two depth pages", x.ID)
			}
			if last.ID != 0 && (x.Depth < last.Depth || (x.Depth == last.Depth && x.ID < last.ID)) {
				t.Fatalf("depth order broken: (%v, %d) after (%v, %d)", x.Depth, x.ID, last.Depth, last.ID)
			}
			seen[x.ID] = true
			last = x
		}
		if len(page) < 40 {
			break
		}
	}
	if len(seen) != 251 {
		t.Fatalf("paged %d rows by depth, want 251", len(seen))
	}
	// Bulk rows get IDs in the order given.
	byDepth, err := s.ListMeasurements(c, domain.MeasurementFilter{ProjectID: p.ID, TypeCodes: []string{"JN"}, MinDepth: f64(0)}, domain.Page{Limit: 1000})
	must(t, err)
	var bulkSeen []float64
	for _, x := range byDepth {
		if x.LoggedBy == "bulk" {
			bulkSeen = append(bulkSeen, x.Depth)
		}
	}
	if len(bulkSeen) != len(bulk) {
		t.Fatalf("listed %d bulk rows, want %d", len(bulkSeen), len(bulk))
	}
	for i := 1; i < len(bulkSeen); i++ {
		if bulkSeen[i] <= bulkSeen[i-1] {
			t.Fatalf("bulk rows out of input order at %d: %v after %v", i, bulkSeen[i], bulkSeen[i-1])
		}
	}
	// A bulk batch with one bad row writes nothing.
	bad := []domain.Measurement{
		{ProjectID: p.ID, HoleID: h.ID, Depth: 1, Alpha: 1, Beta: f64(1), TypeCode: "JN", LoggedAt: logged},
		{ProjectID: p.ID, HoleID: h.ID, Depth: 2, Alpha: 1, Beta: f64(1), TypeCode: "UNKNOWN", LoggedAt: logged},
	}
	if _, err := s.CreateMeasurements(c, bad); err == nil {
		t.Fatal("bulk insert with an unknown type code succeeded")
	}
	cnt, _ = s.CountMeasurements(c, domain.MeasurementFilter{ProjectID: p.ID})
	if cnt != 251 {
		t.Fatalf("failed bulk insert left rows behind: count %d", cnt)
	}
}

func testMeasurementFilters(t *testing.T, s domain.Store) {
	c := ctx(t)
	p := newProject(t, s, "filters")
	other := newProject(t, s, "elsewhere")
	h1 := newHole(t, s, p.ID, "F1")
	h2 := newHole(t, s, p.ID, "F2")
	ho := newHole(t, s, other.ID, "F1")
	day := func(d int) time.Time { return time.Date(2026, 3, d, 12, 0, 0, 0, time.UTC) }
	rows := []domain.Measurement{
		{HoleID: h1.ID, Depth: 5, TypeCode: "BD", LoggedAt: day(1)},
		{HoleID: h1.ID, Depth: 15, TypeCode: "JN", LoggedAt: day(2)},
		{HoleID: h1.ID, Depth: 25, TypeCode: "JN", LoggedAt: day(3)},
		{HoleID: h2.ID, Depth: 15, TypeCode: "BD", LoggedAt: day(4)},
		{HoleID: h2.ID, Depth: 35, TypeCode: "JN", LoggedAt: day(5)},
	}
	for i := range rows {
		rows[i].ProjectID, rows[i].Alpha, rows[i].Beta = p.ID, 45, f64(90)
		must(t, s.CreateMeasurement(c, &rows[i]))
	}
	o := domain.Measurement{ProjectID: other.ID, HoleID: ho.ID, Depth: 15, Alpha: 1, Beta: f64(1), TypeCode: "JN", LoggedAt: day(2)}
	must(t, s.CreateMeasurement(c, &o))
	from, to := day(2), day(4)
	cases := []struct {
		name string
		f    domain.MeasurementFilter
		want []int
	}{
		{"project only", domain.MeasurementFilter{}, []int{0, 1, 2, 3, 4}},
		{"one hole", domain.MeasurementFilter{HoleIDs: []int64{h2.ID}}, []int{3, 4}},
		{"depth range inclusive", domain.MeasurementFilter{MinDepth: f64(15), MaxDepth: f64(25)}, []int{1, 2, 3}},
		{"types", domain.MeasurementFilter{TypeCodes: []string{"BD"}}, []int{0, 3}},
		{"logged range inclusive", domain.MeasurementFilter{LoggedFrom: &from, LoggedTo: &to}, []int{1, 2, 3}},
		{"all together", domain.MeasurementFilter{HoleIDs: []int64{h1.ID, h2.ID}, MinDepth: f64(10), TypeCodes: []string{"JN", "BD"}, LoggedTo: &to}, []int{1, 2, 3}},
	}
	for _, tc := range cases {
		tc.f.ProjectID = p.ID
		got, err := s.ListMeasurements(c, tc.f, domain.Page{})
		must(t, err)
		var ids, want []int64
		for _, g := range got {
			ids = append(ids, g.ID)
		}
		for _, i := range tc.want {
			want = append(want, rows[i].ID)
		}
		diff(t, tc.name, want, ids)
		n, err := s.CountMeasurements(c, tc.f)
		must(t, err)
		if n != int64(len(tc.want)) {
			t.Errorf("%s: count %d, want %d", tc.name, n, len(tc.want))
		}
	}
	// Filter values are parameters, never SQL text.
	got, err := s.ListMeasurements(c, domain.MeasurementFilter{ProjectID: p.ID, TypeCodes: []string{"BD' OR '1'='1"}}, domain.Page{})
	must(t, err)
	if len(got) != 0 {
		t.Errorf("a quote in a filter value matched %d rows", len(got))
	}
}

func testTransactions(t *testing.T, s domain.Store) {
	c := ctx(t)
	p := newProject(t, s, "tx")
	boom := errors.New("boom")
	err := s.InTx(c, func(c context.Context, tx domain.Store) error {
		h := domain.Hole{AzimuthRef: "grid", ProjectID: p.ID, Name: "ROLLED", Dip: -90}
		if err := tx.CreateHole(c, &h); err != nil {
			return err
		}
		if _, err := tx.GetHole(c, h.ID); err != nil { // reads see the transaction's own writes
			return fmt.Errorf("read own write: %w", err)
		}
		// Nested InTx joins the same transaction.
		return tx.InTx(c, func(c context.Context, tx2 domain.Store) error {
			r := domain.Run{HoleID: h.ID, From: 0, To: 3, Confidence: "good"}
			if err := tx2.CreateRun(c, &r); err != nil {
				return err
			}
			return boom
		})
	})
	if !errors.Is(err, boom) {
		t.Fatalf("InTx returned %v, want the callback's error", err)
	}
	_, err = s.GetHoleByName(c, p.ID, "ROLLED")
	wantKind(t, err, domain.NotFound, "hole of a rolled-back transaction")
	must(t, s.InTx(c, func(c context.Context, tx domain.Store) error {
		h := domain.Hole{AzimuthRef: "grid", ProjectID: p.ID, Name: "KEPT", Dip: -90}
		return tx.CreateHole(c, &h)
	}))
	if _, err := s.GetHoleByName(c, p.ID, "KEPT"); err != nil {
		t.Fatalf("committed hole: %v", err)
	}
}

// A snapshot sees one state however many pages it reads: rows committed
// after its first read do not appear, and writes through it fail.
func testSnapshot(t *testing.T, s domain.Store) {
	c := ctx(t)
	p := newProject(t, s, "snap")
	h := newHole(t, s, p.ID, "S1")
	batch := func(n int) []domain.Measurement {
		ms := make([]domain.Measurement, n)
		for i := range ms {
			ms[i] = domain.Measurement{ProjectID: p.ID, HoleID: h.ID, Depth: float64(10 + i%200), Alpha: 40, Beta: f64(120),
				TypeCode: "BD", LoggedAt: time.Date(2026, 3, 2, 0, 0, 0, 0, time.UTC)}
		}
		return ms
	}
	_, err := s.CreateMeasurements(c, batch(30))
	must(t, err)
	f := domain.MeasurementFilter{ProjectID: p.ID}
	var first, seen int64
	err = s.Snapshot(c, func(c context.Context, st domain.Store) error {
		var err error
		if first, err = st.CountMeasurements(c, f); err != nil {
			return err
		}
		// Another writer commits a batch while the snapshot is open.
		if _, err := s.CreateMeasurements(c, batch(50)); err != nil {
			return fmt.Errorf("writer beside the snapshot: %w", err)
		}
		var after int64
		for {
			ms, err := st.ListMeasurements(c, f, domain.Page{Limit: 7, After: after})
			if err != nil {
				return err
			}
			seen += int64(len(ms))
			if len(ms) < 7 {
				break
			}
			after = ms[len(ms)-1].ID
		}
		h2 := domain.Hole{AzimuthRef: "grid", ProjectID: p.ID, Name: "NOPE", Dip: -90}
		if err := st.CreateHole(c, &h2); err == nil {
			return errors.New("a write through the snapshot succeeded")
		}
		return nil
	})
	must(t, err)
	if first != 30 || seen != 30 {
		t.Fatalf("snapshot counted %d and paged %d rows, want 30 and 30 (the batch committed meanwhile must not show)", first, seen)
	}
	if n, _ := s.CountMeasurements(c, f); n != 80 {
		t.Fatalf("after the snapshot: %d rows, want 80", n)
	}
	if _, err := s.GetHoleByName(c, p.ID, "NOPE"); !domain.IsKind(err, domain.NotFound) {
		t.Fatalf("the write tried through the snapshot is there: %v", err)
	}
}

// Exclusive lets one holder in at a time, and the store works inside it.
func testExclusive(t *testing.T, s domain.Store) {
	c := ctx(t)
	var inside, most atomic.Int32
	var wg sync.WaitGroup
	errs := make([]error, 4)
	for i := range errs {
		wg.Add(1)
		go func() {
			defer wg.Done()
			errs[i] = s.Exclusive(c, "storetest", func(c context.Context) error {
				n := inside.Add(1)
				defer inside.Add(-1)
				for {
					m := most.Load()
					if n <= m || most.CompareAndSwap(m, n) {
						break
					}
				}
				p := domain.Project{Name: fmt.Sprintf("excl-%d", i)}
				must(t, p.Normalize())
				time.Sleep(20 * time.Millisecond)
				return s.CreateProject(c, &p)
			})
		}()
	}
	wg.Wait()
	for i, err := range errs {
		if err != nil {
			t.Fatalf("holder %d: %v", i, err)
		}
	}
	if most.Load() != 1 {
		t.Fatalf("%d holders inside the lock at once", most.Load())
	}
}

func testAudit(t *testing.T, s domain.Store) {
	c := ctx(t)
	p := newProject(t, s, "audit")
	at := time.Date(2026, 3, 1, 8, 0, 0, 0, time.UTC)
	e1 := domain.AuditEntry{ProjectID: p.ID, ActorName: "ana", TokenID: 3, Entity: "hole", EntityID: "7", Action: "create", At: at,
		After: json.RawMessage(`{"name":"ZR001","dip":-60}`)}
	e2 := domain.AuditEntry{ProjectID: p.ID, ActorName: "ben", Entity: "hole", EntityID: "7", Action: "delete", At: at.Add(time.Hour),
		Before: json.RawMessage(`{"name":"ZR001","dip":-60}`)}
	must(t, s.AppendAudit(c, &e1))
	must(t, s.AppendAudit(c, &e2))
	got, err := s.ListAudit(c, p.ID, domain.Page{})
	must(t, err)
	if len(got) != 2 {
		t.Fatalf("%d audit entries, want 2", len(got))
	}
	// JSON documents compare by meaning (PostgreSQL re-serialises jsonb).
	jsonEq := cmp.Comparer(func(a, b json.RawMessage) bool {
		if len(a) == 0 || len(b) == 0 {
			return len(a) == len(b)
		}
		var x, y any
		return json.Unmarshal(a, &x) == nil && json.Unmarshal(b, &y) == nil && cmp.Equal(x, y)
	})
	if d := cmp.Diff([]domain.AuditEntry{e1, e2}, got, jsonEq); d != "" {
		t.Errorf("audit trail (-want +got):\n%s", d)
	}
	page, _ := s.ListAudit(c, p.ID, domain.Page{After: e1.ID})
	if len(page) != 1 || page[0].ID != e2.ID {
		t.Errorf("audit paging: %+v", page)
	}
	// The whole trail: every project's, a deleted one's, and the site's own.
	site := domain.AuditEntry{ProjectID: domain.AllProjects, ActorName: "cli", Entity: "token", EntityID: "1", Action: "create", At: at}
	must(t, s.AppendAudit(c, &site))
	must(t, s.DeleteProject(c, p.ID, p.Version))
	kept, err := s.ListAudit(c, p.ID, domain.Page{})
	must(t, err)
	if len(kept) != 2 {
		t.Errorf("the audit of a deleted project: %d entries, want 2", len(kept))
	}
	all, err := s.ListAuditAll(c, domain.Page{})
	must(t, err)
	var ids []int64
	for _, e := range all {
		ids = append(ids, e.ID)
	}
	diff(t, "the whole audit trail", []int64{e1.ID, e2.ID, site.ID}, ids)
	if rest, _ := s.ListAuditAll(c, domain.Page{After: e2.ID, Limit: 5}); len(rest) != 1 || rest[0].ProjectID != domain.AllProjects {
		t.Errorf("paging the whole trail: %+v", rest)
	}
}

func testTokens(t *testing.T, s domain.Store) {
	c := ctx(t)
	p := newProject(t, s, "tokens")
	tk := domain.Token{ProjectID: p.ID, Name: "rig 2 logger", Role: domain.RoleLog, Hash: "aa11"}
	site := domain.Token{ProjectID: domain.AllProjects, Name: "site admin", Role: domain.RoleAdmin, Hash: "bb22"}
	must(t, s.CreateToken(c, &tk))
	must(t, s.CreateToken(c, &site))
	got, err := s.TokenByHash(c, "aa11")
	must(t, err)
	diff(t, "project token", tk, got)
	got, err = s.TokenByHash(c, "bb22")
	must(t, err)
	diff(t, "site token", site, got)
	_, err = s.TokenByHash(c, "cc33")
	wantKind(t, err, domain.NotFound, "unknown token")
	dup := domain.Token{ProjectID: p.ID, Name: "again", Role: domain.RoleRead, Hash: "aa11"}
	wantKind(t, s.CreateToken(c, &dup), domain.Conflict, "duplicate token hash")
	list, err := s.ListTokens(c, p.ID)
	must(t, err)
	diff(t, "project tokens", []domain.Token{tk}, list)
	list, err = s.ListTokens(c, domain.AllProjects)
	must(t, err)
	diff(t, "site tokens", []domain.Token{site}, list)
	got, err = s.GetToken(c, site.ID)
	must(t, err)
	diff(t, "site token by id", site, got)
	got, err = s.GetToken(c, tk.ID)
	must(t, err)
	diff(t, "project token by id", tk, got)
	must(t, s.DeleteToken(c, tk.ID))
	_, err = s.TokenByHash(c, "aa11")
	wantKind(t, err, domain.NotFound, "revoked token")
	_, err = s.GetToken(c, tk.ID)
	wantKind(t, err, domain.NotFound, "revoked token by id")
	wantKind(t, s.DeleteToken(c, tk.ID), domain.NotFound, "revoking a revoked token")
	list, err = s.ListTokens(c, p.ID)
	must(t, err)
	if len(list) != 0 {
		t.Errorf("revoked token still listed: %+v", list)
	}
	// Revoking in a transaction that fails keeps the token.
	boom := errors.New("boom")
	err = s.InTx(c, func(ctx context.Context, tx domain.Store) error {
		must(t, tx.DeleteToken(ctx, site.ID))
		return boom
	})
	if !errors.Is(err, boom) {
		t.Errorf("InTx returned %v, want the callback's error", err)
	}
	_, err = s.TokenByHash(c, "bb22")
	must(t, err)
}

func testIdempotency(t *testing.T, s domain.Store) {
	c := ctx(t)
	p := newProject(t, s, "idem")
	_, err := s.GetIdempotency(c, p.ID, "k1")
	wantKind(t, err, domain.NotFound, "unknown key")
	r := domain.Idempotency{ProjectID: p.ID, Key: "k1", RequestHash: "abc", Result: json.RawMessage(`{"created":3}`)}
	must(t, s.PutIdempotency(c, r))
	got, err := s.GetIdempotency(c, p.ID, "k1")
	must(t, err)
	var res map[string]int
	if json.Unmarshal(got.Result, &res) != nil || res["created"] != 3 || got.RequestHash != "abc" {
		t.Errorf("remembered %+v", got)
	}
	wantKind(t, s.PutIdempotency(c, r), domain.Conflict, "key taken")
}

func testCascade(t *testing.T, s domain.Store) {
	c := ctx(t)
	p := newProject(t, s, "cascade")
	h := newHole(t, s, p.ID, "C1")
	ss := domain.SurveySet{HoleID: h.ID, AzimuthRef: "true", Stations: []domain.Station{st(0, 10, -60)}}
	must(t, s.PutSurvey(c, &ss, 0))
	r := domain.Run{HoleID: h.ID, From: 0, To: 3, Confidence: "good"}
	must(t, s.CreateRun(c, &r))
	m := domain.Measurement{ProjectID: p.ID, HoleID: h.ID, Depth: 1, Alpha: 10, Beta: f64(10), TypeCode: "BD", LoggedAt: time.Now()}
	must(t, s.CreateMeasurement(c, &m))
	tk := domain.Token{ProjectID: p.ID, Name: "x", Role: domain.RoleRead, Hash: "ff"}
	must(t, s.CreateToken(c, &tk))
	must(t, s.DeleteProject(c, p.ID, p.Version))
	_, err := s.GetHole(c, h.ID)
	wantKind(t, err, domain.NotFound, "hole of deleted project")
	_, err = s.GetSurvey(c, h.ID)
	wantKind(t, err, domain.NotFound, "survey of deleted project")
	_, err = s.GetRun(c, r.ID)
	wantKind(t, err, domain.NotFound, "run of deleted project")
	_, err = s.GetMeasurement(c, m.ID)
	wantKind(t, err, domain.NotFound, "measurement of deleted project")
	_, err = s.TokenByHash(c, "ff")
	wantKind(t, err, domain.NotFound, "token of deleted project")
}

func testConcurrentWriters(t *testing.T, s domain.Store) {
	c := ctx(t)
	p := newProject(t, s, "concurrent")
	h := newHole(t, s, p.ID, "W1")
	const workers, each = 8, 25
	var wg sync.WaitGroup
	errs := make(chan error, workers*each)
	for w := range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range each {
				m := domain.Measurement{ProjectID: p.ID, HoleID: h.ID, Depth: float64(w*each + i), Alpha: 45, Beta: f64(90), TypeCode: "JN", LoggedAt: time.Now()}
				if err := s.CreateMeasurement(c, &m); err != nil {
					errs <- err
				}
			}
		}()
	}
	wg.Wait()
	close(errs)
	for err := range errs {
		t.Fatalf("concurrent insert: %v", err)
	}
	n, err := s.CountMeasurements(c, domain.MeasurementFilter{ProjectID: p.ID})
	must(t, err)
	if n != workers*each {
		t.Fatalf("count %d after concurrent inserts, want %d", n, workers*each)
	}
	// Writers racing with the same version: exactly one wins.
	var wins, lost atomic.Int32
	for i := range 4 {
		wg.Add(1)
		go func() {
			defer wg.Done()
			hh := h
			hh.CRS = fmt.Sprintf("writer %d", i)
			err := s.UpdateHole(c, &hh, 1)
			switch {
			case err == nil:
				wins.Add(1)
			case domain.IsKind(err, domain.PreconditionFailed):
				lost.Add(1)
			default:
				t.Errorf("racing update: %v", err)
			}
		}()
	}
	wg.Wait()
	if wins.Load() != 1 || lost.Load() != 3 {
		t.Fatalf("racing updates: %d won, %d refused; want 1 and 3", wins.Load(), lost.Load())
	}
}

// MigrationBackfill checks what the last migration (000003) does to rows
// stored before it: a project default of 0 (the old column default, not
// told apart from a chosen 0) becomes unset, another value is kept; a
// survey set's declination stored as computed is forgotten (the hole model
// computes it on read), a given one is kept. open opens the store on the
// database under test (at the latest schema version); redo rolls the last
// migration back and applies it again while no store is open.
func MigrationBackfill(t *testing.T, open func(t *testing.T) domain.Store, redo func(t *testing.T)) {
	c := ctx(t)
	s := open(t)
	p := domain.Project{Name: "backfill", Convergence: f64(2.5)}
	must(t, p.Normalize())
	must(t, s.CreateProject(c, &p))
	computed, given := newHole(t, s, p.ID, "B1"), newHole(t, s, p.ID, "B2")
	a := domain.SurveySet{HoleID: computed.ID, AzimuthRef: "magnetic", Declination: f64(-0.75), DeclinationSource: "computed",
		Stations: []domain.Station{st(0, 45, -60)}}
	b := domain.SurveySet{HoleID: given.ID, AzimuthRef: "magnetic", Declination: f64(1), DeclinationSource: "given",
		Stations: []domain.Station{st(0, 45, -60)}}
	must(t, s.PutSurvey(c, &a, 0))
	must(t, s.PutSurvey(c, &b, 0))
	must(t, s.Close())
	redo(t)
	s = open(t)
	defer s.Close()
	gp, err := s.GetProject(c, p.ID)
	must(t, err)
	if gp.Declination != nil || gp.Convergence == nil || *gp.Convergence != 2.5 {
		t.Errorf("project defaults after the migration: %v, %v; want unset and 2.5", gp.Declination, gp.Convergence)
	}
	got, err := s.GetSurvey(c, computed.ID)
	must(t, err)
	if got.DeclinationSource != "" || got.Declination != nil {
		t.Errorf("set with a computed declination after the migration: %v from %q, want none", got.Declination, got.DeclinationSource)
	}
	got, err = s.GetSurvey(c, given.ID)
	must(t, err)
	if got.DeclinationSource != "given" || got.Declination == nil || *got.Declination != 1 {
		t.Errorf("set with a given declination after the migration: %v from %q, want 1 given", got.Declination, got.DeclinationSource)
	}
}

func testCoreIntervals(t *testing.T, s domain.Store) {
	c := ctx(t)
	p := newProject(t, s, "intervals")
	h := newHole(t, s, p.ID, "I1")
	other := newHole(t, s, p.ID, "I2")
	n := func(v int) *int { return &v }
	ivs := []domain.CoreInterval{
		{From: 3, To: 6, Recovered: f64(2.9), Solid: f64(2.5), Pieces: []float64{0.35, 0.1, 1.0 / 3}, NaturalBreaks: n(7), InducedBreaks: n(0), Confidence: "fair"},
		{From: 0, To: 3, Recovered: f64(3), Solid: f64(2.75), Sound: f64(2.125), NaturalBreaks: n(4)},
	}
	must(t, s.PutCoreIntervals(c, h.ID, ivs))
	if ivs[0].ID == 0 || ivs[1].ID == 0 || ivs[0].HoleID != h.ID {
		t.Fatalf("ids not set: %+v", ivs)
	}
	must(t, s.PutCoreIntervals(c, other.ID, []domain.CoreInterval{{From: 0, To: 1}}))
	got, err := s.ListCoreIntervals(c, h.ID)
	must(t, err)
	// Ordered by depth; pieces, optionals and their absence come back exactly.
	diff(t, "core intervals", []domain.CoreInterval{ivs[1], ivs[0]}, got)
	// Replacing keeps nothing of the old set; the other hole is untouched.
	must(t, s.PutCoreIntervals(c, h.ID, []domain.CoreInterval{{From: 10, To: 12}}))
	got, _ = s.ListCoreIntervals(c, h.ID)
	if len(got) != 1 || got[0].From != 10 || got[0].Recovered != nil || got[0].Pieces != nil || got[0].NaturalBreaks != nil {
		t.Errorf("after replace: %+v", got)
	}
	// A failing replacement inside a transaction leaves the old intervals.
	err = s.InTx(c, func(c context.Context, tx domain.Store) error {
		if err := tx.PutCoreIntervals(c, h.ID, nil); err != nil {
			return err
		}
		return domain.Errorf(domain.Invalid, "roll back")
	})
	wantKind(t, err, domain.Invalid, "rolled back replacement")
	if got, _ = s.ListCoreIntervals(c, h.ID); len(got) != 1 {
		t.Errorf("rolled back replacement changed the intervals: %+v", got)
	}
	if got, _ = s.ListCoreIntervals(c, other.ID); len(got) != 1 {
		t.Errorf("other hole: %+v", got)
	}
	// Deleting the hole deletes its intervals.
	hh, _ := s.GetHole(c, h.ID)
	must(t, s.DeleteHole(c, h.ID, hh.Version))
	if got, err = s.ListCoreIntervals(c, h.ID); err != nil || len(got) != 0 {
		t.Errorf("intervals of a deleted hole: %+v %v", got, err)
	}
}

// testMeasurementKeys: the duplicate keys of the measurements that pass a
// filter (hole, depths, project) are those of the visible ones (unoriented
// ones without a beta, gamma where given), not of another hole's or
// project's, nor of rows staged in an open batch.
func testMeasurementKeys(t *testing.T, s domain.Store) {
	c := ctx(t)
	p := newProject(t, s, "keys")
	other := newProject(t, s, "keys other")
	h, h2, h3 := newHole(t, s, p.ID, "K1"), newHole(t, s, p.ID, "K2"), newHole(t, s, other.ID, "K3")
	at := time.Date(2026, 3, 2, 0, 0, 0, 0, time.UTC)
	ms := []domain.Measurement{
		{ProjectID: p.ID, HoleID: h.ID, Depth: 10.25, Alpha: 40, Beta: f64(120), TypeCode: "BD", LoggedAt: at},
		{ProjectID: p.ID, HoleID: h.ID, Depth: 10.25, Alpha: 40, TypeCode: "BD", LoggedAt: at, Comment: "no mark"},
		{ProjectID: p.ID, HoleID: h.ID, Depth: 11, Alpha: 35, Beta: f64(0), Gamma: f64(15), TypeCode: "JN", LoggedAt: at},
		{ProjectID: p.ID, HoleID: h.ID, Depth: 11, Alpha: 35, Beta: f64(0), Gamma: f64(15), TypeCode: "JN", LoggedAt: at, Comment: "again"},
		{ProjectID: p.ID, HoleID: h2.ID, Depth: 12, Alpha: 30, Beta: f64(10), TypeCode: "BD", LoggedAt: at},
		{ProjectID: other.ID, HoleID: h3.ID, Depth: 13, Alpha: 30, Beta: f64(10), TypeCode: "BD", LoggedAt: at},
	}
	_, err := s.CreateMeasurements(c, ms)
	must(t, err)
	b, err := s.OpenBatch(c, p.ID)
	must(t, err)
	_, err = s.StageMeasurements(c, b, []domain.Measurement{{ProjectID: p.ID, HoleID: h.ID, Depth: 14, Alpha: 30, Beta: f64(10), TypeCode: "BD", LoggedAt: at}})
	must(t, err)
	sorted := func(ks []domain.MeasurementKey) []domain.MeasurementKey {
		sort.Slice(ks, func(i, j int) bool { return fmt.Sprint(ks[i]) < fmt.Sprint(ks[j]) })
		return ks
	}
	d11 := 11.0
	for _, tc := range []struct {
		f    domain.MeasurementFilter
		want []domain.Measurement
	}{
		{domain.MeasurementFilter{ProjectID: p.ID, HoleIDs: []int64{h.ID}}, ms[:4]},
		{domain.MeasurementFilter{ProjectID: p.ID, HoleIDs: []int64{h.ID}, MinDepth: &d11, MaxDepth: &d11}, ms[2:4]},
		{domain.MeasurementFilter{ProjectID: p.ID, HoleIDs: []int64{h2.ID}}, ms[4:5]},
		{domain.MeasurementFilter{ProjectID: p.ID}, ms[:5]},
		{domain.MeasurementFilter{ProjectID: p.ID, HoleIDs: []int64{h3.ID}}, nil},
		{domain.MeasurementFilter{ProjectID: other.ID, HoleIDs: []int64{h3.ID}}, ms[5:6]},
	} {
		got, err := s.MeasurementKeys(c, tc.f)
		must(t, err)
		want := []domain.MeasurementKey{}
		for _, m := range tc.want {
			want = append(want, domain.KeyOf(m))
		}
		diff(t, fmt.Sprintf("keys of %+v", tc.f), sorted(want), sorted(append([]domain.MeasurementKey{}, got...)))
	}
}

// Rows staged into an import batch are seen by no read until the batch
// commits, and then all at once; a dropped batch leaves nothing; a batch
// that is gone cannot be committed or written to.
func testImportBatches(t *testing.T, s domain.Store) {
	c := ctx(t)
	p := newProject(t, s, "batches")
	h := newHole(t, s, p.ID, "B1")
	rows := func(n int, alpha float64) []domain.Measurement {
		ms := make([]domain.Measurement, n)
		for i := range ms {
			ms[i] = domain.Measurement{ProjectID: p.ID, HoleID: h.ID, Depth: float64(1 + i%250), Alpha: alpha, Beta: f64(120),
				TypeCode: "BD", LoggedAt: time.Date(2026, 3, 2, 0, 0, 0, 0, time.UTC)}
		}
		return ms
	}
	f := domain.MeasurementFilter{ProjectID: p.ID}
	count := func(what string, want int64) {
		t.Helper()
		n, err := s.CountMeasurements(c, f)
		must(t, err)
		all := 0
		var after int64
		for {
			ms, err := s.ListMeasurements(c, f, domain.Page{Limit: domain.MaxLimit, After: after})
			must(t, err)
			all += len(ms)
			if len(ms) < domain.MaxLimit {
				break
			}
			after = ms[len(ms)-1].ID
		}
		byDepth, err := s.ListMeasurementsByDepth(c, f, 0, domain.Page{Limit: domain.MaxLimit})
		must(t, err)
		if n != want || int64(all) != want || int64(len(byDepth)) != min(want, domain.MaxLimit) {
			t.Fatalf("%s: count %d, listed %d, by depth %d; want %d", what, n, all, len(byDepth), want)
		}
	}
	one := rows(1, 10)
	must(t, s.CreateMeasurement(c, &one[0]))

	b, err := s.OpenBatch(c, p.ID)
	must(t, err)
	for range 3 {
		n, err := s.StageMeasurements(c, b, rows(400, 40))
		must(t, err)
		if n != 400 {
			t.Fatalf("staged %d rows, want 400", n)
		}
		count("while staging", 1)
	}
	// A single write beside the open batch is seen at once.
	two := rows(1, 20)
	must(t, s.CreateMeasurement(c, &two[0]))
	count("a write beside the batch", 2)
	// A staged row cannot be read, changed or deleted by its id either.
	staged := rows(1, 50)
	_, err = s.StageMeasurements(c, b, staged)
	must(t, err)
	if staged[0].ID != 0 {
		_, err := s.GetMeasurement(c, staged[0].ID)
		wantKind(t, err, domain.NotFound, "get a staged row")
		if err := s.DeleteMeasurement(c, staged[0].ID, 1); err == nil {
			t.Fatal("deleted a staged row")
		}
	}
	must(t, s.InTx(c, func(c context.Context, tx domain.Store) error { return tx.CommitBatch(c, b) }))
	count("after commit", 2+1201)
	wantKind(t, s.CommitBatch(c, b), domain.NotFound, "commit twice")
	must(t, s.DropBatch(c, b)) // a committed batch is not dropped
	count("drop after commit", 2+1201)

	// A dropped batch leaves nothing, and is gone.
	d, err := s.OpenBatch(c, p.ID)
	must(t, err)
	for range 3 {
		_, err := s.StageMeasurements(c, d, rows(3000, 60))
		must(t, err)
	}
	must(t, s.DropBatch(c, d))
	count("after drop", 2+1201)
	_, err = s.StageMeasurements(c, d, rows(1, 60))
	wantKind(t, err, domain.NotFound, "stage into a dropped batch")
	wantKind(t, s.CommitBatch(c, d), domain.NotFound, "commit a dropped batch")

	// A failed commit (the import's last transaction rolls back) shows nothing.
	e, err := s.OpenBatch(c, p.ID)
	must(t, err)
	_, err = s.StageMeasurements(c, e, rows(10, 70))
	must(t, err)
	failed := errors.New("the import's last step failed")
	if err := s.InTx(c, func(c context.Context, tx domain.Store) error {
		if err := tx.CommitBatch(c, e); err != nil {
			return err
		}
		return failed
	}); !errors.Is(err, failed) {
		t.Fatalf("rolled back commit: %v", err)
	}
	count("after a rolled-back commit", 2+1201)
	must(t, s.DropBatch(c, e))
	count("after dropping it", 2+1201)
}

// stampWatch reads stamps with read: stamp(pid) is a project's stamp now,
// moved(what, want) fails unless project pid's stamp moved (want) or stayed
// since the last call (or since stampWatch).
func stampWatch(t *testing.T, read func(context.Context, int64) (int64, error), pid int64) (stamp func(int64) int64, moved func(what string, want bool)) {
	c := ctx(t)
	stamp = func(id int64) int64 {
		t.Helper()
		n, err := read(c, id)
		must(t, err)
		return n
	}
	last := stamp(pid)
	moved = func(what string, want bool) {
		t.Helper()
		now := stamp(pid)
		if (now != last) != want {
			t.Fatalf("%s: stamp %d -> %d, want moved %t", what, last, now, want)
		}
		last = now
	}
	return stamp, moved
}

// The model stamp moves with every change of what a hole model is built
// from, and with nothing else; another project's stamp stays.
func testModelStamp(t *testing.T, s domain.Store) {
	c := ctx(t)
	p := newProject(t, s, "stamps")
	other := newProject(t, s, "stamps other")
	stamp, moved := stampWatch(t, s.ModelStamp, p.ID)
	otherAt := stamp(other.ID)
	h := newHole(t, s, p.ID, "M1")
	moved("hole created", true)
	h.Azimuth = 50
	must(t, s.UpdateHole(c, &h, h.Version))
	moved("collar changed", true)
	ss := domain.SurveySet{HoleID: h.ID, AzimuthRef: "true", Stations: []domain.Station{st(0, 45, -60), st(50, 46.5, -59)}}
	must(t, s.PutSurvey(c, &ss, 0))
	moved("survey set", true)
	ks := domain.KindSet{HoleID: h.ID, Kind: "gyro", Instrument: "gyro", AzimuthRef: "true", Stations: []domain.Station{st(0, 44, -60)}}
	must(t, s.PutKindSet(c, &ks, 0))
	moved("survey set by kind", true)
	r := domain.Run{HoleID: h.ID, From: 0, To: 3, Confidence: "good"}
	must(t, s.CreateRun(c, &r))
	moved("run", true)
	m := domain.Measurement{ProjectID: p.ID, HoleID: h.ID, Depth: 10, Alpha: 40, Beta: f64(120), TypeCode: "BD", LoggedAt: time.Date(2026, 3, 2, 0, 0, 0, 0, time.UTC)}
	must(t, s.CreateMeasurement(c, &m))
	moved("measurement", false)
	p.RefLine = "top"
	must(t, s.UpdateProject(c, &p, p.Version))
	moved("project setting", true)
	must(t, s.DeleteRun(c, r.ID, r.Version))
	moved("run deleted", true)
	must(t, s.DeleteHole(c, h.ID, h.Version))
	moved("hole deleted", true)
	if stamp(other.ID) != otherAt {
		t.Fatal("another project's stamp moved")
	}
	_, err := s.ModelStamp(c, 1<<40)
	wantKind(t, err, domain.NotFound, "stamp of no project")
}

// LogInputs reads what the four reads it stands for read, in and outside a
// transaction, with their errors: a missing project before a missing hole;
// a hole of another project is returned as it is.
func testLogInputs(t *testing.T, s domain.Store) {
	c := ctx(t)
	p := newProject(t, s, "log inputs")
	other := newProject(t, s, "log inputs other")
	h := newHole(t, s, p.ID, "L1")
	oh := newHole(t, s, other.ID, "L2")
	check := func(st domain.Store, holeID int64) {
		t.Helper()
		got, err := st.LogInputs(c, p.ID, holeID)
		must(t, err)
		var want domain.LogInputs
		want.ModelStamp, err = st.ModelStamp(c, p.ID)
		must(t, err)
		want.Project, err = st.GetProject(c, p.ID)
		must(t, err)
		want.Hole, err = st.GetHole(c, holeID)
		must(t, err)
		want.Types, err = st.ListTypeCodes(c, p.ID)
		must(t, err)
		diff(t, "LogInputs", want, got)
	}
	check(s, h.ID)
	check(s, oh.ID)
	must(t, s.InTx(c, func(_ context.Context, tx domain.Store) error {
		check(tx, h.ID)
		return nil
	}))
	_, err := s.LogInputs(c, p.ID, h.ID+1000)
	wantKind(t, err, domain.NotFound, "LogInputs of a missing hole")
	_, err = s.LogInputs(c, p.ID+1000, h.ID+1000)
	wantKind(t, err, domain.NotFound, "LogInputs of a missing project")
	if err == nil || !strings.Contains(err.Error(), "project") {
		t.Errorf("LogInputs of a missing project and hole names the project first: %v", err)
	}
	// A transaction whose first read is LogInputs is one transaction: what
	// it writes after goes with its commit or its rollback.
	logged := func(depth float64, fail bool) int64 {
		t.Helper()
		var id int64
		err := s.InTx(c, func(ctx context.Context, tx domain.Store) error {
			if _, err := tx.LogInputs(ctx, p.ID, h.ID); err != nil {
				return err
			}
			m := domain.Measurement{ProjectID: p.ID, HoleID: h.ID, Depth: depth, Alpha: 40, Beta: f64(120), TypeCode: "BD", LoggedAt: time.Date(2026, 3, 2, 0, 0, 0, 0, time.UTC)}
			if err := tx.CreateMeasurement(ctx, &m); err != nil {
				return err
			}
			id = m.ID
			if fail {
				return errors.New("undo")
			}
			return nil
		})
		if (err != nil) != fail {
			t.Fatalf("transaction after LogInputs: %v", err)
		}
		return id
	}
	_, err = s.GetMeasurement(c, logged(11, true))
	wantKind(t, err, domain.NotFound, "a measurement written after LogInputs in a transaction rolled back")
	_, err = s.GetMeasurement(c, logged(12, false))
	must(t, err)

	// A missing hole leaves the transaction usable, as GetHole does.
	must(t, s.InTx(c, func(ctx context.Context, tx domain.Store) error {
		if _, err := tx.LogInputs(ctx, p.ID, h.ID+1000); err == nil {
			t.Error("LogInputs of a missing hole in a transaction: no error")
		}
		_, err := tx.GetHole(ctx, h.ID)
		return err
	}))
}

// ImportInputs reads what GetIdempotency, GetProject and ListTypeCodes
// read, with no key for "" or a key not remembered; a missing project is
// NotFound.
func testImportInputs(t *testing.T, s domain.Store) {
	c := ctx(t)
	p := newProject(t, s, "import inputs")
	must(t, s.PutIdempotency(c, domain.Idempotency{ProjectID: p.ID, Key: "k1", RequestHash: "h", Result: json.RawMessage(`{"created":2}`)}))
	check := func(st domain.Store, key string, known bool) {
		t.Helper()
		got, err := st.ImportInputs(c, p.ID, key)
		must(t, err)
		var want domain.ImportInputs
		if known {
			r, err := st.GetIdempotency(c, p.ID, key)
			must(t, err)
			want.Key = &r
		}
		want.Project, err = st.GetProject(c, p.ID)
		must(t, err)
		want.Types, err = st.ListTypeCodes(c, p.ID)
		must(t, err)
		diff(t, "ImportInputs("+key+")", want, got)
	}
	check(s, "k1", true)
	check(s, "k2", false)
	check(s, "", false)
	must(t, s.InTx(c, func(_ context.Context, tx domain.Store) error {
		check(tx, "k1", true)
		check(tx, "k2", false)
		return nil
	}))
	_, err := s.ImportInputs(c, p.ID+1000, "k1")
	wantKind(t, err, domain.NotFound, "ImportInputs of a missing project")
	_, err = s.ImportInputs(c, p.ID+1000, "")
	wantKind(t, err, domain.NotFound, "ImportInputs of a missing project, no key")
}

// The measurement stamp moves with every change of the project's visible
// measurements (insert, update, delete, an import batch committed) and
// with nothing else; rows staged in a batch move it only when the batch
// commits; another project's stamp stays.
func testMeasurementStamp(t *testing.T, s domain.Store) {
	c := ctx(t)
	p := newProject(t, s, "measurement stamps")
	other := newProject(t, s, "measurement stamps other")
	stamp, moved := stampWatch(t, s.MeasurementStamp, p.ID)
	otherAt := stamp(other.ID)
	h := newHole(t, s, p.ID, "M1")
	h2 := newHole(t, s, p.ID, "M2")
	moved("holes created", false)
	m := domain.Measurement{ProjectID: p.ID, HoleID: h.ID, Depth: 10, Alpha: 40, Beta: f64(120), TypeCode: "BD", LoggedAt: time.Date(2026, 3, 2, 0, 0, 0, 0, time.UTC)}
	must(t, s.CreateMeasurement(c, &m))
	moved("measurement created", true)
	m.Alpha = 41
	must(t, s.UpdateMeasurement(c, &m, m.Version))
	moved("measurement updated", true)
	m.HoleID = h2.ID
	must(t, s.UpdateMeasurement(c, &m, m.Version))
	moved("measurement moved to another hole", true)
	_, err := s.CreateMeasurements(c, []domain.Measurement{{ProjectID: p.ID, HoleID: h.ID, Depth: 11, Alpha: 30, Beta: f64(10), TypeCode: "BD", LoggedAt: m.LoggedAt}})
	must(t, err)
	moved("measurements created", true)
	b, err := s.OpenBatch(c, p.ID)
	must(t, err)
	_, err = s.StageMeasurements(c, b, []domain.Measurement{{ProjectID: p.ID, HoleID: h.ID, Depth: 12, Alpha: 30, Beta: f64(10), TypeCode: "BD", LoggedAt: m.LoggedAt}})
	must(t, err)
	moved("rows staged, not yet visible", false)
	must(t, s.CommitBatch(c, b))
	moved("import batch committed", true)
	h.Azimuth = 50
	must(t, s.UpdateHole(c, &h, h.Version))
	moved("collar changed", false)
	must(t, s.DeleteMeasurement(c, m.ID, m.Version))
	moved("measurement deleted", true)
	if stamp(other.ID) != otherAt {
		t.Fatal("another project's stamp moved")
	}
}
