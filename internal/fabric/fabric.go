// Package fabric is the one statistics pipeline for oriented measurements:
// from rows of planes and lines (as `corvane convert` writes them, or as the
// service derives them from the store) to the set statistics report
// ([Stats]), the net ([Net]) and the rose diagram ([Rose]). Every door —
// `corvane stats`, `corvane net` and `corvane rose`, and the service's
// statistics, net and rose routes — builds [Row]s, parses its options with
// the parsers here and calls the same function, so the same measurements
// give the same JSON and the same SVG everywhere.
//
// Data rule (README, "Data rules"): a row with a dip but no dip direction,
// or a plunge but no trend — a measurement in a vertical hole, where core
// angles give the dip alone — is skipped and counted under
// [SkipNoDipDirection]; a row that could not be oriented at all is skipped
// under [SkipNotOriented]; an unoriented measurement (alpha without beta:
// the hole direction and the angle to the core axis, no dip direction) is
// skipped under [SkipUnoriented], so it never enters a set mean. None fails
// the run.
//
// fabric is pure: it imports the standard library and corvane's math
// packages only.
package fabric

import (
	"math"
	"sort"
	"strconv"

	"corvane/internal/geom"
	"corvane/internal/jsonnum"
	"corvane/internal/words"
)

// Caution is shown with every statistics report, net and rose.
const Caution = "Statistics and nets summarise the measurements given; they are only as good as the " +
	"orientation marks, surveys and logging behind them. Where they feed slope or excavation design, " +
	"check the warnings and QA findings and base any design on local codes and the judgement of a licensed practitioner."

// Reasons a row is skipped.
const (
	SkipNoDipDirection = "no dip direction (a vertical hole: dip = 90 - alpha, no azimuth)"
	SkipNotOriented    = "not oriented (the conversion gave an error)"
	SkipUnoriented     = "unoriented (alpha without beta: no dip direction)"
)

// Row is one measurement: a plane, a line on it or alone, or both, with the
// hole direction at its depth when known.
type Row struct {
	Type string // type code, "" when none

	HasPlane bool
	Plane    geom.Plane

	HasLine bool
	Line    geom.Line

	HasHole bool
	Hole    geom.Vec3 // down-hole unit vector

	// NoAzimuth: the row gives a dip (or a plunge) without its dip direction
	// (or trend), as a measurement in a vertical hole does. Such a row with
	// no plane and no line is skipped.
	NoAzimuth bool
	// Unoriented: a measurement without beta (the hole direction and alpha
	// are known, the plane is not). Such a row is skipped; a vertical
	// hole's (NoAzimuth) is counted as such first, as the CSV cannot tell.
	Unoriented bool
	// Error says why the row could not be oriented; "" when it was.
	Error string
	// Errors are the row's measurement errors for the set statistics (see
	// [RowErrors]); nil when unknown.
	Errors *Errors
}

// skipReason returns why r is left out, or "".
func skipReason(r Row) string {
	switch {
	case r.Error != "":
		return SkipNotOriented
	case r.HasPlane || r.HasLine:
		return ""
	case r.NoAzimuth:
		return SkipNoDipDirection
	case r.Unoriented:
		return SkipUnoriented
	default:
		return SkipNotOriented
	}
}

// Input is what a door hands to the pipeline.
type Input struct {
	Rows []Row
	// Rejected counts rows the door could not read (it reports them itself,
	// with file, line and column); they are only counted here.
	Rejected int
}

// SkipCount is the number of rows skipped for one reason.
type SkipCount struct {
	Reason string `json:"reason"`
	Count  int    `json:"count"`
}

// usable splits rows into those used and the counts of those skipped, in a
// fixed order of reasons.
func usable(rows []Row) (used []Row, skipped []SkipCount) {
	n := map[string]int{}
	used = make([]Row, 0, len(rows))
	for _, r := range rows {
		if why := skipReason(r); why != "" {
			n[why]++
			continue
		}
		used = append(used, r)
	}
	skipped = []SkipCount{}
	for _, why := range []string{SkipNoDipDirection, SkipUnoriented, SkipNotOriented} {
		if n[why] > 0 {
			skipped = append(skipped, SkipCount{Reason: why, Count: n[why]})
		}
	}
	return used, skipped
}

func skipNotes(skipped []SkipCount) []string {
	var out []string
	for _, s := range skipped {
		out = append(out, words.Plural(s.Count, "row")+" left out: "+s.Reason)
	}
	return out
}

// Num is a number in a report: rounded to 1e-6, with NaN and infinities as
// JSON null (the report says why beside them where it matters) and never a
// negative zero.
type Num float64

// MarshalJSON implements json.Marshaler.
func (v Num) MarshalJSON() ([]byte, error) {
	f := float64(v)
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return []byte("null"), nil
	}
	return strconv.AppendFloat(nil, jsonnum.Round(f), 'f', -1, 64), nil
}

func nptr(v float64) *Num { n := Num(v); return &n }

// typeNames returns the distinct type codes of rows, sorted.
func typeNames(rows []Row, idx []int) []string {
	seen := map[string]bool{}
	var names []string
	for _, i := range idx {
		t := rows[i].Type
		if !seen[t] {
			seen[t] = true
			names = append(names, t)
		}
	}
	sort.Strings(names)
	return names
}
