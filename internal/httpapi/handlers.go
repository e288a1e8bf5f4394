package httpapi

import (
	"context"
	"mime"
	"net/http"
	"strconv"
	"strings"

	"github.com/gin-gonic/gin"

	"corvane/internal/domain"
	"corvane/internal/service"
	"corvane/internal/visual"
)

// Handlers are thin: decode, call one service method, render.

func (s *Server) convert(c *gin.Context) {
	var req service.ConvertRequest
	if err := s.decodeJSONLimit(c, &req, min(s.opt.MaxImportBytes, maxConvertBytes), maxConvertElements); err != nil {
		fail(c, err)
		return
	}
	if o := c.Query("output_reference"); o != "" { // as --output-reference of corvane convert
		req.Conventions.OutputAzimuthRef = o
	}
	resp, err := s.opt.Service.Convert(c.Request.Context(), req)
	respond(c, http.StatusOK, resp, err)
}

// ---- projects

func (s *Server) listProjects(c *gin.Context) {
	pg, err := s.page(c)
	if err != nil {
		fail(c, err)
		return
	}
	l, err := s.opt.Service.ListProjects(c.Request.Context(), pg)
	if err != nil {
		fail(c, err)
		return
	}
	renderPage(c, l)
}

func (s *Server) createProject(c *gin.Context) {
	var in domain.Project
	if err := s.decodeJSON(c, &in); err != nil {
		fail(c, err)
		return
	}
	p, err := s.opt.Service.CreateProject(c.Request.Context(), in)
	if err != nil {
		fail(c, err)
		return
	}
	location(c, "projects", itoa(p.ID))
	setETag(c, p.Version)
	c.JSON(http.StatusCreated, p)
}

func (s *Server) getProject(c *gin.Context) {
	id, err := pathID(c, "project")
	if err != nil {
		fail(c, err)
		return
	}
	p, err := s.opt.Service.GetProject(c.Request.Context(), id)
	respondVersioned(c, http.StatusOK, p, p.Version, err)
}

func (s *Server) updateProject(c *gin.Context) {
	id, err := pathID(c, "project")
	if err != nil {
		fail(c, err)
		return
	}
	v, err := ifMatch(c)
	if err != nil {
		fail(c, err)
		return
	}
	var in domain.Project
	if err := s.decodeJSON(c, &in); err != nil {
		fail(c, err)
		return
	}
	p, err := s.opt.Service.UpdateProject(c.Request.Context(), id, v, in)
	respondVersioned(c, http.StatusOK, p, p.Version, err)
}

func (s *Server) deleteProject(c *gin.Context) {
	id, err := pathID(c, "project")
	if err != nil {
		fail(c, err)
		return
	}
	v, err := ifMatch(c)
	if err != nil {
		fail(c, err)
		return
	}
	if err := s.opt.Service.DeleteProject(c.Request.Context(), id, v); err != nil {
		fail(c, err)
		return
	}
	c.Status(http.StatusNoContent)
}

// ---- vocabulary

// legend serves the visual language: the one definition of type colours
// and marks, run-confidence fills and severity marks the page draws with.
func (s *Server) legend(c *gin.Context) {
	c.JSON(http.StatusOK, visual.TheLegend())
}

func (s *Server) listTypes(c *gin.Context) {
	pid, err := pathID(c, "project")
	if err != nil {
		fail(c, err)
		return
	}
	ts, err := s.opt.Service.ListTypeCodes(c.Request.Context(), pid)
	if err != nil {
		fail(c, err)
		return
	}
	if ts == nil {
		ts = []domain.TypeCode{}
	}
	c.JSON(http.StatusOK, gin.H{"items": ts})
}

