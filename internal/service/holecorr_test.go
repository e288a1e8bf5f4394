package service_test

import (
	"context"
	"math"
	"strings"
	"testing"
	"time"

	"corvane/internal/domain"
	"corvane/internal/northref"
	"corvane/internal/service"
)

// The expected corrections come from package northref, whose own tests check
// the World Magnetic Model 2025 against the twelve official WMM2025 test
// values and the UTM convergence against the PROJ check points
// (references/README.md). Here they check that the hole resource carries the
// same numbers the derived values of its measurements use.
func TestHoleCorrectionsComputed(t *testing.T) {
	s, ctx := newService(t)
	p, _ := programme(t, s, ctx, domain.Project{OutputAzimuthRef: domain.AzimuthGrid})
	// A fictional collar in WGS 84 / UTM zone 50S.
	h := must(s.CreateHole(ctx, p.ID, domain.Hole{Name: "TM200", East: 412345, North: 6543210, Elevation: 320,
		Azimuth: 90, AzimuthRef: domain.AzimuthMagnetic, Dip: -60, FinalDepth: 300, CRS: "EPSG:32750"}))
	must(s.PutSurvey(ctx, p.ID, h.ID, 0, domain.SurveySet{AzimuthRef: domain.AzimuthMagnetic, SurveyDate: "2026-03-15",
		Stations: []domain.Station{{Depth: 0, Azimuth: 90, Dip: -60}, {Depth: 150, Azimuth: 95, Dip: -58}}}))

	want := must(northref.Corrections("EPSG:32750", 412345, 6543210, 320, time.Date(2026, 3, 15, 0, 0, 0, 0, time.UTC), true, true))
	v := must(s.GetHoleView(ctx, p.ID, h.ID))
	c := v.Corrections
	if c.OutputAzimuthRef != "grid" || c.CollarAzimuthRef != "magnetic" || c.SurveyAzimuthRef == nil || *c.SurveyAzimuthRef != "magnetic" ||
		c.SurveyDate == nil || *c.SurveyDate != "2026-03-15" {
		t.Errorf("references: %+v", c)
	}
	// The declination is computed on read by the hole model, never stored:
	// the hole's corrections and the derived values say "computed" and name
	// the model and decimal year.
	near(t, "declination", c.Declination, want.Declination, 1e-9)
	if c.DeclinationSource == nil || *c.DeclinationSource != "computed (WMM-2025 at 2026.2000)" {
		t.Errorf("declination source %v, want computed (WMM-2025 at 2026.2000)", c.DeclinationSource)
	}
	if ss := must(s.GetSurvey(ctx, p.ID, h.ID)); ss.DeclinationSource != "" || ss.Declination != nil {
		t.Errorf("stored survey set: declination %v from %q, want none stored", ss.Declination, ss.DeclinationSource)
	}
	near(t, "grid convergence", c.GridConvergence, want.Convergence, 1e-9)
	if c.ConvergenceSource != "computed" {
		t.Errorf("convergence source %q, want computed", c.ConvergenceSource)
	}
	if len(c.Cautions) != 0 {
		t.Errorf("cautions %q at mid latitudes, want none", c.Cautions)
	}

	// The same numbers as the derived values of a measurement on the hole,
	// the hole list and the hole path.
	m := must(s.CreateMeasurement(ctx, p.ID, domain.Measurement{HoleID: h.ID, Depth: 100, Alpha: 40, Beta: f64(200), TypeCode: "JN"}))
	if m.Derived.Declination == nil || *m.Derived.Declination != *c.Declination || m.Derived.DeclinationSource != *c.DeclinationSource ||
		*m.Derived.GridConvergence != *c.GridConvergence || m.Derived.ConvergenceSource != c.ConvergenceSource {
		t.Errorf("derived values %+v disagree with the hole's corrections %+v", m.Derived, c)
	}
	l := must(s.ListHoleViews(ctx, p.ID, domain.Page{}))
	found := false
	for _, x := range l.Items {
		if x.ID == h.ID {
			found = true
			if *x.Corrections.Declination != *c.Declination || *x.Corrections.GridConvergence != *c.GridConvergence {
				t.Errorf("list corrections %+v, want %+v", x.Corrections, c)
			}
		} else if x.Corrections.ConvergenceSource != "none" || x.Corrections.GridConvergence != nil || x.Corrections.Declination != nil {
			t.Errorf("hole %s without crs and magnetic azimuths: %+v", x.Name, x.Corrections)
		}
	}
	if !found {
		t.Fatal("hole missing from the list")
	}
	_, pc := mustPath(t, ctx, s, p.ID, h.ID)
	if *pc.Declination != *c.Declination || *pc.GridConvergence != *c.GridConvergence || pc.ConvergenceSource != "computed" {
		t.Errorf("path corrections %+v, want %+v", pc, c)
	}

	// Changing the survey set changes the corrections: first a grid survey
	// (no magnetic azimuth left but the collar's), then a magnetic one on
	// another date.
	ss := must(s.GetSurvey(ctx, p.ID, h.ID))
	ss = must(s.PutSurvey(ctx, p.ID, h.ID, ss.Version, domain.SurveySet{AzimuthRef: domain.AzimuthGrid,
		Stations: []domain.Station{{Depth: 0, Azimuth: 90, Dip: -60}}}))
	c = must(s.GetHoleView(ctx, p.ID, h.ID)).Corrections
	if *c.SurveyAzimuthRef != "grid" || c.SurveyDate != nil {
		t.Errorf("after a grid survey: %+v", c)
	}
	// The collar azimuth is still magnetic but the survey has a station at
	// the collar, so no magnetic azimuth is used: no declination applied,
	// none reported.
	if c.DeclinationSource != nil || c.Declination != nil {
		t.Errorf("after a grid survey: declination %v from %v, want none applied", c.Declination, c.DeclinationSource)
	}
	must(s.PutSurvey(ctx, p.ID, h.ID, ss.Version, domain.SurveySet{AzimuthRef: domain.AzimuthMagnetic, SurveyDate: "2029-09-01",
		Stations: []domain.Station{{Depth: 0, Azimuth: 90, Dip: -60}}}))
	want29 := must(northref.Corrections("EPSG:32750", 412345, 6543210, 320, time.Date(2029, 9, 1, 0, 0, 0, 0, time.UTC), true, false))
	c = must(s.GetHoleView(ctx, p.ID, h.ID)).Corrections
	near(t, "declination 2029", c.Declination, want29.Declination, 1e-9)
	if math.Abs(want29.Declination-want.Declination) < 1e-3 {
		t.Errorf("the declinations of 2026 and 2029 should differ by the secular variation: %v, %v", want.Declination, want29.Declination)
	}
}

