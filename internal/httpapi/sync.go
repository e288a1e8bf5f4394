package httpapi

import (
	"net/http"

	"github.com/gin-gonic/gin"

	"corvane/internal/service"
)

// maxSyncBodyBytes bounds a push batch ([service.SyncBatchLimit] changes;
// a hole's survey set can be long).
const maxSyncBodyBytes = 16 << 20

func (s *Server) syncChanges(c *gin.Context) {
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
	page, err := s.opt.Service.SyncChanges(c.Request.Context(), pid, service.ChangesQuery{After: pg.After, Holes: splitList(c.QueryArray("holes")),
		Limit: pg.Limit, Replica: c.Query("replica")})
	respond(c, http.StatusOK, page, err)
}

func (s *Server) syncPush(c *gin.Context) {
	pid, err := pathID(c, "project")
	if err != nil {
		fail(c, err)
		return
	}
	var req service.PushRequest
	if err := s.decodeJSONLimit(c, &req, max(s.opt.MaxBodyBytes, maxSyncBodyBytes), maxBodyElements); err != nil {
		fail(c, err)
		return
	}
	resp, err := s.opt.Service.SyncPush(c.Request.Context(), pid, req)
	respond(c, http.StatusOK, resp, err)
}

func (s *Server) syncRecord(c *gin.Context) {
	pid, err := pathID(c, "project")
	if err != nil {
		fail(c, err)
		return
	}
	rec, err := s.opt.Service.SyncRecordOf(c.Request.Context(), pid, c.Param("table"), c.Param("gid"))
	respond(c, http.StatusOK, rec, err)
}

func (s *Server) listConflicts(c *gin.Context) {
	pid, err := pathID(c, "project")
	if err != nil {
		fail(c, err)
		return
	}
	cs, err := s.opt.Service.ListConflicts(c.Request.Context(), pid, c.Query("status"))
	respond(c, http.StatusOK, listBody[service.ConflictView]{Items: cs}, err)
}

func (s *Server) getConflict(c *gin.Context) {
	pid, err := pathID(c, "project")
	if err != nil {
		fail(c, err)
		return
	}
	v, err := s.opt.Service.GetConflict(c.Request.Context(), pid, c.Param("conflict"))
	respond(c, http.StatusOK, v, err)
}

// resolveBody is the choice of a person resolving a conflict.
type resolveBody struct {
	Keep string `json:"keep"`
}

func (s *Server) resolveConflict(c *gin.Context) {
	pid, err := pathID(c, "project")
	if err != nil {
		fail(c, err)
		return
	}
	var body resolveBody
	if err := s.decodeJSON(c, &body); err != nil {
		fail(c, err)
		return
	}
	v, err := s.opt.Service.ResolveConflict(c.Request.Context(), pid, c.Param("conflict"), body.Keep)
	respond(c, http.StatusOK, v, err)
}
