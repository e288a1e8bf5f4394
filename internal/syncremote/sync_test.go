package syncremote_test

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"net/http"
	"net/http/httptest"
	"os"
	"path/filepath"
	"slices"
	"sort"
	"strings"
	"sync/atomic"
	"testing"
	"time"

	"github.com/google/go-cmp/cmp"

	"corvane/internal/domain"
	"corvane/internal/httpapi"
	"corvane/internal/pgtest"
	"corvane/internal/service"
	"corvane/internal/store/postgres"
	"corvane/internal/store/sqlite"
	"corvane/internal/syncremote"
)

func TestMain(m *testing.M) {
	os.Exit(pgtest.Main(m, func(url string) error { return postgres.Migrate(url, 0) }))
}

var admin = service.WithActor(context.Background(), service.System)

// central is the programme's service on PostgreSQL (or SQLite, where a test
// says so) behind a loopback HTTP server.
type central struct {
	svc   *service.Service
	url   string
	pid   int64
	log   string // secret of a log token of the project
	admin string // secret of an admin token of the project
}

func newCentral(t testing.TB, onPostgres bool) *central {
	t.Helper()
	var st domain.Store
	var err error
	if onPostgres {
		st, err = postgres.Open(context.Background(), pgtest.DB(t))
	} else {
		path := filepath.Join(t.TempDir(), "central.db")
		if err = sqlite.Migrate(path, 0); err == nil {
			st, err = sqlite.Open(context.Background(), path)
		}
	}
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { st.Close() })
	c := &central{svc: service.New(st, nil)}
	srv := httptest.NewServer(httpapi.New(httpapi.Options{Service: c.svc}))
	t.Cleanup(srv.Close)
	c.url = srv.URL
	p, err := c.svc.CreateProject(admin, domain.Project{Name: "Ridgeback", Description: "invented programme of the sync tests"})
	must(t, err)
	c.pid = p.ID
	for _, tc := range []domain.TypeCode{{Code: "BD", Kind: "plane"}, {Code: "JN", Kind: "plane"}, {Code: "LN", Kind: "line"}} {
		_, _, err := c.svc.PutTypeCode(admin, p.ID, tc)
		must(t, err)
	}
	c.log, _, err = c.svc.CreateToken(admin, p.ID, domain.RoleLog, "shed laptop")
	must(t, err)
	c.admin, _, err = c.svc.CreateToken(admin, p.ID, domain.RoleAdmin, "data manager")
	must(t, err)
	return c
}

// laptop is a logger's laptop: the embedded store.
type laptop struct {
	name string
	svc  *service.Service
}

func newLaptop(t testing.TB, name string) *laptop {
	t.Helper()
	path := filepath.Join(t.TempDir(), name+".db")
	must(t, sqlite.Migrate(path, 0))
	st, err := sqlite.Open(context.Background(), path)
	must(t, err)
	t.Cleanup(func() { st.Close() })
	return &laptop{name: name, svc: service.New(st, nil)}
}

// cutTransport fails every request after the first n; with drop, the
// request n+1 still reaches the service and only its answer is lost.
type cutTransport struct {
	n    int64
	drop bool
	seen atomic.Int64
}

func (c *cutTransport) RoundTrip(r *http.Request) (*http.Response, error) {
	k := c.seen.Add(1)
	if k <= c.n {
		return http.DefaultTransport.RoundTrip(r)
	}
	if c.drop && k == c.n+1 {
		if resp, err := http.DefaultTransport.RoundTrip(r); err == nil {
			resp.Body.Close()
		}
	}
	return nil, errors.New("connection cut")
}

func (c *central) remote(t testing.TB, token string, rt http.RoundTripper) *syncremote.Client {
	t.Helper()
	rc, err := syncremote.New(c.url, token, &http.Client{Transport: rt})
	must(t, err)
	return rc
}

func (l *laptop) sync(t testing.TB, c *central, rc service.SyncRemote, batch int) (service.SyncReport, error) {
	t.Helper()
	return l.svc.Sync(admin, rc, service.SyncOptions{Remote: c.url, Project: "Ridgeback", Batch: batch})
}

func (l *laptop) mustSync(t testing.TB, c *central) service.SyncReport {
	t.Helper()
	rep, err := l.sync(t, c, c.remote(t, c.log, nil), 0)
	if err != nil {
		t.Fatalf("%s: sync: %v", l.name, err)
	}
	return rep
}