func (s *Server) putType(c *gin.Context) {
	pid, err := pathID(c, "project")
	if err != nil {
		fail(c, err)
		return
	}
	var in struct {
		Description string `json:"description"`
		Kind        string `json:"kind"`
		Colour      string `json:"colour"`
		Mark        string `json:"mark"`
	}
	// A type as GET .../types lists it may be sent back: its project_id
	// and code are read-only (the path names the code).
	if err := s.decodeEcho(c, &in, domain.TypeCode{}); err != nil {
		fail(c, err)
		return
	}
	tc, created, err := s.opt.Service.PutTypeCode(c.Request.Context(), pid,
		domain.TypeCode{Code: c.Param("code"), Description: in.Description, Kind: in.Kind, Colour: in.Colour, Mark: in.Mark})
	if err != nil {
		fail(c, err)
		return
	}
	if created {
		c.JSON(http.StatusCreated, tc)
		return
	}
	c.JSON(http.StatusOK, tc)
}

func (s *Server) deleteType(c *gin.Context) {
	pid, err := pathID(c, "project")
	if err != nil {
		fail(c, err)
		return
	}
	if err := s.opt.Service.DeleteTypeCode(c.Request.Context(), pid, c.Param("code")); err != nil {
		fail(c, err)
		return
	}
	c.Status(http.StatusNoContent)
}

// ---- holes

func (s *Server) listHoles(c *gin.Context) {
	pid, err := pathID(c, "project")
	if err != nil {
		fail(c, err)
		return
	}
	pg, err := s.page(c)
	if err != nil {
		fail(c, err)
		return
	}
	l, err := s.opt.Service.ListHoleViews(c.Request.Context(), pid, pg)
	if err != nil {
		fail(c, err)
		return
	}
	renderPage(c, l)
}

func (s *Server) createHole(c *gin.Context) {
	pid, err := pathID(c, "project")
	if err != nil {
		fail(c, err)
		return
	}
	var in domain.Hole
	if err := s.decodeJSON(c, &in); err != nil {
		fail(c, err)
		return
	}
	h, err := s.opt.Service.CreateHole(c.Request.Context(), pid, in)
	if err != nil {
		fail(c, err)
		return
	}
	location(c, "projects", itoa(pid), "holes", itoa(h.ID))
	setETag(c, h.Version)
	c.JSON(http.StatusCreated, h)
}

// ids reads the project id and the named second id from the path.
func ids(c *gin.Context, name string) (int64, int64, error) {
	pid, err := pathID(c, "project")
	if err != nil {
		return 0, 0, err
	}
	id, err := pathID(c, name)
	return pid, id, err
}

// holeIDs reads the project id and the hole of the path: the hole's id, or
// its name (service.ResolveHole).
func (s *Server) holeIDs(c *gin.Context) (int64, int64, error) {
	pid, err := pathID(c, "project")
	if err != nil {
		return 0, 0, err
	}
	hid, err := s.opt.Service.ResolveHole(c.Request.Context(), pid, c.Param("hole"))
	return pid, hid, err
}

// deleteVersioned deletes, with del, the row of the project named by the
// path's project id and the id called name, at the version in If-Match, and
// answers 204.
func deleteVersioned(c *gin.Context, name string, del func(ctx context.Context, pid, id, version int64) error) {
	pid, id, err := ids(c, name)
	if err != nil {
		fail(c, err)
		return
	}
	deleteVersionedID(c, pid, id, del)
}

// deleteVersionedID deletes row id of project pid with del at the version in
// If-Match, and answers 204.
func deleteVersionedID(c *gin.Context, pid, id int64, del func(ctx context.Context, pid, id, version int64) error) {
	v, err := ifMatch(c)
	if err != nil {
		fail(c, err)
		return
	}
	if err := del(c.Request.Context(), pid, id, v); err != nil {
		fail(c, err)
		return
	}
	c.Status(http.StatusNoContent)
}

func (s *Server) getHole(c *gin.Context) {
	pid, hid, err := s.holeIDs(c)
	if err != nil {
		fail(c, err)
		return
	}
	h, err := s.opt.Service.GetHoleView(c.Request.Context(), pid, hid)
	respondVersioned(c, http.StatusOK, h, h.Version, err)
}

func (s *Server) updateHole(c *gin.Context) {
	pid, hid, err := s.holeIDs(c)
	if err != nil {
		fail(c, err)
		return
	}
	v, err := ifMatch(c)
	if err != nil {
		fail(c, err)
		return
	}
	var in domain.Hole
	if err := s.decodeEcho(c, &in, service.HoleView{}); err != nil {
		fail(c, err)
		return
	}
	h, err := s.opt.Service.UpdateHole(c.Request.Context(), pid, hid, v, in)
	respondVersioned(c, http.StatusOK, h, h.Version, err)
}

