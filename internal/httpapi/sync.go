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
	if err != nil {
		fail(c, err)
		return
	}
	c.JSON(http.StatusOK, page)
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
	if err != nil {
		fail(c, err)
		return
	}
	c.JSON(http.StatusOK, resp)
}

func (s *Server) syncRecord(c *gin.Context) {
	pid, err := pathID(c, "project")
	if err != nil {
		fail(c, err)
		return
	}
	rec, err := s.opt.Service.SyncRecordOf(c.Request.Context(), pid, c.Param("table"), c.Param("gid"))
	if err != nil {
		fail(c, err)
		return
	}
	c.JSON(http.StatusOK, rec)
}

func (s *Server) listConflicts(c *gin.Context) {
	pid, err := pathID(c, "project")
	if err != nil {
		fail(c, err)
		return
	}
	cs, err := s.opt.Service.ListConflicts(c.Request.Context(), pid, c.Query("status"))
	if err != nil {
		fail(c, err)
		return
	}
	c.JSON(http.StatusOK, listBody[service.ConflictView]{Items: cs})
}

func (s *Server) getConflict(c *gin.Context) {
	pid, err := pathID(c, "project")
	if err != nil {
		fail(c, err)
		return
	}
	v, err := s.opt.Service.GetConflict(c.Request.Context(), pid, c.Param("conflict"))
	if err != nil {
		fail(c, err)
		return
	}
	c.JSON(http.StatusOK, v)
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
	if err != nil {
		fail(c, err)
		return
	}
	c.JSON(http.StatusOK, v)
}