func (l *laptop) project(t testing.TB) int64 {
	t.Helper()
	p, err := l.svc.Store().GetProjectByName(context.Background(), "Ridgeback")
	must(t, err)
	return p.ID
}

func must(t testing.TB, err error) {
	t.Helper()
	if err != nil {
		t.Fatal(err)
	}
}

// row is one record of a store with everything that is the store's own
// (row ids, timestamps) replaced by global ids or left out: what must be
// equal in every store after a sync.
type row struct {
	Table, GlobalID, Hole string
	Version               int64
	Content               any
}

// dump reads every record of the project through the store's own lists
// (not the sync code), for comparing stores field by field.
func dump(t testing.TB, st domain.Store, projectID int64) []row {
	t.Helper()
	ctx := context.Background()
	var out []row
	vocab, err := st.ListTypeCodes(ctx, projectID)
	must(t, err)
	for _, tc := range vocab {
		v := tc.Version
		tc.ProjectID, tc.Version = 0, 0
		out = append(out, row{Table: "type", GlobalID: tc.Code, Version: v, Content: tc})
	}
	holes, err := st.ListHoles(ctx, projectID, domain.Page{Limit: domain.MaxLimit})
	must(t, err)
	gid := map[int64]string{}
	for _, h := range holes {
		gid[h.ID] = h.GlobalID
		v := h.Version
		id := h.ID
		h.ID, h.ProjectID, h.Version, h.CreatedAt, h.UpdatedAt = 0, 0, 0, time.Time{}, time.Time{}
		out = append(out, row{Table: "hole", GlobalID: h.GlobalID, Version: v, Content: h})
		if ss, err := st.GetSurvey(ctx, id); err == nil {
			v := ss.Version
			ss.HoleID, ss.Version, ss.UpdatedAt = 0, 0, time.Time{}
			out = append(out, row{Table: "survey", GlobalID: h.GlobalID, Version: v, Content: ss})
		} else if !domain.IsKind(err, domain.NotFound) {
			t.Fatal(err)
		}
		runs, err := st.ListRuns(ctx, id)
		must(t, err)
		for _, r := range runs {
			v := r.Version
			r.ID, r.HoleID, r.Version, r.CreatedAt, r.UpdatedAt = 0, 0, 0, time.Time{}, time.Time{}
			out = append(out, row{Table: "run", GlobalID: r.GlobalID, Hole: h.GlobalID, Version: v, Content: r})
		}
	}
	after := int64(0)
	for {
		ms, err := st.ListMeasurements(ctx, domain.MeasurementFilter{ProjectID: projectID}, domain.Page{Limit: domain.MaxLimit, After: after})
		must(t, err)
		for _, m := range ms {
			v, hole := m.Version, gid[m.HoleID]
			m.ID, m.ProjectID, m.HoleID, m.Version, m.CreatedAt, m.UpdatedAt = 0, 0, 0, 0, time.Time{}, time.Time{}
			out = append(out, row{Table: "measurement", GlobalID: m.GlobalID, Hole: hole, Version: v, Content: m})
		}
		if len(ms) < domain.MaxLimit {
			break
		}
		after = ms[len(ms)-1].ID
	}
	sort.Slice(out, func(i, j int) bool {
		if out[i].Table != out[j].Table {
			return out[i].Table < out[j].Table
		}
		return out[i].GlobalID < out[j].GlobalID
	})
	return out
}

// sameStores fails unless every laptop holds exactly what the central
// store holds.
func sameStores(t *testing.T, c *central, ls ...*laptop) {
	t.Helper()
	want := dump(t, c.svc.Store(), c.pid)
	for _, l := range ls {
		if d := cmp.Diff(want, dump(t, l.svc.Store(), l.project(t))); d != "" {
			t.Errorf("%s differs from the central store (-central +%s):\n%s", l.name, l.name, d)
		}
	}
}

func count(rows []row, table string) int {
	n := 0
	for _, r := range rows {
		if r.Table == table {
			n++
		}
	}
	return n
}

// logged makes n measurements on hole h of the laptop's project, offline.
func (l *laptop) logged(t testing.TB, hole string, n int, from float64) []domain.Measurement {
	t.Helper()
	ctx := context.Background()
	pid := l.project(t)
	h, err := l.svc.Store().GetHoleByName(ctx, pid, hole)
	must(t, err)
	var out []domain.Measurement
	for i := range n {
		b := float64((i * 37) % 360)
		v, err := l.svc.CreateMeasurement(admin, pid, domain.Measurement{HoleID: h.ID, Depth: from + float64(i)*0.5,
			Alpha: float64(10 + i%70), Beta: &b, TypeCode: "JN", LoggedBy: l.name, Comment: fmt.Sprintf("%s #%d", l.name, i)})
		must(t, err)
		out = append(out, v.Measurement)
	}
	return out
}