func (s *Server) deleteHole(c *gin.Context) {
	pid, hid, err := s.holeIDs(c)
	if err != nil {
		fail(c, err)
		return
	}
	deleteVersionedID(c, pid, hid, s.opt.Service.DeleteHole)
}

// ---- surveys

func (s *Server) getSurvey(c *gin.Context) {
	pid, hid, err := s.holeIDs(c)
	if err != nil {
		fail(c, err)
		return
	}
	ss, err := s.opt.Service.GetSurvey(c.Request.Context(), pid, hid)
	respondVersioned(c, http.StatusOK, ss, ss.Version, err)
}

// putVersion is the version a replace-whole PUT expects: 0 with
// If-None-Match: * (create) and no If-Match, else If-Match's.
func putVersion(c *gin.Context) (int64, error) {
	if strings.TrimSpace(c.GetHeader("If-None-Match")) == "*" && c.GetHeader("If-Match") == "" {
		return 0, nil
	}
	return ifMatch(c)
}

// putSurvey replaces the whole survey set. If-Match carries the version
// last read; a hole's first set is created with If-None-Match: * instead.
func (s *Server) putSurvey(c *gin.Context) {
	pid, hid, err := s.holeIDs(c)
	if err != nil {
		fail(c, err)
		return
	}
	v, err := putVersion(c)
	if err != nil {
		fail(c, err)
		return
	}
	var in domain.SurveySet
	if err := s.decodeJSON(c, &in); err != nil {
		fail(c, err)
		return
	}
	ss, err := s.opt.Service.PutSurvey(c.Request.Context(), pid, hid, v, in)
	respondVersioned(c, http.StatusOK, ss, ss.Version, err)
}

// listKindSets lists the hole's survey sets by kind and the set in use.
func (s *Server) listKindSets(c *gin.Context) {
	pid, hid, err := s.holeIDs(c)
	if err != nil {
		fail(c, err)
		return
	}
	ks, err := s.opt.Service.ListKindSets(c.Request.Context(), pid, hid)
	respond(c, http.StatusOK, ks, err)
}

// putKindSet replaces the hole's survey set of a kind, as putSurvey does
// (If-Match, or If-None-Match: * to create).
func (s *Server) putKindSet(c *gin.Context) {
	pid, hid, err := s.holeIDs(c)
	if err != nil {
		fail(c, err)
		return
	}
	v, err := putVersion(c)
	if err != nil {
		fail(c, err)
		return
	}
	var in domain.KindSet
	if err := s.decodeJSON(c, &in); err != nil {
		fail(c, err)
		return
	}
	k, err := s.opt.Service.PutKindSet(c.Request.Context(), pid, hid, c.Param("kind"), v, in)
	respondVersioned(c, http.StatusOK, k, k.Version, err)
}

func (s *Server) deleteKindSet(c *gin.Context) {
	pid, hid, err := s.holeIDs(c)
	if err != nil {
		fail(c, err)
		return
	}
	v, err := ifMatch(c)
	if err != nil {
		fail(c, err)
		return
	}
	if err := s.opt.Service.DeleteKindSet(c.Request.Context(), pid, hid, c.Param("kind"), v); err != nil {
		fail(c, err)
		return
	}
	c.Status(http.StatusNoContent)
}

// ---- runs

func (s *Server) listRuns(c *gin.Context) {
	pid, hid, err := s.holeIDs(c)
	if err != nil {
		fail(c, err)
		return
	}
	rs, err := s.opt.Service.ListRuns(c.Request.Context(), pid, hid)
	if err != nil {
		fail(c, err)
		return
	}
	if rs == nil {
		rs = []domain.Run{}
	}
	c.JSON(http.StatusOK, gin.H{"items": rs})
}

