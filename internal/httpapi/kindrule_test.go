package httpapi

import (
	"strings"
	"testing"
)

// TestImportKindRule: the measurements import applies the one gamma-vs-kind
// rule of domain.CheckKind, as logging one measurement does: gamma on a plane
// type and a line type without gamma are refused, every such row located
// (file, line, column gamma), nothing stored; each row's problem reads as the
// logging route's answer for the same measurement.
func TestImportKindRule(t *testing.T) {
	f := newFixture(t)
	pid := f.project("Kinds", nil) // JN, BD planes; LN a line
	f.hole(pid, "KD001", 45, -60)
	base := "/v1/projects/" + itoa(pid)
	bad := "hole_id,depth,alpha,beta,gamma,type\n" +
		"KD001,10,45,90,,JN\n" + // line 2: a plane without gamma
		"KD001,11,40,80,30,JN\n" + // line 3: gamma on a plane type
		"KD001,12,35,70,,LN\n" + // line 4: a line type without gamma
		"KD001,13,30,60,120,LN\n" // line 5: a line with gamma
	r := f.do(f.site, "POST", base+"/imports/measurements", bad, "X-Filename", "kinds.csv")
	p := r.problem(t)
	if p.Status != 422 || len(p.Errors) != 2 {
		t.Fatalf("gamma against the kind: %d with %d row errors, want 422 with 2: %s", p.Status, len(p.Errors), r.Body)
	}
	// The logging route's answers for rows 3 and 4.
	single := []map[string]any{
		{"hole": "KD001", "depth": 11, "alpha": 40, "beta": 80, "gamma": 30, "type": "JN"},
		{"hole": "KD001", "depth": 12, "alpha": 35, "beta": 70, "type": "LN"},
	}
	for i, e := range p.Errors {
		if e.File != "kinds.csv" || e.Line != 3+i || e.Column != "gamma" {
			t.Errorf("row error %d: %+v, want kinds.csv line %d column gamma", i, e, 3+i)
		}
		sp := f.do(f.site, "POST", base+"/measurements", single[i]).problem(t)
		if sp.Status != 422 || sp.Detail == "" || e.Detail == "" || !strings.HasSuffix(sp.Detail, ": "+e.Detail) {
			t.Errorf("row %d: import says %q, logging says %d %q; want the same rule's words", 3+i, e.Detail, sp.Status, sp.Detail)
		}
	}
	var pg struct {
		Items []map[string]any `json:"items"`
	}
	f.must(200, f.site, "GET", base+"/measurements?limit=100", nil, &pg)
	if len(pg.Items) != 0 {
		t.Errorf("a refused file stored %d measurements", len(pg.Items))
	}
	// The two good rows alone import.
	good := "hole_id,depth,alpha,beta,gamma,type\nKD001,10,45,90,,JN\nKD001,13,30,60,120,LN\n"
	f.must(201, f.site, "POST", base+"/imports/measurements", good, nil)
}