// byComment finds a measurement of the laptop by its comment.
func find(t testing.TB, st domain.Store, pid int64, gid string) domain.Measurement {
	t.Helper()
	ms, err := st.MeasurementsByGlobalID(context.Background(), []string{gid})
	must(t, err)
	if len(ms) != 1 || ms[0].ProjectID != pid {
		t.Fatalf("measurement %s: %d rows", gid, len(ms))
	}
	return ms[0]
}

func edit(t testing.TB, svc *service.Service, pid int64, m domain.Measurement, comment string) domain.Measurement {
	t.Helper()
	m.Comment = comment
	v, err := svc.UpdateMeasurement(admin, pid, m.ID, m.Version, m)
	must(t, err)
	return v.Measurement
}

// seedCentral gives the central project two holes with surveys, runs and
// measurements.
func seedCentral(t testing.TB, c *central) []domain.Measurement {
	t.Helper()
	var ms []domain.Measurement
	for i, name := range []string{"RB001", "RB002"} {
		h, err := c.svc.CreateHole(admin, c.pid, domain.Hole{Name: name, East: 5000 + 100*float64(i), North: 8000, Elevation: 310,
			Azimuth: 90, Dip: -60, FinalDepth: 300})
		must(t, err)
		_, err = c.svc.PutSurvey(admin, c.pid, h.ID, 0, domain.SurveySet{AzimuthRef: domain.AzimuthGrid,
			Stations: []domain.Station{{Depth: 0, Azimuth: 90, Dip: -60}, {Depth: 150, Azimuth: 93, Dip: -58}}})
		must(t, err)
		_, err = c.svc.CreateRun(admin, c.pid, h.ID, domain.Run{From: 0, To: 3, Confidence: "good"})
		must(t, err)
		for j := range 5 {
			b := float64(40 * j)
			v, err := c.svc.CreateMeasurement(admin, c.pid, domain.Measurement{HoleID: h.ID, Depth: 10 + float64(j), Alpha: 35, Beta: &b,
				TypeCode: "BD", Comment: fmt.Sprintf("central %s #%d", name, j)})
			must(t, err)
			ms = append(ms, v.Measurement)
		}
	}
	return ms
}

func TestTwoLaptops(t *testing.T) {
	for _, onPostgres := range []bool{true, false} {
		name := "central on SQLite"
		if onPostgres {
			name = "central on PostgreSQL"
		}
		t.Run(name, func(t *testing.T) { twoLaptops(t, onPostgres) })
	}
}

