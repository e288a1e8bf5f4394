package csvio

import (
	"io"
	"math"
	"strconv"
	"strings"

	"corvane/internal/coreinterval"
)

// Columns of a core intervals file beyond hole_id, from, to and confidence.
const (
	ColRecovered     = "recovered"
	ColSolid         = "solid"
	ColSound         = "sound"
	ColPieces        = "pieces"
	ColNaturalBreaks = "natural_breaks"
	ColInducedBreaks = "induced_breaks"
)

// IntervalColumns are the required columns of a core intervals file.
var IntervalColumns = []string{ColHoleID, ColFrom, ColTo}

// IntervalRow is one row of a core intervals file.
type IntervalRow struct {
	Line     int
	HoleID   string
	Interval coreinterval.Interval
}

// ReadIntervals reads a whole core intervals file: hole_id, from, to
// (0 <= from < to); optional recovered, solid (solid full-diameter core) and
// sound (summed length of sound pieces >= 100 mm along the core axis) as
// lengths, pieces (the lengths of the pieces between natural breaks,
// separated by ";"; give sound or pieces, not both), natural_breaks and
// induced_breaks (counts) and confidence (good, fair, poor or none). The
// rules of [coreinterval.Validate] apply per hole: lengths within the
// interval, no overlapping intervals (the rows of a hole may come in any
// order). Errors as for [ReadCollars]; an overlap is reported on the later
// starting row and names the line of the other.
func ReadIntervals(r io.Reader, file string) ([]IntervalRow, error) {
	rows, err := readRows(r, file, "interval", IntervalColumns, func(rw *row) IntervalRow {
		out := IntervalRow{Line: rw.line, HoleID: rw.cell(ColHoleID)}
		if out.HoleID == "" {
			rw.fail(ColHoleID, "hole_id is empty")
		}
		iv := &out.Interval
		iv.From, _ = rw.num(ColFrom, true)
		iv.To, _ = rw.num(ColTo, true)
		iv.Recovered, _ = rw.num(ColRecovered, false)
		iv.Solid, _ = rw.num(ColSolid, false)
		iv.Sound, _ = rw.num(ColSound, false)
		if s := rw.cell(ColPieces); s != "" {
			for i, p := range strings.Split(s, ";") {
				v, msg := ParseNumber(strings.TrimSpace(p))
				if msg != "" {
					rw.fail(ColPieces, "pieces: piece %d %s", i+1, msg)
					break
				}
				iv.Pieces = append(iv.Pieces, v)
			}
		}
		iv.NaturalBreaks = rw.count(ColNaturalBreaks)
		iv.InducedBreaks = rw.count(ColInducedBreaks)
		if c := strings.ToLower(rw.cell(ColConfidence)); c != "" {
			switch c {
			case ConfidenceGood, ConfidenceFair, ConfidencePoor, ConfidenceNone:
				iv.Confidence = c
			default:
				rw.fail(ColConfidence, "confidence %q is not one of %s", rw.cell(ColConfidence), strings.Join(Confidences, ", "))
			}
		}
		if rw.bad == nil {
			if ps := coreinterval.ValidateOne(0, *iv); len(ps) > 0 {
				rw.fail(ps[0].Field, "%s", ps[0].Msg)
			}
		}
		return out
	})
	if err != nil {
		return nil, err
	}
	// Rules between rows, per hole.
	byHole := map[string][]int{}
	var order []string
	for i, r := range rows {
		if _, ok := byHole[r.HoleID]; !ok {
			order = append(order, r.HoleID)
		}
		byHole[r.HoleID] = append(byHole[r.HoleID], i)
	}
	c := collect{file: file}
	for _, h := range order {
		idx := byHole[h]
		ivs := make([]coreinterval.Interval, len(idx))
		for k, i := range idx {
			ivs[k] = rows[i].Interval
		}
		for _, p := range coreinterval.Validate(ivs, math.NaN()) {
			msg := p.Msg
			if p.Other >= 0 {
				msg += " on line " + strconv.Itoa(rows[idx[p.Other]].Line)
			}
			c.add(invalid(file, rows[idx[p.Index]].Line, p.Field, "hole %q: %s", h, msg))
		}
	}
	if err := c.err("interval"); err != nil {
		return nil, err
	}
	return rows, nil
}

// CheckIntervalDepths reports, as one located error, every interval that
// ends beyond its hole's depth (depths maps hole id to final depth; holes
// not in it are not checked) or whose hole is unknown when unknown is
// reported (depths of every known hole given).
func CheckIntervalDepths(rows []IntervalRow, file string, depths map[string]float64) error {
	c := collect{file: file}
	for _, r := range rows {
		d, ok := depths[r.HoleID]
		if !ok {
			c.add(invalid(file, r.Line, ColHoleID, "hole %q is not in the collars", r.HoleID))
			continue
		}
		for _, p := range coreinterval.Validate([]coreinterval.Interval{r.Interval}, d) {
			c.add(invalid(file, r.Line, p.Field, "hole %q: %s", r.HoleID, p.Msg))
		}
	}
	return c.err("interval")
}

// count parses an optional whole count >= 0; -1 when the cell is empty.
func (r *row) count(col string) int {
	s := r.cell(col)
	if s == "" {
		return -1
	}
	n, err := strconv.Atoi(s)
	if err != nil || n < 0 {
		r.fail(col, "%s %q is not a whole number >= 0", col, s)
		return -1
	}
	return n
}
