package sqlite_test

import (
	"database/sql"
	"path/filepath"
	"strings"
	"testing"

	"corvane/internal/store/sqlite"
)

// The list of import batches whose change log is still owed, read before
// every page of the sync feed, goes through the partial index of migration
// 000021 instead of scanning every import ever made.
func TestUnloggedBatchesUseIndex(t *testing.T) {
	path := filepath.Join(t.TempDir(), "p.db")
	if err := sqlite.Migrate(path, 0); err != nil {
		t.Fatal(err)
	}
	db, err := sql.Open("sqlite", path)
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	rows, err := db.Query("EXPLAIN QUERY PLAN "+sqlite.UnloggedBatchesSQL, 0, 0)
	if err != nil {
		t.Fatal(err)
	}
	defer rows.Close()
	var plan []string
	for rows.Next() {
		var id, parent, unused int
		var detail string
		if err := rows.Scan(&id, &parent, &unused, &detail); err != nil {
			t.Fatal(err)
		}
		plan = append(plan, detail)
	}
	if err := rows.Err(); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(strings.Join(plan, "\n"), "import_batches_unlogged") {
		t.Errorf("plan does not use import_batches_unlogged:\n%s", strings.Join(plan, "\n"))
	}
}
