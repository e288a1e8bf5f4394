package postgres_test

import (
	"context"
	"strconv"
	"testing"
	"time"

	"github.com/jackc/pgx/v5"

	"corvane/internal/domain"
)

// The project's change log lock is taken when a transaction commits
// (migration 000020), not at its first logged write: two writers of one
// project both write before either commits, and a reader paging the log by
// seq still never skips the one that commits last.
func TestChangeLogLockAtCommit(t *testing.T) {
	ctx := context.Background()
	// Two holes: writers of one hole also wait for each other on the
	// hole's measurement stamp row (migration 000018).
	url, st, p, holes := holesDB(t, "two writers", "W1", "W2")
	h, h2 := holes[0], holes[1]
	last, err := st.LastChangeSeq(ctx)
	must(t, err)

	conn := func() pgx.Tx {
		t.Helper()
		c, err := pgx.Connect(ctx, url)
		if err != nil {
			t.Fatal(err)
		}
		t.Cleanup(func() { c.Close(context.Background()) })
		tx, err := c.Begin(ctx)
		if err != nil {
			t.Fatal(err)
		}
		return tx
	}
	insert := func(tx pgx.Tx, hole int64, gid string, depth float64) {
		t.Helper()
		// With the lock taken at the write, the second writer waited here
		// until the first ended, which never comes: the deadline says so.
		wctx, cancel := context.WithTimeout(ctx, 20*time.Second)
		defer cancel()
		if _, err := tx.Exec(wctx, `INSERT INTO measurements (project_id, hole_id, depth, alpha, beta, type_code, logged_at, created_at, updated_at, global_id)
			VALUES ($1, $2, $3, 30, 10, 'BD', now(), now(), now(), $4)`, p.ID, hole, depth, gid); err != nil {
			t.Fatalf("insert %s: %v", gid, err)
		}
	}
	read := func(what string, want ...string) {
		t.Helper()
		cs, err := st.ListChanges(ctx, domain.ChangeFilter{ProjectID: p.ID, After: last})
		must(t, err)
		var got []string
		for _, c := range cs {
			got = append(got, c.GlobalID)
			last = c.Seq
		}
		if len(got) != len(want) {
			t.Fatalf("%s: read %v, want %v", what, got, want)
		}
		for i := range want {
			if got[i] != want[i] {
				t.Fatalf("%s: read %v, want %v", what, got, want)
			}
		}
	}

	first, second := conn(), conn()
	insert(first, h.ID, "first", 1)
	insert(second, h2.ID, "second", 2)
	must(t, second.Commit(ctx))
	read("after the second writer's commit", "second")
	must(t, first.Commit(ctx))
	read("after the first writer's late commit", "first")

	// A transaction's entries keep the order of its statements, also when a
	// statement of many rows is logged at once between smaller ones; one
	// that rolls back leaves nothing, also of a savepoint rolled back.
	tx := conn()
	insert(tx, h.ID, "a", 3)
	if _, err := tx.Exec(ctx, `INSERT INTO measurements (project_id, hole_id, depth, alpha, beta, type_code, logged_at, created_at, updated_at, global_id)
		SELECT $1, $2, 4 + i / 10000.0, 30, 10, 'BD', now(), now(), now(), 'many-' || i FROM generate_series(1, 1500) i ORDER BY i`, p.ID, h.ID); err != nil {
		t.Fatal(err)
	}
	if _, err := tx.Exec(ctx, `SAVEPOINT s`); err != nil {
		t.Fatal(err)
	}
	insert(tx, h.ID, "undone", 5)
	if _, err := tx.Exec(ctx, `ROLLBACK TO SAVEPOINT s`); err != nil {
		t.Fatal(err)
	}
	insert(tx, h.ID, "b", 6)
	must(t, tx.Commit(ctx))
	want := []string{"a"}
	for i := 1; i <= 1500; i++ {
		want = append(want, "many-"+strconv.Itoa(i))
	}
	want = append(want, "b")
	var got []string
	for {
		cs, err := st.ListChanges(ctx, domain.ChangeFilter{ProjectID: p.ID, After: last})
		must(t, err)
		if len(cs) == 0 {
			break
		}
		for _, c := range cs {
			got = append(got, c.GlobalID)
			last = c.Seq
		}
	}
	if len(got) != len(want) {
		t.Fatalf("statements of one transaction: %d entries, want %d", len(got), len(want))
	}
	for i := range want {
		if got[i] != want[i] {
			t.Fatalf("entry %d is %s, want %s", i, got[i], want[i])
		}
	}
	rolled := conn()
	insert(rolled, h.ID, "rolled back", 7)
	must(t, rolled.Rollback(ctx))
	read("after a rollback")

	// Inside a writing transaction the log already holds its own changes.
	must(t, st.InTx(ctx, func(ctx context.Context, tx domain.Store) error {
		m := domain.Measurement{ProjectID: p.ID, HoleID: h.ID, Depth: 8, Alpha: 30, TypeCode: "BD", LoggedAt: time.Now(), GlobalID: "own"}
		if err := tx.CreateMeasurement(ctx, &m); err != nil {
			return err
		}
		cs, err := tx.RecordChanges(ctx, domain.SyncMeasurements, "own")
		if err != nil {
			return err
		}
		if len(cs) != 1 || cs[0].Op != domain.ActionCreate {
			t.Errorf("the transaction's own change read inside it: %+v", cs)
		}
		return nil
	}))
	read("after the transaction that read its own change", "own")

	// Nothing is left owed once the transactions ended.
	var owed, due int
	must(t, pgxQueryRow(t, url, `SELECT (SELECT count(*) FROM change_log_owed), (SELECT count(*) FROM change_log_due)`, &owed, &due))
	if owed != 0 || due != 0 {
		t.Errorf("left owed: %d entries, %d transactions", owed, due)
	}
}

func pgxQueryRow(t *testing.T, url, sql string, dst ...any) error {
	t.Helper()
	c, err := pgx.Connect(context.Background(), url)
	if err != nil {
		return err
	}
	defer c.Close(context.Background())
	return c.QueryRow(context.Background(), sql).Scan(dst...)
}
