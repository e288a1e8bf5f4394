package web

import (
	"io"
	"io/fs"
	"net/http"
	"net/http/httptest"
	"regexp"
	"strings"
	"testing"
)

func get(t *testing.T, h http.Handler, method, path string) *http.Response {
	t.Helper()
	req := httptest.NewRequest(method, path, nil)
	rec := httptest.NewRecorder()
	h.ServeHTTP(rec, req)
	return rec.Result()
}

func TestHandlerServesPageAndAssets(t *testing.T) {
	h := Handler()
	cases := []struct {
		path, wantType, wantBody string
	}{
		{"/", "text/html", `<script type="module" src="/assets/js/main.js">`},
		{"/index.html", "text/html", "<main id=\"main\""},
		{"/assets/app.css", "text/css", "--ink"},
		// JavaScript modules must be served with a JavaScript MIME type or the
		// browser refuses them (HTML Living Standard, "fetch a single module
		// script").
		{"/assets/js/main.js", "text/javascript", "import"},
		{"/assets/js/api.js", "text/javascript", "Bearer"},
	}
	for _, c := range cases {
		res := get(t, h, http.MethodGet, c.path)
		body, _ := io.ReadAll(res.Body)
		if res.StatusCode != http.StatusOK {
			t.Errorf("GET %s: status %d", c.path, res.StatusCode)
			continue
		}
		if ct := res.Header.Get("Content-Type"); !strings.HasPrefix(ct, c.wantType) {
			t.Errorf("GET %s: Content-Type %q, want %s", c.path, ct, c.wantType)
		}
		if !strings.Contains(string(body), c.wantBody) {
			t.Errorf("GET %s: body lacks %q", c.path, c.wantBody)
		}
		if csp := res.Header.Get("Content-Security-Policy"); !strings.Contains(csp, "script-src 'self'") || !strings.Contains(csp, "connect-src 'self'") {
			t.Errorf("GET %s: Content-Security-Policy %q does not keep the page to its origin", c.path, csp)
		}
		if res.Header.Get("X-Content-Type-Options") != "nosniff" {
			t.Errorf("GET %s: no nosniff", c.path)
		}
	}
}

func TestHandlerRefuses(t *testing.T) {
	h := Handler()
	for _, c := range []struct {
		method, path string
		want         int
	}{
		{http.MethodGet, "/nope", http.StatusNotFound},
		{http.MethodGet, "/assets/", http.StatusNotFound},
		{http.MethodGet, "/assets/js/", http.StatusNotFound},
		{http.MethodGet, "/assets/missing.js", http.StatusNotFound},
		{http.MethodGet, "/assets/../web.go", http.StatusNotFound},
		{http.MethodGet, "/assets/index.html", http.StatusNotFound},
		{http.MethodPost, "/", http.StatusMethodNotAllowed},
		{http.MethodDelete, "/assets/app.css", http.StatusMethodNotAllowed},
	} {
		res := get(t, h, c.method, c.path)
		if res.StatusCode != c.want {
			t.Errorf("%s %s: status %d, want %d", c.method, c.path, res.StatusCode, c.want)
		}
	}
	if res := get(t, h, http.MethodHead, "/"); res.StatusCode != http.StatusOK {
		t.Errorf("HEAD /: status %d", res.StatusCode)
	}
}

// TestAssetsStayLocal checks that no asset reaches beyond the server: no
// absolute http(s) URL in a src, href, import or fetch, and every module
// import names a file that is embedded.
func TestAssetsStayLocal(t *testing.T) {
	files := Assets()
	external := regexp.MustCompile(`(?i)(src|href)\s*=\s*["']https?://|import[^;\n]*["']https?://|fetch\(\s*["']https?://|@import\s+url\(["']?https?://`)
	imports := regexp.MustCompile(`(?m)^import\s+[^"']*["'](\./[^"']+)["']`)
	n := 0
	err := fs.WalkDir(files, ".", func(p string, d fs.DirEntry, err error) error {
		if err != nil || d.IsDir() {
			return err
		}
		b, err := fs.ReadFile(files, p)
		if err != nil {
			return err
		}
		n++
		if m := external.Find(b); m != nil {
			t.Errorf("%s reaches outside the server: %s", p, m)
		}
		if strings.HasSuffix(p, ".js") {
			for _, m := range imports.FindAllSubmatch(b, -1) {
				target := "js/" + strings.TrimPrefix(string(m[1]), "./")
				if _, err := fs.Stat(files, target); err != nil {
					t.Errorf("%s imports %s, which is not embedded", p, m[1])
				}
			}
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	if n < 5 {
		t.Fatalf("only %d embedded files", n)
	}
}

// BenchmarkHandler serves the page and one module, as a browser's first
// visit does.
func BenchmarkHandler(b *testing.B) {
	h := Handler()
	for _, c := range []struct{ name, path string }{{"index", "/"}, {"module", "/assets/js/logging.js"}} {
		path := c.path
		b.Run(c.name, func(b *testing.B) {
			req := httptest.NewRequest(http.MethodGet, path, nil)
			b.ReportAllocs()
			for b.Loop() {
				rec := httptest.NewRecorder()
				h.ServeHTTP(rec, req)
				if rec.Code != http.StatusOK {
					b.Fatal(rec.Code)
				}
			}
		})
	}
}
