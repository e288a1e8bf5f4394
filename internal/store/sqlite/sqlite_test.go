package sqlite_test

import (
	"database/sql"
	"errors"
	"io/fs"
	"os"
	"path/filepath"
	"testing"

	"corvane/internal/domain"
	"corvane/internal/store/sqlite"
	"corvane/internal/store/storetest"
	"corvane/migrations"
)

func TestConformance(t *testing.T) {
	storetest.Run(t, func(t *testing.T) domain.Store {
		path := filepath.Join(t.TempDir(), "corvane.db")
		if err := sqlite.Migrate(path, 0); err != nil {
			t.Fatal(err)
		}
		s, err := sqlite.Open(t.Context(), path)
		if err != nil {
			t.Fatal(err)
		}
		return s
	})
}

func TestMigrateUpDownVersion(t *testing.T) {
	path := filepath.Join(t.TempDir(), "m.db")
	v, dirty, err := sqlite.Version(path)
	if err != nil || v != 0 || dirty {
		t.Fatalf("fresh file: version %d dirty %v err %v", v, dirty, err)
	}
	if _, err := os.Stat(path); !errors.Is(err, fs.ErrNotExist) {
		t.Fatalf("reading the version of a missing file created it (stat: %v)", err)
	}
	if err := sqlite.Migrate(path, 0); err != nil {
		t.Fatal(err)
	}
	if v, _, _ = sqlite.Version(path); v != latestMigration() {
		t.Fatalf("after up: version %d, want %d", v, latestMigration())
	}
	if err := sqlite.Migrate(path, 0); err != nil { // idempotent
		t.Fatalf("second up: %v", err)
	}
	if err := sqlite.MigrateDownAll(path); err != nil {
		t.Fatal(err)
	}
	if v, _, _ = sqlite.Version(path); v != 0 {
		t.Fatalf("after down: version %d, want 0", v)
	}
}

func TestMigrationBackfill(t *testing.T) {
	path := filepath.Join(t.TempDir(), "b.db")
	if err := sqlite.Migrate(path, 0); err != nil {
		t.Fatal(err)
	}
	storetest.MigrationBackfill(t, func(t *testing.T) domain.Store {
		s, err := sqlite.Open(t.Context(), path)
		if err != nil {
			t.Fatal(err)
		}
		return s
	}, func(t *testing.T) {
		// Roll back one migration at a time to version 2 (before 000003,
		// undoing 000010 and 000004 on the way), then up again.
		for {
			v, _, err := sqlite.Version(path)
			if err != nil {
				t.Fatal(err)
			}
			if v <= 2 {
				break
			}
			if err := sqlite.Migrate(path, -1); err != nil {
				t.Fatalf("rolling back from version %d: %v", v, err)
			}
		}
		if err := sqlite.Migrate(path, 0); err != nil {
			t.Fatalf("applying 000003 again: %v", err)
		}
	})
}

// A database file locked by another process past the busy timeout is the
// store being unavailable (503 with Retry-After at the HTTP edge), not an
// internal error; reads go on meanwhile (WAL), and writes work again once
// the lock is gone, with the same Store.
func TestLockedFileIsUnavailable(t *testing.T) {
	defer sqlite.SetBusyTimeout(50)()
	path := filepath.Join(t.TempDir(), "locked.db")
	if err := sqlite.Migrate(path, 0); err != nil {
		t.Fatal(err)
	}
	s, err := sqlite.Open(t.Context(), path)
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	other, err := sql.Open("sqlite", "file:"+path)
	if err != nil {
		t.Fatal(err)
	}
	defer other.Close()
	conn, err := other.Conn(t.Context())
	if err != nil {
		t.Fatal(err)
	}
	if _, err := conn.ExecContext(t.Context(), "BEGIN EXCLUSIVE"); err != nil {
		t.Fatal(err)
	}
	p := domain.Project{Name: "locked out"}
	if err := p.Normalize(); err != nil {
		t.Fatal(err)
	}
	err = s.CreateProject(t.Context(), &p)
	if !domain.IsKind(err, domain.Unavailable) {
		t.Fatalf("a write while another process holds the lock: %v (%v), want unavailable", err, domain.KindOf(err))
	}
	if _, err := s.ListProjects(t.Context(), domain.Page{}); err != nil {
		t.Fatalf("a read while the lock is held: %v", err)
	}
	if _, err := conn.ExecContext(t.Context(), "ROLLBACK"); err != nil {
		t.Fatal(err)
	}
	conn.Close()
	if err := s.CreateProject(t.Context(), &p); err != nil {
		t.Fatalf("the write once the lock is gone: %v", err)
	}
}

// latestMigration is the schema version a fresh database gets.
func latestMigration() uint {
	vs := migrations.Versions()
	return vs[len(vs)-1]
}
