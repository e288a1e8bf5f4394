package postgres_test

import (
	"context"
	"testing"

	"github.com/jackc/pgx/v5"

	"corvane/internal/domain"
	"corvane/internal/pgtest"
	"corvane/internal/store/postgres"
)

// Measurements written straight into the table by multi-row statements, as
// a script or psql would (the statement triggers of migration 000019): each
// row is in the change log with its operation, in id order, marked with the
// transaction's source; every hole a statement touched moves its stamp; a
// statement that changes no value logs its rows and moves no stamp.
func TestMeasurementStatementTriggers(t *testing.T) {
	ctx := context.Background()
	url, st, p, holes := holesDB(t, "straight writes", "S1", "S2")
	a, b := holes[0].ID, holes[1].ID
	c, err := pgx.Connect(ctx, url)
	if err != nil {
		t.Fatal(err)
	}
	defer c.Close(ctx)
	exec := func(sql string, args ...any) {
		t.Helper()
		if _, err := c.Exec(ctx, sql, args...); err != nil {
			t.Fatalf("%s: %v", sql, err)
		}
	}
	stamps := func() map[int64]int64 {
		t.Helper()
		rows, _ := c.Query(ctx, `SELECT hole_id, stamp FROM measurement_stamps WHERE project_id = $1`, p.ID)
		out := map[int64]int64{}
		for rows.Next() {
			var h, n int64
			must(t, rows.Scan(&h, &n))
			out[h] = n
		}
		must(t, rows.Err())
		return out
	}
	type entry struct {
		GlobalID, Op, Origin string
		Hole                 int64
	}
	last, err := st.LastChangeSeq(ctx)
	must(t, err)
	logged := func(what string, want []entry) {
		t.Helper()
		cs, err := st.ListChanges(ctx, domain.ChangeFilter{ProjectID: p.ID, After: last})
		must(t, err)
		var got []entry
		for _, ch := range cs {
			if ch.Table == domain.SyncMeasurements {
				got = append(got, entry{ch.GlobalID, ch.Op, ch.Origin, ch.HoleID})
			}
			last = ch.Seq
		}
		if len(got) != len(want) {
			t.Fatalf("%s: logged %+v, want %+v", what, got, want)
		}
		for i := range want {
			if got[i] != want[i] {
				t.Fatalf("%s: entry %d is %+v, want %+v (all: %+v)", what, i, got[i], want[i], got)
			}
		}
	}
	moved := func(what string, before map[int64]int64, want ...int64) {
		t.Helper()
		now := stamps()
		for _, h := range []int64{a, b} {
			shouldMove := false
			for _, w := range want {
				shouldMove = shouldMove || w == h
			}
			if (now[h] != before[h]) != shouldMove {
				t.Errorf("%s: stamp of hole %d went %d -> %d; should move: %v", what, h, before[h], now[h], shouldMove)
			}
		}
	}

	before := stamps()
	exec(`INSERT INTO measurements (project_id, hole_id, depth, alpha, beta, type_code, logged_at, created_at, updated_at, global_id)
		SELECT $1, CASE WHEN i % 2 = 0 THEN $2::bigint ELSE $3::bigint END, i, 30, 10, 'BD', now(), now(), now(), 'g' || i
		FROM generate_series(1, 4) i ORDER BY i`, p.ID, a, b)
	logged("insert of four rows", []entry{{"g1", "create", "", b}, {"g2", "create", "", a}, {"g3", "create", "", b}, {"g4", "create", "", a}})
	moved("insert", before, a, b)

	before = stamps()
	exec(`BEGIN`)
	exec(`SELECT set_config('corvane.origin', 'remote-y', true)`)
	exec(`UPDATE measurements SET alpha = alpha + 1, version = version + 1 WHERE project_id = $1 AND hole_id = $2`, p.ID, a)
	exec(`COMMIT`)
	logged("update of one hole's rows", []entry{{"g2", "update", "remote-y", a}, {"g4", "update", "remote-y", a}})
	moved("update of one hole's rows", before, a)

	before = stamps()
	exec(`UPDATE measurements SET version = version WHERE project_id = $1`, p.ID)
	logged("update that changes nothing", []entry{{"g1", "update", "", b}, {"g2", "update", "", a}, {"g3", "update", "", b}, {"g4", "update", "", a}})
	moved("update that changes nothing", before)

	before = stamps()
	exec(`UPDATE measurements SET hole_id = $1 WHERE global_id = 'g1'`, a)
	logged("a row moved to another hole", []entry{{"g1", "update", "", a}})
	moved("a row moved to another hole", before, a, b)

	before = stamps()
	exec(`DELETE FROM measurements WHERE project_id = $1 AND global_id IN ('g3', 'g4')`, p.ID)
	logged("delete of two rows", []entry{{"g3", "delete", "", b}, {"g4", "delete", "", a}})
	moved("delete", before, a, b)
}

// holesDB opens a store on a fresh database with a project (type code BD,
// a plane) and the named holes; the store closes when the test ends.
func holesDB(t *testing.T, project string, holes ...string) (string, *postgres.Store, domain.Project, []domain.Hole) {
	t.Helper()
	url := pgtest.DB(t)
	ctx := context.Background()
	st, err := postgres.Open(ctx, url)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { st.Close() })
	p := domain.Project{Name: project}
	must(t, p.Normalize())
	must(t, st.CreateProject(ctx, &p))
	must(t, st.PutTypeCode(ctx, domain.TypeCode{ProjectID: p.ID, Code: "BD", Kind: "plane"}))
	hs := make([]domain.Hole, len(holes))
	for i, name := range holes {
		hs[i] = domain.Hole{AzimuthRef: "true", ProjectID: p.ID, Name: name, Azimuth: 45, Dip: -60, FinalDepth: 300}
		must(t, st.CreateHole(ctx, &hs[i]))
	}
	return url, st, p, hs
}

func must(t *testing.T, err error) {
	t.Helper()
	if err != nil {
		t.Fatal(err)
	}
}
