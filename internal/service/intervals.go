package service

import (
	"context"
	"io"
	"math"
	"slices"
	"strconv"

	"corvane/internal/coreinterval"
	"corvane/internal/csvio"
	"corvane/internal/domain"
)

// ImportIntervals is the import kind of core intervals: hole_id, from, to
// [, recovered, solid, sound, pieces, natural_breaks, induced_breaks,
// confidence]. A file replaces all the intervals of each hole it names.
const ImportIntervals = "intervals"

// MaxIntervalsPerHole bounds the intervals of one hole sent at once.
const MaxIntervalsPerHole = 20000

// interval is the rule package's value of a stored interval: missing
// lengths NaN, missing counts -1.
func interval(iv domain.CoreInterval) coreinterval.Interval {
	f := func(p *float64) float64 {
		if p == nil {
			return math.NaN()
		}
		return *p
	}
	n := func(p *int) int {
		if p == nil {
			return -1
		}
		return *p
	}
	return coreinterval.Interval{From: iv.From, To: iv.To, Recovered: f(iv.Recovered), Solid: f(iv.Solid), Sound: f(iv.Sound),
		Pieces: iv.Pieces, NaturalBreaks: n(iv.NaturalBreaks), InducedBreaks: n(iv.InducedBreaks), Confidence: iv.Confidence}
}

// storedInterval is the stored value of a read interval.
func storedInterval(iv coreinterval.Interval) domain.CoreInterval {
	n := func(v int) *int {
		if v < 0 {
			return nil
		}
		return &v
	}
	return domain.CoreInterval{From: iv.From, To: iv.To, Recovered: optNum(iv.Recovered), Solid: optNum(iv.Solid), Sound: optNum(iv.Sound),
		Pieces: iv.Pieces, NaturalBreaks: n(iv.NaturalBreaks), InducedBreaks: n(iv.InducedBreaks), Confidence: iv.Confidence}
}

// checkIntervals applies the interval rules (package coreinterval: from <
// to, lengths within the interval, no overlaps, inside hole h) to one
// hole's intervals sent as JSON, with a confidence of [domain.Confidences]
// or none and counts >= 0. Every problem is listed, located at its field
// ("intervals[3].from").
func checkIntervals(ivs []domain.CoreInterval, h domain.Hole) error {
	if len(ivs) > MaxIntervalsPerHole {
		return domain.FieldErr("intervals", "at most %d intervals per hole, got %d", MaxIntervalsPerHole, len(ivs))
	}
	var list []*domain.Error
	add := func(i int, field, format string, args ...any) {
		if len(list) < domain.MaxProblemGroups {
			list = append(list, domain.FieldErr("intervals["+strconv.Itoa(i)+"]."+field, format, args...))
		}
	}
	rule := make([]coreinterval.Interval, len(ivs))
	for i, iv := range ivs {
		if iv.Confidence != "" && !slices.Contains(domain.Confidences, iv.Confidence) {
			add(i, "confidence", "confidence must be one of good, fair, poor, none or empty, got %q", iv.Confidence)
		}
		for _, c := range []struct {
			field string
			n     *int
		}{{"natural_breaks", iv.NaturalBreaks}, {"induced_breaks", iv.InducedBreaks}} {
			if c.n != nil && *c.n < 0 {
				add(i, c.field, "%s %d must be a count >= 0", c.field, *c.n)
			}
		}
		rule[i] = interval(iv)
	}
	for _, p := range coreinterval.Validate(rule, h.FinalDepth) {
		msg := p.Msg
		if p.Other >= 0 {
			msg += " (intervals[" + strconv.Itoa(p.Other) + "])"
		}
		add(p.Index, p.Field, "hole %s: %s", h.Name, msg)
	}
	switch len(list) {
	case 0:
		return nil
	case 1:
		return list[0]
	}
	return &domain.Error{Kind: domain.Invalid, Msg: strconv.Itoa(len(list)) + " bad intervals; nothing was stored", Problems: list}
}

