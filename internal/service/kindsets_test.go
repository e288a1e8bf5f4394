package service_test

import (
	"errors"
	"math"
	"strings"
	"testing"

	"corvane/internal/domain"
	"corvane/internal/qa"
	"corvane/internal/service"
)

// A hole with a gyro and a magnetic survey set: derived values use the
// preferred set, else the project's priority, else the kind order, and say
// which; QA compares the two sets and flags the 4-degree interference zone
// planted in the magnetic set (123-153 m) and nothing else; the single-set
// survey route keeps working beside them.
func TestSurveySetsByKind(t *testing.T) {
	s, ctx := newService(t)
	p, _ := programme(t, s, ctx, domain.Project{Name: "two sets", OutputAzimuthRef: domain.AzimuthTrue})
	h := must(s.CreateHole(ctx, p.ID, domain.Hole{Name: "TW1", East: 1000, North: 2000, Elevation: 300, Azimuth: 40, Dip: -60, FinalDepth: 300}))
	// The true path turns from 40 to 52 deg and flattens from -60 to -55;
	// the magnetic set is recorded against magnetic north with a given
	// declination of 1.5 (true = magnetic + 1.5), 4 deg off in 120-160 m.
	az := func(md float64) float64 { return 40 + 12*md/300 }
	dip := func(md float64) float64 { return -60 + 5*md/300 }
	var gyro, mag []domain.Station
	for i := 0; i <= 30; i++ {
		md := float64(10 * i)
		gyro = append(gyro, domain.Station{Depth: md, Azimuth: az(md) + 0.1*math.Sin(float64(i)), Dip: dip(md)})
	}
	for i := 0; i < 30; i++ {
		md := float64(10*i + 3)
		a := az(md) - 1.5 + 0.3*math.Sin(float64(i)*1.7)
		if md >= 120 && md <= 160 {
			a += 4
		}
		mag = append(mag, domain.Station{Depth: md, Azimuth: a, Dip: dip(md)})
	}
	decl := 1.5
	m := must(s.PutKindSet(ctx, p.ID, h.ID, "magnetic", 0, domain.KindSet{Instrument: "magnetic", AzimuthRef: "magnetic",
		SurveyDate: "2023-08-01", Declination: &decl, Stations: mag}))
	g := must(s.PutKindSet(ctx, p.ID, h.ID, "GYRO", 0, domain.KindSet{Instrument: "gyro", AzimuthRef: "true", Stations: gyro}))
	if g.Kind != "gyro" || g.Version != 1 || m.Version != 1 {
		t.Fatalf("stored %q v%d, %q v%d", g.Kind, g.Version, m.Kind, m.Version)
	}
	// The uncertainty follows the instrument of the set in use: the pole's
	// 95% cone at 140 m by the set used.
	cones := map[string][]float64{}
	used := func(want, why string) {
		t.Helper()
		ks := must(s.ListKindSets(ctx, p.ID, h.ID))
		if ks.UsedBecause != why {
			t.Errorf("set in use %q because %q, want because %q", ks.Used, ks.UsedBecause, why)
		}
		ms := must(s.CreateMeasurement(ctx, p.ID, domain.Measurement{HoleID: h.ID, Depth: 140, Alpha: 40, Beta: f64(200), TypeCode: "JN"}))
		hv := must(s.GetHoleView(ctx, p.ID, h.ID))
		if ks.Used != want || ms.Derived.SurveySet != want || hv.Corrections.SurveySet != want || len(ks.Sets) != 2 {
			t.Errorf("set in use: list %q, derived %q, hole %q; want %q", ks.Used, ms.Derived.SurveySet, hv.Corrections.SurveySet, want)
		}
		// The derived hole direction at 140 m is that set's.
		wantAz := az(140)
		if want == "magnetic" {
			wantAz += 4
		}
		if ms.Derived.HoleAzimuth == nil || math.Abs(*ms.Derived.HoleAzimuth-wantAz) > 0.6 {
			t.Errorf("%s: hole azimuth at 140 m %v, want about %v", want, ms.Derived.HoleAzimuth, wantAz)
		}
		if ms.Derived.PoleCone95 == nil {
			t.Fatalf("%s: no pole region", want)
		}
		cones[want] = append(cones[want], *ms.Derived.PoleCone95)
	}
	used("gyro", domain.UsedKindOrder) // no preference, no priority, no survey set: kind order
	p.SurveyPriority = "Magnetic, gyro"
	p = must(s.UpdateProject(ctx, p.ID, p.Version, p))
	if p.SurveyPriority != "magnetic,gyro" {
		t.Fatalf("priority stored as %q", p.SurveyPriority)
	}
	used("magnetic", domain.UsedPriority)
	g.Preferred = true
	g = must(s.PutKindSet(ctx, p.ID, h.ID, "gyro", g.Version, g))
	used("gyro", domain.UsedPreferred)
	if c := cones; c["gyro"][0] != c["gyro"][1] || !(c["gyro"][0] < c["magnetic"][0]) {
		t.Errorf("pole cone95 with the gyro set in use %v, with the magnetic set %v: want the gyro's the same each time and narrower", c["gyro"], c["magnetic"])
	}
	p.SurveyPriority = "gyro,gyro"
	if _, err := s.UpdateProject(ctx, p.ID, p.Version, p); !domain.IsKind(err, domain.Invalid) {
		t.Errorf("a kind named twice: %v", err)
	}
	if _, err := s.PutKindSet(ctx, p.ID, h.ID, "compass", 0, domain.KindSet{Stations: gyro}); !domain.IsKind(err, domain.Invalid) {
		t.Errorf("unknown kind: %v", err)
	}
	var de *domain.Error
	if _, err := s.PutKindSet(ctx, p.ID, h.ID, "other", 0, domain.KindSet{Instrument: "compass", Stations: gyro}); !errors.As(err, &de) || de.Kind != domain.Invalid || de.Loc.Field != "instrument" {
		t.Errorf("unknown instrument: %v", err)
	}
	if _, err := s.PutKindSet(ctx, p.ID, h.ID, "planned", 0, domain.KindSet{Stations: []domain.Station{{Depth: 400, Azimuth: 40, Dip: -60}}}); !domain.IsKind(err, domain.Invalid) {
		t.Errorf("station past the final depth: %v", err)
	}

	rep := must(s.QA(ctx, p.ID, h.ID, qa.DefaultOptions()))
	var flagged []qa.Finding
	for _, f := range rep.Findings {
		if f.Check == qa.CheckInterference || f.Check == qa.CheckSetOffset {
			flagged = append(flagged, f)
		}
	}
	if len(flagged) != 1 || flagged[0].Check != qa.CheckInterference || flagged[0].Depth != 123 || flagged[0].DepthTo != 153 || math.Abs(flagged[0].Size-4) > 0.7 {
		t.Errorf("QA set comparison %+v, want one interference zone 123-153 m of about 4 deg", flagged)
	}

	// The single-set route keeps working beside the sets; the preferred set
	// stays in use.
	ss := must(s.PutSurvey(ctx, p.ID, h.ID, 0, domain.SurveySet{AzimuthRef: "true", Stations: []domain.Station{{Depth: 0, Azimuth: 40, Dip: -60}}}))
	if got := must(s.GetSurvey(ctx, p.ID, h.ID)); got.Version != ss.Version || len(got.Stations) != 1 {
		t.Errorf("survey set %+v", got)
	}
	used("gyro", domain.UsedPreferred)
	if err := s.DeleteKindSet(ctx, p.ID, h.ID, "gyro", g.Version); err != nil {
		t.Fatal(err)
	}
	p.SurveyPriority = ""
	p = must(s.UpdateProject(ctx, p.ID, p.Version, p))
	if ks := must(s.ListKindSets(ctx, p.ID, h.ID)); ks.Used != "survey" || ks.UsedBecause != domain.UsedOnlySet || len(ks.Sets) != 1 {
		t.Errorf("after deleting the gyro set: %+v", ks)
	}
	// The final depth cannot shrink above a set's stations.
	h = must(s.GetHole(ctx, p.ID, h.ID))
	h.FinalDepth = 100
	if _, err := s.UpdateHole(ctx, p.ID, h.ID, h.Version, h); !domain.IsKind(err, domain.Conflict) {
		t.Errorf("final depth above the magnetic set's stations: %v", err)
	}
}

