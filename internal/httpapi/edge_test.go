package httpapi

import (
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"net/http"
	"net/http/httptest"
	"strings"
	"testing"

	"github.com/gin-gonic/gin"
	"github.com/google/go-cmp/cmp"

	"corvane/internal/domain"
)

// TestKindStatus checks the one table from error kinds to HTTP statuses
// against the meanings RFC 9110 section 15 gives the codes (404 Not Found,
// 409 Conflict, 412 Precondition Failed, 401/403) and RFC 4918 section 11.2
// for 422 (well-formed but semantically wrong content).
func TestKindStatus(t *testing.T) {
	for _, tc := range []struct {
		err  error
		want int
	}{
		{domain.Errorf(domain.NotFound, "hole 9: no such hole"), 404},
		{domain.Errorf(domain.Invalid, "alpha must be in [0, 90]"), 422},
		{domain.Errorf(domain.Conflict, "hole name taken"), 409},
		{domain.Errorf(domain.PreconditionFailed, "version moved on"), 412},
		{domain.Errorf(domain.Unauthorized, "unknown token"), 401},
		{domain.Errorf(domain.Forbidden, "role log needed"), 403},
		{errors.New("disk on fire"), 500},
		{fmt.Errorf("wrapped: %w", domain.Errorf(domain.NotFound, "x")), 404},
		{errPreconditionRequired(), 428}, // RFC 6585 section 3
		{errTooLarge(10), 413},
		{&http.MaxBytesError{Limit: 5}, 413},
	} {
		p := problemFor(tc.err, "/v1/x")
		if p.Status != tc.want {
			t.Errorf("%v: status %d, want %d", tc.err, p.Status, tc.want)
		}
		if p.Title != http.StatusText(tc.want) || !strings.HasPrefix(p.Type, "urn:corvane:problem:") {
			t.Errorf("%v: title %q type %q", tc.err, p.Title, p.Type)
		}
	}
	// Internal causes never reach the client.
	if p := problemFor(errors.New("password=hunter2 at db:5432"), ""); strings.Contains(p.Detail, "hunter2") {
		t.Errorf("internal detail leaked: %q", p.Detail)
	}
	// Every kind has an entry.
	for k := domain.Internal; k <= domain.Forbidden; k++ {
		if _, ok := kindStatus[k]; !ok {
			t.Errorf("kind %v missing from kindStatus", k)
		}
	}
}

func TestProblemListsRowErrors(t *testing.T) {
	e := domain.Errorf(domain.Invalid, "2 bad rows")
	e.Problems = []*domain.Error{
		domain.Errorf(domain.Invalid, "alpha 95 not in [0, 90]").At(domain.Location{File: "s.csv", Line: 3, Column: "alpha"}),
		domain.Errorf(domain.Invalid, "unknown hole").At(domain.Location{File: "s.csv", Line: 7, Column: "hole_id"}),
	}
	p := problemFor(e, "/v1/projects/1/imports/measurements")
	want := []ProblemItem{
		{Detail: "alpha 95 not in [0, 90]", File: "s.csv", Line: 3, Column: "alpha"},
		{Detail: "unknown hole", File: "s.csv", Line: 7, Column: "hole_id"},
	}
	if d := cmp.Diff(want, p.Errors); d != "" {
		t.Errorf("errors (-want +got):\n%s", d)
	}
	f := domain.FieldErr("dip", "dip must be in [-90, 90], got 95")
	if p := problemFor(f, ""); len(p.Errors) != 1 || p.Errors[0].Field != "dip" {
		t.Errorf("field error not located: %+v", p)
	}
}

func TestIfMatch(t *testing.T) {
	gin.SetMode(gin.ReleaseMode)
	for _, tc := range []struct {
		header string
		want   int64
		status int // 0 when accepted
	}{
		{`"3"`, 3, 0},
		{`W/"12"`, 12, 0},
		{``, 0, 428},
		{`*`, 0, 428},
		{`"abc"`, 0, 412},
		{`3`, 0, 412},
		{`"0"`, 0, 412},
		{`"1", "2"`, 0, 400},
	} {
		w := httptest.NewRecorder()
		c, _ := gin.CreateTestContext(w)
		c.Request = httptest.NewRequest("PUT", "/", nil)
		if tc.header != "" {
			c.Request.Header.Set("If-Match", tc.header)
		}
		v, err := ifMatch(c)
		if tc.status == 0 {
			if err != nil || v != tc.want {
				t.Errorf("If-Match %s: %d, %v; want %d", tc.header, v, err, tc.want)
			}
			continue
		}
		if err == nil {
			t.Errorf("If-Match %s: accepted as %d", tc.header, v)
			continue
		}
		if got := problemFor(err, "").Status; got != tc.status {
			t.Errorf("If-Match %s: status %d, want %d", tc.header, got, tc.status)
		}
	}
}

