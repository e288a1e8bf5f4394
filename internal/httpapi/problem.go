package httpapi

import (
	"encoding/json"
	"errors"
	"net/http"
	"strconv"

	"github.com/gin-gonic/gin"

	"corvane/internal/domain"
)

// ProblemContentType is the media type of every error response (RFC 9457).
const ProblemContentType = "application/problem+json"

// Problem is an RFC 9457 problem details object, with corvane's extensions:
// Kind names the error kind and Errors lists row-level problems (one per bad
// CSV row or field) with their locations.
type Problem struct {
	Type     string        `json:"type"`
	Title    string        `json:"title"`
	Status   int           `json:"status"`
	Detail   string        `json:"detail,omitempty"`
	Instance string        `json:"instance,omitempty"`
	Kind     string        `json:"kind"`
	Errors   []ProblemItem `json:"errors,omitempty"`
}

// ProblemItem is one located problem inside a [Problem].
type ProblemItem struct {
	Detail string `json:"detail"`
	File   string `json:"file,omitempty"`
	Line   int    `json:"line,omitempty"`
	Column string `json:"column,omitempty"`
	Field  string `json:"field,omitempty"`
}

// kindStatus is THE table from error kind to HTTP status and problem type.
// Every failed request goes through it.
var kindStatus = map[domain.Kind]struct {
	status int
	slug   string
}{
	domain.Internal:           {http.StatusInternalServerError, "internal"},
	domain.NotFound:           {http.StatusNotFound, "not-found"},
	domain.Invalid:            {http.StatusUnprocessableEntity, "invalid"},
	domain.Conflict:           {http.StatusConflict, "conflict"},
	domain.PreconditionFailed: {http.StatusPreconditionFailed, "precondition-failed"},
	domain.Unauthorized:       {http.StatusUnauthorized, "unauthorized"},
	domain.Forbidden:          {http.StatusForbidden, "forbidden"},
	domain.Unavailable:        {http.StatusServiceUnavailable, "unavailable"},
}

// Errors raised at the HTTP edge itself, before any service call. They are
// statuses the domain kinds do not cover; they go through problemFor too.
type edgeError struct {
	status int
	slug   string
	msg    string
	cause  error // for the log only; the client sees msg
}

func (e *edgeError) Error() string {
	if e.cause != nil {
		return e.msg + ": " + e.cause.Error()
	}
	return e.msg
}

func errBadRequest(msg string) error {
	return &edgeError{http.StatusBadRequest, "bad-request", msg, nil}
}
func errTooLarge(limit int64) error {
	return &edgeError{http.StatusRequestEntityTooLarge, "too-large",
		"request body larger than the limit of " + strconv.FormatInt(limit, 10) + " bytes", nil}
}
func errPreconditionRequired() error {
	return &edgeError{http.StatusPreconditionRequired, "precondition-required",
		`If-Match header required: send the ETag from your last read of this resource (e.g. If-Match: "3")`, nil}
}
func errUnsupportedMedia(want string) error {
	return &edgeError{http.StatusUnsupportedMediaType, "unsupported-media-type", "Content-Type must be " + want, nil}
}
func errNotAcceptable(msg string) error {
	return &edgeError{http.StatusNotAcceptable, "not-acceptable", msg, nil}
}
func errNoRoute(method, path string) error {
	return &edgeError{http.StatusNotFound, "not-found", "no route for " + method + " " + path, nil}
}
func errMethod(method, path string) error {
	return &edgeError{http.StatusMethodNotAllowed, "method-not-allowed", "method " + method + " not allowed on " + path, nil}
}

// problemFor builds the problem document for err.
func problemFor(err error, instance string) Problem {
	var ee *edgeError
	if errors.As(err, &ee) {
		return Problem{
			Type: "urn:corvane:problem:" + ee.slug, Title: http.StatusText(ee.status),
			Status: ee.status, Detail: ee.msg, Instance: instance, Kind: ee.slug,
		}
	}
	var mbe *http.MaxBytesError
	if errors.As(err, &mbe) {
		return problemFor(errTooLarge(mbe.Limit), instance)
	}
	k := domain.KindOf(err)
	ks, ok := kindStatus[k]
	if !ok {
		ks = kindStatus[domain.Internal]
	}
	p := Problem{
		Type:     "urn:corvane:problem:" + ks.slug,
		Title:    http.StatusText(ks.status),
		Status:   ks.status,
		Detail:   domain.Public(err),
		Instance: instance,
		Kind:     ks.slug,
	}
	var de *domain.Error
	if k != domain.Internal && errors.As(err, &de) {
		for _, sub := range de.Problems {
			if sub == nil {
				continue
			}
			p.Errors = append(p.Errors, ProblemItem{
				Detail: sub.Msg, File: sub.Loc.File, Line: sub.Loc.Line,
				Column: sub.Loc.Column, Field: sub.Loc.Field,
			})
		}
		if len(p.Errors) == 0 && !de.Loc.IsZero() {
			p.Errors = []ProblemItem{{
				Detail: de.Msg, File: de.Loc.File, Line: de.Loc.Line,
				Column: de.Loc.Column, Field: de.Loc.Field,
			}}
		}
	}
	return p
}

// RetryAfterSeconds is the Retry-After of a 503: the store is down or busy,
// and a client should wait this long before it tries again.
const RetryAfterSeconds = "2"

// fail renders err as problem+json and records it on the gin context so that
// the request log (the one place a failed request is logged) can show it.
func fail(c *gin.Context, err error) {
	p := problemFor(err, c.Request.URL.Path)
	_ = c.Error(err)
	c.Header("Content-Type", ProblemContentType)
	if p.Status == http.StatusUnauthorized {
		c.Header("WWW-Authenticate", `Bearer realm="corvane"`)
	}
	if p.Status == http.StatusServiceUnavailable && c.Writer.Header().Get("Retry-After") == "" {
		c.Header("Retry-After", RetryAfterSeconds)
	}
	body, _ := json.Marshal(p)
	c.Status(p.Status)
	_, _ = c.Writer.Write(body)
	c.Abort()
}

// respond ends a handler: the problem for err when there is one, else v as
// JSON with status.
func respond(c *gin.Context, status int, v any, err error) {
	if err != nil {
		fail(c, err)
		return
	}
	c.JSON(status, v)
}
