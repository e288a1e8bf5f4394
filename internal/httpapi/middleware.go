package httpapi

import (
	"crypto/rand"
	"encoding/hex"
	"fmt"
	"log/slog"
	"net/http"
	"net/url"
	"runtime/debug"
	"strings"
	"time"

	"github.com/gin-gonic/gin"

	"corvane/internal/domain"
)

const requestIDHeader = "X-Request-Id"

// requestID takes the caller's X-Request-Id when it is short and printable,
// else makes one, and echoes it on the response.
func requestID(c *gin.Context) {
	id := c.GetHeader(requestIDHeader)
	if id == "" || len(id) > 64 || !printable(id) {
		var b [8]byte
		_, _ = rand.Read(b[:])
		id = hex.EncodeToString(b[:])
	}
	c.Set("request_id", id)
	c.Header(requestIDHeader, id)
	c.Next()
}

func printable(s string) bool {
	for i := 0; i < len(s); i++ {
		if s[i] < 0x21 || s[i] > 0x7e {
			return false
		}
	}
	return true
}

// checkQuery refuses a query string the standard parser would read only in
// part: a ";" between parameters (Go's parser drops such a pair silently, so
// "min_depth=249;x=1" would run without its filter) or a malformed percent
// escape. A literal ";" in a value is sent as %3B. Only the API (/v1) reads
// parameters, so only its paths are checked.
func checkQuery(c *gin.Context) {
	if p := c.Request.URL.Path; p != "/v1" && !hasPrefix(p, "/v1/") {
		c.Next() // health, metrics and the page read no parameters
		return
	}
	raw := c.Request.URL.RawQuery
	if i := strings.IndexByte(raw, ';'); i >= 0 {
		fail(c, errBadRequest(fmt.Sprintf(`query string: ";" at byte %d: separate parameters with "&" (send a literal ";" as %%3B)`, i+1)))
		return
	}
	if _, err := url.ParseQuery(raw); err != nil {
		fail(c, errBadRequest("query string: "+err.Error()))
		return
	}
	c.Next()
}

// recoverer turns a panic in a handler into a 500 problem; the request log
// then records it with the stack.
func recoverer(c *gin.Context) {
	defer func() {
		if r := recover(); r != nil {
			if r == http.ErrAbortHandler {
				panic(r)
			}
			err := domain.Errorf(domain.Internal, "panic: %v\n%s", r, debug.Stack())
			if !c.Writer.Written() {
				fail(c, err)
			} else {
				_ = c.Error(err)
				c.Abort()
			}
		}
	}()
	c.Next()
}

// accessLog writes one structured line per request. It is the only place a
// failed request is logged: 5xx at error level with the internal cause, other
// failures at warn level with the client-facing reason.
func accessLog(log *slog.Logger) gin.HandlerFunc {
	return func(c *gin.Context) {
		start := time.Now()
		// Deferred, so that a request a handler aborts part-way (a stream cut
		// with http.ErrAbortHandler) is logged too.
		defer logRequest(log, c, start)
		c.Next()
	}
}

// logRequest writes the one line of a request. A failure is logged with the
// reason the client was given (warn) or, for server errors and streams cut
// part-way, with the internal cause (error).
func logRequest(log *slog.Logger, c *gin.Context, start time.Time) {
	status := c.Writer.Status()
	attrs := []slog.Attr{
		slog.String("method", c.Request.Method),
		slog.String("path", c.Request.URL.Path),
		slog.String("route", routeLabel(c)),
		slog.Int("status", status),
		slog.Duration("duration", time.Since(start)),
		slog.Int("bytes", c.Writer.Size()),
		slog.String("request_id", c.GetString("request_id")),
		slog.String("remote", c.ClientIP()),
	}
	if who := c.GetString("principal"); who != "" {
		attrs = append(attrs, slog.String("token", who))
	}
	level := slog.LevelInfo
	switch {
	case len(c.Errors) > 0 && (status >= 500 || status < 400):
		level = slog.LevelError
		attrs = append(attrs, slog.String("error", c.Errors.Last().Err.Error()))
	case len(c.Errors) > 0:
		level = slog.LevelWarn
		attrs = append(attrs, slog.String("error", problemFor(c.Errors.Last().Err, "").Detail))
	case status >= 500:
		level = slog.LevelError
	}
	log.LogAttrs(c.Request.Context(), level, "http request", attrs...)
}

// limitBody caps the request body at n bytes; reading past it fails with an
// *http.MaxBytesError, which problemFor maps to 413. A declared length over
// the limit is refused at once.
func limitBody(c *gin.Context, n int64) {
	if c.Request.ContentLength > n {
		fail(c, errTooLarge(n))
		return
	}
	if c.Request.Body != nil {
		c.Request.Body = http.MaxBytesReader(c.Writer, c.Request.Body, n)
	}
}
