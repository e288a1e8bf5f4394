package httpapi

import (
	"strings"

	"github.com/gin-gonic/gin"

	"corvane/internal/domain"
	"corvane/internal/service"
)

// authenticate resolves "Authorization: Bearer <token>" to the caller and
// puts it into the request context. A request without the header, or with
// one that is malformed or unknown, is refused here with 401, before any
// body is read.
func (s *Server) authenticate(c *gin.Context) {
	h := c.GetHeader("Authorization")
	if h == "" {
		fail(c, service.Authenticated(c.Request.Context()))
		return
	}
	scheme, secret, ok := strings.Cut(h, " ")
	if !ok || !strings.EqualFold(scheme, "Bearer") || strings.TrimSpace(secret) == "" {
		fail(c, domain.Errorf(domain.Unauthorized, "Authorization header must be: Bearer <token>"))
		return
	}
	a, err := s.opt.Service.Authenticate(c.Request.Context(), strings.TrimSpace(secret))
	if err != nil {
		fail(c, err)
		return
	}
	c.Set("principal", a.Name+" (token "+itoa(a.TokenID)+")")
	c.Request = c.Request.WithContext(service.WithActor(c.Request.Context(), a))
	c.Next()
}

// need refuses, before the handler reads a body, a caller without role in
// the project of the path (site-wide when the route has no :project). A
// malformed project id is left to the handler, which answers 404.
func need(role domain.Role) gin.HandlerFunc {
	return func(c *gin.Context) {
		if err := authorize(c, role); err != nil {
			fail(c, err)
			return
		}
		c.Next()
	}
}

// authorize checks the caller may act with role in the path's project.
func authorize(c *gin.Context, role domain.Role) error {
	pid := domain.AllProjects
	if c.Param("project") != "" {
		id, err := pathID(c, "project")
		if err != nil {
			return nil
		}
		pid = id
	}
	return service.Authorize(c.Request.Context(), pid, role)
}