func TestJSONErrorsNameTheField(t *testing.T) {
	type body struct {
		Dip float64 `json:"dip"`
	}
	for _, tc := range []struct {
		in, want string
		status   int
	}{
		{`{"dip": "steep"}`, `"dip"`, 422},
		{`{"dip": 1, "dipp": 2}`, `"dipp"`, 422},
		{`{"dip": `, "ends too early", 400},
		{`{"dip": 1} {}`, "more than one", 400},
		{``, "empty", 400},
		{`{"dip" 1}`, "byte", 400},
	} {
		s := &Server{opt: Options{MaxBodyBytes: 1 << 10}}
		w := httptest.NewRecorder()
		c, _ := gin.CreateTestContext(w)
		c.Request = httptest.NewRequest("POST", "/", strings.NewReader(tc.in))
		c.Request.Header.Set("Content-Type", "application/json")
		var b body
		err := s.decodeJSON(c, &b)
		if err == nil {
			t.Errorf("%s: accepted", tc.in)
			continue
		}
		p := problemFor(err, "")
		if p.Status != tc.status || !strings.Contains(p.Detail, tc.want) {
			t.Errorf("%s: %d %q, want %d containing %q", tc.in, p.Status, p.Detail, tc.status, tc.want)
		}
	}
	// Over the size limit: 413.
	s := &Server{opt: Options{MaxBodyBytes: 16}}
	w := httptest.NewRecorder()
	c, _ := gin.CreateTestContext(w)
	c.Request = httptest.NewRequest("POST", "/", strings.NewReader(`{"dip": 1.00000000000000000000000001}`))
	c.Request.ContentLength = -1 // as with a chunked upload
	var b body
	if err := s.decodeJSON(c, &b); problemFor(err, "").Status != 413 {
		t.Errorf("oversized body: %v", err)
	}
	// Wrong media type: 415.
	c, _ = gin.CreateTestContext(httptest.NewRecorder())
	c.Request = httptest.NewRequest("POST", "/", strings.NewReader(`{}`))
	c.Request.Header.Set("Content-Type", "text/csv")
	if err := s.decodeJSON(c, &b); problemFor(err, "").Status != 415 {
		t.Errorf("csv body to a JSON route: %v", err)
	}
	_ = json.Valid
}

// TestStreamCutIsVisible: a streamed response that fails after its first
// bytes must not look complete to the client, and is logged as an error.
func TestStreamCutIsVisible(t *testing.T) {
	f := newFixture(t)
	f.srv.engine.GET("/stream-test/:n", func(c *gin.Context) {
		stream(c, "text/csv", func(w *trackingWriter) error {
			if c.Param("n") == "early" {
				return domain.Errorf(domain.Invalid, "bad filter")
			}
			_, _ = w.Write([]byte("a,b\n1,2\n"))
			w.Flush()
			return errors.New("store went away")
		})
	})
	ts := httptest.NewServer(f.srv)
	defer ts.Close()
	resp, err := http.Get(ts.URL + "/stream-test/late")
	if err != nil {
		t.Fatal(err)
	}
	_, err = io.ReadAll(resp.Body)
	resp.Body.Close()
	if err == nil {
		t.Error("a stream cut part-way read as complete")
	}
	resp, err = http.Get(ts.URL + "/stream-test/early")
	if err != nil {
		t.Fatal(err)
	}
	resp.Body.Close()
	if resp.StatusCode != 422 || resp.Header.Get("Content-Type") != ProblemContentType {
		t.Errorf("failure before the first byte: %d %s", resp.StatusCode, resp.Header.Get("Content-Type"))
	}
	if !strings.Contains(f.logs.String(), "store went away") {
		t.Errorf("cut stream not logged:\n%s", f.logs.String())
	}
}

// FuzzIfMatch: any If-Match header is either refused with 400, 412 or 428,
// or accepted as a positive version whose ETag reads back the same.
func FuzzIfMatch(f *testing.F) {
	for _, s := range []string{`"1"`, `W/"7"`, `*`, ``, `"x"`, `"1", "2"`, `"-3"`, `"99999999999999999999"`} {
		f.Add(s)
	}
	gin.SetMode(gin.ReleaseMode)
	f.Fuzz(func(t *testing.T, h string) {
		c, _ := gin.CreateTestContext(httptest.NewRecorder())
		c.Request = httptest.NewRequest("PUT", "/", nil)
		c.Request.Header["If-Match"] = []string{h}
		v, err := ifMatch(c)
		if err != nil {
			switch problemFor(err, "").Status {
			case 400, 412, 428:
			default:
				t.Fatalf("If-Match %q: status %d", h, problemFor(err, "").Status)
			}
			return
		}
		if v < 1 {
			t.Fatalf("If-Match %q accepted as version %d", h, v)
		}
		c.Request.Header["If-Match"] = []string{etag(v)}
		if v2, err := ifMatch(c); err != nil || v2 != v {
			t.Fatalf("ETag %s of version %d reads back as %d, %v", etag(v), v, v2, err)
		}
	})
}
