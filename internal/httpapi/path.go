package httpapi

import (
	"math"
	"net/http"
	"strconv"

	"github.com/gin-gonic/gin"

	"corvane/internal/domain"
	"corvane/internal/service"
)

// holePath serves the desurveyed path of a hole at ?step= (default 5), in
// the north of ?output_reference= (default the project's).
func (s *Server) holePath(c *gin.Context) {
	pid, hid, err := s.holeIDs(c)
	if err != nil {
		fail(c, err)
		return
	}
	var step float64
	if v := c.Query("step"); v != "" {
		x, err := strconv.ParseFloat(v, 64)
		if err != nil || math.IsNaN(x) || math.IsInf(x, 0) || x == 0 {
			fail(c, domain.FieldErr("step", "query parameter step=%q: want a number from %v to %v", v, service.MinPathStep, service.MaxPathStep))
			return
		}
		step = x
	}
	pts, corr, err := s.opt.Service.HolePath(c.Request.Context(), pid, hid, step, c.Query("output_reference"))
	respond(c, http.StatusOK, gin.H{"items": pts, "corrections": corr}, err)
}

// previewHole orients unsaved angles against the stored hole.
func (s *Server) previewHole(c *gin.Context) {
	pid, hid, err := s.holeIDs(c)
	if err != nil {
		fail(c, err)
		return
	}
	var req service.PreviewRequest
	if err := s.decodeJSON(c, &req); err != nil {
		fail(c, err)
		return
	}
	rs, err := s.opt.Service.Preview(c.Request.Context(), pid, hid, req)
	respond(c, http.StatusOK, gin.H{"results": rs}, err)
}
