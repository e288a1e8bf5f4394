package service_test

import (
	"encoding/json"
	"errors"
	"math"
	"strings"
	"testing"
	"time"

	"corvane/internal/domain"
	"corvane/internal/localgrid"
	"corvane/internal/northref"
	"corvane/internal/qa"
	"corvane/internal/service"
)

// The project's magnetic model choice is stored and chooses the model of
// every declination the hole model computes on read: a 2023 magnetic survey
// gets IGRF-14's value under auto (WMM2025 starts in 2025.0), named with
// model and decimal year in the hole's corrections, the derived values and
// the QA report; under wmm the hole has an error naming the WMM's years and
// the other model. The expected value comes from package igrf through
// northref (igrf's own tests check IGRF-14 against published values).
func TestProjectMagneticModel(t *testing.T) {
	s, ctx := newService(t)
	p, _ := programme(t, s, ctx, domain.Project{Name: "older programme"})
	if p.MagneticModel != "auto" || p.LocalGrid != nil {
		t.Fatalf("defaults: %q %s", p.MagneticModel, p.LocalGrid)
	}
	h := must(s.CreateHole(ctx, p.ID, domain.Hole{Name: "OP001", East: 391250, North: 6465480, Elevation: 312, Azimuth: 45, Dip: -60, FinalDepth: 200, CRS: "EPSG:28350"}))
	ss := domain.SurveySet{AzimuthRef: "magnetic", SurveyDate: "2023-08-01", Stations: []domain.Station{{Depth: 0, Azimuth: 45, Dip: -60}}}
	must(s.PutSurvey(ctx, p.ID, h.ID, 0, ss))
	want, err := northref.CorrectionsModel(northref.ModelIGRF, "EPSG:28350", 391250, 6465480, 312, time.Date(2023, 8, 1, 0, 0, 0, 0, time.UTC), true, false)
	if err != nil {
		t.Fatal(err)
	}
	const src = "computed (IGRF-14 at 2023.5808)"
	c := must(s.GetHoleView(ctx, p.ID, h.ID)).Corrections
	if c.Declination == nil || math.Abs(*c.Declination-want.Declination) > 1e-12 || c.DeclinationSource == nil || *c.DeclinationSource != src {
		t.Errorf("auto: declination %v (%v), IGRF-14 gives %v", c.Declination, c.DeclinationSource, want.Declination)
	}
	m := must(s.CreateMeasurement(ctx, p.ID, domain.Measurement{HoleID: h.ID, Depth: 100, Alpha: 40, Beta: f64(200), TypeCode: "JN"}))
	if m.Derived.DeclinationSource != src || *m.Derived.Declination != *c.Declination {
		t.Errorf("derived: %v from %q", m.Derived.Declination, m.Derived.DeclinationSource)
	}
	rep := must(s.QA(ctx, p.ID, h.ID, qa.DefaultOptions()))
	found := false
	for _, hr := range rep.Holes {
		if hr.HoleID == "OP001" {
			found = hr.DeclinationSource == src
		}
	}
	if !found {
		t.Errorf("QA report holes %+v: OP001 should name %s", rep.Holes, src)
	}

	p.MagneticModel = "wmm"
	p = must(s.UpdateProject(ctx, p.ID, p.Version, p))
	if p2 := must(s.GetProject(ctx, p.ID)); p2.MagneticModel != "wmm" {
		t.Fatalf("model read back %q", p2.MagneticModel)
	}
	c = must(s.GetHoleView(ctx, p.ID, h.ID)).Corrections
	if c.Declination != nil || !strings.Contains(c.Error, "outside the years of magnetic model WMM-2025 (2025.0 to 2030.0); IGRF-14 covers 1900.0 to 2030.0") {
		t.Errorf("wmm for a 2023 survey: %v, error %q", c.Declination, c.Error)
	}
	p.MagneticModel = "emm"
	_, err = s.UpdateProject(ctx, p.ID, p.Version, p)
	if wantKind(t, err, domain.Invalid, "unknown model"); !strings.Contains(err.Error(), "auto, wmm, igrf") {
		t.Errorf("unknown model: %v", err)
	}
}

