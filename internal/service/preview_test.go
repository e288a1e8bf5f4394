package service_test

import (
	"context"
	"reflect"
	"strings"
	"testing"

	"corvane/internal/domain"
	"corvane/internal/service"
)

// The preview orients unsaved angles exactly as the saved measurement is
// then derived (same hole model, runs and conventions), needs only the read
// role, stores nothing, and keeps a depth outside the hole as that row's
// error while refusing angles out of range.
func TestPreviewIsTheSavedDerivation(t *testing.T) {
	s, admin := newService(t)
	p, h := programme(t, s, admin, domain.Project{Convergence: f64(1.5), RefLine: "top", BetaApex: "uphole"})
	must(s.PutSurvey(admin, p.ID, h.ID, 0, domain.SurveySet{AzimuthRef: domain.AzimuthMagnetic, Declination: f64(-4),
		Stations: []domain.Station{{Depth: 0, Azimuth: 10, Dip: -60}, {Depth: 100, Azimuth: 14, Dip: -55}}}))
	must(s.CreateRun(admin, p.ID, h.ID, domain.Run{From: 0, To: 50, Confidence: "poor"}))
	readSecret, _ := mustToken(t, s, admin, p.ID, domain.RoleRead)
	rctx := service.WithActor(context.Background(), must(s.Authenticate(admin, readSecret)))

	g := 35.0
	pm := service.PreviewMeasurement{Depth: 42.5, Alpha: 33, Beta: f64(250), Gamma: &g}
	out := must(s.Preview(rctx, p.ID, h.ID, service.PreviewRequest{Measurements: []service.PreviewMeasurement{pm, {Depth: 500, Alpha: 33, Beta: f64(250)}}}))
	if len(out) != 2 {
		t.Fatalf("%d results", len(out))
	}
	if n := len(must(s.ListMeasurements(admin, p.ID, service.MeasurementQuery{}, domain.Page{})).Items); n != 0 {
		t.Errorf("the preview stored %d measurements", n)
	}
	saved := must(s.CreateMeasurement(admin, p.ID, domain.Measurement{HoleID: h.ID, Depth: pm.Depth, Alpha: pm.Alpha, Beta: pm.Beta, Gamma: pm.Gamma, TypeCode: "LN"}))
	if !reflect.DeepEqual(out[0].Derived, saved.Derived) {
		t.Errorf("preview %+v\nsaved   %+v", out[0].Derived, saved.Derived)
	}
	if out[0].Derived.RunConfidence != "poor" || out[0].Derived.DeclinationSource != "given" || out[0].Derived.ConvergenceSource != "project" {
		t.Errorf("preview without the hole's run or corrections: %+v", out[0].Derived)
	}
	if !strings.Contains(out[1].Derived.Error, "past the final depth") || out[1].Derived.Dip != nil {
		t.Errorf("depth past the hole: %+v", out[1].Derived)
	}
	_, err := s.Preview(rctx, p.ID, h.ID, service.PreviewRequest{Measurements: []service.PreviewMeasurement{{Depth: 5, Alpha: 95, Beta: f64(0)}}})
	wantKind(t, err, domain.Invalid, "alpha 95")
	if e, ok := err.(*domain.Error); !ok || e.Loc.Field != "measurements[0].alpha" {
		t.Errorf("alpha 95: %v, want field measurements[0].alpha", err)
	}
}
