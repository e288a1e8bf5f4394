package postgres_test

import (
	"context"
	"strings"
	"testing"

	"github.com/jackc/pgx/v5"

	"corvane/internal/pgtest"
	"corvane/internal/store/postgres"
)

// The list of import batches whose change log is still owed, read before
// every page of the sync feed, can go through the partial index of
// migration 000021 instead of scanning every import ever made. The test
// turns sequential scans off so that the empty table's plan shows which
// index the planner can use: without the partial index it is the primary
// key's.
func TestUnloggedBatchesUseIndex(t *testing.T) {
	url := pgtest.DB(t) // migrated to the latest version
	ctx := context.Background()
	conn, err := pgx.Connect(ctx, url)
	if err != nil {
		t.Fatal(err)
	}
	defer conn.Close(ctx)
	tx, err := conn.Begin(ctx)
	if err != nil {
		t.Fatal(err)
	}
	defer tx.Rollback(ctx)
	if _, err := tx.Exec(ctx, "SET LOCAL enable_seqscan = off"); err != nil {
		t.Fatal(err)
	}
	rows, err := tx.Query(ctx, "EXPLAIN "+postgres.UnloggedBatchesSQL, int64(0))
	if err != nil {
		t.Fatal(err)
	}
	plan, err := pgx.CollectRows(rows, pgx.RowTo[string])
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(strings.Join(plan, "\n"), "import_batches_unlogged") {
		t.Errorf("plan does not use import_batches_unlogged:\n%s", strings.Join(plan, "\n"))
	}
}
