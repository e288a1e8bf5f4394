package web_test

import (
	"context"
	"fmt"
	"net/http/httptest"
	"os"
	"path/filepath"
	"sync"
	"testing"

	"corvane/internal/domain"
	"corvane/internal/httpapi"
	"corvane/internal/service"
	"corvane/internal/store"
	"corvane/internal/web"
)

// The browser tests share one running service; each test works in its own
// hole of the demo programme so that their changes do not meet.
var running struct {
	once sync.Once
	srv  *server
	err  error
	stop []func()
}

// startService runs the real service (once per package): the SQLite store in
// a temporary file with the demonstration programme loaded, the HTTP API with
// the web page mounted, on 127.0.0.1. It returns the URL and tokens for a
// logger (role log) and a reader (role read) of the demo project.
func startService(t *testing.T) *server {
	t.Helper()
	running.once.Do(func() { running.srv, running.err = start() })
	if running.err != nil {
		t.Fatal(running.err)
	}
	return running.srv
}

func start() (*server, error) {
	ctx := context.Background()
	dir, err := os.MkdirTemp("", "corvane-web-")
	if err != nil {
		return nil, err
	}
	running.stop = append(running.stop, func() { os.RemoveAll(dir) })
	st, err := store.OpenMigrated(ctx, filepath.Join(dir, "corvane.db"))
	if err != nil {
		return nil, fmt.Errorf("opening the store: %w", err)
	}
	running.stop = append(running.stop, func() { st.Close() })
	svc := service.New(st, nil)
	sys := service.WithActor(ctx, service.System)
	p, _, err := svc.LoadDemo(sys)
	if err != nil {
		return nil, fmt.Errorf("loading the demo programme: %w", err)
	}
	logTok, _, err := svc.CreateToken(sys, p.ID, domain.RoleLog, "bench logger")
	if err != nil {
		return nil, err
	}
	readTok, _, err := svc.CreateToken(sys, p.ID, domain.RoleRead, "reviewer")
	if err != nil {
		return nil, err
	}
	ts := httptest.NewServer(httpapi.New(httpapi.Options{Service: svc, Web: web.Handler()}))
	running.stop = append(running.stop, ts.Close)
	return &server{URL: ts.URL, Token: logTok, ReadToken: readTok, Project: p.ID, svc: svc}, nil
}

// stopService stops the shared service (from TestMain).
func stopService() {
	for i := len(running.stop) - 1; i >= 0; i-- {
		running.stop[i]()
	}
}