func (s *Server) createRun(c *gin.Context) {
	pid, hid, err := s.holeIDs(c)
	if err != nil {
		fail(c, err)
		return
	}
	var in domain.Run
	if err := s.decodeJSON(c, &in); err != nil {
		fail(c, err)
		return
	}
	r, err := s.opt.Service.CreateRun(c.Request.Context(), pid, hid, in)
	if err != nil {
		fail(c, err)
		return
	}
	location(c, "projects", itoa(pid), "runs", itoa(r.ID))
	setETag(c, r.Version)
	c.JSON(http.StatusCreated, r)
}

func (s *Server) getRun(c *gin.Context) {
	pid, id, err := ids(c, "run")
	if err != nil {
		fail(c, err)
		return
	}
	r, err := s.opt.Service.GetRun(c.Request.Context(), pid, id)
	respondVersioned(c, http.StatusOK, r, r.Version, err)
}

func (s *Server) updateRun(c *gin.Context) {
	pid, id, err := ids(c, "run")
	if err != nil {
		fail(c, err)
		return
	}
	v, err := ifMatch(c)
	if err != nil {
		fail(c, err)
		return
	}
	var in domain.Run
	if err := s.decodeJSON(c, &in); err != nil {
		fail(c, err)
		return
	}
	r, err := s.opt.Service.UpdateRun(c.Request.Context(), pid, id, v, in)
	respondVersioned(c, http.StatusOK, r, r.Version, err)
}

func (s *Server) deleteRun(c *gin.Context) {
	deleteVersioned(c, "run", s.opt.Service.DeleteRun)
}

// ---- measurements

func (s *Server) listMeasurements(c *gin.Context) {
	pid, err := pathID(c, "project")
	if err != nil {
		fail(c, err)
		return
	}
	q, err := query(c)
	if err != nil {
		fail(c, err)
		return
	}
	pg, err := s.page(c)
	if err != nil {
		fail(c, err)
		return
	}
	l, err := s.opt.Service.ListMeasurements(c.Request.Context(), pid, q, pg)
	if err != nil {
		fail(c, err)
		return
	}
	renderPage(c, l)
}

// measurementInput is what a client sends to log or replace a measurement.
// The hole is given by its id (hole_id) or its name (hole, as in the CSV's
// hole_id column); with both they must name the same hole.
type measurementInput struct {
	HoleID            int64    `json:"hole_id"`
	Hole              string   `json:"hole"`
	Depth             float64  `json:"depth"`
	Alpha             float64  `json:"alpha"`
	Beta              *float64 `json:"beta"` // null or absent: an unoriented measurement
	Gamma             *float64 `json:"gamma"`
	Type              string   `json:"type"`
	ApparentThickness *float64 `json:"apparent_thickness"`
	Comment           string   `json:"comment"`
	LoggedBy          string   `json:"logged_by"`
}

func (s *Server) measurementIn(c *gin.Context, pid int64) (domain.Measurement, error) {
	var in measurementInput
	if err := s.decodeEcho(c, &in, service.MeasurementView{}); err != nil {
		return domain.Measurement{}, err
	}
	if in.Hole != "" {
		id, err := s.opt.Service.ResolveHole(c.Request.Context(), pid, service.HoleNamePrefix+in.Hole)
		if domain.IsKind(err, domain.NotFound) {
			return domain.Measurement{}, domain.FieldErr("hole", "no hole named %q in project %d", in.Hole, pid)
		}
		if err != nil {
			return domain.Measurement{}, err
		}
		if in.HoleID != 0 && in.HoleID != id {
			return domain.Measurement{}, domain.FieldErr("hole", "hole %q is hole_id %d, not %d: give one of them", in.Hole, id, in.HoleID)
		}
		in.HoleID = id
	}
	m := domain.Measurement{HoleID: in.HoleID, Depth: in.Depth, Alpha: in.Alpha, Beta: in.Beta, Gamma: in.Gamma,
		TypeCode: in.Type, ApparentThickness: in.ApparentThickness, Comment: in.Comment, LoggedBy: in.LoggedBy}
	if in.HoleID <= 0 {
		return m, domain.FieldErr("hole_id", "hole_id (the id of a hole of this project) or hole (its name) is required")
	}
	return m, nil
}

