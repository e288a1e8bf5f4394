package httpapi

import (
	"strings"

	"github.com/gin-gonic/gin"

	"corvane/internal/domain"
	"corvane/internal/service"
)

// authenticate resolves "Authorization: Bearer <token>" to the caller and
// puts it into the request context. A request without the header goes on
// without a caller, and the service refuses it with 401; a header that is
// present but malformed or unknown is refused here.
func (s *Server) authenticate(c *gin.Context) {
	h := c.GetHeader("Authorization")
	if h == "" {
		c.Next()
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