// twoLaptops is the scripted session: two laptops log offline, edit and
// delete on both sides, a push is cut twice, syncs are repeated; at the end
// every store holds the same rows, nothing doubled or lost, and every
// conflict was listed.
func twoLaptops(t *testing.T, onPostgres bool) {
	ctx := context.Background()
	c := newCentral(t, onPostgres)
	seeded := seedCentral(t, c)
	a, b := newLaptop(t, "laptopA"), newLaptop(t, "laptopB")

	// First syncs bring the programme to both laptops; a second changes nothing.
	for _, l := range []*laptop{a, b} {
		rep := l.mustSync(t, c)
		if rep.Pulled == 0 || rep.Pushed != 0 {
			t.Fatalf("%s first sync: %+v", l.name, rep)
		}
		if rep := l.mustSync(t, c); rep.Pulled != 0 || rep.Pushed != 0 || rep.Held != 0 {
			t.Errorf("%s second sync changed something: %+v", l.name, rep)
		}
	}
	sameStores(t, c, a, b)
	pa, pb := a.project(t), b.project(t)

	// Offline at the shed.
	newA := a.logged(t, "RB001", 40, 100)
	newB := b.logged(t, "RB002", 30, 100)
	m0, m1, m2, m3, m4 := seeded[0].GlobalID, seeded[1].GlobalID, seeded[2].GlobalID, seeded[3].GlobalID, seeded[6].GlobalID
	edit(t, a.svc, pa, find(t, a.svc.Store(), pa, m0), "A: open joint")   // conflicts with B below
	edit(t, b.svc, pb, find(t, b.svc.Store(), pb, m0), "B: healed joint") //
	must(t, a.svc.DeleteMeasurement(admin, pa, find(t, a.svc.Store(), pa, m1).ID, 1))
	edit(t, b.svc, pb, find(t, b.svc.Store(), pb, m2), "B: second look")   // conflicts with the centre below
	edit(t, c.svc, c.pid, find(t, c.svc.Store(), c.pid, m2), "centre: QA") //
	must(t, c.svc.DeleteMeasurement(admin, c.pid, find(t, c.svc.Store(), c.pid, m3).ID, 1))
	edit(t, b.svc, pb, find(t, b.svc.Store(), pb, m4), "B: only here")
	must(t, b.svc.DeleteMeasurement(admin, pb, newB[0].ID, 1)) // made and deleted offline: never travels
	hA, err := a.svc.Store().GetHoleByName(ctx, pa, "RB001")
	must(t, err)
	_, err = a.svc.CreateRun(admin, pa, hA.ID, domain.Run{From: 3, To: 6, Confidence: "fair"})
	must(t, err)
	// An admin-only change made offline: refused for the log token.
	odd, err := a.svc.CreateHole(admin, pa, domain.Hole{Name: "RB900", East: 1, North: 2, Elevation: 3, Azimuth: 0, Dip: -90, FinalDepth: 50})
	must(t, err)
	oddM, err := a.svc.CreateMeasurement(admin, pa, domain.Measurement{HoleID: odd.ID, Depth: 5, Alpha: 20, TypeCode: "JN"})
	must(t, err)
	// The centre adds a hole meanwhile.
	_, err = c.svc.CreateHole(admin, c.pid, domain.Hole{Name: "RB003", East: 5200, North: 8000, Elevation: 300, Azimuth: 90, Dip: -70, FinalDepth: 200})
	must(t, err)

	// A's push is cut twice: once before a batch reaches the centre, once
	// after the centre applied it but before the answer came back.
	if _, err := a.sync(t, c, c.remote(t, c.log, &cutTransport{n: 3}), 10); err == nil {
		t.Fatal("a sync over a cut connection reported success")
	}
	if _, err := a.sync(t, c, c.remote(t, c.log, &cutTransport{n: 2, drop: true}), 10); err == nil {
		t.Fatal("a sync whose answer was lost reported success")
	}
	repA := a.mustSync(t, c)
	if repA.Refused != 2 || repA.Conflicts != 0 {
		t.Errorf("A's sync: %+v, want the hole and its measurement refused and no conflict", repA)
	}
	repB := b.mustSync(t, c)
	if repB.Conflicts != 2 {
		t.Errorf("B's sync: %+v, want 2 conflicts", repB)
	}
	// Until a person chooses, each side keeps its own version.
	for gid, want := range map[string]string{m0: "B: healed joint", m2: "B: second look"} {
		if got := find(t, b.svc.Store(), pb, gid).Comment; got != want {
			t.Errorf("B's %s after the conflict: %q, want its own %q kept", gid, got, want)
		}
	}
	for gid, want := range map[string]string{m0: "A: open joint", m2: "centre: QA"} {
		if got := find(t, c.svc.Store(), c.pid, gid).Comment; got != want {
			t.Errorf("the centre's %s after the conflict: %q, want %q kept", gid, got, want)
		}
	}
	if rep := a.mustSync(t, c); rep.Pulled == 0 || rep.Pushed != 0 {
		t.Errorf("A's sync after B's: %+v, want B's changes pulled and nothing pushed", rep)
	}
	for _, l := range []*laptop{a, b} {
		if rep := l.mustSync(t, c); rep.Pushed != 0 || rep.Pulled != 0 || rep.Conflicts != 0 {
			t.Errorf("%s: a repeated sync changed something: %+v", l.name, rep)
		}
	}

	// Every conflict is listed, on the centre and on B, both versions kept.
	open, err := c.svc.ListConflicts(admin, c.pid, domain.ConflictOpen)
	must(t, err)
	var gids []string
	for _, o := range open {
		gids = append(gids, o.GlobalID)
		if len(o.LocalData) == 0 || len(o.RemoteData) == 0 {
			t.Errorf("conflict %s lacks a version", o.ID)
		}
	}
	slices.Sort(gids)
	want := []string{m0, m2}
	slices.Sort(want)
	if !slices.Equal(gids, want) {
		t.Fatalf("open conflicts on the centre: %v, want %v", gids, want)
	}
	bOpen, err := b.svc.ListConflicts(admin, pb, domain.ConflictOpen)
	must(t, err)
	if len(bOpen) != 2 {
		t.Errorf("B lists %d open conflicts, want 2", len(bOpen))
	}
	aOpen, err := a.svc.ListConflicts(admin, pa, domain.ConflictOpen)
	must(t, err)
	for _, o := range aOpen {
		if o.Kind != domain.ConflictRefused || !strings.Contains(o.Reason, "role") && !strings.Contains(o.Reason, "hole") {
			t.Errorf("A lists %+v, want refusals saying why", o)
		}
	}
	if len(aOpen) != 2 {
		t.Fatalf("A lists %d refused changes, want 2", len(aOpen))
	}

	// People resolve: B's version of m0 wins (from B's command line), the
	// centre's of m2 (on the centre).
	rcB := c.remote(t, c.log, nil)
	opt := service.SyncOptions{Remote: c.url, Project: "Ridgeback"}
	for _, o := range bOpen {
		keep := domain.KeepLocal
		if o.GlobalID == m2 {
			keep = domain.KeepRemote
			logCtx := service.WithActor(ctx, service.Actor{Name: "data manager", ProjectID: c.pid, Role: domain.RoleLog})
			if _, err := c.svc.ResolveConflict(logCtx, c.pid, o.ID, keep); err != nil {
				t.Fatal(err)
			}
			continue
		}
		if _, err := b.svc.ResolveSynced(admin, rcB, opt, o.ID, keep); err != nil {
			t.Fatal(err)
		}
	}
	for _, o := range aOpen {
		if _, err := a.svc.ResolveSynced(admin, c.remote(t, c.log, nil), opt, o.ID, domain.KeepRemote); err != nil {
			t.Fatal(err)
		}
	}
	// The audit trail says who chose what.
	audit, err := c.svc.ListAudit(admin, c.pid, domain.Page{Limit: domain.MaxLimit})
	must(t, err)
	chose := 0
	for _, e := range audit.Items {
		if e.Entity == "sync_conflict" {
			chose++
			if !strings.Contains(string(e.After), `"kept"`) || e.ActorName == "" {
				t.Errorf("audit of a resolution: %+v", e)
			}
		}
	}
	if chose != 2 {
		t.Errorf("%d resolutions audited, want 2", chose)
	}

	for range 2 {
		a.mustSync(t, c)
		b.mustSync(t, c)
	}
	sameStores(t, c, a, b)
	rows := dump(t, c.svc.Store(), c.pid)
	// 10 seeded - m1 (A) - m3 (centre) + 40 (A) + 30 - 1 (B) = 77.
	if n := count(rows, "measurement"); n != 77 {
		t.Errorf("%d measurements in the end, want 77", n)
	}
	if n := count(rows, "hole"); n != 3 {
		t.Errorf("%d holes in the end, want 3 (RB900 was refused and given up)", n)
	}
	if n := count(rows, "run"); n != 3 {
		t.Errorf("%d runs in the end, want 3", n)
	}
	final := map[string]string{}
	for _, r := range rows {
		if m, ok := r.Content.(domain.Measurement); ok {
			final[r.GlobalID] = m.Comment
		}
	}
	for gid, want := range map[string]string{m0: "B: healed joint", m2: "centre: QA", m4: "B: only here", newA[39].GlobalID: "laptopA #39", newB[29].GlobalID: "laptopB #29"} {
		if final[gid] != want {
			t.Errorf("measurement %s: comment %q, want %q", gid, final[gid], want)
		}
	}
	for _, gone := range []string{m1, m3, newB[0].GlobalID, oddM.GlobalID} {
		if _, ok := final[gone]; ok {
			t.Errorf("measurement %s is still there after its deletion", gone)
		}
	}
}