func (s *Server) createMeasurement(c *gin.Context) {
	pid, err := pathID(c, "project")
	if err != nil {
		fail(c, err)
		return
	}
	m, err := s.measurementIn(c, pid)
	if err != nil {
		fail(c, err)
		return
	}
	v, err := s.opt.Service.CreateMeasurement(c.Request.Context(), pid, m)
	if err != nil {
		fail(c, err)
		return
	}
	location(c, "projects", itoa(pid), "measurements", itoa(v.ID))
	setETag(c, v.Version)
	c.JSON(http.StatusCreated, v)
}

func (s *Server) getMeasurement(c *gin.Context) {
	pid, id, err := ids(c, "measurement")
	if err != nil {
		fail(c, err)
		return
	}
	v, err := s.opt.Service.GetMeasurement(c.Request.Context(), pid, id)
	respondVersioned(c, http.StatusOK, v, v.Version, err)
}

func (s *Server) updateMeasurement(c *gin.Context) {
	pid, id, err := ids(c, "measurement")
	if err != nil {
		fail(c, err)
		return
	}
	ver, err := ifMatch(c)
	if err != nil {
		fail(c, err)
		return
	}
	m, err := s.measurementIn(c, pid)
	if err != nil {
		fail(c, err)
		return
	}
	v, err := s.opt.Service.UpdateMeasurement(c.Request.Context(), pid, id, ver, m)
	respondVersioned(c, http.StatusOK, v, v.Version, err)
}

func (s *Server) deleteMeasurement(c *gin.Context) {
	deleteVersioned(c, "measurement", s.opt.Service.DeleteMeasurement)
}

// trackingWriter remembers whether anything reached the client, so that a
// streamed response failing before its first byte can still answer with a
// problem. The content type is set on the first write.
type trackingWriter struct {
	gin.ResponseWriter
	contentType string
	started     bool
}

func (w *trackingWriter) Write(p []byte) (int, error) {
	if !w.started {
		w.started = true
		w.ResponseWriter.Header().Set("Content-Type", w.contentType)
		w.ResponseWriter.WriteHeader(http.StatusOK)
	}
	return w.ResponseWriter.Write(p)
}

// stream runs write into a trackingWriter and settles the response: a
// problem when nothing was written yet, a cut connection when the failure
// came part-way.
func stream(c *gin.Context, contentType string, write func(w *trackingWriter) error) {
	w := &trackingWriter{ResponseWriter: c.Writer, contentType: contentType}
	err := write(w)
	switch {
	case err != nil && !w.started:
		c.Writer.Header().Del("Content-Disposition")
		fail(c, err)
	case err != nil:
		// The status line is gone: cut the connection so the client sees a
		// broken transfer rather than a short body that looks complete.
		_ = c.Error(err)
		panic(http.ErrAbortHandler)
	case !w.started:
		_, _ = w.Write(nil)
	}
}

func (s *Server) exportMeasurements(c *gin.Context) {
	pid, err := pathID(c, "project")
	if err != nil {
		fail(c, err)
		return
	}
	q, err := query(c)
	if err != nil {
		fail(c, err)
		return
	}
	c.Header("Content-Disposition", `attachment; filename="measurements-`+itoa(pid)+`.csv"`)
	stream(c, "text/csv; charset=utf-8", func(w *trackingWriter) error {
		return s.opt.Service.ExportMeasurements(c.Request.Context(), pid, q, w)
	})
}

func (s *Server) exportCollars(c *gin.Context) {
	pid, err := pathID(c, "project")
	if err != nil {
		fail(c, err)
		return
	}
	c.Header("Content-Disposition", `attachment; filename="collars-`+itoa(pid)+`.csv"`)
	stream(c, "text/csv; charset=utf-8", func(w *trackingWriter) error {
		return s.opt.Service.ExportCollars(c.Request.Context(), pid, w)
	})
}

// exportSurveys streams the project's surveys, every set, as a surveys file.
func (s *Server) exportSurveys(c *gin.Context) {
	pid, err := pathID(c, "project")
	if err != nil {
		fail(c, err)
		return
	}
	c.Header("Content-Disposition", `attachment; filename="surveys-`+itoa(pid)+`.csv"`)
	stream(c, "text/csv; charset=utf-8", func(w *trackingWriter) error {
		return s.opt.Service.ExportSurveys(c.Request.Context(), pid, w)
	})
}

