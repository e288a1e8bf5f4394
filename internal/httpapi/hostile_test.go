package httpapi

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"net/http/httptest"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"
	"testing"

	"corvane/internal/domain"
)

// Tests of the service against hostile and careless clients.

// A made-up request method must not become a metric label of its own: the
// label set is closed, so memory stays bounded however many methods a client
// invents.
func TestMetricsMethodLabelClosed(t *testing.T) {
	f := newFixture(t)
	for _, m := range []string{"FOO", "BAR1", "X-Y-Z"} {
		f.do(f.site, m, "/v1/projects", nil)
	}
	f.do(f.site, "GET", "/v1/projects", nil)
	body := string(f.must(200, "", "GET", "/metrics", nil, nil).Body)
	for _, m := range []string{"FOO", "BAR1", "X-Y-Z"} {
		if strings.Contains(body, `method="`+m+`"`) {
			t.Errorf("/metrics has a label for the made-up method %s", m)
		}
	}
	if !strings.Contains(body, `method="other"`) {
		t.Error(`/metrics lacks method="other" for unknown methods`)
	}
	if !strings.Contains(body, `corvane_http_requests_total{method="GET",route="/v1/projects",status="200"} 1`) {
		t.Error("/metrics lost the GET label")
	}
}

// A ";" in the query string is refused, naming it, instead of dropping the
// pair (min_depth=249;x=1 would otherwise list every measurement).
func TestQuerySemicolonRefused(t *testing.T) {
	f := newFixture(t)
	pid := f.project("Semicolon", nil)
	h := f.hole(pid, "SC001", 90, -60)
	base := "/v1/projects/" + itoa(pid)
	f.must(201, f.site, "POST", base+"/measurements", map[string]any{"hole_id": h.ID, "depth": 10, "alpha": 30, "beta": 20, "type": "JN"}, nil)
	for _, q := range []string{"?min_depth=249;x=1", "?x=1;min_depth=249", "?hole=SC001%zz"} {
		r := f.do(f.site, "GET", base+"/measurements"+q, nil)
		if r.Code != 400 {
			t.Errorf("%s: status %d, want 400: %s", q, r.Code, r.Body)
			continue
		}
		p := r.problem(t)
		if strings.Contains(q, ";") && !strings.Contains(p.Detail, `";"`) {
			t.Errorf("%s: detail %q does not name the ;", q, p.Detail)
		}
	}
	// An escaped ; is a value like any other: it reaches the filter whole.
	r := f.must(422, f.site, "GET", base+"/measurements?hole=SC001%3Bx", nil, nil)
	if p := r.problem(t); !strings.Contains(p.Detail, `"SC001;x"`) {
		t.Errorf("escaped ; did not reach the filter: %q", p.Detail)
	}
}

// countingBody is a request body that counts the bytes read from it.
type countingBody struct {
	r    io.Reader
	read int64
}

func (b *countingBody) Read(p []byte) (int, error) {
	n, err := b.r.Read(p)
	b.read += int64(n)
	return n, err
}

// send serves one request straight to the server (not through the contract
// checker, which reads the whole body first) and returns the status and the
// bytes of the body the server read.
func (f *fixture) send(token, method, path, ct string, body io.Reader, size int64) (int, int64) {
	f.t.Helper()
	cb := &countingBody{r: body}
	req := httptest.NewRequest(method, path, cb)
	req.ContentLength = size
	if ct != "" {
		req.Header.Set("Content-Type", ct)
	}
	if token != "" {
		req.Header.Set("Authorization", "Bearer "+token)
	}
	w := httptest.NewRecorder()
	f.srv.ServeHTTP(w, req)
	return w.Code, cb.read
}

// manyEmptyObjects is a JSON body {"<field>": [{},{},...]} of about n bytes.
func manyEmptyObjects(field string, n int) []byte {
	var b bytes.Buffer
	b.WriteString(`{"` + field + `":[{}`)
	b.Write(bytes.Repeat([]byte(",{}"), n/3))
	b.WriteString("]}")
	return b.Bytes()
}

