// Package httpapi is corvane's HTTP edge: one route table, thin handlers
// (decode, call one service method, render), problem+json errors, request size
// limits, pagination, ETag/If-Match on edits, bearer-token authentication,
// Prometheus metrics, health endpoints and structured request logs.
//
// httpapi is the only package that imports gin. It holds no business rules:
// authorisation by role, validation and derived values are the service's.
package httpapi

import (
	"context"
	"log/slog"
	"net/http"
	"os"
	"runtime"
	"time"

	"github.com/gin-gonic/gin"
	"github.com/prometheus/client_golang/prometheus"
	"github.com/prometheus/client_golang/prometheus/promhttp"

	"corvane/internal/config"
	"corvane/internal/domain"
)

// Options configures a [Server].
type Options struct {
	// Service holds the use cases. Required.
	Service Service
	// Logger receives one line per request. Nil discards.
	Logger *slog.Logger
	// Limits: zero values take the config package defaults.
	MaxBodyBytes    int64
	MaxImportBytes  int64
	DefaultPageSize int
	MaxPageSize     int
	// MaxHeavy bounds the expensive requests served at once (see
	// config.Config.MaxHeavy); 0 means twice the CPUs.
	MaxHeavy int
	// TempDir holds uploads too large to keep in memory while they are
	// read; "" means os.TempDir(). New removes the upload files that
	// processes no longer running left there.
	TempDir string
	// Web, when set, serves every path outside /v1, /healthz, /readyz and
	// /metrics (the web page assets). Nil answers those paths with 404.
	Web http.Handler
	// Registry receives the HTTP metrics and is served at /metrics. Nil makes
	// a fresh registry.
	Registry *prometheus.Registry
}

// Server is the HTTP handler of the service. It is safe for concurrent use.
type Server struct {
	opt     Options
	engine  *gin.Engine
	metrics *metrics
	log     *slog.Logger
	slots   chan struct{} // one token per expensive request running
	// createTemp makes an upload file in a directory (tests replace it).
	createTemp func(dir string) (spoolFile, error)
}

// New builds the server and its route table.
func New(opt Options) *Server {
	if opt.Logger == nil {
		opt.Logger = slog.New(slog.DiscardHandler)
	}
	if opt.MaxBodyBytes <= 0 {
		opt.MaxBodyBytes = config.DefaultMaxBodyBytes
	}
	if opt.MaxImportBytes <= 0 {
		opt.MaxImportBytes = config.DefaultMaxImportBytes
	}
	if opt.MaxPageSize <= 0 {
		opt.MaxPageSize = config.DefaultMaxPageSize
	}
	opt.MaxPageSize = min(opt.MaxPageSize, domain.MaxLimit) // the stores' own cap
	if opt.DefaultPageSize <= 0 || opt.DefaultPageSize > opt.MaxPageSize {
		opt.DefaultPageSize = min(config.DefaultPageSize, opt.MaxPageSize)
	}
	if opt.MaxHeavy <= 0 {
		opt.MaxHeavy = 2 * runtime.GOMAXPROCS(0)
	}
	if opt.TempDir == "" {
		opt.TempDir = os.TempDir()
	}
	if opt.Registry == nil {
		opt.Registry = prometheus.NewRegistry()
	}
	gin.SetMode(gin.ReleaseMode)
	e := gin.New()
	e.HandleMethodNotAllowed = true
	e.RedirectTrailingSlash = false
	e.RedirectFixedPath = false
	e.ContextWithFallback = true
	// The client address in logs is the peer's: X-Forwarded-For is not
	// trusted, since anyone can send it.
	_ = e.SetTrustedProxies(nil)
	s := &Server{opt: opt, engine: e, metrics: newMetrics(opt.Registry), log: opt.Logger,
		slots: make(chan struct{}, opt.MaxHeavy), createTemp: createSpoolFile}
	if n, err := cleanSpool(opt.TempDir); err != nil {
		s.log.Warn("temp dir for uploads not readable", "error", err)
	} else if n > 0 {
		s.log.Info("removed uploads left by stopped processes", "files", n)
	}
	e.Use(requestID, s.metrics.middleware, accessLog(s.log), recoverer, checkQuery)
	s.routes()
	return s
}

// ServeHTTP serves one request.
func (s *Server) ServeHTTP(w http.ResponseWriter, r *http.Request) { s.engine.ServeHTTP(w, r) }

// Route is one entry of the live route table.
type Route struct{ Method, Path string }

// Routes lists the live routes with gin's path templates (":name" parameters).
func (s *Server) Routes() []Route {
	var rs []Route
	for _, r := range s.engine.Routes() {
		rs = append(rs, Route{r.Method, r.Path})
	}
	return rs
}

func (s *Server) healthz(c *gin.Context) {
	c.JSON(http.StatusOK, gin.H{"status": "ok"})
}

func (s *Server) readyz(c *gin.Context) {
	ctx, cancel := context.WithTimeout(c.Request.Context(), 3*time.Second)
	defer cancel()
	if err := s.opt.Service.Ping(ctx); err != nil {
		_ = c.Error(err)
		c.JSON(http.StatusServiceUnavailable, gin.H{"status": "unavailable", "detail": "store not reachable"})
		return
	}
	c.JSON(http.StatusOK, gin.H{"status": "ok"})
}

func (s *Server) metricsHandler() gin.HandlerFunc {
	h := promhttp.HandlerFor(s.opt.Registry, promhttp.HandlerOpts{})
	return func(c *gin.Context) { h.ServeHTTP(c.Writer, c.Request) }
}

// noRoute sends unknown /v1 paths a problem and every other path to the web
// handler when there is one.
func (s *Server) noRoute(c *gin.Context) {
	p := c.Request.URL.Path
	if s.opt.Web != nil && p != "/v1" && !hasPrefix(p, "/v1/") {
		c.Writer.WriteHeader(http.StatusOK) // gin presets 404 for unmatched routes
		s.opt.Web.ServeHTTP(c.Writer, c.Request)
		return
	}
	fail(c, errNoRoute(c.Request.Method, p))
}

func (s *Server) noMethod(c *gin.Context) {
	fail(c, errMethod(c.Request.Method, c.Request.URL.Path))
}

func hasPrefix(s, p string) bool { return len(s) >= len(p) && s[:len(p)] == p }