// ---- statistics and nets

// boolParam reads an optional true/false query parameter.
func boolParam(c *gin.Context, name string) (bool, error) {
	v := c.Query(name)
	if v == "" {
		return false, nil
	}
	b, err := strconv.ParseBool(v)
	if err != nil {
		return false, domain.FieldErr(name, "query parameter %s=%q: want true or false", name, v)
	}
	return b, nil
}

// setQuery reads the set options shared by statistics and net: sets,
// set (repeatable), sets_on and seed.
func setQuery(c *gin.Context) (service.SetQuery, error) {
	q := service.SetQuery{Sets: c.Query("sets"), Windows: c.QueryArray("set"), SetsOn: c.Query("sets_on")}
	if v := c.Query("seed"); v != "" {
		seed, err := strconv.ParseUint(v, 10, 64)
		if err != nil {
			return q, domain.FieldErr("seed", "query parameter seed=%q: want a whole number >= 0", v)
		}
		q.Seed = &seed
	}
	return q, nil
}

// statistics serves the statistics report of the measurements selected;
// the options are those of corvane stats.
func (s *Server) statistics(c *gin.Context) {
	pid, err := pathID(c, "project")
	if err != nil {
		fail(c, err)
		return
	}
	mq, err := query(c)
	if err != nil {
		fail(c, err)
		return
	}
	sq, err := setQuery(c)
	if err != nil {
		fail(c, err)
		return
	}
	q := service.StatsQuery{MeasurementQuery: mq, SetQuery: sq, Of: c.Query("of"), Weighting: c.Query("weighting"), Uncertainty: c.Query("uncertainty"), SetUncertainty: c.Query("set_uncertainty")}
	res, err := s.opt.Service.Statistics(c.Request.Context(), pid, q)
	respond(c, http.StatusOK, res, err)
}

// net serves the net of the measurements selected, as SVG; the options are
// those of corvane net.
func (s *Server) net(c *gin.Context) {
	pid, err := pathID(c, "project")
	if err != nil {
		fail(c, err)
		return
	}
	mq, err := query(c)
	if err != nil {
		fail(c, err)
		return
	}
	sq, err := setQuery(c)
	if err != nil {
		fail(c, err)
		return
	}
	q := service.NetQuery{MeasurementQuery: mq, SetQuery: sq, Weighting: c.Query("weighting"), Projection: c.Query("projection"),
		Show: c.Query("show"), Density: c.Query("density"), Units: c.Query("units"), Title: c.Query("title"),
		Regions: c.Query("regions")}
	if q.Domain, err = oneDomain(c); err != nil {
		fail(c, err)
		return
	}
	if v := c.Query("grid"); v != "" {
		if q.Grid, err = strconv.Atoi(v); err != nil {
			fail(c, domain.FieldErr("grid", "query parameter grid=%q: want a whole number", v))
			return
		}
	}
	stream(c, "image/svg+xml", func(w *trackingWriter) error {
		return s.opt.Service.Net(c.Request.Context(), pid, q, w)
	})
}

// ---- imports