// Nothing of a body is read before the token and its role are checked: a
// caller without a token, with a token of another project or with too low a
// role cannot make the server read (or spool) a large body. Issue items 1
// and 4.
func TestAuthBeforeBody(t *testing.T) {
	f := newFixture(t)
	pid := f.project("Auth first", nil)
	other := f.project("Other", nil)
	base := "/v1/projects/" + itoa(pid)
	read := f.token(pid, domain.RoleRead, "reader")
	logger := f.token(pid, domain.RoleLog, "logger")
	foreign := f.token(other, domain.RoleAdmin, "other admin")
	const size = 4 << 20
	big := manyEmptyObjects("measurements", size)
	csv := "hole_id,easting,northing,elevation,azimuth,dip,depth\n" + strings.Repeat("X,1,2,3,4,-60,100\n", size/18)
	for _, tc := range []struct {
		name, token, method, path, ct string
		body                          []byte
		want                          int
	}{
		{"convert without token", "", "POST", "/v1/convert", "application/json", big, 401},
		{"convert with a bad token", "cvt_nothing", "POST", "/v1/convert", "application/json", big, 401},
		{"qa without token", "", "POST", base + "/qa", "application/json", manyEmptyObjects("picks", size), 401},
		{"qa with another project's token", foreign, "POST", base + "/qa", "application/json", manyEmptyObjects("picks", size), 403},
		{"measurement without token", "", "POST", base + "/measurements", "application/json", big, 401},
		{"measurement by a reader", read, "POST", base + "/measurements", "application/json", big, 403},
		{"hole by a logger", logger, "POST", base + "/holes", "application/json", big, 403},
		{"project by a project admin", foreign, "POST", "/v1/projects", "application/json", big, 403},
		{"collar import without token", "", "POST", base + "/imports/collars", "text/csv", []byte(csv), 401},
		{"collar import by a logger", logger, "POST", base + "/imports/collars", "text/csv", []byte(csv), 403},
		{"measurement import by a reader", read, "POST", base + "/imports/measurements", "text/csv", []byte(csv), 403},
		{"import by another project's token", foreign, "POST", base + "/imports/measurements", "text/csv", []byte(csv), 403},
	} {
		code, n := f.send(tc.token, tc.method, tc.path, tc.ct, bytes.NewReader(tc.body), int64(len(tc.body)))
		if code != tc.want {
			t.Errorf("%s: status %d, want %d", tc.name, code, tc.want)
		}
		if n != 0 {
			t.Errorf("%s: the server read %d bytes of the body before refusing the caller", tc.name, n)
		}
	}
}

// A body of many tiny array elements is refused as soon as it passes the
// route's element limit, without reading (and decoding) the rest. Today's
// 24 MiB of "{}" grew the server by gigabytes. Issue item 1.
func TestManyElementsRefusedEarly(t *testing.T) {
	f := newFixture(t)
	pid := f.project("Elements", nil)
	for _, tc := range []struct{ path, field string }{
		{"/v1/convert", "measurements"},
		{"/v1/projects/" + itoa(pid) + "/qa", "picks"},
	} {
		body := manyEmptyObjects(tc.field, 24<<20)
		code, n := f.send(f.site, "POST", tc.path, "application/json", bytes.NewReader(body), -1)
		if code != 413 {
			t.Errorf("%s: status %d, want 413", tc.path, code)
		}
		if n > 2<<20 {
			t.Errorf("%s: read %d bytes of a body already over its element limit", tc.path, n)
		}
	}
}

// TestElementCounter counts array elements at every depth, not inside
// strings, and fails the read past the limit.
func TestElementCounter(t *testing.T) {
	for _, tc := range []struct {
		in   string
		want int
	}{
		{`{}`, 0},
		{`[]`, 0},
		{`[ ]`, 0},
		{`[1]`, 1},
		{`[1, 2 ,3]`, 3},
		{`{"a":[{},{}],"b":[[1,2],[3]]}`, 7},
		{`["[1,2]", "a\"],[" ]`, 2},
		{`[[],[[]]]`, 3},
	} {
		e := &elementCounter{r: strings.NewReader(tc.in), max: 1 << 30}
		if _, err := io.ReadAll(e); err != nil {
			t.Fatal(err)
		}
		if e.n != tc.want {
			t.Errorf("%s: %d elements, want %d", tc.in, e.n, tc.want)
		}
		if tc.want > 0 {
			_, err := io.ReadAll(&elementCounter{r: strings.NewReader(tc.in), max: tc.want - 1})
			if err == nil {
				t.Errorf("%s: no error past a limit of %d", tc.in, tc.want-1)
			}
		}
	}
}

