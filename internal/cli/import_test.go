package cli

import (
	"bytes"
	"context"
	"encoding/json"
	"io"
	"net/http"
	"net/http/httptest"
	"os"
	"path/filepath"
	"reflect"
	"strconv"
	"strings"
	"testing"

	"corvane/internal/domain"
	"corvane/internal/httpapi"
	"corvane/internal/service"
	"corvane/internal/store"
)

// openService opens the migrated database db as a service, closed when the
// test ends.
func openService(t *testing.T, db string) *service.Service {
	t.Helper()
	st, err := store.Open(context.Background(), db)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { st.Close() })
	return service.New(st, nil)
}

// importDB is a fresh database file with the schema, one project and its
// vocabulary (three plane types and the line type slickenline), as the
// README's first hour sets it up; svc works on it.
func importDB(t *testing.T) (db string, ctx context.Context, svc *service.Service, pid int64) {
	t.Helper()
	db = filepath.Join(t.TempDir(), "corvane.db")
	if code, _, errs := runCLI("migrate", "up", "--db", db); code != ExitOK {
		t.Fatalf("migrate up: %d %s", code, errs)
	}
	ctx = service.WithActor(context.Background(), service.System)
	svc = openService(t, db)
	p, err := svc.CreateProject(ctx, domain.Project{Name: "Firstlight"})
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []domain.TypeCode{{Code: "bedding", Kind: "plane"}, {Code: "joint", Kind: "plane"}, {Code: "fault", Kind: "plane"}, {Code: "slickenline", Kind: "line"}} {
		if _, _, err := svc.PutTypeCode(ctx, p.ID, tc); err != nil {
			t.Fatal(err)
		}
	}
	return db, ctx, svc, p.ID
}

// postImport sends file to the import route of kind with the query q, as
// the page and curl do (the file's base name in X-Filename).
func postImport(t *testing.T, srv *httptest.Server, token string, pid int64, kind, file, q string) (int, []byte) {
	t.Helper()
	body, err := os.ReadFile(file)
	if err != nil {
		t.Fatal(err)
	}
	u := srv.URL + "/v1/projects/" + strconv.FormatInt(pid, 10) + "/imports/" + kind
	if q != "" {
		u += "?" + q
	}
	req, err := http.NewRequest(http.MethodPost, u, bytes.NewReader(body))
	if err != nil {
		t.Fatal(err)
	}
	req.Header.Set("Authorization", "Bearer "+token)
	req.Header.Set("Content-Type", "text/csv")
	req.Header.Set("X-Filename", filepath.Base(file))
	res, err := srv.Client().Do(req)
	if err != nil {
		t.Fatal(err)
	}
	defer res.Body.Close()
	b, _ := io.ReadAll(res.Body)
	return res.StatusCode, b
}

// storedRows is everything an import can store in project pid, as the
// service reads it back (measurements with their derived values), with the
// times of writing left out: they are the only thing two imports of the same
// file may differ in.
func storedRows(t *testing.T, ctx context.Context, svc *service.Service, pid int64) any {
	t.Helper()
	out := map[string]any{}
	holes := allPages(t, func(pg domain.Page) (service.List[domain.Hole], error) { return svc.ListHoles(ctx, pid, pg) })
	out["holes"] = holes
	for _, h := range holes {
		ss, err := svc.GetSurvey(ctx, pid, h.ID)
		if err != nil && !domain.IsKind(err, domain.NotFound) {
			t.Fatal(err)
		}
		ks, err := svc.ListKindSets(ctx, pid, h.ID)
		if err != nil {
			t.Fatal(err)
		}
		rs, err := svc.ListRuns(ctx, pid, h.ID)
		if err != nil {
			t.Fatal(err)
		}
		ivs, err := svc.CoreIntervals(ctx, pid, h.ID)
		if err != nil {
			t.Fatal(err)
		}
		out["hole "+h.Name] = []any{ss, ks, rs, ivs}
	}
	out["measurements"] = allPages(t, func(pg domain.Page) (service.List[service.MeasurementView], error) {
		return svc.ListMeasurements(ctx, pid, service.MeasurementQuery{}, pg)
	})
	b, err := json.Marshal(out)
	if err != nil {
		t.Fatal(err)
	}
	var v any
	if err := json.Unmarshal(b, &v); err != nil {
		t.Fatal(err)
	}
	return dropTimes(v)
}

// allPages reads every page of a service list.
func allPages[T any](t *testing.T, list func(domain.Page) (service.List[T], error)) []T {
	t.Helper()
	var all []T
	for pg := (domain.Page{Limit: domain.MaxLimit}); ; {
		l, err := list(pg)
		if err != nil {
			t.Fatal(err)
		}
		all = append(all, l.Items...)
		if l.Next == 0 {
			return all
		}
		pg.After = l.Next
	}
}

