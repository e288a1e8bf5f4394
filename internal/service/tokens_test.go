package service_test

import (
	"context"
	"strconv"
	"testing"

	"corvane/internal/domain"
	"corvane/internal/service"
)

// TestRevokeToken: a revoked token no longer authenticates; revoking is for
// admins of the token's own project, leaves an audit entry, and by name
// revokes every token of that name in the project and no other.
func TestRevokeToken(t *testing.T) {
	s, sys := newService(t)
	p, _ := programme(t, s, sys, domain.Project{})
	q, _ := programme(t, s, sys, domain.Project{Name: "other"})
	adminSecret, adminTok := mustToken(t, s, sys, p.ID, domain.RoleAdmin)
	logSecret, logTok := mustToken(t, s, sys, p.ID, domain.RoleLog)
	otherSecret, otherTok := mustToken(t, s, sys, q.ID, domain.RoleAdmin)
	admin := service.WithActor(context.Background(), must(s.Authenticate(sys, adminSecret)))
	logger := service.WithActor(context.Background(), must(s.Authenticate(sys, logSecret)))

	_, err := s.RevokeToken(logger, p.ID, adminTok.ID)
	wantKind(t, err, domain.Forbidden, "logger revoking")
	_, err = s.RevokeToken(admin, p.ID, otherTok.ID)
	wantKind(t, err, domain.NotFound, "token of another project through this one")
	_, err = s.RevokeToken(admin, q.ID, otherTok.ID)
	wantKind(t, err, domain.Forbidden, "admin of another project")
	_, err = s.RevokeToken(admin, domain.AllProjects, logTok.ID)
	wantKind(t, err, domain.Forbidden, "project admin on the site tokens")
	if _, err := s.Authenticate(sys, otherSecret); err != nil {
		t.Fatalf("refused revocations touched the other project's token: %v", err)
	}

	got := must(s.RevokeToken(admin, p.ID, logTok.ID))
	if got.ID != logTok.ID || got.Name != logTok.Name {
		t.Errorf("revoked %+v, want %+v", got, logTok)
	}
	_, err = s.Authenticate(sys, logSecret)
	wantKind(t, err, domain.Unauthorized, "revoked token")
	_, err = s.RevokeToken(admin, p.ID, logTok.ID)
	wantKind(t, err, domain.NotFound, "revoking twice")
	ts := must(s.ListTokens(admin, p.ID))
	if len(ts) != 1 || ts[0].ID != adminTok.ID {
		t.Errorf("tokens after revoking: %+v", ts)
	}
	audit := must(s.ListAudit(admin, p.ID, domain.Page{Limit: 1000}))
	found := false
	for _, e := range audit.Items {
		if e.Entity == "token" && e.Action == domain.ActionDelete && e.EntityID == strconv.FormatInt(logTok.ID, 10) {
			found = e.ActorName == adminTok.Name
		}
	}
	if !found {
		t.Errorf("no audit entry by %q for revoking token %d", adminTok.Name, logTok.ID)
	}

	// By name: both "bench" tokens of p go, the one of q and p's admin stay.
	var benchSecrets []string
	for range 2 {
		sec, _, err := s.CreateToken(sys, p.ID, domain.RoleRead, "bench")
		if err != nil {
			t.Fatal(err)
		}
		benchSecrets = append(benchSecrets, sec)
	}
	qBench, _, err := s.CreateToken(sys, q.ID, domain.RoleRead, "bench")
	if err != nil {
		t.Fatal(err)
	}
	gone := must(s.RevokeTokensNamed(admin, p.ID, "bench"))
	if len(gone) != 2 {
		t.Errorf("revoked %d tokens named bench, want 2", len(gone))
	}
	for _, sec := range benchSecrets {
		_, err := s.Authenticate(sys, sec)
		wantKind(t, err, domain.Unauthorized, "revoked by name")
	}
	for _, sec := range []string{qBench, adminSecret} {
		if _, err := s.Authenticate(sys, sec); err != nil {
			t.Errorf("a token outside the revocation was refused: %v", err)
		}
	}
	_, err = s.RevokeTokensNamed(admin, p.ID, "bench")
	wantKind(t, err, domain.NotFound, "no token of that name left")
}