// manyWindows is n set windows with distinct names, as query parameters.
func manyWindows(n int) string {
	var b strings.Builder
	for i := range n {
		fmt.Fprintf(&b, "set=W%d:10/10:5&", i)
	}
	return b.String()
}

// Every query parameter that sizes work is bounded and refused with 422
// naming it: a rose bin of 1.6e-10 degrees would allocate 2e12 bins (issue
// item 2), a depth-shift search of 1e-8 steps over 10000 would run for hours
// (item 3).
func TestWorkParametersBounded(t *testing.T) {
	f := newFixture(t)
	pid := f.project("Bounds", nil)
	h := f.hole(pid, "BD001", 90, -60)
	base := "/v1/projects/" + itoa(pid)
	hb := base + "/holes/" + itoa(h.ID)
	read := f.token(pid, domain.RoleRead, "reader")
	picks := map[string]any{"picks": []map[string]any{{"hole_id": "BD001", "depth": 2, "dip": 40, "dip_direction": 100}}}
	for _, tc := range []struct {
		method, path string
		body         any
		field        string
	}{
		{"GET", base + "/rose?bin=1.6370904631912708e-10", nil, "bin"},
		{"GET", base + "/rose?bin=0.5", nil, "bin"},
		{"GET", base + "/rose?bin=180", nil, "bin"},
		{"POST", base + "/qa?max_depth_shift=10000&shift_step=1e-8", picks, "shift_step"},
		{"GET", base + "/qa?shift_step=1e-7", nil, "shift_step"},
		{"GET", hb + "/qa?neighbours=1000000", nil, "neighbours"},
		{"GET", base + "/qa?pick_window=1e6", nil, "pick_window"},
		{"GET", hb + "/path?step=1e-9", nil, "step"},
		{"GET", base + "/statistics?sets=1000000", nil, "sets"},
		{"GET", base + "/statistics?sets=auto:1000000", nil, "sets"},
		{"GET", base + "/net?grid=100000", nil, "grid"},
		{"GET", base + "/statistics?" + manyWindows(60), nil, "set"},
		{"GET", base + "/measurements?limit=100000000", nil, "limit"},
	} {
		r := f.do(read, tc.method, tc.path, tc.body)
		if r.Code != 422 {
			t.Errorf("%s %s: status %d, want 422: %s", tc.method, tc.path, r.Code, r.Body)
			continue
		}
		p := r.problem(t)
		if len(p.Errors) == 0 || p.Errors[0].Field != tc.field {
			t.Errorf("%s %s: problem %+v does not name %s", tc.method, tc.path, p, tc.field)
		}
	}
	f.must(200, read, "GET", base+"/rose?bin=2.5", nil, nil)
	f.must(200, read, "POST", base+"/qa?max_depth_shift=100&shift_step=0.01", picks, nil)
}

// signalReader tells, on its first Read, that the server has started on the
// body, and then waits for release before giving it.
type signalReader struct {
	started chan struct{}
	release chan struct{}
	body    io.Reader
	once    bool
}

func (r *signalReader) Read(p []byte) (int, error) {
	if !r.once {
		r.once = true
		close(r.started)
		<-r.release
	}
	return r.body.Read(p)
}

// Expensive requests run in a bounded pool: when every slot is taken the
// next one is answered 503 with Retry-After at once, and a slot freed is
// used again.
func TestHeavyPoolFull(t *testing.T) {
	f := newFixture(t, func(o *Options) { o.MaxHeavy = 1 })
	pid := f.project("Pool", nil)
	base := "/v1/projects/" + itoa(pid)
	conv := `{"collars":[{"hole_id":"A","azimuth":0,"dip":-60,"final_depth":50}],"measurements":[{"hole_id":"A","depth":5,"alpha":20,"beta":180}]}`
	sr := &signalReader{started: make(chan struct{}), release: make(chan struct{}), body: strings.NewReader(conv)}
	done := make(chan int)
	go func() {
		req := httptest.NewRequest("POST", "/v1/convert", sr)
		req.Header.Set("Content-Type", "application/json")
		req.Header.Set("Authorization", "Bearer "+f.site)
		w := httptest.NewRecorder()
		f.srv.ServeHTTP(w, req)
		done <- w.Code
	}()
	<-sr.started // the first request holds the only slot
	for _, path := range []string{base + "/qa", base + "/statistics", base + "/net", base + "/rose"} {
		r := f.do(f.site, "GET", path, nil)
		if r.Code != 503 || r.Header.Get("Retry-After") == "" {
			t.Errorf("GET %s with the pool full: status %d, Retry-After %q; want 503 with Retry-After", path, r.Code, r.Header.Get("Retry-After"))
		}
	}
	// Cheap requests are not pooled.
	f.must(200, f.site, "GET", base, nil, nil)
	close(sr.release)
	if code := <-done; code != 200 {
		t.Errorf("the request holding the slot: status %d", code)
	}
	f.must(200, f.site, "GET", base+"/statistics", nil, nil)
}