func mustPath(t *testing.T, ctx context.Context, s *service.Service, pid, hid int64) ([]service.PathPoint, service.HoleCorrections) {
	t.Helper()
	pts, c, err := s.HolePath(ctx, pid, hid, 10, "")
	if err != nil {
		t.Fatal(err)
	}
	return pts, c
}

// Given numbers (a survey set's own declination, the project's convergence)
// are reported as they were given, and only when applied.
func TestHoleCorrectionsGiven(t *testing.T) {
	s, ctx := newService(t)
	p, h := programme(t, s, ctx, domain.Project{OutputAzimuthRef: domain.AzimuthTrue, Declination: f64(-2.5), Convergence: f64(0.75)})
	c := must(s.GetHoleView(ctx, p.ID, h.ID)).Corrections
	if c.OutputAzimuthRef != "true" || c.SurveyAzimuthRef != nil || c.Declination != nil || c.DeclinationSource != nil ||
		c.GridConvergence != nil || c.ConvergenceSource != "none" {
		t.Errorf("true collar without survey: %+v", c)
	}
	h.AzimuthRef = domain.AzimuthGrid
	h = must(s.UpdateHole(ctx, p.ID, h.ID, h.Version, h))
	c = must(s.GetHoleView(ctx, p.ID, h.ID)).Corrections
	if c.GridConvergence == nil || *c.GridConvergence != 0.75 || c.ConvergenceSource != "project" {
		t.Errorf("grid collar without survey or crs: %+v", c)
	}
	must(s.PutSurvey(ctx, p.ID, h.ID, 0, domain.SurveySet{AzimuthRef: domain.AzimuthMagnetic, Declination: f64(1.25),
		Stations: []domain.Station{{Depth: 0, Azimuth: 10, Dip: -60}}}))
	c = must(s.GetHoleView(ctx, p.ID, h.ID)).Corrections
	// Magnetic to true needs no convergence: none is reported.
	if c.Declination == nil || *c.Declination != 1.25 || *c.DeclinationSource != "given" || c.GridConvergence != nil || c.ConvergenceSource != "none" {
		t.Errorf("given declination: %+v", c)
	}
	if len(c.Cautions) != 0 {
		t.Errorf("given declination: cautions %q", c.Cautions)
	}
	// A number given for the hole wins over the project's, a number given
	// with the survey set over the hole's.
	h.Declination, h.GridConvergence = f64(4), f64(-1)
	h = must(s.UpdateHole(ctx, p.ID, h.ID, h.Version, h))
	c = must(s.GetHoleView(ctx, p.ID, h.ID)).Corrections
	if *c.Declination != 1.25 {
		t.Errorf("survey set's declination lost to the hole's: %+v", c)
	}
	ss := must(s.GetSurvey(ctx, p.ID, h.ID))
	must(s.PutSurvey(ctx, p.ID, h.ID, ss.Version, domain.SurveySet{AzimuthRef: domain.AzimuthMagnetic,
		Stations: []domain.Station{{Depth: 0, Azimuth: 10, Dip: -60}}}))
	c = must(s.GetHoleView(ctx, p.ID, h.ID)).Corrections
	if *c.Declination != 4 || *c.DeclinationSource != "given" {
		t.Errorf("hole's declination: %+v", c)
	}
	got := must(s.GetHole(ctx, p.ID, h.ID))
	if got.Declination == nil || *got.Declination != 4 || got.GridConvergence == nil || *got.GridConvergence != -1 {
		t.Errorf("hole read back %+v", got)
	}
}

