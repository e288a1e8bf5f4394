package service_test

import (
	"reflect"
	"testing"
	"time"

	"corvane/internal/domain"
	"corvane/internal/service"
)

// Hole models are kept between requests, and never used stale: after each
// edit of something a model is built from (collar, survey, a correction,
// a project setting, a run), through the service or straight into the
// store as another replica of the service would, a measurement's derived
// values are the new ones, equal to those of a service that keeps nothing
// yet.
func TestModelCacheNeverStale(t *testing.T) {
	s, ctx := newService(t)
	p, h := programme(t, s, ctx, domain.Project{})
	m := must(s.CreateMeasurement(ctx, p.ID, domain.Measurement{HoleID: h.ID, Depth: 50, Alpha: 40, Beta: f64(120), TypeCode: "BD", LoggedAt: time.Now()}))
	last := m.Derived
	check := func(what string, changed func(a, b service.Derived) bool) {
		t.Helper()
		got := must(s.GetMeasurement(ctx, p.ID, m.ID)).Derived
		fresh := must(service.New(s.Store(), nil).GetMeasurement(ctx, p.ID, m.ID)).Derived
		if !reflect.DeepEqual(got, fresh) {
			t.Fatalf("%s: derived values\n%+v\nwant those of a fresh service\n%+v", what, got, fresh)
		}
		if changed != nil && !changed(last, got) {
			t.Fatalf("%s: derived values did not change: %+v", what, got)
		}
		last = got
	}
	check("again", nil)
	az := func(a, b service.Derived) bool { return *a.HoleAzimuth != *b.HoleAzimuth }

	h = must(s.GetHole(ctx, p.ID, h.ID))
	h.Azimuth = 30
	h = must(s.UpdateHole(ctx, p.ID, h.ID, h.Version, h))
	check("collar azimuth", az)

	must(s.PutSurvey(ctx, p.ID, h.ID, 0, domain.SurveySet{AzimuthRef: "grid", Stations: []domain.Station{{Depth: 0, Azimuth: 30, Dip: -60}, {Depth: 100, Azimuth: 50, Dip: -55}}}))
	check("survey", az)

	h = must(s.GetHole(ctx, p.ID, h.ID))
	h.GridConvergence = f64(1.5)
	h = must(s.UpdateHole(ctx, p.ID, h.ID, h.Version, h))
	check("grid convergence given, not yet needed", nil)
	ss := must(s.GetSurvey(ctx, p.ID, h.ID))
	ss.AzimuthRef = "true"
	must(s.PutSurvey(ctx, p.ID, h.ID, ss.Version, ss))
	conv := func(c float64) func(a, b service.Derived) bool {
		return func(a, b service.Derived) bool {
			return b.GridConvergence != nil && *b.GridConvergence == c && az(a, b)
		}
	}
	check("survey against true north", conv(1.5))
	h = must(s.GetHole(ctx, p.ID, h.ID))
	h.GridConvergence = f64(2.5)
	h = must(s.UpdateHole(ctx, p.ID, h.ID, h.Version, h))
	check("grid convergence", conv(2.5))

	p = must(s.GetProject(ctx, p.ID))
	p.RefLine = domain.RefLineTop
	p = must(s.UpdateProject(ctx, p.ID, p.Version, p))
	check("project's reference line", func(a, b service.Derived) bool { return *a.DipDirection != *b.DipDirection })

	must(s.CreateRun(ctx, p.ID, h.ID, domain.Run{From: 45, To: 55, Confidence: "poor"}))
	check("run", func(a, b service.Derived) bool { return b.RunConfidence == "poor" })

	// Another replica's write, straight into the store.
	if err := s.Store().PutSurvey(ctx, &domain.SurveySet{HoleID: h.ID, AzimuthRef: "true", Stations: []domain.Station{{Depth: 0, Azimuth: 70, Dip: -80}}}, must(s.Store().GetSurvey(ctx, h.ID)).Version); err != nil {
		t.Fatal(err)
	}
	check("a write of another process", az)
}
