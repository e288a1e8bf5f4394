package httpapi

import (
	"testing"

	"corvane/internal/domain"
)

// The project's error model and persistent fabric and the survey set's
// instrument are settings of the API: they round-trip, bad values are
// refused naming the field, and the derived values of a stored measurement
// follow them (a wider mark error, a less precise instrument: a wider
// region).
func TestUncertaintySettings(t *testing.T) {
	f := newFixture(t)
	pid := f.project("Settings", nil)
	base := "/v1/projects/" + itoa(pid)
	h := f.hole(pid, "UN001", 90, -60)
	var ss domain.SurveySet
	f.must(200, f.site, "PUT", base+"/holes/"+itoa(h.ID)+"/survey", map[string]any{
		"azimuth_ref": "grid", "instrument": "gyro",
		"stations": []map[string]float64{{"depth": 0, "azimuth": 90, "dip": -60}, {"depth": 300, "azimuth": 90, "dip": -60}},
	}, &ss, "If-None-Match", "*")
	if ss.Instrument != "gyro" {
		t.Errorf("survey instrument %q, want gyro", ss.Instrument)
	}
	var m struct {
		ID      int64          `json:"id"`
		Derived map[string]any `json:"derived"`
	}
	f.must(201, f.site, "POST", base+"/measurements", map[string]any{"hole_id": h.ID, "depth": 50, "alpha": 40, "beta": 120, "type": "JN"}, &m)
	cone := func() float64 {
		t.Helper()
		f.must(200, f.site, "GET", base+"/measurements/"+itoa(m.ID), nil, &m)
		c, ok := m.Derived["pole_cone95"].(float64)
		if !ok || !(c > 0) || m.Derived["pole_method"] == "" {
			t.Fatalf("derived without a pole region: %v", m.Derived)
		}
		return c
	}
	gyro := cone()

	var p domain.Project
	r := f.must(200, f.site, "GET", base, nil, &p)
	put := map[string]any{"name": p.Name, "error_model": map[string]any{"mark_unrated": 30, "gyro": map[string]float64{"azimuth": 0.25}}, "persistent_fabric": " BD "}
	r = f.must(200, f.site, "PUT", base, put, &p, "If-Match", r.Header.Get("ETag"))
	var got domain.Project
	f.must(200, f.site, "GET", base, nil, &got)
	if got.PersistentFabric != "BD" || got.ErrorModel.MarkUnrated != 30 || got.ErrorModel.Gyro.Azimuth != 0.25 || got.ErrorModel.Beta != 0 {
		t.Errorf("settings read back as %q %+v", got.PersistentFabric, got.ErrorModel)
	}
	if wide := cone(); !(wide > gyro) {
		t.Errorf("mark error 30 gives cone %v, not wider than %v at the default", wide, gyro)
	}

	put["error_model"] = map[string]any{"beta": -1}
	if pr := f.do(f.site, "PUT", base, put, "If-Match", r.Header.Get("ETag")).problem(t); pr.Status != 422 || !hasField(pr, "error_model") {
		t.Errorf("negative beta error: %d %+v", pr.Status, pr)
	}
	bad := map[string]any{"azimuth_ref": "grid", "instrument": "laser", "stations": []map[string]float64{{"depth": 0, "azimuth": 90, "dip": -60}}}
	if pr := f.do(f.site, "PUT", base+"/holes/"+itoa(h.ID)+"/survey", bad, "If-Match", etag(ss.Version)).problem(t); pr.Status != 422 || !hasField(pr, "instrument") {
		t.Errorf("instrument laser: %d %+v", pr.Status, pr)
	}
}

// hasField reports whether the problem names field.
func hasField(p Problem, field string) bool {
	for _, e := range p.Errors {
		if e.Column == field || e.Field == field {
			return true
		}
	}
	return false
}
