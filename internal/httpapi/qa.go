package httpapi

import (
	"bytes"
	"encoding/json"
	"net/http"
	"sort"
	"strconv"
	"strings"

	"github.com/gin-gonic/gin"

	"corvane/internal/domain"
	"corvane/internal/qa"
	"corvane/internal/qa/qapage"
	"corvane/internal/service"
)

// qaOptions reads the QA thresholds from the query string. Parameters carry
// the names of qa.Options' JSON fields (mismatch_tolerance, rotation_threshold,
// reference, ...), with "persistent" short for persistent_type; lists are
// comma-separated. An unknown parameter is refused by name. Zero values take
// the qa package's defaults.
func qaOptions(c *gin.Context) (qa.Options, error) {
	var o qa.Options
	obj := map[string]any{}
	keys := make([]string, 0, len(c.Request.URL.Query()))
	for k := range c.Request.URL.Query() {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, k := range keys {
		if k == "format" {
			continue
		}
		v := c.Query(k)
		name := k
		if k == "persistent" {
			name = "persistent_type"
		}
		switch name {
		case "persistent_type", "reference":
			obj[name] = v
		case "confident_ratings", "unusable_ratings":
			obj[name] = splitList([]string{v})
		default:
			x, err := strconv.ParseFloat(v, 64)
			if err != nil {
				return o, domain.FieldErr(k, "query parameter %s=%q: want a number", k, v)
			}
			obj[name] = x
		}
	}
	b, _ := json.Marshal(obj)
	dec := json.NewDecoder(bytes.NewReader(b))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&o); err != nil {
		if f, ok := strings.CutPrefix(err.Error(), "json: unknown field "); ok {
			f = strings.Trim(f, `"`)
			return o, domain.FieldErr(f, "unknown QA query parameter %q", f)
		}
		return o, domain.FieldErr("query", "QA query parameters: %v", jsonError(err))
	}
	return o, nil
}

// renderQA writes a QA report as JSON, or as one self-contained HTML page
// with ?format=html.
func renderQA(c *gin.Context, rep qa.Report, title string) {
	switch c.Query("format") {
	case "", "json":
		c.JSON(http.StatusOK, rep)
	case "html":
		stream(c, "text/html; charset=utf-8", func(w *trackingWriter) error {
			return qapage.Write(w, rep, title)
		})
	default:
		fail(c, domain.FieldErr("format", "query parameter format=%q: want json or html", c.Query("format")))
	}
}

func (s *Server) projectQA(c *gin.Context) { s.runProjectQA(c, false) }

func (s *Server) holeQA(c *gin.Context) {
	pid, hid, err := s.holeIDs(c)
	if err != nil {
		fail(c, err)
		return
	}
	opt, err := qaOptions(c)
	if err != nil {
		fail(c, err)
		return
	}
	rep, err := s.opt.Service.QA(c.Request.Context(), pid, hid, opt)
	if err != nil {
		fail(c, err)
		return
	}
	renderQA(c, rep, "QA of hole "+itoa(hid))
}

// projectQAWith is the project QA with reference picks and magnetic zones
// sent in the body (they are not stored).
func (s *Server) projectQAWith(c *gin.Context) { s.runProjectQA(c, true) }

// runProjectQA runs the project QA with the options of the query and, when
// withBody, the picks and magnetic zones of the JSON body.
func (s *Server) runProjectQA(c *gin.Context, withBody bool) {
	pid, err := pathID(c, "project")
	if err != nil {
		fail(c, err)
		return
	}
	opt, err := qaOptions(c)
	if err != nil {
		fail(c, err)
		return
	}
	req := service.QARequest{Options: opt}
	if withBody {
		var in struct {
			Picks         []qa.Pick         `json:"picks"`
			MagneticZones []qa.MagneticZone `json:"magnetic_zones"`
		}
		if err := s.decodeJSONLimit(c, &in, min(s.opt.MaxImportBytes, maxQABytes), maxQAElements); err != nil {
			fail(c, err)
			return
		}
		req.Picks, req.MagneticZones = in.Picks, in.MagneticZones
	}
	rep, err := s.opt.Service.QAWith(c.Request.Context(), pid, 0, req)
	if err != nil {
		fail(c, err)
		return
	}
	renderQA(c, rep, "QA of project "+itoa(pid))
}
