package service

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"

	"corvane/internal/coreinterval"
	"corvane/internal/domain"
	"corvane/internal/exchange/ags4"
	"corvane/internal/geom"
	"corvane/internal/holemodel"
)

// ImportDiscontinuities is the import kind of an AGS4 file whose DISC rows
// become core measurements (see importDiscontinuities).
const ImportDiscontinuities = "discontinuities"

// importDiscontinuities adds a measurement for every DISC row of an AGS4
// file, in the import's transaction, all or nothing. A row names an
// existing hole of the project (LOCA_ID), a depth (DISC_TOP), a type of
// the project's vocabulary (DISC_TYPE), and the plane as DISC_DIP and
// DISC_DIR in the project's output north reference; the hole model turns
// the plane into alpha and beta at that depth (holemodel.Hole.CoreAngles),
// so exporting the measurement again gives the same plane. A row without
// dip or dip direction (an unoriented discontinuity) cannot become a core
// measurement and is refused, as is one in a vertical stretch of hole.
// DISC_REM becomes the comment. CORE rows become stored core intervals
// (see coreIntervalsOf): they replace all the intervals of every hole they
// name, as the intervals import does. A project in feet is refused (AGS4
// depths are metres). FRAC rows are derived values (written from the
// discontinuities and the intervals) and are not read.
func (s *Service) importDiscontinuities(ctx context.Context, st domain.Store, p domain.Project, a Actor, body io.Reader, res *ImportResult) error {
	if p.LengthUnit == domain.UnitFoot {
		return &domain.Error{Kind: domain.Invalid, Msg: "AGS4 depths are in metres and this project's lengths are in feet; nothing was imported",
			Loc: domain.Location{File: res.File}}
	}
	data, err := ags4.Read(body, res.File)
	if err != nil {
		var pe *ags4.ParseError
		if errors.As(err, &pe) {
			return &domain.Error{Kind: domain.Invalid, Msg: pe.Msg, Loc: domain.Location{File: res.File, Line: pe.Line}}
		}
		return fileErr(res.File, err)
	}
	if len(data.Discontinuities) == 0 && len(data.Cores) == 0 {
		return &domain.Error{Kind: domain.Invalid, Msg: "no DISC or CORE group: nothing to import", Loc: domain.Location{File: res.File}}
	}
	vocab, err := st.ListTypeCodes(ctx, p.ID)
	if err != nil {
		return err
	}
	holes := newHoleNames(st, p.ID)
	d := s.deriver(st, p)
	ps := &problems{file: res.File}
	now := s.now()
	var batch []domain.Measurement
	for i, r := range data.Discontinuities {
		if i%1024 == 0 {
			if err := ctx.Err(); err != nil {
				return err
			}
		}
		res.Rows++
		h, ok, err := holes.get(ctx, r.Hole)
		if err != nil {
			return err
		}
		if !ok {
			ps.add(r.Line, "LOCA_ID", "%s", noHoleMsg(r.Hole))
			continue
		}
		if _, ok := domain.FindTypeCode(vocab, r.Type); !ok {
			ps.addErr(domain.UnknownTypeCode("", r.Type, vocab).At(domain.Location{File: res.File, Line: r.Line, Column: "DISC_TYPE"}))
			continue
		}
		if math.IsNaN(r.Dip) || math.IsNaN(r.DipDirection) {
			ps.add(r.Line, "DISC_DIP", "no dip and dip direction: an unoriented discontinuity cannot become a core measurement")
			continue
		}
		if r.Dip < 0 || r.Dip > 90 || r.DipDirection < 0 || r.DipDirection > 360 {
			ps.add(r.Line, "DISC_DIP", "dip %v / dip direction %v: want 0 to 90 and 0 to 360", r.Dip, r.DipDirection)
			continue
		}
		hm, err := d.model(ctx, h.ID)
		if err != nil {
			return err
		}
		alpha, beta, err := hm.CoreAngles(r.Top, geom.Plane{Dip: r.Dip, DipDirection: r.DipDirection})
		if err != nil {
			col := "DISC_TOP"
			var he *holemodel.Error
			if errors.As(err, &he) && he.Field == holemodel.FieldDipDirection {
				col = "DISC_DIR"
			}
			ps.add(r.Line, col, "%v", err)
			continue
		}
		m := domain.Measurement{ProjectID: p.ID, HoleID: h.ID, Depth: r.Top, Alpha: alpha, Beta: &beta, TypeCode: r.Type,
			Comment: r.Remarks, LoggedBy: a.Name, LoggedAt: now}
		if err := checkMeasurement(&m, h, vocab); err != nil {
			var e *domain.Error
			errors.As(err, &e)
			col := "DISC_TOP"
			if e.Loc.Field == "gamma" {
				// AGS4 DISC rows are planes: a line type (which needs gamma)
				// cannot be imported from them (domain.CheckKind).
				col = "DISC_TYPE"
			}
			ps.add(r.Line, col, "%s", e.Msg)
			continue
		}
		batch = append(batch, m)
	}
	cores, err := coreIntervalsOf(ctx, data.Cores, holes, ps)
	if err != nil {
		return err
	}
	res.Rows += len(data.Cores)
	if err := ps.err(); err != nil {
		return err
	}
	if res.DryRun {
		res.Created = len(batch) + len(data.Cores)
		return nil
	}
	for _, c := range cores {
		if err := st.PutCoreIntervals(ctx, c.hole.ID, c.ivs); err != nil {
			return err
		}
		res.Created += len(c.ivs)
	}
	n, err := st.CreateMeasurements(ctx, batch)
	res.Created += n
	return err
}

