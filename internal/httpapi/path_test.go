package httpapi

import (
	"math"
	"testing"

	"corvane/internal/domain"
	"corvane/internal/service"
)

type pathBody struct {
	Items []service.PathPoint `json:"items"`
}

// The path's JSON carries positions to 0.001 of the length unit and angles
// to 0.01 degree (convert.Decimals, the derived values' precision): pnear
// compares a position, anear an angle, within half the last written digit.
func pnear(a, b float64) bool { return math.Abs(a-b) <= 0.0005+1e-9 }
func anear(a, b float64) bool { return math.Abs(a-b) <= 0.005+1e-9 }

// TestHolePathStraight checks a straight hole against hand geometry: a hole
// at azimuth 90, dip -60 moves cos 60 = 0.5 east and sin 60 down per unit of
// depth (common practice: a straight hole is a line along its direction).
func TestHolePathStraight(t *testing.T) {
	f := newFixture(t)
	pid := f.project("Path", map[string]any{"output_azimuth_ref": "grid"})
	var h domain.Hole
	f.must(201, f.site, "POST", "/v1/projects/"+itoa(pid)+"/holes", map[string]any{
		"name": "P1", "easting": 1000, "northing": 2000, "elevation": 300, "azimuth": 90, "dip": -60, "final_depth": 100,
	}, &h)
	hb := "/v1/projects/" + itoa(pid) + "/holes/" + itoa(h.ID)
	f.must(200, f.site, "PUT", hb+"/survey", map[string]any{"azimuth_ref": "grid",
		"stations": []map[string]float64{{"depth": 0, "azimuth": 90, "dip": -60}, {"depth": 47, "azimuth": 90, "dip": -60}, {"depth": 80, "azimuth": 90, "dip": -60}}},
		nil, "If-None-Match", "*")
	var b pathBody
	f.must(200, f.site, "GET", hb+"/path?step=10", nil, &b)
	want := []float64{0, 10, 20, 30, 40, 47, 50, 60, 70, 80, 90, 100}
	if len(b.Items) != len(want) {
		t.Fatalf("%d points, want %d (every 10 m plus the station at 47): %+v", len(b.Items), len(want), b.Items)
	}
	s60 := math.Sqrt(3) / 2
	for i, p := range b.Items {
		d := want[i]
		if p.Depth != d {
			t.Fatalf("point %d at depth %v, want %v", i, p.Depth, d)
		}
		if !pnear(p.East, 1000+0.5*d) || !pnear(p.North, 2000) || !pnear(p.Elevation, 300-s60*d) {
			t.Errorf("depth %v: (%v, %v, %v), want (%v, 2000, %v)", d, p.East, p.North, p.Elevation, 1000+0.5*d, 300-s60*d)
		}
		if !anear(p.Azimuth, 90) || !anear(p.Dip, -60) {
			t.Errorf("depth %v: direction %v/%v, want 90/-60", d, p.Azimuth, p.Dip)
		}
		if p.Extrapolated != (d > 80) {
			t.Errorf("depth %v: extrapolated %v, want %v (last station at 80)", d, p.Extrapolated, d > 80)
		}
		if d <= 80 && (p.DoglegSeverity == nil || !anear(*p.DoglegSeverity, 0)) {
			t.Errorf("depth %v: dogleg severity %v, want 0", d, p.DoglegSeverity)
		}
		if d > 80 && p.DoglegSeverity != nil {
			t.Errorf("depth %v: dogleg severity %v below the last station, want null", d, *p.DoglegSeverity)
		}
	}
	f.must(200, f.site, "GET", hb+"/path", nil, &b)
	if len(b.Items) != 22 { // 0, 5, ..., 95, 100 and the station at 47 (80 is on the grid)
		t.Errorf("default step: %d points, want 22", len(b.Items))
	}
	for _, bad := range []string{"0.1", "101", "x", "NaN", "-5"} {
		r := f.do(f.site, "GET", hb+"/path?step="+bad, nil)
		if r.Code != 422 {
			t.Errorf("step=%s: status %d, want 422", bad, r.Code)
			continue
		}
		if p := r.problem(t); len(p.Errors) == 0 || p.Errors[0].Field != "step" {
			t.Errorf("step=%s: problem %+v does not name the step", bad, p)
		}
	}
	reader := f.token(pid, domain.RoleRead, "reader")
	f.must(200, reader, "GET", hb+"/path", nil, nil)
	other := f.project("Other", nil)
	f.must(404, f.site, "GET", "/v1/projects/"+itoa(other)+"/holes/"+itoa(h.ID)+"/path", nil, nil)
	f.must(401, "", "GET", hb+"/path", nil, nil)
}