// The survey set records "given" for a typed declination whatever source a
// client sends, and stores nothing else: a declination left out is
// computed on every read by the hole model (checked against northref, whose
// tests hold the official WMM2025 test values); the derived values of a
// measurement name the same source.
func TestDeclinationSourceOfSurveySet(t *testing.T) {
	s, ctx := newService(t)
	p, plain := programme(t, s, ctx, domain.Project{OutputAzimuthRef: domain.AzimuthTrue, Declination: f64(-2.5)})
	// A fictional collar in WGS 84 / UTM zone 50S.
	h := must(s.CreateHole(ctx, p.ID, domain.Hole{Name: "TM300", East: 412345, North: 6543210, Elevation: 320,
		Azimuth: 90, Dip: -60, FinalDepth: 300, CRS: "EPSG:32750"}))
	stations := []domain.Station{{Depth: 0, Azimuth: 90, Dip: -60}}
	derived := func(holeID int64) service.Derived {
		t.Helper()
		return must(s.CreateMeasurement(ctx, p.ID, domain.Measurement{HoleID: holeID, Depth: 50, Alpha: 40, Beta: f64(200), TypeCode: "JN"})).Derived
	}

	ss := must(s.PutSurvey(ctx, p.ID, h.ID, 0, domain.SurveySet{AzimuthRef: domain.AzimuthMagnetic, SurveyDate: "2026-03-15",
		Declination: f64(3), DeclinationSource: "computed", Stations: stations}))
	if ss.DeclinationSource != "given" || ss.Declination == nil || *ss.Declination != 3 {
		t.Errorf("typed declination stored as %v from %q, want 3 given", ss.Declination, ss.DeclinationSource)
	}
	if d := derived(h.ID); d.Declination == nil || *d.Declination != 3 || d.DeclinationSource != "given" {
		t.Errorf("derived with a typed declination: %v from %q, want 3 given", d.Declination, d.DeclinationSource)
	}

	// Left out: the project's default applies (set by someone), not a value
	// computed and stored behind the caller's back.
	ss = must(s.PutSurvey(ctx, p.ID, h.ID, ss.Version, domain.SurveySet{AzimuthRef: domain.AzimuthMagnetic, SurveyDate: "2026-03-15",
		DeclinationSource: "given", Stations: stations}))
	if ss.DeclinationSource != "" || ss.Declination != nil {
		t.Errorf("declination left out stored as %v from %q, want none", ss.Declination, ss.DeclinationSource)
	}
	if d := derived(h.ID); d.Declination == nil || *d.Declination != -2.5 || d.DeclinationSource != "project" {
		t.Errorf("derived with the project's declination: %v from %q, want -2.5 project", d.Declination, d.DeclinationSource)
	}
	// Without a project default it is computed at the collar on the date.
	p.Declination = nil
	p = must(s.UpdateProject(ctx, p.ID, p.Version, p))
	want := must(northref.Corrections("EPSG:32750", 412345, 6543210, 320, time.Date(2026, 3, 15, 0, 0, 0, 0, time.UTC), true, false))
	if d := derived(h.ID); d.Declination == nil || math.Abs(*d.Declination-want.Declination) > 1e-9 || d.DeclinationSource != string(want.ComputedSource()) {
		t.Errorf("derived with a computed declination: %v from %q, want %v computed", d.Declination, d.DeclinationSource, want.Declination)
	}
	// A collar without a crs label and no default: the hole's error, never
	// a silent zero.
	must(s.PutSurvey(ctx, p.ID, plain.ID, 0, domain.SurveySet{AzimuthRef: domain.AzimuthMagnetic, SurveyDate: "2026-03-15",
		Stations: []domain.Station{{Depth: 0, Azimuth: 10, Dip: -60}}}))
	if d := derived(plain.ID); d.Error == "" || !strings.Contains(d.Error, "declination") || d.Dip != nil {
		t.Errorf("magnetic survey without any declination: %+v, want the hole's error", d)
	}
	if c := must(s.GetHoleView(ctx, p.ID, plain.ID)).Corrections; !strings.Contains(c.Error, "declination") {
		t.Errorf("hole corrections without a declination: %+v, want the error", c)
	}
}