// holeIntervals are the core intervals read for one hole.
type holeIntervals struct {
	hole  domain.Hole
	ivs   []domain.CoreInterval
	lines []int // the file line of each interval
}

// coreHeadings locates an interval rule's field at its CORE heading.
var coreHeadings = map[string]string{"from": "CORE_TOP", "to": "CORE_BASE", "recovered": "CORE_PREC", "solid": "CORE_SREC", "sound": "CORE_RQD"}

// coreIntervalsOf turns CORE rows into core intervals, by hole in file
// order: CORE_TOP and CORE_BASE are the depths, and the percentages of the
// interval's length CORE_PREC, CORE_SREC and CORE_RQD (0 to 100, empty when
// not measured) become the lengths recovered, solid and sound, so the
// intervals export to the same percentages. CORE_DIAM and CORE_REM have no
// place in a stored interval and are not kept. Each hole's intervals pass
// the interval rules (coreinterval.Validate: no overlaps, inside the
// hole); a problem goes to ps at its row's line and heading.
func coreIntervalsOf(ctx context.Context, rows []ags4.Core, holes *holeNames, ps *problems) ([]holeIntervals, error) {
	var out []holeIntervals
	at := map[int64]int{} // hole id -> index in out
	for _, r := range rows {
		h, ok, err := holes.get(ctx, r.Hole)
		if err != nil {
			return nil, err
		}
		if !ok {
			ps.add(r.Line, "LOCA_ID", "%s", noHoleMsg(r.Hole))
			continue
		}
		bad := false
		for _, c := range []struct {
			heading string
			v       float64
		}{{"CORE_PREC", r.TotalRecovery}, {"CORE_SREC", r.SolidRecovery}, {"CORE_RQD", r.RQD}} {
			if !math.IsNaN(c.v) && (c.v < 0 || c.v > 100) {
				ps.add(r.Line, c.heading, "%s %v: want a percentage 0 to 100", c.heading, c.v)
				bad = true
			}
		}
		if bad {
			continue
		}
		length := func(pct float64) float64 { return pct / 100 * (r.Base - r.Top) }
		iv := coreinterval.Interval{From: r.Top, To: r.Base, Recovered: length(r.TotalRecovery), Solid: length(r.SolidRecovery),
			Sound: length(r.RQD), NaturalBreaks: -1, InducedBreaks: -1}
		i, ok := at[h.ID]
		if !ok {
			i = len(out)
			at[h.ID] = i
			out = append(out, holeIntervals{hole: h})
		}
		out[i].ivs = append(out[i].ivs, storedInterval(iv))
		out[i].lines = append(out[i].lines, r.Line)
	}
	for _, hi := range out {
		rule := make([]coreinterval.Interval, len(hi.ivs))
		for i, iv := range hi.ivs {
			rule[i] = interval(iv)
		}
		for _, p := range coreinterval.Validate(rule, hi.hole.FinalDepth) {
			msg := p.Msg
			if p.Other >= 0 {
				msg += fmt.Sprintf(" (CORE row at line %d)", hi.lines[p.Other])
			}
			ps.add(hi.lines[p.Index], coreHeadings[p.Field], "hole %s: %s", hi.hole.Name, msg)
		}
	}
	return out, nil
}
