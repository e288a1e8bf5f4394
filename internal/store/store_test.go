package store

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"net/url"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/jackc/pgx/v5"
	_ "modernc.org/sqlite"

	"corvane/internal/domain"
	"corvane/internal/pgtest"
	"corvane/internal/store/storekit"
	"corvane/migrations"
)

func TestMain(m *testing.M) { os.Exit(pgtest.Main(m, nil)) }

// A libpq key=value string opens PostgreSQL (it once became an SQLite file
// named after the password); a malformed one is reported without its password.
func TestKeyValueOpensPostgres(t *testing.T) {
	u, err := url.Parse(pgtest.DB(t))
	if err != nil {
		t.Fatal(err)
	}
	kv := fmt.Sprintf("host=%s port=%s dbname=%s user=%s password=hunter2 sslmode=disable",
		u.Hostname(), u.Port(), strings.TrimPrefix(u.Path, "/"), u.User.Username())
	dir := t.TempDir()
	wd, _ := os.Getwd()
	if err := os.Chdir(dir); err != nil {
		t.Fatal(err)
	}
	defer os.Chdir(wd)
	ctx := context.Background()
	st, err := OpenMigrated(ctx, kv)
	if err != nil {
		t.Fatalf("OpenMigrated(key=value): %v", err)
	}
	defer st.Close()
	if _, err := st.ListProjects(ctx, domain.Page{}); err != nil {
		t.Fatal(err)
	}
	if ents, _ := os.ReadDir(dir); len(ents) != 0 {
		t.Errorf("a key=value string created files %v: it was taken for an SQLite path", ents)
	}
	for _, bad := range []string{"host=127.0.0.1 port=1 password=hunter2 connect_timeout=1", "host=x password='hunter2"} {
		_, err := Open(ctx, bad)
		if err == nil {
			t.Fatalf("Open(%q) succeeded", bad)
		}
		if strings.Contains(err.Error(), "hunter2") {
			t.Errorf("Open error shows the password: %v", err)
		}
		if _, _, err := Version(bad); err == nil || strings.Contains(err.Error(), "hunter2") {
			t.Errorf("Version error: %v", err)
		}
	}
}

// eachStore runs fn on a fresh empty database of each store, with a
// function that runs raw SQL on it.
func eachStore(t *testing.T, fn func(t *testing.T, addr string, exec func(q string))) {
	t.Run("sqlite", func(t *testing.T) {
		path := filepath.Join(t.TempDir(), "m.db")
		fn(t, path, func(q string) {
			db, err := sql.Open("sqlite", path)
			if err != nil {
				t.Fatal(err)
			}
			defer db.Close()
			if _, err := db.Exec(q); err != nil {
				t.Fatal(err)
			}
		})
	})
	t.Run("postgres", func(t *testing.T) {
		addr := pgtest.DB(t)
		fn(t, addr, func(q string) {
			c, err := pgx.Connect(context.Background(), addr)
			if err != nil {
				t.Fatal(err)
			}
			defer c.Close(context.Background())
			if _, err := c.Exec(context.Background(), q); err != nil {
				t.Fatal(err)
			}
		})
	})
}

func latest(t *testing.T, addr string) uint {
	t.Helper()
	if err := Migrate(addr, 0); err != nil {
		t.Fatal(err)
	}
	v, dirty, err := Version(addr)
	if err != nil || dirty || v < 2 {
		t.Fatalf("after up: version %d dirty %t %v", v, dirty, err)
	}
	return v
}

// More steps down than are applied are refused before anything is dropped
// (down --steps 5 on schema 2 once dropped every table and then failed).
func TestMigrateRefusesTooManySteps(t *testing.T) {
	eachStore(t, func(t *testing.T, addr string, exec func(string)) {
		top := latest(t, addr)
		applied := len(migrations.Versions()) // version numbers may skip
		err := Migrate(addr, -applied-3)
		if err == nil || !strings.Contains(err.Error(), "nothing was changed") {
			t.Fatalf("down beyond the applied count: %v", err)
		}
		if v, dirty, _ := Version(addr); v != top || dirty {
			t.Fatalf("version moved to %d (dirty %t) though the step was refused", v, dirty)
		}
		exec("SELECT count(*) FROM projects") // the tables are still there
		if err := Migrate(addr, 1); err == nil || !strings.Contains(err.Error(), "0 pending") {
			t.Fatalf("up beyond the latest: %v", err)
		}
		if err := Migrate(addr, -applied); err != nil {
			t.Fatalf("down exactly the applied count: %v", err)
		}
		if v, _, _ := Version(addr); v != 0 {
			t.Fatalf("version %d after rolling all back", v)
		}
	})
}

// A binary on a schema newer than it carries says which versions and what
// to do, in one sentence, instead of "file does not exist"; and opens
// nothing.
func TestNewerSchemaSaysWhatToDo(t *testing.T) {
	eachStore(t, func(t *testing.T, addr string, exec func(string)) {
		top := latest(t, addr)
		exec("UPDATE schema_migrations SET version = 9999")
		_, err := OpenMigrated(context.Background(), addr)
		var ne *storekit.NewerSchemaError
		if !errors.As(err, &ne) || ne.Have != 9999 || ne.Latest != top {
			t.Fatalf("OpenMigrated on a newer schema: %v", err)
		}
		msg := err.Error()
		for _, want := range []string{"9999", fmt.Sprintf("up to %d", top), "migrate down"} {
			if !strings.Contains(msg, want) {
				t.Errorf("message %q lacks %q", msg, want)
			}
		}
		if strings.Contains(msg, "file does not exist") || strings.Count(msg, ". ") > 0 {
			t.Errorf("not one clear sentence: %q", msg)
		}
	})
}

// A dirty schema refuses every move and names the way out; force marks it
// clean at a version this binary carries, and refuses others.
func TestDirtySchemaAndForce(t *testing.T) {
	eachStore(t, func(t *testing.T, addr string, exec func(string)) {
		top := latest(t, addr)
		exec("UPDATE schema_migrations SET dirty = true")
		for _, steps := range []int{0, -1} {
			var de *storekit.DirtyError
			if err := Migrate(addr, steps); !errors.As(err, &de) || !strings.Contains(err.Error(), "migrate force") {
				t.Fatalf("Migrate(%d) on a dirty schema: %v", steps, err)
			}
		}
		if err := Force(addr, 9999); err == nil {
			t.Fatal("force to an unknown version accepted")
		}
		if err := Force(addr, top); err != nil {
			t.Fatal(err)
		}
		if v, dirty, err := Version(addr); v != top || dirty || err != nil {
			t.Fatalf("after force: %d %t %v", v, dirty, err)
		}
		if err := Migrate(addr, -1); err != nil {
			t.Fatalf("down after force: %v", err)
		}
	})
}
