package httpapi

import (
	"net/http"

	"github.com/gin-gonic/gin"
)

// heavyRetryAfter is the Retry-After, in seconds, of a request refused
// because every slot for expensive requests is taken.
const heavyRetryAfter = "2"

func errBusy() error {
	return &edgeError{http.StatusServiceUnavailable, "busy",
		"the server is running as many expensive requests (QA, statistics, nets, convert, transfer exports) as it allows; retry after " + heavyRetryAfter + " s", nil}
}

// heavy admits an expensive request (QA, statistics, nets, rose, convert)
// when one of the server's slots is free, and answers 503 with Retry-After at
// once when none is: a burst of such requests then cannot take every core
// and all the memory. It runs after authentication and before the body is
// read, so unknown callers take no slot and a refused request reads nothing.
func (s *Server) heavy(c *gin.Context) {
	select {
	case s.slots <- struct{}{}:
		defer func() { <-s.slots }()
		c.Next()
	default:
		c.Header("Retry-After", heavyRetryAfter)
		fail(c, errBusy())
	}
}