// fullFile is an upload file on a full disk: every write fails with ENOSPC.
type fullFile struct{ name string }

func (f fullFile) Read([]byte) (int, error) { return 0, io.EOF }
func (f fullFile) Write([]byte) (int, error) {
	return 0, &os.PathError{Op: "write", Path: f.name, Err: syscall.ENOSPC}
}
func (f fullFile) Seek(int64, int) (int64, error) { return 0, nil }
func (f fullFile) Close() error                   { return nil }
func (f fullFile) Name() string                   { return f.name }

// bigCSV is a measurements file of hole of about n bytes (larger than the
// in-memory part of an upload, so that it goes to a temp file), in few rows
// with long comments.
func bigCSV(hole string, n int) string {
	var b strings.Builder
	b.WriteString("hole_id,depth,alpha,beta,type,comment\n")
	comment := strings.Repeat("c", domain.MaxCommentLen-10)
	for i := 0; b.Len() < n; i++ {
		fmt.Fprintf(&b, "%s,%.2f,30,40,JN,%s\n", hole, float64(i)*0.05, comment)
	}
	return b.String()
}

// A full or unusable temp dir answers 507 or 503 with Retry-After, never
// naming a server path; today it is a 400 naming the temp file. Issue item
// 13.
func TestUploadTempDirFull(t *testing.T) {
	dir := t.TempDir()
	f := newFixture(t, func(o *Options) { o.TempDir = dir })
	pid := f.project("Temp", nil)
	f.hole(pid, "ZR001", 90, -60)
	path := "/v1/projects/" + itoa(pid) + "/imports/measurements"
	csv := bigCSV("ZR001", spoolMemory+1<<20)

	f.srv.createTemp = func(dir string) (spoolFile, error) {
		return fullFile{name: filepath.Join(dir, spoolPrefix+"full.csv")}, nil
	}
	r := f.do(f.site, "POST", path, csv)
	if r.Code != 507 || r.Header.Get("Retry-After") == "" {
		t.Errorf("temp dir full: status %d, Retry-After %q; want 507 with Retry-After: %s", r.Code, r.Header.Get("Retry-After"), r.Body)
	}
	if strings.Contains(string(r.Body), dir) || strings.Contains(string(r.Body), spoolPrefix) {
		t.Errorf("the problem names a server path: %s", r.Body)
	}

	f.srv.createTemp = createSpoolFile
	f.srv.opt.TempDir = filepath.Join(dir, "gone")
	r = f.do(f.site, "POST", path, csv)
	if r.Code != 503 || r.Header.Get("Retry-After") == "" {
		t.Errorf("temp dir missing: status %d; want 503 with Retry-After: %s", r.Code, r.Body)
	}
	if strings.Contains(string(r.Body), dir) {
		t.Errorf("the problem names a server path: %s", r.Body)
	}
}

// cutReader gives n bytes of r and then fails, like a client that goes away
// part-way through an upload.
type cutReader struct {
	r io.Reader
	n int
}

func (c *cutReader) Read(p []byte) (int, error) {
	if c.n <= 0 {
		return 0, errors.New("connection reset by peer")
	}
	if len(p) > c.n {
		p = p[:c.n]
	}
	n, err := c.r.Read(p)
	c.n -= n
	return n, err
}