// A laptop that pulls chosen holes gets those holes' records and the
// vocabulary, nothing of the other holes; widening the choice pulls the rest.
func TestSyncChosenHoles(t *testing.T) {
	c := newCentral(t, false)
	seedCentral(t, c)
	l := newLaptop(t, "shed")
	rc := c.remote(t, c.log, nil)
	if _, err := l.svc.Sync(admin, rc, service.SyncOptions{Remote: c.url, Project: "Ridgeback", Holes: []string{"RB002"}}); err != nil {
		t.Fatal(err)
	}
	rows := dump(t, l.svc.Store(), l.project(t))
	holes := map[string]bool{}
	for _, r := range rows {
		if h, ok := r.Content.(domain.Hole); ok {
			holes[h.Name] = true
		}
	}
	if len(holes) != 1 || !holes["RB002"] || count(rows, "type") != 3 || count(rows, "measurement") != 5 || count(rows, "survey") != 1 || count(rows, "run") != 1 {
		t.Errorf("with --holes RB002 the laptop holds holes %v, %d types, %d surveys, %d runs, %d measurements",
			holes, count(rows, "type"), count(rows, "survey"), count(rows, "run"), count(rows, "measurement"))
	}
	if _, err := l.svc.Sync(admin, rc, service.SyncOptions{Remote: c.url, Project: "Ridgeback"}); err != nil {
		t.Fatal(err)
	}
	sameStores(t, c, l)
	if _, err := l.svc.Sync(admin, rc, service.SyncOptions{Remote: c.url, Project: "Ridgeback", Holes: []string{"RB404"}}); err == nil ||
		!strings.Contains(err.Error(), "RB404") {
		t.Errorf("an unknown hole: %v, want an error naming it", err)
	}
}

