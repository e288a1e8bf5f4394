package httpapi

import (
	"bytes"
	"context"
	"encoding/json"
	"io"
	"log/slog"
	"net/http"
	"net/http/httptest"
	"path/filepath"
	"strings"
	"sync"
	"testing"

	"corvane/internal/domain"
	"corvane/internal/service"
	"corvane/internal/store/sqlite"
)

// fixture is the real server over the real service on a fresh SQLite file,
// with every exchange checked against api/openapi.yaml.
type fixture struct {
	t     testing.TB
	srv   *Server
	svc   *service.Service
	h     http.Handler
	check *checker
	site  string // a site admin token (every project)
	logs  *lockedBuffer
}

type lockedBuffer struct {
	mu sync.Mutex
	b  bytes.Buffer
}

func (l *lockedBuffer) Write(p []byte) (int, error) {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.b.Write(p)
}

func (l *lockedBuffer) String() string {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.b.String()
}

func newFixture(t testing.TB, opts ...func(*Options)) *fixture {
	t.Helper()
	ctx := context.Background()
	path := filepath.Join(t.TempDir(), "corvane.db")
	if err := sqlite.Migrate(path, 0); err != nil {
		t.Fatal(err)
	}
	st, err := sqlite.Open(ctx, path)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { st.Close() })
	svc := service.New(st, nil)
	secret, _, err := svc.CreateToken(service.WithActor(ctx, service.System), domain.AllProjects, domain.RoleAdmin, "site admin")
	if err != nil {
		t.Fatal(err)
	}
	logs := &lockedBuffer{}
	o := Options{Service: svc, Logger: slog.New(slog.NewJSONHandler(logs, nil))}
	for _, f := range opts {
		f(&o)
	}
	srv := New(o)
	f := &fixture{t: t, srv: srv, svc: svc, site: secret, logs: logs}
	f.check = newChecker(t, srv)
	f.h = f.check
	return f
}

func newTestServer(t *testing.T) *Server { return newFixture(t).srv }

// reply is one response.
type reply struct {
	Code   int
	Header http.Header
	Body   []byte
}

func (r reply) json(t testing.TB, v any) {
	t.Helper()
	if err := json.Unmarshal(r.Body, v); err != nil {
		t.Fatalf("decoding %s: %v", r.Body, err)
	}
}

func (r reply) problem(t testing.TB) Problem {
	t.Helper()
	if ct := r.Header.Get("Content-Type"); ct != ProblemContentType {
		t.Fatalf("status %d with Content-Type %q, want %s: %s", r.Code, ct, ProblemContentType, r.Body)
	}
	var p Problem
	r.json(t, &p)
	if p.Status != r.Code {
		t.Errorf("problem status %d on a %d response", p.Status, r.Code)
	}
	return p
}

// do sends a request as token (empty: none). body is JSON unless it is a
// string (sent as text/csv). hdr is name, value pairs.
func (f *fixture) do(token, method, path string, body any, hdr ...string) reply {
	f.t.Helper()
	var r io.Reader
	ct := ""
	switch b := body.(type) {
	case nil:
	case string:
		r, ct = strings.NewReader(b), "text/csv"
	case []byte:
		r, ct = bytes.NewReader(b), "application/json"
	default:
		j, err := json.Marshal(b)
		if err != nil {
			f.t.Fatal(err)
		}
		r, ct = bytes.NewReader(j), "application/json"
	}
	req := httptest.NewRequest(method, path, r)
	if ct != "" {
		req.Header.Set("Content-Type", ct)
	}
	if token != "" {
		req.Header.Set("Authorization", "Bearer "+token)
	}
	for i := 0; i+1 < len(hdr); i += 2 {
		req.Header.Set(hdr[i], hdr[i+1])
	}
	w := httptest.NewRecorder()
	f.h.ServeHTTP(w, req)
	return reply{w.Code, w.Result().Header, w.Body.Bytes()}
}

// must sends a request and fails unless the status is want; out receives the
// decoded body when not nil.
func (f *fixture) must(want int, token, method, path string, body, out any, hdr ...string) reply {
	f.t.Helper()
	r := f.do(token, method, path, body, hdr...)
	if r.Code != want {
		f.t.Fatalf("%s %s: status %d, want %d: %s", method, path, r.Code, want, r.Body)
	}
	if out != nil {
		r.json(f.t, out)
	}
	return r
}

// token makes a token of role for project.
func (f *fixture) token(project int64, role domain.Role, name string) string {
	f.t.Helper()
	secret, _, err := f.svc.CreateToken(service.WithActor(context.Background(), service.System), project, role, name)
	if err != nil {
		f.t.Fatal(err)
	}
	return secret
}

// project creates a project with a vocabulary (JN joints, BD bedding, LN a
// lineation type) and returns its id.
func (f *fixture) project(name string, conventions map[string]any) int64 {
	f.t.Helper()
	in := map[string]any{"name": name}
	for k, v := range conventions {
		in[k] = v
	}
	var p domain.Project
	f.must(201, f.site, "POST", "/v1/projects", in, &p)
	for _, tc := range []struct{ code, kind string }{{"JN", "plane"}, {"BD", "plane"}, {"LN", "line"}} {
		f.must(201, f.site, "PUT", "/v1/projects/"+itoa(p.ID)+"/types/"+tc.code,
			map[string]string{"description": tc.code + " test type", "kind": tc.kind}, nil)
	}
	return p.ID
}

// hole creates a hole (collar) and returns it.
func (f *fixture) hole(project int64, name string, azimuth, dip float64) domain.Hole {
	f.t.Helper()
	var h domain.Hole
	f.must(201, f.site, "POST", "/v1/projects/"+itoa(project)+"/holes", map[string]any{
		"name": name, "easting": 1000, "northing": 2000, "elevation": 300,
		"azimuth": azimuth, "dip": dip, "final_depth": 400, "crs": "EPSG:32750",
	}, &h)
	return h
}
