// Package web serves corvane's web page: plain HTML, CSS and JavaScript
// modules embedded in the binary, so the page needs no build step and no
// network beyond the corvane server that serves it.
//
// The page talks only to the /v1 API of the same server, with the API token
// the user types on its sign-in screen (kept in the browser's sessionStorage
// for the session only). It holds no business rules: every derived value it
// shows comes from the API.
//
// The package imports no HTTP framework; [Handler] is a plain http.Handler
// the HTTP edge mounts for every path outside the API.
package web

import (
	"bytes"
	"embed"
	"io/fs"
	"net/http"
	"path"
	"strings"
	"time"
)

//go:embed assets
var assets embed.FS

// Assets returns the embedded page files, rooted at the directory that holds
// index.html.
func Assets() fs.FS {
	sub, err := fs.Sub(assets, "assets")
	if err != nil {
		panic("web: embedded assets missing: " + err.Error()) // programmer error
	}
	return sub
}

// contentSecurityPolicy keeps the page to its own origin: scripts and styles
// only from the embedded files, images from the page itself (SVG returned by
// the API is shown through blob: URLs), requests only to the same server.
const contentSecurityPolicy = "default-src 'none'; script-src 'self'; style-src 'self'; " +
	"img-src 'self' blob: data:; connect-src 'self'; font-src 'self'; base-uri 'none'; " +
	"form-action 'none'; frame-ancestors 'none'"

// Handler returns the handler of the web page. It serves index.html at "/"
// and "/index.html" and the files under "/assets/"; every other path, and
// every method but GET and HEAD, is answered with a plain error. The
// handler is safe for concurrent use.
func Handler() http.Handler {
	files := Assets()
	fileServer := http.FileServerFS(files)
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		if r.Method != http.MethodGet && r.Method != http.MethodHead {
			w.Header().Set("Allow", "GET, HEAD")
			http.Error(w, "method not allowed", http.StatusMethodNotAllowed)
			return
		}
		p := path.Clean("/" + r.URL.Path)
		h := w.Header()
		h.Set("Content-Security-Policy", contentSecurityPolicy)
		h.Set("X-Content-Type-Options", "nosniff")
		h.Set("Referrer-Policy", "no-referrer")
		// The assets change with the binary; revalidate rather than cache.
		h.Set("Cache-Control", "no-cache")
		switch {
		case p == "/" || p == "/index.html":
			// Not http.ServeFileFS: it redirects /index.html to /.
			b, err := fs.ReadFile(files, "index.html")
			if err != nil {
				http.Error(w, "page missing", http.StatusInternalServerError)
				return
			}
			http.ServeContent(w, r, "index.html", time.Time{}, bytes.NewReader(b))
		case strings.HasPrefix(p, "/assets/"):
			name := strings.TrimPrefix(p, "/assets/")
			if name == "" || name == "index.html" || strings.HasSuffix(r.URL.Path, "/") {
				http.NotFound(w, r)
				return
			}
			if st, err := fs.Stat(files, name); err != nil || st.IsDir() {
				http.NotFound(w, r)
				return
			}
			r2 := r.Clone(r.Context())
			r2.URL.Path = "/" + name
			fileServer.ServeHTTP(w, r2)
		default:
			http.NotFound(w, r)
		}
	})
}