// An import on the centre long enough to be written in several batches
// (its rows hidden until the last commits) reaches a laptop whole.
func TestSyncLongImport(t *testing.T) {
	c := newCentral(t, true)
	seedCentral(t, c)
	l := newLaptop(t, "shed")
	l.mustSync(t, c)
	var b strings.Builder
	b.WriteString("hole_id,depth,alpha,beta,type,comment\n")
	const n = 12_001
	for i := range n {
		fmt.Fprintf(&b, "RB001,%.3f,%d,%d,JN,import %d\n", float64(i)*0.02, 10+i%70, i%360, i)
	}
	if _, err := c.svc.Import(admin, c.pid, service.ImportRequest{Kind: "measurements", Body: strings.NewReader(b.String())}); err != nil {
		t.Fatal(err)
	}
	if rep := l.mustSync(t, c); rep.Pulled != n {
		t.Errorf("pulled %d, want the %d imported", rep.Pulled, n)
	}
	sameStores(t, c, l)
}

// A hole's own local grid travels with the hole like its other fields: set
// on the centre it reaches the laptop, changed on the laptop (admin token)
// it reaches the centre, and both stores end up equal.
func TestSyncHoleLocalGrid(t *testing.T) {
	c := newCentral(t, false)
	seedCentral(t, c)
	grid := json.RawMessage(`{"name":"pit grid","grid_crs":"EPSG:28350","rotation":15,
		"origin":{"local_easting":0,"local_northing":0,"easting":391000,"northing":6465000}}`)
	_, err := c.svc.CreateHole(admin, c.pid, domain.Hole{Name: "RB003", East: 391100, North: 6465100, Elevation: 300,
		Azimuth: 90, AzimuthRef: "grid", Dip: -60, FinalDepth: 100, CRS: "EPSG:28350", LocalGrid: grid})
	must(t, err)
	rotation := func(st domain.Store, pid int64) any {
		t.Helper()
		got, err := st.GetHoleByName(context.Background(), pid, "RB003")
		must(t, err)
		var g map[string]any
		if err := json.Unmarshal(got.LocalGrid, &g); err != nil {
			t.Fatalf("local_grid %q: %v", got.LocalGrid, err)
		}
		return g["rotation"]
	}
	l := newLaptop(t, "shed")
	l.mustSync(t, c)
	if r := rotation(l.svc.Store(), l.project(t)); r != 15.0 {
		t.Errorf("the laptop's RB003 has a local grid of rotation %v, want 15 (the centre's)", r)
	}
	sameStores(t, c, l)

	lh, err := l.svc.Store().GetHoleByName(context.Background(), l.project(t), "RB003")
	must(t, err)
	lh.LocalGrid = json.RawMessage(strings.Replace(string(grid), `"rotation":15`, `"rotation":-12.5`, 1))
	_, err = l.svc.UpdateHole(admin, l.project(t), lh.ID, lh.Version, lh)
	must(t, err)
	if _, err := l.sync(t, c, c.remote(t, c.admin, nil), 0); err != nil {
		t.Fatal(err)
	}
	if r := rotation(c.svc.Store(), c.pid); r != -12.5 {
		t.Errorf("after the laptop's push the centre's RB003 has rotation %v, want -12.5", r)
	}
	sameStores(t, c, l)
}
