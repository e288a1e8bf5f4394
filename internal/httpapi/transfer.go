package httpapi

import (
	"math"
	"strconv"
	"strings"

	"github.com/gin-gonic/gin"

	"corvane/internal/domain"
	"corvane/internal/service"
)

// transferFormats are the transfer export routes: path suffix -> format,
// content type and file name. A .gltf with its .bin is two files, which one
// HTTP response cannot carry without a wrapper; the routes serve the
// single-file .glb, which every glTF reader takes, and `corvane transfer
// --gltf` writes the pair.
var transferFormats = map[string]struct{ format, contentType, file string }{
	"scene.glb":     {service.FormatGLB, "model/gltf-binary", "scene-%d.glb"},
	"holes.geojson": {service.FormatGeoJSON, "application/geo+json", "holes-%d.geojson"},
	"points.csv":    {service.FormatPoints, "text/csv; charset=utf-8", "points-%d.csv"},
	"transfer.ags":  {service.FormatAGS, "text/plain; charset=us-ascii", "transfer-%d.ags"},
}

// transferExport serves one transfer format of the measurements selected
// with the filter of the statistics routes (hole, type, min_depth,
// max_depth, from, to) and the options disc_radius, trace_step, origin
// (EASTING,NORTHING,ELEVATION), crs and recipient.
func (s *Server) transferExport(name string) gin.HandlerFunc {
	f := transferFormats[name]
	return func(c *gin.Context) {
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
		q := service.TransferQuery{MeasurementQuery: mq, CRS: c.Query("crs"), Recipient: c.Query("recipient")}
		for _, p := range []struct {
			name string
			dst  *float64
		}{{"disc_radius", &q.DiscRadius}, {"trace_step", &q.TraceStep}} {
			v := c.Query(p.name)
			if v == "" {
				continue
			}
			x, err := strconv.ParseFloat(v, 64)
			if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
				fail(c, domain.FieldErr(p.name, "query parameter %s=%q: want a number", p.name, v))
				return
			}
			*p.dst = x
		}
		if v := c.Query("origin"); v != "" {
			parts := strings.Split(v, ",")
			var o [3]float64
			ok := len(parts) == 3
			for i := 0; ok && i < 3; i++ {
				x, err := strconv.ParseFloat(strings.TrimSpace(parts[i]), 64)
				ok = err == nil && !math.IsNaN(x) && !math.IsInf(x, 0)
				o[i] = x
			}
			if !ok {
				fail(c, domain.FieldErr("origin", "query parameter origin=%q: want EASTING,NORTHING,ELEVATION", v))
				return
			}
			q.Origin = &o
		}
		c.Header("Content-Disposition", `attachment; filename="`+strings.Replace(f.file, "%d", itoa(pid), 1)+`"`)
		stream(c, f.contentType, func(w *trackingWriter) error {
			return s.opt.Service.WriteTransfer(c.Request.Context(), pid, f.format, q, w, func(n service.TransferCounts) {
				c.Header("Corvane-Holes", strconv.Itoa(n.Holes))
				c.Header("Corvane-Structures", strconv.Itoa(n.Structures))
				c.Header("Corvane-Skipped", strconv.Itoa(n.Skipped))
			})
		})
	}
}
