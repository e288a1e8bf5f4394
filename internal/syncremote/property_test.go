package syncremote_test

import (
	"context"
	"fmt"
	"math/rand/v2"
	"testing"

	"corvane/internal/domain"
	"corvane/internal/service"
)

// TestThreeReplicasConverge interleaves, at random with fixed seeds, edits
// on three laptops and the centre (creations, edits, deletions of
// measurements and runs) with syncs, some of them cut off mid-way. At the
// end conflicts are resolved by a scripted rule (the version whose comment
// sorts first wins) and every store must hold the same rows.
func TestThreeReplicasConverge(t *testing.T) {
	for _, seed := range []uint64{1, 2, 3} {
		for _, onPostgres := range []bool{false, true} {
			t.Run(fmt.Sprintf("seed %d postgres %v", seed, onPostgres), func(t *testing.T) {
				converge(t, seed, onPostgres)
			})
		}
	}
}

func converge(t *testing.T, seed uint64, onPostgres bool) {
	ctx := context.Background()
	rng := rand.New(rand.NewPCG(seed, 7))
	c := newCentral(t, onPostgres)
	seedCentral(t, c)
	ls := []*laptop{newLaptop(t, "L1"), newLaptop(t, "L2"), newLaptop(t, "L3")}
	for _, l := range ls {
		l.mustSync(t, c)
	}
	// reps[0] is the centre, then the laptops.
	type replica struct {
		name   string
		svc    *service.Service
		pid    int64
		laptop *laptop // nil for the centre
	}
	reps := []replica{{"centre", c.svc, c.pid, nil}}
	for _, l := range ls {
		reps = append(reps, replica{l.name, l.svc, l.project(t), l})
	}
	edits, cuts := 0, 0
	for step := range 150 {
		r := reps[rng.IntN(len(reps))]
		st := r.svc.Store()
		ms, err := st.ListMeasurements(ctx, domain.MeasurementFilter{ProjectID: r.pid}, domain.Page{Limit: domain.MaxLimit})
		must(t, err)
		holes, err := st.ListHoles(ctx, r.pid, domain.Page{})
		must(t, err)
		h := holes[rng.IntN(len(holes))]
		switch op := rng.IntN(10); {
		case op < 3 || len(ms) == 0:
			b := rng.Float64() * 359
			_, err := r.svc.CreateMeasurement(admin, r.pid, domain.Measurement{HoleID: h.ID, Depth: rng.Float64() * 250, Alpha: rng.Float64() * 90,
				Beta: &b, TypeCode: "JN", Comment: fmt.Sprintf("%s step %d", r.name, step)})
			must(t, err)
		case op < 6:
			m := ms[rng.IntN(len(ms))]
			edit(t, r.svc, r.pid, m, fmt.Sprintf("%s edit %d", r.name, step))
			edits++
		case op < 7:
			m := ms[rng.IntN(len(ms))]
			must(t, r.svc.DeleteMeasurement(admin, r.pid, m.ID, m.Version))
		case op < 8:
			runs, err := st.ListRuns(ctx, h.ID)
			must(t, err)
			if len(runs) > 0 && rng.IntN(2) == 0 {
				must(t, r.svc.DeleteRun(admin, r.pid, runs[0].ID, runs[0].Version))
			} else {
				from := 10 + float64(step)
				_, err := r.svc.CreateRun(admin, r.pid, h.ID, domain.Run{From: from, To: from + 0.5, Confidence: "fair", Comment: r.name})
				must(t, err)
			}
		default:
			l := r.laptop
			if l == nil {
				continue
			}
			if rng.IntN(3) == 0 {
				cuts++
				_, err := l.sync(t, c, c.remote(t, c.log, &cutTransport{n: int64(1 + rng.IntN(4)), drop: rng.IntN(2) == 0}), 1+rng.IntN(5))
				_ = err // cut or not, the next sync resumes
			} else {
				l.mustSync(t, c)
			}
		}
	}
	logCtx := service.WithActor(ctx, service.Actor{Name: "resolver", ProjectID: c.pid, Role: domain.RoleLog})
	resolved := 0
	for round := 0; ; round++ {
		if round == 10 {
			t.Fatal("no quiescence after 10 rounds of syncs and resolutions")
		}
		quiet := true
		for _, l := range ls {
			rep := l.mustSync(t, c)
			if rep.Pushed+rep.Pulled+rep.Resolved+rep.Held > 0 {
				quiet = false
			}
			if rep.Refused > 0 {
				t.Errorf("%s: %d refused changes; a log token may make all of these", l.name, rep.Refused)
			}
		}
		open, err := c.svc.ListConflicts(admin, c.pid, domain.ConflictOpen)
		must(t, err)
		for _, o := range open {
			keep := domain.KeepRemote
			if string(o.LocalData) < string(o.RemoteData) {
				keep = domain.KeepLocal
			}
			_, err := c.svc.ResolveConflict(logCtx, c.pid, o.ID, keep)
			must(t, err)
			resolved++
			quiet = false
		}
		if quiet {
			break
		}
	}
	for _, l := range ls {
		open, err := l.svc.ListConflicts(admin, l.project(t), domain.ConflictOpen)
		must(t, err)
		if len(open) > 0 {
			t.Errorf("%s still lists %d open conflicts", l.name, len(open))
		}
	}
	sameStores(t, c, ls...)
	t.Logf("seed %d: %d edits, %d cut syncs, %d conflicts resolved", seed, edits, cuts, resolved)
}
