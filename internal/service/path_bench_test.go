package service_test

import (
	"testing"

	"corvane/internal/domain"
)

// BenchmarkHolePath: the path of a 1,500 m hole with 50 survey stations at
// a 0.5 m step (3,001 points; the stations lie on the grid), read from the SQLite store each time.
func BenchmarkHolePath(b *testing.B) {
	s, ctx := newService(b)
	p := must(s.CreateProject(ctx, domain.Project{Name: "bench"}))
	h := must(s.CreateHole(ctx, p.ID, domain.Hole{Name: "B1", Azimuth: 40, Dip: -75, FinalDepth: 1500}))
	ss := domain.SurveySet{}
	for i := range 50 {
		ss.Stations = append(ss.Stations, domain.Station{Depth: float64(i) * 30, Azimuth: 40 + float64(i)*0.4, Dip: -75 + float64(i)*0.2})
	}
	must(s.PutSurvey(ctx, p.ID, h.ID, 0, ss))
	b.ReportAllocs()
	for b.Loop() {
		pts, _, err := s.HolePath(ctx, p.ID, h.ID, 0.5, "")
		if err != nil || len(pts) != 3001 {
			b.Fatalf("%d points, %v", len(pts), err)
		}
	}
}
