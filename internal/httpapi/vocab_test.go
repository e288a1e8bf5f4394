package httpapi

import (
	"strings"
	"testing"

	"corvane/internal/domain"
)

// TestTypeCodeRules: a type created by PUT answers 201 and is audited as
// create, a replaced one 200 and update; codes match without regard to
// case in PUT, measurements and filters (the vocabulary's spelling is kept);
// an unknown type filter is 422, as an unknown hole is.
func TestTypeCodeRules(t *testing.T) {
	f := newFixture(t)
	pid := f.project("Vocab", nil) // JN, BD, LN
	base := "/v1/projects/" + itoa(pid)
	h := f.hole(pid, "VC001", 0, -60)
	f.must(201, f.site, "PUT", base+"/types/FLT", map[string]string{"description": "fault"}, nil)
	var tc domain.TypeCode
	f.must(200, f.site, "PUT", base+"/types/flt", map[string]string{"description": "fault zone"}, &tc)
	if tc.Code != "FLT" || tc.Description != "fault zone" {
		t.Errorf("PUT of a case variant: %+v, want FLT replaced", tc)
	}
	var m struct {
		Type string `json:"type"`
	}
	f.must(201, f.site, "POST", base+"/measurements", map[string]any{"hole_id": h.ID, "depth": 5, "alpha": 45, "beta": 90, "type": "jn"}, &m)
	if m.Type != "JN" {
		t.Errorf("measurement of type jn stored as %q, want JN", m.Type)
	}
	var l struct {
		Items []map[string]any `json:"items"`
	}
	f.must(200, f.site, "GET", base+"/measurements?type=Jn", nil, &l)
	if len(l.Items) != 1 {
		t.Errorf("type=Jn: %d measurements, want 1", len(l.Items))
	}
	for _, path := range []string{"/measurements?type=nope", "/statistics?type=nope", "/measurements.csv?type=nope"} {
		p := f.do(f.site, "GET", base+path, nil).problem(t)
		if p.Status != 422 || !strings.Contains(p.Detail, "nope") {
			t.Errorf("GET %s: %d %s %v, want 422 naming the type", path, p.Status, p.Detail, p.Errors)
		}
	}
	var audit struct {
		Items []domain.AuditEntry `json:"items"`
	}
	f.must(200, f.site, "GET", base+"/audit?limit=1000", nil, &audit)
	var actions []string
	for _, e := range audit.Items {
		if e.Entity == "type_code" && e.EntityID == "FLT" {
			actions = append(actions, e.Action)
		}
	}
	if strings.Join(actions, ",") != "create,update" {
		t.Errorf("audit of type FLT: %v, want create,update", actions)
	}
}