// A local grid declaration is checked and stored in canonical form; a bad
// one is refused naming the field, and the project keeps what it had.
func TestProjectLocalGrid(t *testing.T) {
	s, ctx := newService(t)
	grid := json.RawMessage(`{"name":"Zelvorra Reach mine grid","grid_crs":"EPSG:28350","control_points":[
		{"id":"CP1","local_easting":5000,"local_northing":10000,"easting":391250,"northing":6465480},
		{"id":"CP2","local_easting":6000,"local_northing":10000,"easting":392045.6,"northing":6464875.8}]}`)
	p := must(s.CreateProject(ctx, domain.Project{Name: "mine", LocalGrid: grid}))
	var back map[string]any
	if err := json.Unmarshal(must(s.GetProject(ctx, p.ID)).LocalGrid, &back); err != nil || back["grid_crs"] != "EPSG:28350" || len(back["control_points"].([]any)) != 2 {
		t.Errorf("stored local grid %v %v", back, err)
	}
	for text, msg := range map[string]string{
		`{"grid_crs":"EPSG:2193","rotation":10,"origin":{"local_easting":0,"local_northing":0,"easting":1,"northing":2}}`: "grid_crs",
		`{"grid_crs":"EPSG:28350","rotation":10}`: "give rotation and origin",
		`{"grid_crs":"EPSG:28350","turn":10}`:     "unknown field",
	} {
		q := p
		q.LocalGrid = json.RawMessage(text)
		_, err := s.UpdateProject(ctx, p.ID, p.Version, q)
		var e *domain.Error
		if err == nil || !strings.Contains(err.Error(), msg) || !errors.As(err, &e) || e.Loc.Field != "local_grid" {
			t.Errorf("%s: %v", text, err)
		}
	}
	if cur := must(s.GetProject(ctx, p.ID)); cur.Version != p.Version {
		t.Errorf("a refused update changed the project: version %d", cur.Version)
	}
}

// The project's local grid applies to its holes: a hole whose crs is
// "local" (position and grid azimuths in the mine grid) gets the same
// derived values as the same hole given in the projected grid, its position
// carried by the similarity transformation and its grid azimuths turned by
// the rotation (package localgrid, checked against PROJ), as corvane
// convert --local-grid does. A project in feet cannot declare one.
func TestProjectLocalGridApplied(t *testing.T) {
	s, ctx := newService(t)
	grid := json.RawMessage(`{"name":"Zelvorra Reach mine grid","grid_crs":"EPSG:28350","rotation":-37.25,"scale":0.99975,
		"origin":{"local_easting":5000,"local_northing":10000,"easting":391250,"northing":6465480}}`)
	p, _ := programme(t, s, ctx, domain.Project{Name: "mine grid", LocalGrid: grid})
	tr := localgrid.FromOrigin(5000, 10000, 391250, 6465480, -37.25, 0.99975)
	e, n := tr.ToGrid(5100, 10050)
	loc := must(s.CreateHole(ctx, p.ID, domain.Hole{Name: "L1", East: 5100, North: 10050, Elevation: 300, Azimuth: 30, AzimuthRef: "grid", Dip: -60, FinalDepth: 200, CRS: "local"}))
	prj := must(s.CreateHole(ctx, p.ID, domain.Hole{Name: "P1", East: e, North: n, Elevation: 300, Azimuth: tr.LocalToGridAzimuth(30), AzimuthRef: "grid", Dip: -60, FinalDepth: 200, CRS: "EPSG:28350"}))
	must(s.PutSurvey(ctx, p.ID, loc.ID, 0, domain.SurveySet{AzimuthRef: "grid", Stations: []domain.Station{{Depth: 0, Azimuth: 30, Dip: -60}, {Depth: 100, Azimuth: 35, Dip: -58}}}))
	must(s.PutSurvey(ctx, p.ID, prj.ID, 0, domain.SurveySet{AzimuthRef: "grid", Stations: []domain.Station{{Depth: 0, Azimuth: tr.LocalToGridAzimuth(30), Dip: -60}, {Depth: 100, Azimuth: tr.LocalToGridAzimuth(35), Dip: -58}}}))
	a := must(s.CreateMeasurement(ctx, p.ID, domain.Measurement{HoleID: loc.ID, Depth: 150, Alpha: 60, Beta: f64(200), TypeCode: "BD"})).Derived
	b := must(s.CreateMeasurement(ctx, p.ID, domain.Measurement{HoleID: prj.ID, Depth: 150, Alpha: 60, Beta: f64(200), TypeCode: "BD"})).Derived
	if a.Error != "" || b.Error != "" {
		t.Fatalf("errors %q %q", a.Error, b.Error)
	}
	for _, c := range []struct {
		name string
		x, y *float64
	}{{"easting", a.East, b.East}, {"northing", a.North, b.North}, {"hole azimuth", a.HoleAzimuth, b.HoleAzimuth}, {"dip direction", a.DipDirection, b.DipDirection}, {"dip", a.Dip, b.Dip}} {
		if c.x == nil || c.y == nil || math.Abs(*c.x-*c.y) > 1e-6 {
			t.Errorf("%s: local hole %v, projected hole %v", c.name, c.x, c.y)
		}
	}
	q := p
	q.LengthUnit = domain.UnitFoot
	if _, err := s.UpdateProject(ctx, p.ID, p.Version, q); !domain.IsKind(err, domain.Invalid) || !strings.Contains(err.Error(), "feet") {
		t.Errorf("a local grid in a project in feet: %v", err)
	}
}

