package httpapi

import (
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"mime"
	"net/http"
	"strconv"
	"strings"

	"github.com/gin-gonic/gin"

	"corvane/internal/domain"
)

// etag renders a row version as a strong entity tag, e.g. "3".
func etag(version int64) string { return `"` + strconv.FormatInt(version, 10) + `"` }

// setETag sets the ETag header from a row version.
func setETag(c *gin.Context, version int64) { c.Header("ETag", etag(version)) }

// respondVersioned is [respond] for a stored row: on success it sets the ETag
// from version before the body. Callers pass v.Version, which Go evaluates
// before err is looked at, so v must be a value, not a pointer (the service
// returns rows by value).
func respondVersioned(c *gin.Context, status int, v any, version int64, err error) {
	if err != nil {
		fail(c, err)
		return
	}
	setETag(c, version)
	c.JSON(status, v)
}

// ifMatch returns the row version the caller last saw, from If-Match. A
// missing header is 428; a header that is not one of our ETags is 412, since
// it cannot match the current version. A weak tag (W/"3") is taken as strong:
// our tags are only ever version numbers.
func ifMatch(c *gin.Context) (int64, error) {
	h := strings.TrimSpace(c.GetHeader("If-Match"))
	if h == "" {
		return 0, errPreconditionRequired()
	}
	if h == "*" {
		return 0, &edgeError{http.StatusPreconditionRequired, "precondition-required",
			`If-Match: * cannot protect an edit; send the ETag of the version you last read`, nil}
	}
	if strings.Contains(h, ",") {
		return 0, errBadRequest("If-Match: send exactly one ETag")
	}
	h = strings.TrimPrefix(h, "W/")
	if len(h) < 3 || h[0] != '"' || h[len(h)-1] != '"' {
		return 0, domain.Errorf(domain.PreconditionFailed, "If-Match %s is not an ETag of this resource", h)
	}
	v, err := strconv.ParseInt(h[1:len(h)-1], 10, 64)
	if err != nil || v < 1 {
		return 0, domain.Errorf(domain.PreconditionFailed, "If-Match %s is not an ETag of this resource", h)
	}
	return v, nil
}

// decodeJSON reads a JSON body into v: Content-Type must be JSON, unknown
// fields are refused, the body is capped at the server's limit and
// maxBodyElements array elements.
func (s *Server) decodeJSON(c *gin.Context, v any) error {
	return s.decodeJSONLimit(c, v, s.opt.MaxBodyBytes, maxBodyElements)
}

// decodeJSONLimit is decodeJSON with a body limit of n bytes and elems array
// elements (see elementCounter).
func (s *Server) decodeJSONLimit(c *gin.Context, v any, n int64, elems int) error {
	if ct := c.GetHeader("Content-Type"); ct != "" {
		mt, _, err := mime.ParseMediaType(ct)
		if err != nil || (mt != "application/json" && !strings.HasSuffix(mt, "+json")) {
			return errUnsupportedMedia("application/json")
		}
	}
	if c.Request.ContentLength > n {
		return errTooLarge(n)
	}
	if c.Request.Body == nil {
		return errBadRequest("request body: empty; a JSON object is required")
	}
	c.Request.Body = http.MaxBytesReader(c.Writer, c.Request.Body, n)
	dec := json.NewDecoder(&elementCounter{r: c.Request.Body, max: elems})
	dec.DisallowUnknownFields()
	if err := dec.Decode(v); err != nil {
		return jsonError(err)
	}
	if dec.More() {
		return errBadRequest("request body: more than one JSON value")
	}
	if _, err := dec.Token(); err != io.EOF {
		var mbe *http.MaxBytesError
		var ee *edgeError
		if errors.As(err, &mbe) || errors.As(err, &ee) {
			return err
		}
		return errBadRequest("request body: trailing data after the JSON value")
	}
	return nil
}

// jsonError turns a decoding failure into a client error naming the field
// and, for syntax errors, the byte offset.
func jsonError(err error) error {
	var mbe *http.MaxBytesError
	var ee *edgeError
	var se *json.SyntaxError
	var te *json.UnmarshalTypeError
	switch {
	case errors.As(err, &mbe), errors.As(err, &ee):
		return err
	case errors.Is(err, io.EOF):
		return errBadRequest("request body: empty; a JSON object is required")
	case errors.Is(err, io.ErrUnexpectedEOF):
		return errBadRequest("request body: JSON ends too early")
	case errors.As(err, &se):
		return errBadRequest(fmt.Sprintf("request body: malformed JSON at byte %d: %v", se.Offset, se))
	case errors.As(err, &te):
		f := te.Field
		if f == "" {
			f = "(body)"
		}
		e := domain.FieldErr(f, "field %q: want %s, got JSON %s", f, te.Type, te.Value)
		return e
	case strings.HasPrefix(err.Error(), "json: unknown field "):
		f := strings.Trim(strings.TrimPrefix(err.Error(), "json: unknown field "), `"`)
		return domain.FieldErr(f, "unknown field %q", f)
	}
	return errBadRequest("request body: " + err.Error())
}

// pathID parses the named path parameter as a positive integer ID.
func pathID(c *gin.Context, name string) (int64, error) {
	s := c.Param(name)
	id, err := strconv.ParseInt(s, 10, 64)
	if err != nil || id < 1 {
		return 0, domain.Errorf(domain.NotFound, "%s %q: no such %s (IDs are positive integers)", name, s, name)
	}
	return id, nil
}

// page reads ?limit= and ?after= (keyset pagination: after is the last ID of
// the previous page).
func (s *Server) page(c *gin.Context) (domain.Page, error) {
	p := domain.Page{Limit: s.opt.DefaultPageSize}
	if v := c.Query("limit"); v != "" {
		n, err := strconv.Atoi(v)
		if err != nil || n < 1 || n > s.opt.MaxPageSize {
			return p, domain.FieldErr("limit", "query parameter limit=%q: want an integer in 1..%d", v, s.opt.MaxPageSize)
		}
		p.Limit = n
	}
	if v := c.Query("after"); v != "" {
		n, err := strconv.ParseInt(v, 10, 64)
		if err != nil || n < 0 {
			return p, domain.FieldErr("after", "query parameter after=%q: want the last id of the previous page", v)
		}
		p.After = n
	}
	return p, nil
}

// listBody is the envelope of every list response. NextAfter is the ?after=
// value for the next page, or null on the last page.
type listBody[T any] struct {
	Items     []T    `json:"items"`
	NextAfter *int64 `json:"next_after"`
}
