package postgres_test

import (
	"os"
	"strings"
	"testing"

	"corvane/internal/domain"
	"corvane/internal/pgtest"
	"corvane/internal/store/postgres"
	"corvane/internal/store/storetest"
	"corvane/migrations"
)

func TestMain(m *testing.M) {
	os.Exit(pgtest.Main(m, func(url string) error { return postgres.Migrate(url, 0) }))
}

func TestConformance(t *testing.T) {
	storetest.Run(t, func(t *testing.T) domain.Store {
		s, err := postgres.Open(t.Context(), pgtest.DB(t))
		if err != nil {
			t.Fatal(err)
		}
		return s
	})
}

func TestMigrationBackfill(t *testing.T) {
	url := pgtest.DB(t)
	storetest.MigrationBackfill(t, func(t *testing.T) domain.Store {
		s, err := postgres.Open(t.Context(), url)
		if err != nil {
			t.Fatal(err)
		}
		return s
	}, func(t *testing.T) {
		// Roll back one migration at a time to version 2 (before 000003,
		// undoing 000010 and 000004 on the way), then up again.
		for {
			v, _, err := postgres.Version(url)
			if err != nil {
				t.Fatal(err)
			}
			if v <= 2 {
				break
			}
			if err := postgres.Migrate(url, -1); err != nil {
				t.Fatalf("rolling back from version %d: %v", v, err)
			}
		}
		if err := postgres.Migrate(url, 0); err != nil {
			t.Fatalf("applying 000003 again: %v", err)
		}
	})
}

func TestMigrateUpDownVersion(t *testing.T) {
	url := pgtest.DB(t) // already migrated from the template
	v, dirty, err := postgres.Version(url)
	if err != nil || v != latestMigration() || dirty {
		t.Fatalf("template copy: version %d dirty %v err %v", v, dirty, err)
	}
	if err := postgres.MigrateDownAll(url); err != nil {
		t.Fatal(err)
	}
	if v, _, _ = postgres.Version(url); v != 0 {
		t.Fatalf("after down: version %d", v)
	}
	if err := postgres.Migrate(url, 0); err != nil {
		t.Fatal(err)
	}
	if v, _, _ = postgres.Version(url); v != latestMigration() {
		t.Fatalf("after up: version %d", v)
	}
}

// latestMigration is the schema version a fresh database gets.
func latestMigration() uint {
	vs := migrations.Versions()
	return vs[len(vs)-1]
}

// TestPoolSize: the pool holds DefaultPoolSize connections unless told
// otherwise, by serve --db-pool or by the address's pool_max_conns (the
// flag wins); an address with pool settings migrates (they are the pool's,
// not the server's).
func TestPoolSize(t *testing.T) {
	url := pgtest.DB(t)
	withPool := url + "&pool_max_conns=5"
	if !strings.Contains(url, "?") {
		withPool = url + "?pool_max_conns=5"
	}
	if err := postgres.Migrate(withPool, 0); err != nil {
		t.Fatalf("migrating with pool_max_conns in the address: %v", err)
	}
	for _, tc := range []struct {
		addr      string
		ask, want int
	}{{url, 0, postgres.DefaultPoolSize}, {url, 3, 3}, {withPool, 0, 5}, {withPool, 7, 7}} {
		s, err := postgres.OpenPool(t.Context(), tc.addr, tc.ask)
		if err != nil {
			t.Fatal(err)
		}
		if got := postgres.PoolMax(s); got != tc.want {
			t.Errorf("%s, pool of %d asked: %d connections, want %d", tc.addr, tc.ask, got, tc.want)
		}
		s.Close()
	}
}