// TestHolePathFollowsSurvey changes the survey and checks the path follows
// at once, never stale: dip -60 to -50 over 0..100 at azimuth 90 is a
// dogleg of 10 degrees, 3 degrees per 30 m; the point at 100 lies where the
// minimum-curvature formula puts it (common practice: displacement
// L/2 (t1 + t2) RF with RF = 2/dl tan(dl/2)).
func TestHolePathFollowsSurvey(t *testing.T) {
	f := newFixture(t)
	pid := f.project("Path", map[string]any{"output_azimuth_ref": "grid"})
	var h domain.Hole
	f.must(201, f.site, "POST", "/v1/projects/"+itoa(pid)+"/holes", map[string]any{
		"name": "P2", "easting": 0, "northing": 0, "elevation": 0, "azimuth": 90, "dip": -60, "final_depth": 100,
	}, &h)
	hb := "/v1/projects/" + itoa(pid) + "/holes/" + itoa(h.ID)
	r := f.must(200, f.site, "PUT", hb+"/survey", map[string]any{"azimuth_ref": "grid",
		"stations": []map[string]float64{{"depth": 0, "azimuth": 90, "dip": -60}, {"depth": 100, "azimuth": 90, "dip": -60}}},
		nil, "If-None-Match", "*")
	var before pathBody
	f.must(200, f.site, "GET", hb+"/path?step=50", nil, &before)
	f.must(200, f.site, "PUT", hb+"/survey", map[string]any{"azimuth_ref": "grid",
		"stations": []map[string]float64{{"depth": 0, "azimuth": 90, "dip": -60}, {"depth": 100, "azimuth": 90, "dip": -50}}},
		nil, "If-Match", r.Header.Get("ETag"))
	var after pathBody
	f.must(200, f.site, "GET", hb+"/path?step=50", nil, &after)
	if len(after.Items) != 3 || len(before.Items) != 3 {
		t.Fatalf("points: before %d, after %d, want 3", len(before.Items), len(after.Items))
	}
	end := after.Items[2]
	dl := 10 * math.Pi / 180
	rf := 2 / dl * math.Tan(dl/2)
	r60, r50 := 60*math.Pi/180, 50*math.Pi/180
	wantE := 100 / 2.0 * (math.Cos(r60) + math.Cos(r50)) * rf
	wantZ := -100 / 2.0 * (math.Sin(r60) + math.Sin(r50)) * rf
	if !pnear(end.East, wantE) || !pnear(end.North, 0) || !pnear(end.Elevation, wantZ) {
		t.Errorf("end after the change at (%v, %v, %v), want (%v, 0, %v)", end.East, end.North, end.Elevation, wantE, wantZ)
	}
	if pnear(end.East, before.Items[2].East) {
		t.Errorf("path did not change with the survey: %+v", end)
	}
	if !anear(end.Dip, -50) || end.DoglegSeverity == nil || !anear(*end.DoglegSeverity, 3) {
		t.Errorf("end dip %v severity %v, want -50 and 3 deg/30 m", end.Dip, end.DoglegSeverity)
	}
	if mid := after.Items[1]; !anear(mid.Dip, -55) {
		t.Errorf("mid-interval dip %v, want -55 (same azimuth: the arc halves the dip change)", mid.Dip)
	}
}

// TestHolePathCorrections: the path uses the corrections of the derived
// values. A magnetic survey of azimuth 80 with declination +10 is true 090
// (true = magnetic + declination, common practice), and every point agrees
// with the derived position and hole direction of a measurement logged at
// its depth.
func TestHolePathCorrections(t *testing.T) {
	f := newFixture(t)
	pid := f.project("Path", map[string]any{"output_azimuth_ref": "true", "declination": 10, "convergence": 1.5})
	var h domain.Hole
	f.must(201, f.site, "POST", "/v1/projects/"+itoa(pid)+"/holes", map[string]any{
		"name": "P3", "easting": 500, "northing": 700, "elevation": 100, "azimuth": 80, "azimuth_ref": "magnetic", "dip": -70, "final_depth": 120,
	}, &h)
	hb := "/v1/projects/" + itoa(pid) + "/holes/" + itoa(h.ID)
	f.must(200, f.site, "PUT", hb+"/survey", map[string]any{"azimuth_ref": "magnetic", "declination": 10,
		"stations": []map[string]float64{{"depth": 0, "azimuth": 80, "dip": -70}, {"depth": 60, "azimuth": 95, "dip": -65}, {"depth": 110, "azimuth": 105, "dip": -62}}},
		nil, "If-None-Match", "*")
	var b pathBody
	f.must(200, f.site, "GET", hb+"/path?step=7.5", nil, &b)
	if first := b.Items[0]; !anear(first.Azimuth, 90) || !anear(first.Dip, -70) {
		t.Errorf("collar direction %v/%v, want 90/-70 true", first.Azimuth, first.Dip)
	}
	for _, p := range b.Items {
		if p.Depth == 0 {
			continue
		}
		var m view
		f.must(201, f.site, "POST", "/v1/projects/"+itoa(pid)+"/measurements", map[string]any{"hole_id": h.ID, "depth": p.Depth, "alpha": 45, "beta": 0, "type": "JN"}, &m)
		d := m.Derived
		// The path and the derived values are both written at the CSV's
		// precision (convert.Decimals): the same figures.
		if d.East == nil || *d.East != p.East || *d.North != p.North || *d.Elevation != p.Elevation ||
			*d.HoleAzimuth != p.Azimuth || *d.HoleDip != p.Dip {
			t.Errorf("depth %v: path %+v, derived values of a measurement there %v %v %v %v/%v", p.Depth, p, *d.East, *d.North, *d.Elevation, *d.HoleAzimuth, *d.HoleDip)
		}
	}
}
