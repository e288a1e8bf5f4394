package httpapi

import (
	"math"
	"testing"
	"time"

	"corvane/internal/domain"
	"corvane/internal/northref"
	"corvane/internal/service"
)

// The hole resource, the hole list and the hole path carry the hole's
// corrections, computed on read: for a magnetic survey on a collar in UTM
// zone 50S the declination and grid convergence are northref's for that
// collar and date (northref's tests check the official WMM2025 test values
// and the PROJ convergence check points), and replacing the survey set
// changes them at once.
func TestHoleCorrectionsOverHTTP(t *testing.T) {
	f := newFixture(t)
	// No project defaults: the corrections are computed (a default someone
	// set would win over a computed value).
	pid := f.project("Corrections", map[string]any{"output_azimuth_ref": "grid"})
	var h service.HoleView
	f.must(201, f.site, "POST", "/v1/projects/"+itoa(pid)+"/holes", map[string]any{
		"name": "C1", "easting": 412345, "northing": 6543210, "elevation": 320, "azimuth": 90, "dip": -60,
		"final_depth": 200, "crs": "EPSG:32750",
	}, &h)
	hb := "/v1/projects/" + itoa(pid) + "/holes/" + itoa(h.ID)
	var ss domain.SurveySet
	r := f.must(200, f.site, "PUT", hb+"/survey", map[string]any{"azimuth_ref": "magnetic", "survey_date": "2027-07-01",
		"stations": []map[string]float64{{"depth": 0, "azimuth": 90, "dip": -60}}}, &ss, "If-None-Match", "*")
	want, err := northref.Corrections("EPSG:32750", 412345, 6543210, 320, time.Date(2027, 7, 1, 0, 0, 0, 0, time.UTC), true, true)
	if err != nil {
		t.Fatal(err)
	}
	if ss.DeclinationSource != "" || ss.Declination != nil {
		t.Errorf("PUT survey without a declination: stored %v from %q, want none (computed on read)", ss.Declination, ss.DeclinationSource)
	}
	f.must(200, f.site, "GET", hb, nil, &h)
	// Written to 0.001 degree, the derived values' precision (convert.Decimals).
	c := h.Corrections
	if c.Declination == nil || math.Abs(*c.Declination-want.Declination) > 0.0005 || *c.DeclinationSource != string(want.ComputedSource()) ||
		c.GridConvergence == nil || math.Abs(*c.GridConvergence-want.Convergence) > 0.0005 || c.ConvergenceSource != "computed" || *c.SurveyAzimuthRef != "magnetic" {
		t.Errorf("GET hole: %+v, want declination %v and convergence %v", c, want.Declination, want.Convergence)
	}
	var l struct{ Items []service.HoleView }
	f.must(200, f.site, "GET", "/v1/projects/"+itoa(pid)+"/holes", nil, &l)
	if len(l.Items) != 1 || *l.Items[0].Corrections.Declination != *c.Declination {
		t.Errorf("hole list: %+v", l.Items)
	}
	var pb struct {
		Corrections service.HoleCorrections `json:"corrections"`
	}
	f.must(200, f.site, "GET", hb+"/path", nil, &pb)
	if pb.Corrections.Declination == nil || *pb.Corrections.Declination != *c.Declination || *pb.Corrections.GridConvergence != *c.GridConvergence {
		t.Errorf("path: %+v", pb.Corrections)
	}

	// A typed declination is "given", whatever source the client sends: the
	// source is read-only.
	r = f.must(200, f.site, "PUT", hb+"/survey", map[string]any{"azimuth_ref": "magnetic", "survey_date": "2027-07-01",
		"declination": -2.5, "declination_source": "computed",
		"stations": []map[string]float64{{"depth": 0, "azimuth": 90, "dip": -60}}}, &ss, "If-Match", r.Header.Get("ETag"))
	if ss.DeclinationSource != "given" || ss.Declination == nil || *ss.Declination != -2.5 {
		t.Errorf("PUT survey with a declination: %v from %q, want -2.5 given", ss.Declination, ss.DeclinationSource)
	}
	f.must(200, f.site, "GET", hb+"/survey", nil, &ss)
	if ss.DeclinationSource != "given" || ss.Declination == nil || *ss.Declination != -2.5 {
		t.Errorf("GET survey: %v from %q, want -2.5 given", ss.Declination, ss.DeclinationSource)
	}
	f.must(200, f.site, "GET", hb, nil, &h)
	if c := h.Corrections; c.Declination == nil || *c.Declination != -2.5 || c.DeclinationSource == nil || *c.DeclinationSource != "given" {
		t.Errorf("GET hole after a typed declination: %+v", c)
	}

	// A survey against true north: no declination; the grid convergence stays.
	f.must(200, f.site, "PUT", hb+"/survey", map[string]any{"azimuth_ref": "true",
		"stations": []map[string]float64{{"depth": 0, "azimuth": 90, "dip": -60}}}, &ss, "If-Match", r.Header.Get("ETag"))
	if ss.Declination != nil || ss.DeclinationSource != "" {
		t.Errorf("true-north survey: declination %v from %q, want none", ss.Declination, ss.DeclinationSource)
	}
	f.must(200, f.site, "GET", hb, nil, &h)
	if c := h.Corrections; c.Declination != nil || c.DeclinationSource != nil || *c.SurveyAzimuthRef != "true" || c.ConvergenceSource != "computed" {
		t.Errorf("after a true-north survey: %+v", c)
	}
}