// CoreIntervals lists a hole's core intervals by depth (read).
func (s *Service) CoreIntervals(ctx context.Context, projectID, holeID int64) ([]domain.CoreInterval, error) {
	if _, err := allow(ctx, projectID, domain.RoleRead); err != nil {
		return nil, err
	}
	if _, err := hole(ctx, s.store, projectID, holeID); err != nil {
		return nil, err
	}
	ivs, err := s.store.ListCoreIntervals(ctx, holeID)
	if ivs == nil && err == nil {
		ivs = []domain.CoreInterval{}
	}
	return ivs, err
}

// PutCoreIntervals replaces all of a hole's core intervals (log) in one
// transaction, after checking them all (see checkIntervals); an empty list
// deletes them. One audit entry records the old and the new intervals.
func (s *Service) PutCoreIntervals(ctx context.Context, projectID, holeID int64, ivs []domain.CoreInterval) ([]domain.CoreInterval, error) {
	if ivs == nil {
		ivs = []domain.CoreInterval{}
	}
	err := s.store.InTx(ctx, func(ctx context.Context, st domain.Store) error {
		a, err := allow(ctx, projectID, domain.RoleLog)
		if err != nil {
			return err
		}
		h, err := hole(ctx, st, projectID, holeID)
		if err != nil {
			return err
		}
		if err := checkIntervals(ivs, h); err != nil {
			return err
		}
		before, err := st.ListCoreIntervals(ctx, holeID)
		if err != nil {
			return err
		}
		if err := st.PutCoreIntervals(ctx, holeID, ivs); err != nil {
			return err
		}
		return audit(ctx, st, a, projectID, "core_intervals", holeID, domain.ActionUpdate, before, ivs)
	})
	if err != nil {
		return nil, err
	}
	slices.SortStableFunc(ivs, func(a, b domain.CoreInterval) int { return cmpFloat(a.From, b.From) })
	return ivs, nil
}

func cmpFloat(a, b float64) int {
	switch {
	case a < b:
		return -1
	case a > b:
		return 1
	}
	return 0
}

// importIntervals reads a core intervals file (csvio.ReadIntervals: the
// rules within the file, located) and replaces the intervals of every hole
// it names; a hole not in the project, or an interval past its hole's
// final depth, is a located problem and nothing is written.
func importIntervals(ctx context.Context, st domain.Store, p domain.Project, body io.Reader, res *ImportResult) error {
	rows, err := csvio.ReadIntervals(body, res.File)
	if err != nil {
		return fileErr(res.File, err)
	}
	res.Rows = len(rows)
	holes := newHoleNames(st, p.ID)
	depths := map[string]float64{}
	ids := map[string]int64{}
	var order []string
	byHole := map[string][]domain.CoreInterval{}
	looked := map[string]bool{}
	for _, r := range rows {
		if !looked[r.HoleID] {
			looked[r.HoleID] = true
			h, ok, err := holes.get(ctx, r.HoleID)
			if err != nil {
				return err
			}
			if ok {
				depths[r.HoleID], ids[r.HoleID] = h.FinalDepth, h.ID
				order = append(order, r.HoleID)
			}
		}
		byHole[r.HoleID] = append(byHole[r.HoleID], storedInterval(r.Interval))
	}
	if err := csvio.CheckIntervalDepths(rows, res.File, depths); err != nil {
		return fileErr(res.File, err)
	}
	for _, name := range order {
		if err := st.PutCoreIntervals(ctx, ids[name], byHole[name]); err != nil {
			return err
		}
		res.Created += len(byHole[name])
	}
	return nil
}

// ExportIntervals writes the project's core intervals as a core intervals
// file that the import reads back (read), holes in id order, intervals by
// depth, from one snapshot.
func (s *Service) ExportIntervals(ctx context.Context, projectID int64, w io.Writer) error {
	return s.store.Snapshot(ctx, func(ctx context.Context, st domain.Store) error {
		if _, _, err := s.project(ctx, st, projectID, domain.RoleRead); err != nil {
			return err
		}
		hs, err := holesOf(ctx, st, projectID, nil)
		if err != nil {
			return err
		}
		ivs, err := storedIntervals(ctx, st, hs)
		if err != nil {
			return err
		}
		rows := make([]csvio.IntervalRow, len(ivs))
		for i, r := range ivs {
			rows[i] = csvio.IntervalRow{HoleID: r.HoleID, Interval: r.Interval}
		}
		return csvio.WriteIntervals(w, rows)
	})
}
