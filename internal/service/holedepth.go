package service

import (
	"context"
	"errors"
	"strings"

	"corvane/internal/domain"
)

// maxDeeperListed bounds the rows a refused change of final depth lists.
const maxDeeperListed = 20

// checkRunInHole refuses a run that passes the final depth of its hole: a
// Conflict with the stored hole (409), located at "to", naming the hole's
// end, so the caller knows to deepen the hole first or shorten the run. The
// CSV import reports the same message at the row's "to" column.
func checkRunInHole(r domain.Run, h domain.Hole) error {
	if r.To > h.FinalDepth {
		e := domain.Errorf(domain.Conflict, "run %v-%v passes the final depth %v of hole %s", r.From, r.To, h.FinalDepth, h.Name)
		e.Loc.Field = "to"
		return e
	}
	return nil
}

// checkFinalDepth refuses to shrink hole h (as stored) to a final depth
// above its stored data: survey stations (of every set), runs and measurements deeper than
// depth. The Conflict lists what is deeper (up to maxDeeperListed rows), so
// the caller knows what to move or delete first.
func checkFinalDepth(ctx context.Context, st domain.Store, h domain.Hole, depth float64) error {
	if depth >= h.FinalDepth {
		return nil // data lie within the stored final depth already
	}
	var deeper []*domain.Error
	add := func(format string, args ...any) {
		e := domain.Errorf(domain.Conflict, format, args...)
		e.Loc.Field = "final_depth"
		deeper = append(deeper, e)
	}
	ss, err := st.GetSurvey(ctx, h.ID)
	if err != nil && !domain.IsKind(err, domain.NotFound) {
		return err
	}
	for _, s := range ss.Stations {
		if s.Depth > depth && len(deeper) < maxDeeperListed {
			add("survey station at %v", s.Depth)
		}
	}
	sets, err := st.ListKindSets(ctx, h.ID)
	if err != nil {
		return err
	}
	for _, k := range sets {
		for _, s := range k.Stations {
			if s.Depth > depth && len(deeper) < maxDeeperListed {
				add("%s survey station at %v", k.Kind, s.Depth)
			}
		}
	}
	runs, err := st.ListRuns(ctx, h.ID)
	if err != nil {
		return err
	}
	for _, r := range runs {
		if r.To > depth && len(deeper) < maxDeeperListed {
			add("run %d (%v-%v)", r.ID, r.From, r.To)
		}
	}
	f := domain.MeasurementFilter{ProjectID: h.ProjectID, HoleIDs: []int64{h.ID}, MinDepth: &depth}
	pg := domain.Page{Limit: domain.MaxLimit}
	for len(deeper) < maxDeeperListed {
		ms, err := st.ListMeasurements(ctx, f, pg)
		if err != nil {
			return err
		}
		for _, m := range ms {
			if m.Depth > depth && len(deeper) < maxDeeperListed {
				add("measurement %d at %v", m.ID, m.Depth)
			}
		}
		if len(ms) < pg.Limit {
			break
		}
		pg.After = ms[len(ms)-1].ID
	}
	if len(deeper) == 0 {
		return nil
	}
	what := make([]string, len(deeper))
	for i, d := range deeper {
		what[i] = d.Msg
	}
	more := ""
	if len(deeper) == maxDeeperListed {
		more = " and maybe more"
	}
	e := domain.Errorf(domain.Conflict, "final depth %v of hole %s is above data stored deeper: %s%s; move or delete them first",
		depth, h.Name, strings.Join(what, ", "), more)
	e.Loc.Field = "final_depth"
	e.Problems = deeper
	return e
}

// msgOf is the message of err without its location (for a CSV row problem,
// which carries its own).
func msgOf(err error) string {
	var e *domain.Error
	if errors.As(err, &e) {
		return e.Msg
	}
	return domain.Public(err)
}
