package httpapi

import (
	"testing"

	"corvane/internal/domain"
)

// A site admin reads the audit trail across projects, a deleted project's
// too; project tokens cannot (the trail of a deleted project was once
// unreadable, since its own route answers 404).
func TestSiteAudit(t *testing.T) {
	f := newFixture(t)
	keep := f.project("Kept", nil)
	gone := f.project("Gone", nil)
	f.hole(gone, "GN001", 90, -60)
	var p domain.Project
	r := f.must(200, f.site, "GET", "/v1/projects/"+itoa(gone), nil, &p)
	f.must(204, f.site, "DELETE", "/v1/projects/"+itoa(gone), nil, nil, "If-Match", r.Header.Get("ETag"))
	f.must(404, f.site, "GET", "/v1/projects/"+itoa(gone)+"/audit", nil, nil)

	type entries struct {
		Items []domain.AuditEntry `json:"items"`
	}
	var all entries
	f.must(200, f.site, "GET", "/v1/audit?limit=1000", nil, &all)
	seen := map[int64][]string{}
	for _, e := range all.Items {
		seen[e.ProjectID] = append(seen[e.ProjectID], e.Entity+" "+e.Action)
	}
	if len(seen[keep]) == 0 || len(seen[gone]) < 3 { // project, types, hole, delete
		t.Fatalf("the audit across projects: %v", seen)
	}
	var one entries
	f.must(200, f.site, "GET", "/v1/audit?project="+itoa(gone), nil, &one)
	hasDelete := false
	for _, e := range one.Items {
		if e.ProjectID != gone {
			t.Errorf("?project=%d listed an entry of project %d", gone, e.ProjectID)
		}
		hasDelete = hasDelete || (e.Entity == "project" && e.Action == domain.ActionDelete)
	}
	if len(one.Items) != len(seen[gone]) || !hasDelete {
		t.Errorf("the deleted project's trail: %d entries (delete listed: %t), want %d", len(one.Items), hasDelete, len(seen[gone]))
	}
	var site entries
	f.must(200, f.site, "GET", "/v1/audit?project=0", nil, &site)
	if len(site.Items) == 0 || site.Items[0].Entity != "token" || site.Items[0].ProjectID != domain.AllProjects {
		t.Errorf("the site's own actions (the site token's creation): %+v", site.Items)
	}
	var page2 entries
	r = f.must(200, f.site, "GET", "/v1/audit?limit=1", nil, &page2)
	if len(page2.Items) != 1 || r.Header.Get("Link") == "" {
		t.Errorf("paging: %d items, Link %q", len(page2.Items), r.Header.Get("Link"))
	}

	admin := f.token(keep, domain.RoleAdmin, "project admin")
	if p := f.do(admin, "GET", "/v1/audit", nil).problem(t); p.Status != 403 {
		t.Errorf("a project admin token read the audit across projects: %d", p.Status)
	}
	if p := f.do("", "GET", "/v1/audit", nil).problem(t); p.Status != 401 {
		t.Errorf("no token: %d", p.Status)
	}
	if p := f.do(f.site, "GET", "/v1/audit?project=x", nil).problem(t); p.Status != 422 {
		t.Errorf("?project=x: %d", p.Status)
	}
}
