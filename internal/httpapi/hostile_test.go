package httpapi

import (
	"strings"
	"testing"
)

// Tests of the service against hostile and careless clients.

// A made-up request method must not become a metric label of its own: the
// label set is closed, so memory stays bounded however many methods a client
// invents.
func TestMetricsMethodLabelClosed(t *testing.T) {
	f := newFixture(t)
	for _, m := range []string{"FOO", "BAR1", "X-Y-Z"} {
		f.do(f.site, m, "/v1/projects", nil)
	}
	f.do(f.site, "GET", "/v1/projects", nil)
	body := string(f.must(200, "", "GET", "/metrics", nil, nil).Body)
	for _, m := range []string{"FOO", "BAR1", "X-Y-Z"} {
		if strings.Contains(body, `method="`+m+`"`) {
			t.Errorf("/metrics has a label for the made-up method %s", m)
		}
	}
	if !strings.Contains(body, `method="other"`) {
		t.Error(`/metrics lacks method="other" for unknown methods`)
	}
	if !strings.Contains(body, `corvane_http_requests_total{method="GET",route="/v1/projects",status="200"} 1`) {
		t.Error("/metrics lost the GET label")
	}
}

// A ";" in the query string is refused, naming it, instead of dropping the
// pair (min_depth=249;x=1 would otherwise list every measurement).
func TestQuerySemicolonRefused(t *testing.T) {
	f := newFixture(t)
	pid := f.project("Semicolon", nil)
	h := f.hole(pid, "SC001", 90, -60)
	base := "/v1/projects/" + itoa(pid)
	f.must(201, f.site, "POST", base+"/measurements", map[string]any{"hole_id": h.ID, "depth": 10, "alpha": 30, "beta": 20, "type": "JN"}, nil)
	for _, q := range []string{"?min_depth=249;x=1", "?x=1;min_depth=249", "?hole=SC001%zz"} {
		r := f.do(f.site, "GET", base+"/measurements"+q, nil)
		if r.Code != 400 {
			t.Errorf("%s: status %d, want 400: %s", q, r.Code, r.Body)
			continue
		}
		p := r.problem(t)
		if strings.Contains(q, ";") && !strings.Contains(p.Detail, `";"`) {
			t.Errorf("%s: detail %q does not name the ;", q, p.Detail)
		}
	}
	// An escaped ; is a value like any other: it reaches the filter whole.
	r := f.must(422, f.site, "GET", base+"/measurements?hole=SC001%3Bx", nil, nil)
	if p := r.problem(t); !strings.Contains(p.Detail, `"SC001;x"`) {
		t.Errorf("escaped ; did not reach the filter: %q", p.Detail)
	}
}