func dropTimes(v any) any {
	switch x := v.(type) {
	case map[string]any:
		for k, e := range x {
			// Global ids are made at random where each row is created.
			if k == "logged_at" || k == "created_at" || k == "updated_at" || k == "global_id" {
				delete(x, k)
				continue
			}
			x[k] = dropTimes(e)
		}
	case []any:
		for i, e := range x {
			x[i] = dropTimes(e)
		}
	}
	return v
}

func jsonValue(t *testing.T, what string, b []byte) any {
	t.Helper()
	var v any
	if err := json.Unmarshal(b, &v); err != nil {
		t.Fatalf("%s: %v\n%s", what, err, b)
	}
	return v
}

// TestImportDoors: equal answers at both doors of the imports. The same
// files go into two fresh databases set up alike, one through `corvane
// import`, the other through POST .../imports/{kind} of the real HTTP
// server: each import answers the same JSON, a bad file gets the same
// problem list at both (every problem located, including a gamma on a
// plane type and a line type without gamma, refused by domain.CheckKind),
// nothing of it stored; dry run and duplicates=skip answer alike; and in
// the end both databases hold the same rows.
func TestImportDoors(t *testing.T) {
	cliDB, cctx, csvc, cpid := importDB(t)
	_, hctx, hsvc, hpid := importDB(t)
	// The route's default logger is its token's name, the command's its
	// --as name: the same here, so rows without logged_by match.
	const who = "L9"
	token, _, err := hsvc.CreateToken(hctx, domain.AllProjects, domain.RoleAdmin, who)
	if err != nil {
		t.Fatal(err)
	}
	srv := httptest.NewServer(httpapi.New(httpapi.Options{Service: hsvc}))
	t.Cleanup(srv.Close)

	dir := t.TempDir()
	write := func(name, text string) string { return writeFile(t, dir, name, text) }
	cli := func(kind, file string, opts ...string) (int, string, string) {
		args := append([]string{"import", "--db", cliDB, "--project", "Firstlight", "--kind", kind, "--as", who, "--format", "json"}, opts...)
		return runCLI(append(args, file)...)
	}
	same := func(what string, kind, file, q string, opts ...string) {
		t.Helper()
		code, out, errs := cli(kind, file, opts...)
		status, body := postImport(t, srv, token, hpid, kind, file, q)
		if code != ExitOK || (status != http.StatusCreated && status != http.StatusOK) {
			t.Fatalf("%s: command exit %d %s; route %d %s", what, code, errs, status, body)
		}
		if errs != "" {
			t.Errorf("%s: the command wrote to standard error (not a terminal: nothing but problems): %q", what, errs)
		}
		if c, h := jsonValue(t, what, []byte(out)), jsonValue(t, what, body); !reflect.DeepEqual(c, h) {
			t.Errorf("%s: command answered %s, route %s", what, out, body)
		}
	}

	d := "../../testdata/zelvorra/"
	for _, k := range []struct{ kind, file string }{
		{"collars", "collars.csv"}, {"surveys", "surveys.csv"}, {"runs", "runs.csv"},
	} {
		same(k.kind, k.kind, d+k.file, "")
	}
	same("intervals", "intervals", write("intervals.csv", "hole_id,from,to,recovered,solid,sound\nZR001,9,12,2.87,2.41,1.93\nZR001,12,15.5,3.5,3.1,2.2\n"), "")
	same("measurements, dry run", "measurements", d+"structures.csv", "dry_run=true", "--dry-run")
	same("measurements", "measurements", d+"structures.csv", "")

	// A bad file: every problem at both doors, in the same words and places.
	bad := write("bench.csv", "hole_id,depth,alpha,beta,gamma,type,comment\n"+
		"ZR001,20.5,40,100,,joint,fine\n"+ // line 2: good
		"ZR001,21.5,41,110,35,joint,\n"+ // line 3: gamma on a plane type
		"ZR001,22.5,42,120,,slickenline,\n"+ // line 4: a line type without gamma
		"ZX999,23.5,43,130,,joint,\n"+ // line 5: no such hole
		"ZR001,24.5,44,140,,vein,\n"+ // line 6: not in the vocabulary
		"ZR001,x,45,150,,joint,\n"+ // line 7: not a number
		"ZR001,20.5,40,100,,Joint,again\n"+ // line 8: line 2 again (type codes match in any case)
		"ZR001,25.5,46,160,,joint,\n") // line 9: good
	code, out, errs := cli("measurements", bad)
	status, body := postImport(t, srv, token, hpid, "measurements", bad, "")
	if code != ExitRows || out != "" || status != http.StatusUnprocessableEntity {
		t.Fatalf("bad file: command exit %d (out %q), route %d %s", code, out, status, body)
	}
	var p httpapi.Problem
	if err := json.Unmarshal(body, &p); err != nil {
		t.Fatal(err)
	}
	if len(p.Errors) != 6 {
		t.Fatalf("route listed %d problems, want 6: %s", len(p.Errors), body)
	}
	if !strings.HasPrefix(errs, "corvane import: "+p.Detail+":\n") {
		t.Errorf("command's heading is not the route's detail %q:\n%s", p.Detail, errs)
	}
	var listed []string
	for _, l := range strings.Split(strings.TrimSuffix(errs, "\n"), "\n")[1:] {
		listed = append(listed, strings.TrimPrefix(l, "  "))
	}
	var want []string
	gammaLines := map[int]bool{}
	for _, e := range p.Errors {
		want = append(want, (&domain.Error{Msg: e.Detail, Loc: domain.Location{File: e.File, Line: e.Line, Column: e.Column, Field: e.Field}}).Error())
		if e.File != "bench.csv" || e.Line == 0 {
			t.Errorf("problem not located: %+v", e)
		}
		if e.Column == "gamma" {
			gammaLines[e.Line] = true
		}
		if e.Line == 5 && !strings.Contains(e.Detail, `no hole "ZX999" in the project (import its collar first)`) {
			t.Errorf("line 5 (an unknown hole) does not say what to do: %+v", e)
		}
	}
	if !reflect.DeepEqual(listed, want) {
		t.Errorf("problem lists differ:\ncommand:\n  %s\nroute:\n  %s", strings.Join(listed, "\n  "), strings.Join(want, "\n  "))
	}
	if !gammaLines[3] || !gammaLines[4] {
		t.Errorf("the kind rule's refusals (lines 3 and 4, column gamma) are missing: %s", body)
	}

	// The file mended, its repeated row left out at both doors; then sent
	// again, every row a duplicate of a stored one.
	good := write("bench.csv", "hole_id,depth,alpha,beta,gamma,type,comment\n"+
		"ZR001,20.5,40,100,,joint,fine\n"+
		"ZR001,21.5,41,110,35,slickenline,\n"+
		"ZR001,20.5,40,100,,Joint,again\n"+
		"ZR001,25.5,46,160,,joint,\n")
	same("mended file, duplicates=skip", "measurements", good, "duplicates=skip", "--duplicates", "skip")
	same("mended file again, dry run, duplicates=keep", "measurements", good, "duplicates=keep&dry_run=true", "--duplicates", "keep", "--dry-run")
	code, _, errs = cli("measurements", good)
	if status, body := postImport(t, srv, token, hpid, "measurements", good, ""); code != ExitRows || status != http.StatusUnprocessableEntity ||
		!strings.Contains(errs, "4 rows: "+domain.DuplicateStoredMsg+" (lines 2-5)") || !strings.Contains(string(body), "4 rows: ") {
		t.Errorf("the same file twice: command exit %d %s; route %d %s", code, errs, status, body)
	}

	if c, h := storedRows(t, cctx, csvc, cpid), storedRows(t, hctx, hsvc, hpid); !reflect.DeepEqual(c, h) {
		cb, _ := json.Marshal(c)
		hb, _ := json.Marshal(h)
		t.Errorf("the databases differ after the same imports:\ncommand: %.2000s\nroute:   %.2000s", cb, hb)
	}

	// The command's imports are in the audit log under the --as name, with
	// no token (the local command line).
	al, err := csvc.ListAudit(cctx, cpid, domain.Page{Limit: domain.MaxLimit})
	if err != nil {
		t.Fatal(err)
	}
	imports := 0
	for _, e := range al.Items {
		if e.Entity == "import" {
			imports++
			if e.ActorName != who || e.TokenID != 0 {
				t.Errorf("audit entry %+v: want actor %q without a token", e, who)
			}
		}
	}
	if imports != 6 { // collars, surveys, runs, intervals, measurements, the mended file
		t.Errorf("%d import entries in the audit log, want 6", imports)
	}
}

