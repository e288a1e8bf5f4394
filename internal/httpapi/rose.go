package httpapi

import (
	"math"
	"strconv"

	"github.com/gin-gonic/gin"

	"corvane/internal/domain"
	"corvane/internal/service"
)

// rose serves the rose diagram of the measurements selected, as SVG.
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
	q := service.RoseQuery{MeasurementQuery: mq, Of: c.Query("of"), Title: c.Query("title")}
	if v := c.Query("bin"); v != "" {
		x, err := strconv.ParseFloat(v, 64)
		if err != nil || math.IsNaN(x) || math.IsInf(x, 0) || x <= 0 {
			fail(c, domain.FieldErr("bin", "query parameter bin=%q: want a width in degrees that divides 180", v))
			return
		}
		q.BinWidth = x
	}
	stream(c, "image/svg+xml", func(w *trackingWriter) error {
		return s.opt.Service.Rose(c.Request.Context(), pid, q, w)
	})
}
