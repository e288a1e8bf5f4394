package web_test

import (
	"context"
	"net/http/httptest"
	"path/filepath"
	"testing"

	"corvane/internal/domain"
	"corvane/internal/httpapi"
	"corvane/internal/service"
	"corvane/internal/store"
	"corvane/internal/web"
)

// startService runs the real service for one test: the SQLite store in a
// temporary file with the demonstration programme loaded, the HTTP API with
// the web page mounted, on 127.0.0.1. It returns the URL and tokens for a
// logger (role log) and a reader (role read) of the demo project.
func startService(t *testing.T) *server {
	t.Helper()
	ctx := context.Background()
	st, err := store.OpenMigrated(ctx, filepath.Join(t.TempDir(), "corvane.db"))
	if err != nil {
		t.Fatalf("opening the store: %v", err)
	}
	t.Cleanup(func() { st.Close() })
	svc := service.New(st, nil)
	sys := service.WithActor(ctx, service.System)
	p, _, err := svc.LoadDemo(sys)
	if err != nil {
		t.Fatalf("loading the demo programme: %v", err)
	}
	logTok, _, err := svc.CreateToken(sys, p.ID, domain.RoleLog, "bench logger")
	if err != nil {
		t.Fatal(err)
	}
	readTok, _, err := svc.CreateToken(sys, p.ID, domain.RoleRead, "reviewer")
	if err != nil {
		t.Fatal(err)
	}
	ts := httptest.NewServer(httpapi.New(httpapi.Options{Service: svc, Web: web.Handler()}))
	t.Cleanup(ts.Close)
	return &server{URL: ts.URL, Token: logTok, ReadToken: readTok, Project: p.ID}
}