// The surveys import reads the preferred column: yes makes the set the
// hole's preferred one (the others stop being preferred), no clears it, an
// empty cell or no column keeps the stored flag; two preferred sets on one
// hole are refused at their row and nothing is stored.
func TestSurveysImportPreferred(t *testing.T) {
	s, ctx := newService(t)
	p, _ := programme(t, s, ctx, domain.Project{Name: "preferred"})
	h := must(s.CreateHole(ctx, p.ID, domain.Hole{Name: "PF1", East: 1000, North: 2000, Elevation: 300, Azimuth: 40, Dip: -60, FinalDepth: 300}))
	imp := func(body string) (service.ImportResult, error) {
		return s.Import(ctx, p.ID, service.ImportRequest{Kind: service.ImportSurveys, Body: strings.NewReader(body)})
	}
	used := func(want string, preferred string) {
		t.Helper()
		ks := must(s.ListKindSets(ctx, p.ID, h.ID))
		got := ""
		for _, k := range ks.Sets {
			if k.Preferred {
				got += k.Kind
			}
		}
		if ks.Used != want || got != preferred {
			t.Errorf("in use %q, preferred %q; want %q, %q", ks.Used, got, want, preferred)
		}
	}
	const head = "hole_id,depth,azimuth,dip,azimuth_reference,kind,preferred\n"
	must(imp(head + "PF1,0,40,-60,grid,gyro,\nPF1,0,41,-60,grid,planned,yes\n"))
	used("planned", "planned")
	// No column: the stored flag is kept.
	must(imp("hole_id,depth,azimuth,dip,azimuth_reference,kind\nPF1,0,42,-60,grid,planned\n"))
	used("planned", "planned")
	// Another set marked: it takes the preference.
	must(imp(head + "PF1,0,40,-60,grid,gyro,yes\n"))
	used("gyro", "gyro")
	// no clears it: the kind order decides again.
	must(imp(head + "PF1,0,40,-60,grid,gyro,no\n"))
	used("gyro", "")
	_, err := imp(head + "PF1,0,40,-60,grid,gyro,yes\nPF1,0,41,-60,grid,planned,yes\n")
	var de *domain.Error
	if !errors.As(err, &de) || de.Kind != domain.Invalid || !strings.Contains(de.Error(), `surveys.csv:line 3, column "preferred"`) || !strings.Contains(de.Error(), "two preferred survey sets") {
		t.Fatalf("two preferred sets: %v", err)
	}
	used("gyro", "")
}
