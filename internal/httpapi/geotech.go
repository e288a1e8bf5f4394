package httpapi

import (
	"net/http"

	"github.com/gin-gonic/gin"

	"corvane/internal/domain"
	"corvane/internal/service"
)

// The geotechnical reports: the corvane intervals, spacing, domains and
// slope-check commands over the stored data, with the commands' options as
// query parameters (domain repeatable, in the form of --domain).

// geoQuery reads the measurement filter, the set options and the domains.
func geoQuery(c *gin.Context) (service.GeoQuery, error) {
	mq, err := query(c)
	if err != nil {
		return service.GeoQuery{}, err
	}
	sq, err := setQuery(c)
	if err != nil {
		return service.GeoQuery{}, err
	}
	return service.GeoQuery{MeasurementQuery: mq, SetQuery: sq, Domains: c.QueryArray("domain")}, nil
}

// oneDomain reads the domain parameter of a net or a slope check: one
// structural domain at most (as their --domain options), "" when none.
func oneDomain(c *gin.Context) (string, error) {
	if ds := c.QueryArray("domain"); len(ds) > 1 {
		return "", domain.FieldErr("domain", "one domain at a time; got %d (ask once per domain)", len(ds))
	}
	return c.Query("domain"), nil
}

// slopeQuery reads the slope check's options: face, friction, lateral.
func slopeQuery(c *gin.Context) (service.SlopeQuery, error) {
	gq, err := geoQuery(c)
	if err != nil {
		return service.SlopeQuery{}, err
	}
	gq.Domains = nil // one domain, read below as the net reads it
	q := service.SlopeQuery{GeoQuery: gq, Face: c.Query("face")}
	if q.Domain, err = oneDomain(c); err != nil {
		return q, err
	}
	f, err := numParam(c, "friction")
	if err != nil {
		return q, err
	}
	if f == nil {
		return q, domain.FieldErr("friction", "query parameter friction (the friction angle in degrees) is required")
	}
	q.Friction = *f
	q.Lateral, err = numParam(c, "lateral")
	return q, err
}

func (s *Server) intervalsReport(c *gin.Context) {
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
	rep, err := s.opt.Service.IntervalsReport(c.Request.Context(), pid, mq.Holes)
	respond(c, http.StatusOK, rep, err)
}

func (s *Server) spacingReport(c *gin.Context) {
	pid, err := pathID(c, "project")
	if err != nil {
		fail(c, err)
		return
	}
	gq, err := geoQuery(c)
	if err != nil {
		fail(c, err)
		return
	}
	q := service.SpacingQuery{GeoQuery: gq}
	if q.Cap, err = numParam(c, "cap"); err != nil {
		fail(c, err)
		return
	}
	if q.Values, err = boolParam(c, "values"); err != nil {
		fail(c, err)
		return
	}
	rep, err := s.opt.Service.Spacing(c.Request.Context(), pid, q)
	respond(c, http.StatusOK, rep, err)
}

// projectGeo reads the project and the geotechnical query; false when it
// has answered with the problem.
func projectGeo(c *gin.Context) (int64, service.GeoQuery, bool) {
	pid, err := pathID(c, "project")
	if err != nil {
		fail(c, err)
		return 0, service.GeoQuery{}, false
	}
	q, err := geoQuery(c)
	if err != nil {
		fail(c, err)
		return 0, service.GeoQuery{}, false
	}
	return pid, q, true
}

func (s *Server) domainsReport(c *gin.Context) {
	pid, q, ok := projectGeo(c)
	if !ok {
		return
	}
	rep, err := s.opt.Service.Domains(c.Request.Context(), pid, q)
	respond(c, http.StatusOK, rep, err)
}

func (s *Server) slopeCheck(c *gin.Context) {
	pid, err := pathID(c, "project")
	if err != nil {
		fail(c, err)
		return
	}
	q, err := slopeQuery(c)
	if err != nil {
		fail(c, err)
		return
	}
	rep, err := s.opt.Service.SlopeCheck(c.Request.Context(), pid, q)
	respond(c, http.StatusOK, rep, err)
}

func (s *Server) slopeNet(c *gin.Context) {
	pid, err := pathID(c, "project")
	if err != nil {
		fail(c, err)
		return
	}
	q, err := slopeQuery(c)
	if err != nil {
		fail(c, err)
		return
	}
	check, proj := c.Param("check"), c.Query("projection")
	stream(c, "image/svg+xml", func(w *trackingWriter) error {
		return s.opt.Service.SlopeNet(c.Request.Context(), pid, q, check, proj, w)
	})
}

func (s *Server) spacingNet(c *gin.Context) {
	pid, q, ok := projectGeo(c)
	if !ok {
		return
	}
	stream(c, "image/svg+xml", func(w *trackingWriter) error {
		return s.opt.Service.SpacingNet(c.Request.Context(), pid, q, w)
	})
}
