package httpapi

import (
	"strconv"
	"strings"

	"github.com/gin-gonic/gin"

	"corvane/internal/domain"
	"corvane/internal/exchange/transfer"
	"corvane/internal/service"
)

// transferFormats are the transfer export routes: path suffix -> format,
// content type and file name. A .gltf with its .bin is two files, which one
// HTTP response carries as a zip archive (scene.gltf and scene.bin, as
// `corvane transfer --gltf` writes them); the single-file .glb is the other
// form of the same scene.
var transferFormats = map[string]struct{ format, contentType, file string }{
	"scene.glb":      {service.FormatGLB, "model/gltf-binary", "scene-%d.glb"},
	"scene.gltf.zip": {service.FormatGLTFZip, "application/zip", "scene-%d.gltf.zip"},
	"holes.geojson":  {service.FormatGeoJSON, "application/geo+json", "holes-%d.geojson"},
	"points.csv":     {service.FormatPoints, "text/csv; charset=utf-8", "points-%d.csv"},
	"transfer.ags":   {service.FormatAGS, "text/plain; charset=us-ascii", "transfer-%d.ags"},
}

// optNum reads an optional number parameter through numParam; absent is 0
// (the service's default).
func optNum(c *gin.Context, name string) (float64, error) {
	p, err := numParam(c, name)
	if p == nil || err != nil {
		return 0, err
	}
	return *p, nil
}

// transferExport serves one transfer format of the measurements selected
// with the filter of the statistics routes (hole, type, min_depth,
// max_depth, from, to), their set options (sets, set, seed) and the options
// disc_radius, trace_step, origin (EASTING,NORTHING,ELEVATION), crs and
// recipient.
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
		sq, err := setQuery(c)
		if err != nil {
			fail(c, err)
			return
		}
		q := service.TransferQuery{MeasurementQuery: mq, SetQuery: sq, CRS: c.Query("crs"), Recipient: c.Query("recipient")}
		if q.DiscRadius, err = optNum(c, "disc_radius"); err != nil {
			fail(c, err)
			return
		}
		if q.BySet, err = transfer.ParseColourBy(c.Query("colour_by")); err != nil {
			fail(c, domain.FieldErr("colour_by", "query parameter colour_by=%v", err))
			return
		}
		if q.Uncertainty, err = boolParam(c, "uncertainty"); err != nil {
			fail(c, err)
			return
		}
		if q.TraceStep, err = optNum(c, "trace_step"); err != nil {
			fail(c, err)
			return
		}
		if v := c.Query("origin"); v != "" {
			if q.Origin, err = transfer.ParseOrigin(v); err != nil {
				fail(c, domain.FieldErr("origin", "query parameter origin=%v", err))
				return
			}
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