// A hole may declare its own local grid: checked and stored in canonical
// form as the project's (a bad one is refused at local_grid and nothing
// changes), used for that hole over the project's, and cleared with null.
func TestHoleLocalGrid(t *testing.T) {
	s, ctx := newService(t)
	projectGrid := json.RawMessage(`{"name":"mine grid","grid_crs":"EPSG:28350","rotation":-37.25,
		"origin":{"local_easting":5000,"local_northing":10000,"easting":391250,"northing":6465480}}`)
	p, _ := programme(t, s, ctx, domain.Project{Name: "hole grids", LocalGrid: projectGrid})
	own := json.RawMessage(`{"name":"pit grid","grid_crs":"EPSG:28350","rotation":15,
		"origin":{"local_easting":0,"local_northing":0,"easting":391000,"northing":6465000}}`)
	h := must(s.CreateHole(ctx, p.ID, domain.Hole{Name: "H1", East: 391100, North: 6465100, Elevation: 300, Azimuth: 90, AzimuthRef: "grid", Dip: -60,
		FinalDepth: 100, CRS: "EPSG:28350", LocalGrid: own}))
	var back map[string]any
	if err := json.Unmarshal(must(s.GetHole(ctx, p.ID, h.ID)).LocalGrid, &back); err != nil || back["rotation"] != 15.0 || back["name"] != "pit grid" {
		t.Fatalf("stored hole grid %v %v", back, err)
	}
	// Output in the local grid: the hole's own grid (rotation 15), not the
	// project's (-37.25): grid azimuth 90 is local 75 (local = grid - theta,
	// IOGP 7-2 method 9621).
	m := must(s.CreateMeasurement(ctx, p.ID, domain.Measurement{HoleID: h.ID, Depth: 50, Alpha: 60, Beta: f64(200), TypeCode: "BD"}))
	list := must(s.ListMeasurements(ctx, p.ID, service.MeasurementQuery{Output: "local"}, domain.Page{Limit: 10}))
	d := list.Items[0].Derived
	if d.AzimuthRef != "local" || d.HoleAzimuth == nil || math.Abs(*d.HoleAzimuth-75) > 1e-9 {
		t.Errorf("derived in the hole's grid: %+v", d)
	}
	if m.Derived.AzimuthRef != "grid" || math.Abs(*m.Derived.HoleAzimuth-90) > 1e-9 {
		t.Errorf("the project's output unchanged: %+v", m.Derived)
	}
	// The hole models kept between requests are kept per output reference:
	// the next request in the project's north does not get the local ones.
	again := must(s.ListMeasurements(ctx, p.ID, service.MeasurementQuery{}, domain.Page{Limit: 10})).Items[0].Derived
	if again.AzimuthRef != "grid" || math.Abs(*again.HoleAzimuth-90) > 1e-9 {
		t.Errorf("after a request in the local grid, the project's north: %s %v", again.AzimuthRef, *again.HoleAzimuth)
	}
	if _, err := s.ListMeasurements(ctx, p.ID, service.MeasurementQuery{Output: "magnetic"}, domain.Page{Limit: 10}); !domain.IsKind(err, domain.Invalid) || !strings.Contains(err.Error(), "output_reference") {
		t.Errorf("output_reference=magnetic: %v", err)
	}
	h = must(s.GetHole(ctx, p.ID, h.ID))
	bad := h
	bad.LocalGrid = json.RawMessage(`{"grid_crs":"EPSG:28350","rotation":10}`)
	var e *domain.Error
	if _, err := s.UpdateHole(ctx, p.ID, h.ID, h.Version, bad); !errors.As(err, &e) || e.Loc.Field != "local_grid" || !strings.Contains(err.Error(), "give rotation and origin") {
		t.Errorf("bad hole grid: %v", err)
	}
	if cur := must(s.GetHole(ctx, p.ID, h.ID)); cur.Version != h.Version {
		t.Errorf("a refused update changed the hole")
	}
	h.LocalGrid = json.RawMessage("null")
	h = must(s.UpdateHole(ctx, p.ID, h.ID, h.Version, h))
	if h.LocalGrid != nil {
		t.Errorf("cleared grid %s", h.LocalGrid)
	}
	list = must(s.ListMeasurements(ctx, p.ID, service.MeasurementQuery{Output: "local"}, domain.Page{Limit: 10}))
	if d := list.Items[0].Derived; math.Abs(*d.HoleAzimuth-(90+37.25)) > 1e-9 {
		t.Errorf("without its own grid the project's applies: hole azimuth %v, want 127.25", *d.HoleAzimuth)
	}
}

