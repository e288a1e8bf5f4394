package httpapi

import (
	"net/http"
	"strconv"

	"github.com/gin-gonic/gin"

	"corvane/api"
	"corvane/internal/domain"
	"corvane/internal/service"
)

// Service is the use-case layer the handlers call.
type Service = *service.Service

// routes is THE route table. Every route below /v1 goes through authenticate,
// which refuses a request without a known token and puts the caller into the
// request context; the service checks the caller's role and project on every
// call. Routes that read a body first check the role they need (need, or the
// import kind's role in importCSV), so that nothing is read, decoded or
// spooled for a caller who may not make the call.
func (s *Server) routes() {
	e := s.engine
	e.NoRoute(s.noRoute)
	e.NoMethod(s.noMethod)

	e.GET("/healthz", s.healthz)
	e.GET("/readyz", s.readyz)
	e.GET("/metrics", s.metricsHandler())
	e.GET("/openapi.yaml", func(c *gin.Context) { c.Data(http.StatusOK, "application/yaml", api.OpenAPI) })

	v1 := e.Group("/v1", s.authenticate)
	v1.POST("/convert", s.heavy, s.convert)
	v1.GET("/audit", s.listSiteAudit)
	v1.GET("/legend", s.legend)

	v1.GET("/projects", s.listProjects)
	v1.POST("/projects", need(domain.RoleAdmin), s.createProject)
	p := v1.Group("/projects/:project")
	p.GET("", s.getProject)
	p.PUT("", need(domain.RoleAdmin), s.updateProject)
	p.DELETE("", s.deleteProject)

	p.GET("/types", s.listTypes)
	p.PUT("/types/:code", need(domain.RoleAdmin), s.putType)
	p.DELETE("/types/:code", s.deleteType)

	p.GET("/holes", s.listHoles)
	p.POST("/holes", need(domain.RoleAdmin), s.createHole)
	p.GET("/holes/:hole", s.getHole)
	p.PUT("/holes/:hole", need(domain.RoleAdmin), s.updateHole)
	p.DELETE("/holes/:hole", s.deleteHole)

	p.GET("/holes/:hole/survey", s.getSurvey)
	p.PUT("/holes/:hole/survey", need(domain.RoleAdmin), s.putSurvey)
	p.GET("/holes/:hole/surveys", s.listKindSets)
	p.PUT("/holes/:hole/surveys/:kind", need(domain.RoleAdmin), s.putKindSet)
	p.DELETE("/holes/:hole/surveys/:kind", need(domain.RoleAdmin), s.deleteKindSet)

	p.GET("/holes/:hole/intervals", s.listIntervals)
	p.PUT("/holes/:hole/intervals", need(domain.RoleLog), s.putIntervals)
	p.GET("/intervals.csv", s.exportIntervals)

	p.GET("/holes/:hole/runs", s.listRuns)
	p.POST("/holes/:hole/runs", need(domain.RoleLog), s.createRun)
	p.GET("/runs/:run", s.getRun)
	p.PUT("/runs/:run", need(domain.RoleLog), s.updateRun)
	p.DELETE("/runs/:run", s.deleteRun)

	p.GET("/measurements", s.listMeasurements)
	p.POST("/measurements", need(domain.RoleLog), s.createMeasurement)
	p.GET("/measurements/:measurement", s.getMeasurement)
	p.PUT("/measurements/:measurement", need(domain.RoleLog), s.updateMeasurement)
	p.DELETE("/measurements/:measurement", s.deleteMeasurement)
	p.GET("/measurements.csv", s.exportMeasurements)
	p.GET("/holes.csv", s.exportCollars)
	p.GET("/surveys.csv", s.exportSurveys)

	p.GET("/qa", need(domain.RoleRead), s.heavy, s.projectQA)
	p.POST("/qa", need(domain.RoleRead), s.heavy, s.projectQAWith)
	p.GET("/holes/:hole/qa", need(domain.RoleRead), s.heavy, s.holeQA)
	p.GET("/holes/:hole/path", s.holePath)
	p.POST("/holes/:hole/preview", s.previewHole)

	p.GET("/statistics", need(domain.RoleRead), s.heavy, s.statistics)
	p.GET("/net", need(domain.RoleRead), s.heavy, s.net)
	p.GET("/rose", need(domain.RoleRead), s.heavy, s.rose)

	for _, name := range []string{"scene.glb", "scene.gltf.zip", "holes.geojson", "points.csv", "transfer.ags"} {
		p.GET("/"+name, need(domain.RoleRead), s.heavy, s.transferExport(name))
	}

	p.GET("/intervals/summary", need(domain.RoleRead), s.heavy, s.intervalsReport)
	p.GET("/spacing", need(domain.RoleRead), s.heavy, s.spacingReport)
	p.GET("/spacing/net", need(domain.RoleRead), s.heavy, s.spacingNet)
	p.GET("/domains", need(domain.RoleRead), s.heavy, s.domainsReport)
	p.GET("/slope-check", need(domain.RoleRead), s.heavy, s.slopeCheck)
	p.GET("/slope-check/:check", need(domain.RoleRead), s.heavy, s.slopeNet)

	p.GET("/sync/changes", s.syncChanges)
	p.POST("/sync/push", need(domain.RoleLog), s.syncPush)
	p.GET("/sync/records/:table/:gid", s.syncRecord)
	p.GET("/sync/conflicts", s.listConflicts)
	p.GET("/sync/conflicts/:conflict", s.getConflict)
	p.POST("/sync/conflicts/:conflict/resolve", need(domain.RoleLog), s.resolveConflict)

	p.POST("/imports/:kind", s.importCSV)
	p.GET("/audit", s.listAudit)
}

// location sets the Location header of a created resource.
func location(c *gin.Context, parts ...string) {
	u := "/v1"
	for _, p := range parts {
		u += "/" + p
	}
	c.Header("Location", u)
}

func itoa(n int64) string { return strconv.FormatInt(n, 10) }

// next turns the service's "0 on the last page" into JSON null.
func next(n int64) *int64 {
	if n == 0 {
		return nil
	}
	return &n
}

// renderPage writes one page of a service list, with a Link header to the
// next page.
func renderPage[T any](c *gin.Context, l service.List[T]) {
	if l.Items == nil {
		l.Items = []T{}
	}
	if l.Next != 0 {
		u := *c.Request.URL
		q := u.Query()
		q.Set("after", itoa(l.Next))
		u.RawQuery = q.Encode()
		c.Header("Link", "<"+u.RequestURI()+`>; rel="next"`)
	}
	c.JSON(http.StatusOK, listBody[T]{Items: l.Items, NextAfter: next(l.Next)})
}
