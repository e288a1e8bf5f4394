package sqlite_test

import (
	"path/filepath"
	"testing"

	"corvane/internal/domain"
	"corvane/internal/store/sqlite"
	"corvane/internal/store/storetest"
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
	if err := sqlite.Migrate(path, 0); err != nil {
		t.Fatal(err)
	}
	if v, _, _ = sqlite.Version(path); v != 1 {
		t.Fatalf("after up: version %d, want 1", v)
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
