package service_test

import (
	"context"
	"fmt"
	"strings"
	"testing"

	"corvane/internal/domain"
	"corvane/internal/service"
)

// TestImportChangeLogComplete: the rows of an import large enough to be
// staged in a batch reach the change feed exactly once each, whether the
// feed is read at once (the background logging still running) or after it,
// and a batch committed by a process that stopped before logging it (its
// rows visible, their entries owed) is logged by the next reader of the
// feed.
func TestImportChangeLogComplete(t *testing.T) {
	s, ctx := newService(t)
	checkImportChangeLogComplete(t, s, ctx)
}

func checkImportChangeLogComplete(t *testing.T, s *service.Service, ctx context.Context) {
	p := must(s.CreateProject(ctx, domain.Project{Name: "import log"}))
	putImportTypes(s, ctx, p.ID)
	must(doImport(t, s, ctx, p.ID, "collars", collarsCSV, false, ""))
	const rows = 12000 // staged batches and the last rows
	var b strings.Builder
	b.WriteString("hole_id,depth,alpha,beta,type\n")
	for i := range rows {
		fmt.Fprintf(&b, "ZR001,%.2f,%d,%d,JN\n", 0.01*float64(i+1), 10+i%70, i%360)
	}
	start := must(s.Store().LastChangeSeq(ctx))
	must(doImport(t, s, ctx, p.ID, "measurements", b.String(), false, ""))

	feed := func(s *service.Service) map[string]int {
		t.Helper()
		seen := map[string]int{}
		after := start
		for {
			pg := must(s.SyncChanges(ctx, p.ID, service.ChangesQuery{After: after}))
			for _, c := range pg.Items {
				if c.Table == domain.SyncMeasurements {
					seen[c.GlobalID]++
				}
			}
			if !pg.More {
				return seen
			}
			after = pg.Next
		}
	}
	check := func(when string, seen map[string]int, want int) {
		t.Helper()
		if len(seen) != want {
			t.Errorf("%s: %d measurements in the feed, want %d", when, len(seen), want)
		}
		for gid, n := range seen {
			if n != 1 {
				t.Errorf("%s: measurement %s %d times in the feed", when, gid, n)
			}
		}
	}
	check("read at once", feed(s), rows)
	s.WaitLogging()
	check("read after the background logging", feed(s), rows)
	if ids := must(s.Store().UnloggedBatches(ctx, p.ID)); len(ids) != 0 {
		t.Errorf("batches still owing entries: %v", ids)
	}

	// A batch committed, its entries never written (the process stopped).
	st := s.Store()
	batch := must(st.OpenBatch(ctx, p.ID))
	h := must(st.GetHoleByName(ctx, p.ID, "ZR002"))
	ms := make([]domain.Measurement, 7)
	for i := range ms {
		beta := 10.0
		ms[i] = domain.Measurement{ProjectID: p.ID, HoleID: h.ID, Depth: float64(i + 1), Alpha: 40, Beta: &beta, TypeCode: "JN", LoggedBy: "x"}
	}
	must(st.StageMeasurements(ctx, batch, ms))
	if err := st.InTx(ctx, func(ctx context.Context, tx domain.Store) error { return tx.CommitBatch(ctx, batch) }); err != nil {
		t.Fatal(err)
	}
	fresh := service.New(st, nil) // as a new process would
	check("after a batch left unlogged", feed(fresh), rows+len(ms))
}
