package cli

import (
	"context"
	"io"
	"log/slog"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"corvane/internal/domain"
	"corvane/internal/service"
	"corvane/internal/store"
)

// TestTokenListRevoke: list shows the project's tokens without secrets;
// revoke by id or by name makes the secret fail to authenticate.
func TestTokenListRevoke(t *testing.T) {
	db := filepath.Join(t.TempDir(), "t.db")
	env := map[string]string{"CORVANE_DATABASE_URL": db}
	if code, _, errs := runWithEnv(t, env, "token", "list", "--project", "all"); code != ExitRows || !strings.Contains(errs, "migrate up") {
		t.Fatalf("list on an empty database: %d %q", code, errs)
	}
	runWithEnv(t, env, "migrate", "up")
	ctx := context.Background()
	svc := openService(t, db)
	sys := service.WithActor(ctx, service.System)
	p, err := svc.CreateProject(sys, domain.Project{Name: "Zelvorra Reach"})
	if err != nil {
		t.Fatal(err)
	}
	create := func(name string) string {
		code, out, errs := runWithEnv(t, env, "token", "create", "--project", "Zelvorra Reach", "--role", "log", "--name", name)
		if code != ExitOK {
			t.Fatalf("create %s: %d %q", name, code, errs)
		}
		return strings.TrimSpace(out)
	}
	rig, bench1, bench2 := create("rig 2"), create("bench"), create("bench")
	code, out, errs := runWithEnv(t, env, "token", "list", "--project", "Zelvorra Reach")
	if code != ExitOK {
		t.Fatalf("list: %d %q", code, errs)
	}
	lines := strings.Split(strings.TrimSpace(out), "\n")
	if len(lines) != 4 || !strings.HasPrefix(lines[0], "ID") || !strings.Contains(out, "rig 2") || strings.Contains(out, "cvt_") {
		t.Fatalf("list printed %q", out)
	}
	rigID := regexp.MustCompile(`^(\d+)\s+log\s`).FindStringSubmatch(lines[1])
	if rigID == nil || !strings.HasSuffix(lines[1], "rig 2") {
		t.Fatalf("first token line %q", lines[1])
	}
	for _, bad := range [][]string{
		{"token", "revoke"},
		{"token", "revoke", "--id", "1", "--name", "x"},
		{"token", "revoke", "--name", "bench"},
		{"token", "list"},
		{"token", "rotate"},
	} {
		if code, _, _ := runWithEnv(t, env, bad...); code != ExitUsage {
			t.Errorf("%v: exit %d, want %d", bad, code, ExitUsage)
		}
	}
	if code, _, errs := runWithEnv(t, env, "token", "revoke", "--id", "999"); code != ExitRows || !strings.Contains(errs, "999") {
		t.Errorf("unknown id: %d %q", code, errs)
	}
	if code, out, errs := runWithEnv(t, env, "token", "revoke", "--id", rigID[1]); code != ExitOK || !strings.Contains(out, `"rig 2"`) {
		t.Fatalf("revoke by id: %d %q %q", code, out, errs)
	}
	_, err = svc.Authenticate(ctx, rig)
	if !domain.IsKind(err, domain.Unauthorized) {
		t.Errorf("revoked token authenticates: %v", err)
	}
	if _, err := svc.Authenticate(ctx, bench1); err != nil {
		t.Fatalf("other tokens were revoked too: %v", err)
	}
	if code, out, errs := runWithEnv(t, env, "token", "revoke", "--name", "bench", "--project", strconv.FormatInt(p.ID, 10)); code != ExitOK || strings.Count(out, "revoked token") != 2 {
		t.Fatalf("revoke by name: %d %q %q", code, out, errs)
	}
	for _, s := range []string{bench1, bench2} {
		if _, err := svc.Authenticate(ctx, s); !domain.IsKind(err, domain.Unauthorized) {
			t.Errorf("token revoked by name authenticates: %v", err)
		}
	}
	if code, out, _ := runWithEnv(t, env, "token", "list", "--project", "Zelvorra Reach"); code != ExitOK || strings.Count(out, "\n") != 1 {
		t.Errorf("list after revoking all: %q", out)
	}
}

// TestDemoTokenReplaced: each serve --demo start revokes the demo token the
// previous start printed, so only the latest one is valid.
func TestDemoTokenReplaced(t *testing.T) {
	ctx := context.Background()
	st, err := store.OpenMigrated(ctx, filepath.Join(t.TempDir(), "demo.db"))
	if err != nil {
		t.Fatal(err)
	}
	defer st.Close()
	svc := service.New(st, nil)
	log := slog.New(slog.NewTextHandler(io.Discard, nil))
	sys := service.WithActor(ctx, service.System)
	secretOf := regexp.MustCompile(`^corvane: demo project (\d+) "[^"]+"; demo admin token: (cvt_\S+)$`)
	var secrets []string
	for range 3 {
		line, err := loadDemo(ctx, svc, log)
		if err != nil {
			t.Fatal(err)
		}
		m := secretOf.FindStringSubmatch(line)
		if m == nil {
			t.Fatalf("demo line %q does not have the stable format", line)
		}
		secrets = append(secrets, m[2])
	}
	for i, s := range secrets {
		_, err := svc.Authenticate(ctx, s)
		if last := i == len(secrets)-1; last != (err == nil) {
			t.Errorf("demo token %d of %d: authenticate error %v", i+1, len(secrets), err)
		}
	}
	a, err := svc.Authenticate(ctx, secrets[2])
	if err != nil {
		t.Fatal(err)
	}
	ts, err := svc.ListTokens(sys, a.ProjectID)
	if err != nil {
		t.Fatal(err)
	}
	if len(ts) != 1 || ts[0].Name != DemoTokenName || ts[0].Role != domain.RoleAdmin {
		t.Errorf("demo project tokens %+v, want one admin %q", ts, DemoTokenName)
	}
}

// Every command that writes to the database directly names its caller the
// same way (localActor): a token made from the command line is audited under
// the operating-system user, as an import is, not under a fixed label.
func TestTokenAuditedUnderLocalUser(t *testing.T) {
	db := filepath.Join(t.TempDir(), "t.db")
	env := map[string]string{"CORVANE_DATABASE_URL": db, "USER": "geo7"}
	runWithEnv(t, env, "migrate", "up")
	ctx := context.Background()
	svc := openService(t, db)
	sys := service.WithActor(ctx, service.System)
	p, err := svc.CreateProject(sys, domain.Project{Name: "Zelvorra Reach"})
	if err != nil {
		t.Fatal(err)
	}
	if code, _, errs := runWithEnv(t, env, "token", "create", "--project", "Zelvorra Reach", "--role", "log", "--name", "rig 2"); code != ExitOK {
		t.Fatalf("create: %d %q", code, errs)
	}
	al, err := svc.ListAudit(sys, p.ID, domain.Page{Limit: domain.MaxLimit})
	if err != nil {
		t.Fatal(err)
	}
	n := 0
	for _, e := range al.Items {
		if e.Entity == "token" {
			n++
			if e.ActorName != "geo7" || e.TokenID != 0 {
				t.Errorf("audit entry %+v: want actor geo7 without a token", e)
			}
		}
	}
	if n == 0 {
		t.Fatalf("no token entry in the audit log: %+v", al.Items)
	}
}