func (s *Server) importCSV(c *gin.Context) {
	pid, err := pathID(c, "project")
	if err != nil {
		fail(c, err)
		return
	}
	role, err := service.ImportRole(c.Param("kind"))
	if err != nil {
		fail(c, err)
		return
	}
	if err := authorize(c, role); err != nil {
		fail(c, err)
		return
	}
	if ct := c.GetHeader("Content-Type"); ct != "" {
		mt, _, err := mime.ParseMediaType(ct)
		if err != nil || (mt != "text/csv" && mt != "text/plain" && mt != "application/octet-stream") {
			fail(c, errUnsupportedMedia("text/csv"))
			return
		}
	}
	dry := false
	if v := c.Query("dry_run"); v != "" {
		if dry, err = strconv.ParseBool(v); err != nil {
			fail(c, domain.FieldErr("dry_run", "query parameter dry_run=%q: want true or false", v))
			return
		}
	}
	limitBody(c, s.opt.MaxImportBytes)
	if c.IsAborted() {
		return
	}
	body, cleanup, err := s.spool(c.Request.Body)
	defer cleanup()
	if err != nil {
		if p := problemFor(err, ""); p.Status == http.StatusServiceUnavailable || p.Status == http.StatusInsufficientStorage {
			c.Header("Retry-After", "30")
		}
		fail(c, err)
		return
	}
	res, err := s.opt.Service.Import(c.Request.Context(), pid, service.ImportRequest{
		Kind: c.Param("kind"), File: c.GetHeader("X-Filename"), Body: body,
		DryRun: dry, Duplicates: c.Query("duplicates"), IdempotencyKey: c.GetHeader("Idempotency-Key"),
	})
	if err != nil {
		fail(c, err)
		return
	}
	status := http.StatusCreated
	if res.DryRun || res.Replayed {
		status = http.StatusOK
	}
	c.JSON(status, res)
}

// ---- audit

// listSiteAudit is the audit trail across projects, for site admins:
// ?project=ID narrows it to one project (deleted ones too; 0 for the
// site's own actions).
func (s *Server) listSiteAudit(c *gin.Context) {
	pg, err := s.page(c)
	if err != nil {
		fail(c, err)
		return
	}
	var pid *int64
	if v := c.Query("project"); v != "" {
		n, err := strconv.ParseInt(v, 10, 64)
		if err != nil || n < 0 {
			fail(c, domain.FieldErr("project", "query parameter project=%q: want a project id (0 for the site's own actions)", v))
			return
		}
		pid = &n
	}
	l, err := s.opt.Service.ListSiteAudit(c.Request.Context(), pid, pg)
	if err != nil {
		fail(c, err)
		return
	}
	renderPage(c, l)
}

func (s *Server) listAudit(c *gin.Context) {
	pid, err := pathID(c, "project")
	if err != nil {
		fail(c, err)
		return
	}
	pg, err := s.page(c)
	if err != nil {
		fail(c, err)
		return
	}
	l, err := s.opt.Service.ListAudit(c.Request.Context(), pid, pg)
	if err != nil {
		fail(c, err)
		return
	}
	renderPage(c, l)
}

// ---- core intervals

func (s *Server) listIntervals(c *gin.Context) {
	pid, hid, err := s.holeIDs(c)
	if err != nil {
		fail(c, err)
		return
	}
	ivs, err := s.opt.Service.CoreIntervals(c.Request.Context(), pid, hid)
	respond(c, http.StatusOK, gin.H{"items": ivs}, err)
}

// intervalsInput is the body that replaces a hole's core intervals:
// "intervals", or "items" as GET returns them (so a GET body can be PUT
// back; each interval's id and hole_id are ignored), not both.
type intervalsInput struct {
	Intervals []domain.CoreInterval `json:"intervals"`
	Items     []domain.CoreInterval `json:"items"`
}

func (s *Server) putIntervals(c *gin.Context) {
	pid, hid, err := s.holeIDs(c)
	if err != nil {
		fail(c, err)
		return
	}
	var in intervalsInput
	if err := s.decodeJSON(c, &in); err != nil {
		fail(c, err)
		return
	}
	switch {
	case in.Intervals != nil && in.Items != nil:
		fail(c, domain.FieldErr("items", "give the intervals once: as intervals, or as items (the body GET returns), not both"))
		return
	case in.Items != nil:
		in.Intervals = in.Items
	}
	ivs, err := s.opt.Service.PutCoreIntervals(c.Request.Context(), pid, hid, in.Intervals)
	respond(c, http.StatusOK, gin.H{"items": ivs}, err)
}

func (s *Server) exportIntervals(c *gin.Context) {
	pid, err := pathID(c, "project")
	if err != nil {
		fail(c, err)
		return
	}
	c.Header("Content-Disposition", `attachment; filename="intervals-`+itoa(pid)+`.csv"`)
	stream(c, "text/csv; charset=utf-8", func(w *trackingWriter) error {
		return s.opt.Service.ExportIntervals(c.Request.Context(), pid, w)
	})
}
