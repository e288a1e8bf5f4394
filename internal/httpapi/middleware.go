package httpapi

import (
	"crypto/rand"
	"encoding/hex"
	"fmt"
	"log/slog"
	"net/http"
	"runtime/debug"
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
		c.Next()
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
		if len(c.Errors) > 0 {
			err := c.Errors.Last().Err
			if status >= 500 {
				level = slog.LevelError
				attrs = append(attrs, slog.String("error", err.Error()))
			} else {
				level = slog.LevelWarn
				attrs = append(attrs, slog.String("error", domain.Public(err)))
				if p := problemFor(err, ""); p.Detail != "" {
					attrs[len(attrs)-1] = slog.String("error", p.Detail)
				}
			}
		} else if status >= 500 {
			level = slog.LevelError
		}
		log.LogAttrs(c.Request.Context(), level, "http request", attrs...)
	}
}

// limitBody caps the request body at n bytes; reading past it fails with an
// *http.MaxBytesError, which problemFor maps to 413.
func limitBody(c *gin.Context, n int64) {
	if c.Request.ContentLength > n {
		fail(c, errTooLarge(n))
		return
	}
	if c.Request.Body != nil {
		c.Request.Body = http.MaxBytesReader(c.Writer, c.Request.Body, n)
	}
}

func describe(v any) string { return fmt.Sprint(v) }
