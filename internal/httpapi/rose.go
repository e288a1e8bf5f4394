package httpapi

import (
	"math"
	"strconv"

	"github.com/gin-gonic/gin"

	"corvane/internal/domain"
	"corvane/internal/service"
)

// rose serves the rose diagram of the measurements selected, as SVG; the
// options are those of corvane rose.
func (s *Server) rose(c *gin.Context) {
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
	q := service.RoseQuery{MeasurementQuery: mq, Of: c.Query("of"), Weighting: c.Query("weighting"), Title: c.Query("title")}
	for _, p := range []string{"bin", "min_dip"} {
		v := c.Query(p)
		if v == "" {
			continue
		}
		x, err := strconv.ParseFloat(v, 64)
		if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
			fail(c, domain.FieldErr(p, "query parameter %s=%q: want a number of degrees", p, v))
			return
		}
		if p == "bin" {
			q.BinWidth = &x
		} else {
			q.MinDip = x
		}
	}
	stream(c, "image/svg+xml", func(w *trackingWriter) error {
		return s.opt.Service.Rose(c.Request.Context(), pid, q, w)
	})
}