// Temp uploads are removed on every way out of a request (imported, refused
// by the service, cut off by the client), and at start for the files of a
// process that is gone (killed with -9 part-way through an upload).
func TestUploadTempFilesCleaned(t *testing.T) {
	dir := t.TempDir()
	// Left by a process that no longer runs, by this one, and something else.
	cmd := exec.Command(os.Args[0], "-test.run=^$")
	if err := cmd.Run(); err != nil {
		t.Fatal(err)
	}
	dead := filepath.Join(dir, spoolPrefix+strconv.Itoa(cmd.Process.Pid)+"-123.csv")
	mine := filepath.Join(dir, spoolPrefix+strconv.Itoa(os.Getpid())+"-456.csv")
	other := filepath.Join(dir, "notes.txt")
	for _, p := range []string{dead, mine, other} {
		if err := os.WriteFile(p, []byte("x"), 0o600); err != nil {
			t.Fatal(err)
		}
	}
	f := newFixture(t, func(o *Options) { o.TempDir = dir })
	if _, err := os.Stat(dead); !os.IsNotExist(err) {
		t.Errorf("the upload of a stopped process is still there: %v", err)
	}
	for _, p := range []string{mine, other} {
		if _, err := os.Stat(p); err != nil {
			t.Errorf("%s removed: %v", filepath.Base(p), err)
		}
		os.Remove(p)
	}

	pid := f.project("Clean", nil)
	f.hole(pid, "ZR001", 90, -60)
	path := "/v1/projects/" + itoa(pid) + "/imports/measurements"
	left := func(when string) {
		t.Helper()
		ents, _ := os.ReadDir(dir)
		for _, e := range ents {
			t.Errorf("%s: %s left in the temp dir", when, e.Name())
		}
	}
	good := bigCSV("ZR001", spoolMemory+1<<20)
	f.must(201, f.site, "POST", path, good, nil)
	left("after an import")
	if r := f.do(f.site, "POST", path, bigCSV("NOSUCH", spoolMemory+1<<20)); r.Code != 422 {
		t.Errorf("import of an unknown hole: status %d, want 422", r.Code)
	}
	left("after a refused import")
	code, _ := f.send(f.site, "POST", path, "text/csv", &cutReader{r: strings.NewReader(good), n: spoolMemory + 1<<19}, int64(len(good)))
	if code != 400 {
		t.Errorf("upload cut off: status %d, want 400", code)
	}
	left("after an upload cut off")
}

// Through HTTP: bad text is 422 naming the field, a hole shrunk above its
// data is 409 listing what is deeper.
func TestTextAndDepthRulesOverHTTP(t *testing.T) {
	f := newFixture(t)
	pid := f.project("Rules", nil)
	base := "/v1/projects/" + itoa(pid)
	r := f.must(422, f.site, "POST", base+"/holes", map[string]any{"name": "TM\u001b[31m1", "azimuth": 0, "dip": -60, "final_depth": 100}, nil)
	if p := r.problem(t); len(p.Errors) != 1 || p.Errors[0].Field != "name" {
		t.Errorf("hole name with ESC: %+v", p)
	}
	r = f.must(422, f.site, "PUT", base+"/types/BD", map[string]any{"description": "a\u0000b"}, nil)
	if p := r.problem(t); len(p.Errors) != 1 || p.Errors[0].Field != "description" {
		t.Errorf("description with NUL: %+v", p)
	}
	h := f.hole(pid, "ZR001", 90, -60)
	var m view
	f.must(201, f.site, "POST", base+"/measurements", map[string]any{"hole_id": h.ID, "depth": 300, "alpha": 30, "beta": 20, "type": "JN"}, &m)
	r = f.must(409, f.site, "POST", base+"/holes/"+itoa(h.ID)+"/runs", map[string]any{"from": 390, "to": 401}, nil)
	if p := r.problem(t); len(p.Errors) != 1 || p.Errors[0].Field != "to" {
		t.Errorf("run past the end: %+v", p)
	}
	in := map[string]any{"name": "ZR001", "easting": 1000, "northing": 2000, "elevation": 300, "azimuth": 90, "dip": -60, "final_depth": 250, "crs": "EPSG:32750"}
	r = f.must(409, f.site, "PUT", base+"/holes/"+itoa(h.ID), in, nil, "If-Match", etag(h.Version))
	if p := r.problem(t); len(p.Errors) != 1 || !strings.Contains(p.Errors[0].Detail, "measurement "+itoa(m.ID)+" at 300") {
		t.Errorf("shrink below a measurement: %+v", p)
	}
}