// The project's rows kept for statistics are kept per output reference: a
// report in the local grid is not the project's north one served from the
// kept rows, and the project's north after it is as before.
func TestRowCacheByOutputReference(t *testing.T) {
	s, ctx := newService(t)
	grid := json.RawMessage(`{"name":"mine grid","grid_crs":"EPSG:28350","rotation":-37.25,
		"origin":{"local_easting":5000,"local_northing":10000,"easting":391250,"northing":6465480}}`)
	p, h := programme(t, s, ctx, domain.Project{Name: "kept rows by north", LocalGrid: grid})
	for i := range 8 {
		must(s.CreateMeasurement(ctx, p.ID, domain.Measurement{HoleID: h.ID, Depth: float64(10 + 5*i), Alpha: float64(40 + i), Beta: f64(float64(150 + 7*i)), TypeCode: "BD"}))
	}
	report := func(out string) string {
		t.Helper()
		rep := must(s.Statistics(ctx, p.ID, service.StatsQuery{MeasurementQuery: service.MeasurementQuery{Output: out}, SetQuery: service.SetQuery{Sets: "type"}}))
		b, err := json.Marshal(rep.Planes) // the values only, not the report's labels
		if err != nil {
			t.Fatal(err)
		}
		return string(b)
	}
	north := report("")
	local := report("local")
	if local == north {
		t.Fatalf("statistics with output_reference=local equal the project's north ones (kept rows of another north)")
	}
	if again := report(""); again != north {
		t.Errorf("the project's north after a local request differs from before")
	}
	if again := report("local"); again != local {
		t.Errorf("a second local request differs from the first")
	}
}
