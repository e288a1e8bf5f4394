package geotech

import (
	"corvane/internal/coreinterval"
	"corvane/internal/fabric"
)

// IntervalValues are the derived values of an interval or a total.
type IntervalValues struct {
	Line       int         `json:"line,omitempty"`
	From       *fabric.Num `json:"from,omitempty"`
	To         *fabric.Num `json:"to,omitempty"`
	Length     fabric.Num  `json:"length"`
	TCR        fabric.Num  `json:"tcr"`
	SCR        fabric.Num  `json:"scr"`
	RQD        fabric.Num  `json:"rqd"`
	RQDFrom    string      `json:"rqd_from,omitempty"`
	FF         fabric.Num  `json:"fracture_frequency"`
	Natural    *int        `json:"natural_breaks"`
	Induced    *int        `json:"induced_breaks"`
	Confidence string      `json:"confidence,omitempty"`
}

// IntervalHole is a hole's intervals and their total.
type IntervalHole struct {
	HoleID    string           `json:"hole_id"`
	Intervals []IntervalValues `json:"intervals"`
	Total     IntervalValues   `json:"total"`
}

// IntervalsReport is the report of [Intervals]; Input is filled in by the door.
type IntervalsReport struct {
	Input      string         `json:"input"`
	LengthUnit string         `json:"length_unit"`
	MinPiece   fabric.Num     `json:"rqd_min_piece"`
	Method     string         `json:"method"`
	Holes      []IntervalHole `json:"holes"`
	All        IntervalValues `json:"all"`
	Caution    string         `json:"caution"`
}

// IntervalRow is one logged interval of a hole; Line locates it in its
// source (0 when none).
type IntervalRow struct {
	Line     int
	HoleID   string
	Interval coreinterval.Interval
}

// IntervalsMethod describes the derived values.
const IntervalsMethod = "TCR, SCR and RQD over the drilled length (to - from); RQD counts pieces >= 100 mm " +
	"along the core axis between natural breaks (Deere 1964; Deere & Deere 1988); " +
	"fracture frequency = natural breaks / drilled length"

func countPtr(n int) *int {
	if n < 0 {
		return nil
	}
	return &n
}

func intervalValues(d coreinterval.Derived) IntervalValues {
	return IntervalValues{Length: fabric.Num(d.Length), TCR: fabric.Num(d.TCR), SCR: fabric.Num(d.SCR), RQD: fabric.Num(d.RQD),
		RQDFrom: d.RQDFrom, FF: fabric.Num(d.FF), Natural: countPtr(d.Natural), Induced: countPtr(d.Induced)}
}

// Intervals derives TCR, SCR, RQD and fracture frequency per interval, per
// hole (holes in order of first appearance) and over all holes; feet
// selects the 0.328 ft RQD threshold. The rows should have passed
// coreinterval.Validate.
func Intervals(rows []IntervalRow, feet bool) IntervalsReport {
	minPiece, unit := coreinterval.MinPiece, "m"
	if feet {
		minPiece, unit = coreinterval.MinPieceFeet, "ft"
	}
	rep := IntervalsReport{LengthUnit: unit, MinPiece: fabric.Num(minPiece), Method: IntervalsMethod, Caution: RockMassCaution,
		Holes: []IntervalHole{}}
	byHole := map[string]int{}
	var all []coreinterval.Derived
	var perHole [][]coreinterval.Derived
	for _, r := range rows {
		i, ok := byHole[r.HoleID]
		if !ok {
			i = len(rep.Holes)
			byHole[r.HoleID] = i
			rep.Holes = append(rep.Holes, IntervalHole{HoleID: r.HoleID})
			perHole = append(perHole, nil)
		}
		d := coreinterval.Derive(r.Interval, minPiece)
		j := intervalValues(d)
		j.Line, j.From, j.To, j.Confidence = r.Line, numPtr(r.Interval.From), numPtr(r.Interval.To), r.Interval.Confidence
		rep.Holes[i].Intervals = append(rep.Holes[i].Intervals, j)
		perHole[i] = append(perHole[i], d)
		all = append(all, d)
	}
	for i := range rep.Holes {
		rep.Holes[i].Total = intervalValues(coreinterval.Combine(perHole[i]))
	}
	rep.All = intervalValues(coreinterval.Combine(all))
	return rep
}
