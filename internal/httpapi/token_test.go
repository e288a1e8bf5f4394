package httpapi

import (
	"context"
	"testing"

	"corvane/internal/domain"
	"corvane/internal/service"
)

// TestRevokedTokenRefused: a token works until it is revoked, and the next
// request with it gets 401 as a problem.
func TestRevokedTokenRefused(t *testing.T) {
	f := newFixture(t)
	pid := f.project("Revoke", nil)
	base := "/v1/projects/" + itoa(pid)
	secret, tok, err := f.svc.CreateToken(service.WithActor(context.Background(), service.System), pid, domain.RoleRead, "bench tablet")
	if err != nil {
		t.Fatal(err)
	}
	f.must(200, secret, "GET", base+"/holes", nil, nil)
	if _, err := f.svc.RevokeToken(service.WithActor(context.Background(), service.System), pid, tok.ID); err != nil {
		t.Fatal(err)
	}
	r := f.do(secret, "GET", base+"/holes", nil)
	if p := r.problem(t); p.Status != 401 {
		t.Errorf("revoked token: %d %+v, want 401", r.Code, p)
	}
	f.must(200, f.site, "GET", base+"/holes", nil, nil)
}
