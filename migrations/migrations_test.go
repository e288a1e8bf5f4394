package migrations

import (
	"io/fs"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"
)

// The two stores report one schema version; it can mean one schema only
// while both directories hold the same migration files, each with its down.
func TestSameVersionsOnBothStores(t *testing.T) {
	names := func(fsys fs.FS, dir string) []string {
		ents, err := fs.ReadDir(fsys, dir)
		if err != nil {
			t.Fatal(err)
		}
		var out []string
		for _, e := range ents {
			out = append(out, e.Name())
		}
		return out
	}
	pg, lite := names(Postgres, "postgres"), names(SQLite, "sqlite")
	if len(pg) == 0 || len(pg)%2 != 0 {
		t.Fatalf("postgres migrations: %v, want up and down pairs", pg)
	}
	if d := cmp.Diff(pg, lite); d != "" {
		t.Errorf("migration files differ between the stores (-postgres +sqlite):\n%s", d)
	}
	for i := 0; i < len(pg); i += 2 {
		// ReadDir sorts by name: each version's down file comes before its up.
		down, up := pg[i], pg[i+1]
		v, ok := strings.CutSuffix(down, ".down.sql")
		if !ok || !strings.HasSuffix(up, ".up.sql") || strings.TrimSuffix(up, ".up.sql") != v {
			t.Errorf("no matching down/up pair: %q, %q", down, up)
		}
	}
}