// TestImportCommandLine: what the command refuses before importing, where
// its actor's name comes from, standard input, and the text result.
func TestImportCommandLine(t *testing.T) {
	db, ctx, svc, pid := importDB(t)
	d := "../../testdata/zelvorra/"
	for _, c := range []struct {
		args []string
		code int
		says string
	}{
		{[]string{"--project", "Firstlight", d + "collars.csv"}, ExitUsage, "Usage"},
		{[]string{"--kind", "collars", d + "collars.csv"}, ExitUsage, "Usage"},
		{[]string{"--project", "Firstlight", "--kind", "collars"}, ExitUsage, "Usage"},
		{[]string{"--project", "Firstlight", "--kind", "holes", d + "collars.csv"}, ExitUsage, "import kind must be collars, surveys"},
		{[]string{"--project", "Firstlight", "--kind", "collars", d + "collars.csv", d + "runs.csv"}, ExitUsage, "one FILE per import"},
		{[]string{"--project", "Firstlight", "--kind", "collars", "--format", "xml", d + "collars.csv"}, ExitUsage, `--format "xml"`},
		{[]string{"--project", "Firstlight", "--kind", "collars", d + "nothing.csv"}, ExitUsage, "nothing.csv"},
		{[]string{"--project", "Elsewhere", "--kind", "collars", d + "collars.csv"}, ExitRows, `no project with id or name "Elsewhere"`},
		{[]string{"--project", "Firstlight", "--kind", "measurements", "--duplicates", "twice", d + "structures.csv"}, ExitRows, `duplicates="twice"`},
	} {
		code, _, errs := runCLI(append([]string{"import", "--db", db}, c.args...)...)
		if code != c.code || !strings.Contains(errs, c.says) {
			t.Errorf("import %v: exit %d, want %d saying %q:\n%s", c.args, code, c.code, c.says, errs)
		}
	}
	empty := filepath.Join(t.TempDir(), "empty.db")
	if code, _, errs := runCLI("import", "--db", empty, "--project", "1", "--kind", "collars", d+"collars.csv"); code != ExitRows || !strings.Contains(errs, "migrate up") {
		t.Errorf("import into a database without a schema: exit %d %s", code, errs)
	}

	// Flags after the file, standard input, the text result; the name from
	// the environment's USER when --as is not given.
	collars, err := os.ReadFile(d + "collars.csv")
	if err != nil {
		t.Fatal(err)
	}
	var o, e bytes.Buffer
	getenv := func(k string) string {
		return map[string]string{"USER": "geo7", "CORVANE_DATABASE_URL": db}[k]
	}
	code := Main(context.Background(), []string{"import", "-", "--project", strconv.FormatInt(pid, 10), "--kind", "collars"}, bytes.NewReader(collars), &o, &e, getenv)
	if code != ExitOK || o.String() != "collars.csv: 8 rows read, 8 created, 0 updated\n" || e.Len() != 0 {
		t.Fatalf("collars from standard input: exit %d, out %q, err %q", code, o.String(), e.String())
	}
	code, out, errs := runCLI("import", "--db", db, "--project", "Firstlight", "--kind", "collars", "--dry-run", "--as", "L2", d+"collars.csv")
	if code != ExitOK || out != "collars.csv: 8 rows read, 0 created, 8 updated (dry run: nothing was stored)\n" {
		t.Errorf("dry run: exit %d, out %q, err %q", code, out, errs)
	}
	// A retry with the same idempotency key stores nothing again.
	for i, want := range []string{"runs.csv: 688 rows read, 688 created, 0 updated\n",
		"runs.csv: 688 rows read, 688 created, 0 updated (already imported with this idempotency key: nothing was stored again)\n"} {
		code, out, errs := runCLI("import", "--db", db, "--project", "Firstlight", "--kind", "runs", "--as", "geo7", "--idempotency-key", "shift-0412", d+"runs.csv")
		if code != ExitOK || out != want {
			t.Errorf("runs, try %d: exit %d, out %q, err %q; want %q", i+1, code, out, errs, want)
		}
	}
	rs, err := svc.ListRuns(ctx, pid, mustHole(t, ctx, svc, pid, "ZR001"))
	if err != nil || len(rs) == 0 || len(rs) != countRows(t, d+"runs.csv", "ZR001") {
		t.Errorf("runs of ZR001 after a retried import: %d (%v), want %d", len(rs), err, countRows(t, d+"runs.csv", "ZR001"))
	}
	al, err := svc.ListAudit(ctx, pid, domain.Page{Limit: domain.MaxLimit})
	if err != nil {
		t.Fatal(err)
	}
	var actors []string
	for _, a := range al.Items {
		if a.Entity == "import" {
			actors = append(actors, a.ActorName)
		}
	}
	if !reflect.DeepEqual(actors, []string{"geo7", "geo7"}) {
		t.Errorf("import audit entries by %v, want two by geo7 (collars and runs; the dry run and the retry store nothing)", actors)
	}
}

func mustHole(t *testing.T, ctx context.Context, svc *service.Service, pid int64, name string) int64 {
	t.Helper()
	id, err := svc.ResolveHole(ctx, pid, name)
	if err != nil {
		t.Fatal(err)
	}
	return id
}

// countRows counts the lines of a CSV file that start with hole.
func countRows(t *testing.T, file, hole string) int {
	t.Helper()
	b, err := os.ReadFile(file)
	if err != nil {
		t.Fatal(err)
	}
	n := 0
	for _, l := range strings.Split(string(b), "\n") {
		if strings.HasPrefix(l, hole+",") {
			n++
		}
	}
	return n
}