// A collar near the south magnetic pole carries the model's caution, in the
// hole's corrections and in the warnings of its measurements.
func TestHoleCorrectionsCautions(t *testing.T) {
	s, ctx := newService(t)
	p, _ := programme(t, s, ctx, domain.Project{})
	// UTM zone 53S near 64 S 136 E, close to the south magnetic pole.
	const crs, e, n, el = "EPSG:32753", 548900.0, 2900000.0, 0.0
	want := must(northref.Corrections(crs, e, n, el, time.Date(2026, 1, 1, 0, 0, 0, 0, time.UTC), true, false))
	if want.Caution() == "" {
		t.Fatalf("test collar not in the model's caution zone: H = %.0f nT", want.Field.H)
	}
	hp := must(s.CreateHole(ctx, p.ID, domain.Hole{Name: "TM201", East: e, North: n, Elevation: el, Azimuth: 0, Dip: -60, FinalDepth: 100, CRS: crs}))
	must(s.PutSurvey(ctx, p.ID, hp.ID, 0, domain.SurveySet{AzimuthRef: domain.AzimuthMagnetic, SurveyDate: "2026-01-01",
		Stations: []domain.Station{{Depth: 0, Azimuth: 10, Dip: -60}}}))
	c := must(s.GetHoleView(ctx, p.ID, hp.ID)).Corrections
	if len(c.Cautions) != 1 || c.Cautions[0] != want.Caution() {
		t.Errorf("near the magnetic pole: cautions %q, want %q", c.Cautions, want.Caution())
	}
	near(t, "declination near the pole", c.Declination, want.Declination, 1e-9)
	m := must(s.CreateMeasurement(ctx, p.ID, domain.Measurement{HoleID: hp.ID, Depth: 50, Alpha: 40, Beta: f64(200), TypeCode: "JN"}))
	if !strings.Contains(strings.Join(m.Derived.Warnings, "; "), want.Caution()) {
		t.Errorf("measurement warnings %q lack the caution", m.Derived.Warnings)
	}
}
