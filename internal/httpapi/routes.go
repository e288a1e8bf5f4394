package httpapi

import "context"

// Service is the use-case layer the handlers call.
type Service interface {
	Ping(ctx context.Context) error
}

func (s *Server) routes() {
	e := s.engine
	e.NoRoute(s.noRoute)
	e.NoMethod(s.noMethod)
	e.GET("/healthz", s.healthz)
	e.GET("/readyz", s.readyz)
	e.GET("/metrics", s.metricsHandler())
}
