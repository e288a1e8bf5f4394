package httpapi

import (
	"strings"
	"testing"

	"corvane/internal/domain"
)

// The geotechnical routes bound their parameters (422 naming the
// parameter), carry the kinematic caution on every slope output, and let a
// reader list but not replace core intervals (refused before the body is
// read).
func TestGeotechRoutes(t *testing.T) {
	f := newFixture(t)
	pid := f.project("Geo", nil)
	base := "/v1/projects/" + itoa(pid)
	h := f.hole(pid, "G1", 90, -60)
	for i, a := range []float64{30, 40, 50} {
		f.must(201, f.site, "POST", base+"/measurements", map[string]any{"hole_id": h.ID, "depth": 5 + float64(i), "alpha": a, "beta": 100 + 20*float64(i), "type": "JN"}, nil)
	}
	bad := []struct{ path, field string }{
		{"/slope-check?face=65/180&friction=95", "friction"},
		{"/slope-check?face=65/180", "friction"},
		{"/slope-check?face=95/180&friction=30", "face"},
		{"/slope-check?face=65/180&friction=30&lateral=0", "lateral"},
		{"/slope-check/sideways?face=65/180&friction=30", "check"},
		{"/spacing?sets=type&cap=500", "cap"},
		{"/spacing?sets=type&cap=0.5", "cap"},
		{"/domains?sets=type", "domain"},
		{"/domains?sets=type&domain=nonsense", "domain"},
		{"/domains?sets=type" + strings.Repeat("&domain=A%3DG1", 21), "domain"},
	}
	for _, b := range bad {
		r := f.do(f.site, "GET", base+b.path, nil)
		if r.Code != 422 || !strings.Contains(string(r.Body), `"field":"`+b.field+`"`) {
			t.Errorf("GET %s: %d %s, want 422 naming %s", b.path, r.Code, r.Body, b.field)
		}
	}
	var rep map[string]any
	f.must(200, f.site, "GET", base+"/slope-check?sets=type&face=65/180&friction=30", nil, &rep)
	if c, _ := rep["caution"].(string); !strings.Contains(c, "Kinematically possible is not unstable") || !strings.Contains(c, "licensed practitioner") {
		t.Errorf("slope check caution %q", rep["caution"])
	}
	for _, check := range []string{"planar", "wedge", "flexural", "direct"} {
		r := f.must(200, f.site, "GET", base+"/slope-check/"+check+"?sets=type&face=65/180&friction=30", nil, nil)
		if !strings.Contains(string(r.Body), "Kinematically possible is not unstable") || r.Header.Get("Content-Type") != "image/svg+xml" {
			t.Errorf("%s net: %s without the caution", check, r.Header.Get("Content-Type"))
		}
	}
	reader := f.token(pid, domain.RoleRead, "reader")
	f.must(200, reader, "GET", base+"/holes/"+itoa(h.ID)+"/intervals", nil, nil)
	r := f.do(reader, "PUT", base+"/holes/"+itoa(h.ID)+"/intervals", []byte("{not json"))
	if r.Code != 403 {
		t.Errorf("reader replacing intervals with a broken body: %d %s, want 403 (role checked before the body)", r.Code, r.Body)
	}
	r = f.do(reader, "POST", base+"/imports/intervals", "not,a,file\n")
	if r.Code != 403 {
		t.Errorf("reader importing intervals: %d %s, want 403", r.Code, r.Body)
	}
	r = f.do(f.site, "PUT", base+"/holes/"+itoa(h.ID)+"/intervals", map[string]any{"intervals": []map[string]any{{"from": 0, "to": 3}, {"from": 2, "to": 500}}})
	if r.Code != 422 || !strings.Contains(string(r.Body), `"field":"intervals[1].from"`) || !strings.Contains(string(r.Body), `"field":"intervals[1].to"`) {
		t.Errorf("overlapping interval past the hole: %d %s", r.Code, r.Body)
	}
}
