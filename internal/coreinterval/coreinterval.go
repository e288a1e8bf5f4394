// Package coreinterval holds the core intervals of a hole as logged for
// rock-mass quality (one interval per core run or logged length) and the
// values derived from them: total core recovery, solid core recovery, rock
// quality designation (RQD) and fracture frequency.
//
// Definitions (lengths in the project's unit, metres by default):
//
//	length = to - from                          (drilled length of the interval)
//	TCR    = 100 * recovered / length            total core recovery, %
//	SCR    = 100 * solid / length                solid (full-diameter) core recovery, %
//	RQD    = 100 * sum(pieces >= 100 mm) / length
//	FF     = natural breaks / length             fractures per metre (per unit length)
//
// RQD follows Deere (1964) as restated by Deere & Deere (1988, "The rock
// quality designation (RQD) index in practice", ASTM STP 984) and ASTM D6032:
// only sound core pieces at least 100 mm long count, each measured along the
// core axis (the centreline), between natural breaks; pieces broken by
// drilling or handling are fitted back together and count as one piece; the
// sum is divided by the drilled length of the interval, so lost core counts
// as zero. A project in feet gives the 100 mm threshold as 0.328 ft (see
// [MinPieceFeet]).
//
// coreinterval imports only the standard library.
package coreinterval

import (
	"fmt"
	"math"
	"sort"
)

// MinPiece is the RQD piece threshold in metres: 100 mm (Deere 1964).
const MinPiece = 0.1

// MinPieceFeet is the same threshold for projects in feet: 100 mm = 0.328 ft.
const MinPieceFeet = 0.1 / 0.3048

// Interval is one logged core interval of a hole. Optional values are NaN
// (lengths) or negative (counts) when not logged.
type Interval struct {
	From, To float64 // measured depths, From < To
	// Recovered is the length of core recovered in the interval.
	Recovered float64
	// Solid is the length of solid (full-diameter) core.
	Solid float64
	// Sound is the summed length of sound pieces at least [MinPiece] long,
	// measured along the core axis between natural breaks. NaN when the
	// pieces are given instead (or neither).
	Sound float64
	// Pieces lists the lengths of the core pieces between natural breaks
	// (drilling-induced breaks already fitted together), measured along the
	// core axis. nil when not logged.
	Pieces []float64
	// NaturalBreaks and InducedBreaks count the breaks in the interval;
	// -1 when not counted.
	NaturalBreaks, InducedBreaks int
	// Confidence is the orientation confidence of the run, "" when none.
	Confidence string
}

// Length returns the drilled length To - From.
func (iv Interval) Length() float64 { return iv.To - iv.From }

// Problem is a broken interval rule, located at the interval (index into the
// slice given to [Validate], from 0) and the field ("from", "to",
// "recovered", "solid", "sound", "pieces", "natural_breaks",
// "induced_breaks").
type Problem struct {
	Index int
	Field string
	Msg   string
	// Other is the index of the interval this one overlaps, -1 when none.
	Other int
}

func (p *Problem) Error() string {
	if p.Other >= 0 {
		return fmt.Sprintf("interval %d, %s: %s (interval %d)", p.Index+1, p.Field, p.Msg, p.Other+1)
	}
	return fmt.Sprintf("interval %d, %s: %s", p.Index+1, p.Field, p.Msg)
}

// tol absorbs rounding in logged lengths (e.g. 1.2 + 0.3 recorded as 1.5).
const tol = 1e-9

// ValidateOne checks the rules of one interval on its own: finite from < to,
// from >= 0, lengths >= 0, recovered <= length, solid <= recovered, sound <=
// solid (sound pieces are solid core), the pieces' sum <= recovered, counts
// >= -1. index locates the problems.
func ValidateOne(index int, iv Interval) []*Problem {
	var ps []*Problem
	bad := func(field, format string, args ...any) {
		ps = append(ps, &Problem{Index: index, Field: field, Msg: fmt.Sprintf(format, args...), Other: -1})
	}
	finite := func(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
	if !finite(iv.From) || iv.From < 0 {
		bad("from", "from %v must be a finite depth >= 0", iv.From)
	}
	if !finite(iv.To) {
		bad("to", "to %v must be a finite depth", iv.To)
	} else if finite(iv.From) && iv.To <= iv.From {
		bad("to", "to %g is not greater than from %g", iv.To, iv.From)
	}
	if len(ps) > 0 {
		return ps
	}
	l := iv.Length()
	opt := func(field string, v, limit float64, limitName string) {
		if math.IsNaN(v) {
			return
		}
		switch {
		case math.IsInf(v, 0) || v < 0:
			bad(field, "%s %v must be a finite length >= 0", field, v)
		case !math.IsNaN(limit) && v > limit+tol*(1+limit):
			bad(field, "%s %g is more than %s %g", field, v, limitName, limit)
		}
	}
	opt("recovered", iv.Recovered, l, "the interval length")
	solidLimit, solidName := iv.Recovered, "recovered"
	if math.IsNaN(solidLimit) {
		solidLimit, solidName = l, "the interval length"
	}
	opt("solid", iv.Solid, solidLimit, solidName)
	soundLimit, soundName := iv.Solid, "solid"
	if math.IsNaN(soundLimit) {
		soundLimit, soundName = solidLimit, solidName
	}
	opt("sound", iv.Sound, soundLimit, soundName)
	if iv.Pieces != nil {
		if !math.IsNaN(iv.Sound) {
			bad("pieces", "give either the sound length or the pieces, not both")
		}
		sum := 0.0
		for i, p := range iv.Pieces {
			if math.IsNaN(p) || math.IsInf(p, 0) || p <= 0 {
				bad("pieces", "piece %d length %v must be a finite length > 0", i+1, p)
				return ps
			}
			sum += p
		}
		limit, name := iv.Recovered, "recovered"
		if math.IsNaN(limit) {
			limit, name = l, "the interval length"
		}
		if sum > limit+tol*(1+limit) {
			bad("pieces", "the pieces sum to %g, more than %s %g", sum, name, limit)
		}
	}
	if iv.NaturalBreaks < -1 {
		bad("natural_breaks", "natural_breaks %d is negative", iv.NaturalBreaks)
	}
	if iv.InducedBreaks < -1 {
		bad("induced_breaks", "induced_breaks %d is negative", iv.InducedBreaks)
	}
	return ps
}

// Validate checks every interval of one hole (see [ValidateOne]) and the
// rules between them: no two intervals overlap (touching ends are allowed)
// and, when holeDepth is not NaN, every interval lies inside the hole
// (to <= holeDepth). The intervals may come in any order. Problems are
// sorted by index.
func Validate(ivs []Interval, holeDepth float64) []*Problem {
	var ps []*Problem
	ok := make([]bool, len(ivs))
	for i, iv := range ivs {
		p := ValidateOne(i, iv)
		ps = append(ps, p...)
		ok[i] = true
		for _, q := range p {
			if q.Field == "from" || q.Field == "to" {
				ok[i] = false
			}
		}
		if ok[i] && !math.IsNaN(holeDepth) && iv.To > holeDepth+tol*(1+holeDepth) {
			ps = append(ps, &Problem{Index: i, Field: "to", Msg: fmt.Sprintf("to %g is beyond the end of the hole at %g", iv.To, holeDepth), Other: -1})
		}
	}
	order := make([]int, 0, len(ivs))
	for i := range ivs {
		if ok[i] {
			order = append(order, i)
		}
	}
	sort.SliceStable(order, func(a, b int) bool { return ivs[order[a]].From < ivs[order[b]].From })
	// Each interval is checked against the one reaching deepest before it,
	// so every overlap is reported once, at the later-starting interval.
	reach := -1
	for _, i := range order {
		if reach >= 0 && ivs[i].From < ivs[reach].To-tol {
			ps = append(ps, &Problem{Index: i, Field: "from", Other: reach, Msg: fmt.Sprintf("from %g overlaps the interval %g to %g",
				ivs[i].From, ivs[reach].From, ivs[reach].To)})
		}
		if reach < 0 || ivs[i].To > ivs[reach].To {
			reach = i
		}
	}
	sort.SliceStable(ps, func(a, b int) bool { return ps[a].Index < ps[b].Index })
	return ps
}

// Derived holds the values derived from one interval (or a sum of them).
// Percentages are 0..100; a value that cannot be derived is NaN.
type Derived struct {
	Length float64 // drilled length
	TCR    float64 // total core recovery, %
	SCR    float64 // solid core recovery, %
	RQD    float64 // rock quality designation, %
	// RQDFrom says what RQD was computed from: "pieces", "sound" or "".
	RQDFrom string
	// FF is natural breaks per unit length of the interval.
	FF float64
	// Natural and Induced are the break counts (-1 when not counted).
	Natural, Induced int
	// sums for combining intervals
	recovered, solid, sound float64
}

// SoundLength returns the sum of the pieces at least minPiece long.
func SoundLength(pieces []float64, minPiece float64) float64 {
	s := 0.0
	for _, p := range pieces {
		if p >= minPiece {
			s += p
		}
	}
	return s
}

// Derive returns the derived values of iv; minPiece is the RQD threshold in
// the project's length unit ([MinPiece] for metres). iv should have passed
// [ValidateOne].
func Derive(iv Interval, minPiece float64) Derived {
	l := iv.Length()
	d := Derived{Length: l, TCR: math.NaN(), SCR: math.NaN(), RQD: math.NaN(), FF: math.NaN(),
		Natural: iv.NaturalBreaks, Induced: iv.InducedBreaks,
		recovered: iv.Recovered, solid: iv.Solid, sound: math.NaN()}
	if !math.IsNaN(iv.Recovered) {
		d.TCR = 100 * iv.Recovered / l
	}
	if !math.IsNaN(iv.Solid) {
		d.SCR = 100 * iv.Solid / l
	}
	switch {
	case iv.Pieces != nil:
		d.sound = SoundLength(iv.Pieces, minPiece)
		d.RQDFrom = "pieces"
	case !math.IsNaN(iv.Sound):
		d.sound = iv.Sound
		d.RQDFrom = "sound"
	}
	if !math.IsNaN(d.sound) {
		d.RQD = 100 * d.sound / l
	}
	if iv.NaturalBreaks >= 0 {
		d.FF = float64(iv.NaturalBreaks) / l
	}
	return d
}

// Combine returns the values over several intervals, each weighted by its
// length: the sums of the lengths recovered, solid and sound and of the
// breaks, over the sum of the drilled lengths. A value is NaN (a count -1)
// when any interval lacks it, so a total never silently covers only part of
// the hole. Gaps between intervals are not counted: the total is over the
// logged length.
func Combine(ds []Derived) Derived {
	t := Derived{TCR: math.NaN(), SCR: math.NaN(), RQD: math.NaN(), FF: math.NaN()}
	if len(ds) == 0 {
		t.Natural, t.Induced = -1, -1
		return t
	}
	from := ds[0].RQDFrom
	for _, d := range ds {
		t.Length += d.Length
		t.recovered += d.recovered
		t.solid += d.solid
		t.sound += d.sound
		t.Natural = addCount(t.Natural, d.Natural)
		t.Induced = addCount(t.Induced, d.Induced)
		if d.RQDFrom != from {
			from = "mixed"
		}
	}
	t.RQDFrom = from
	t.TCR = 100 * t.recovered / t.Length
	t.SCR = 100 * t.solid / t.Length
	t.RQD = 100 * t.sound / t.Length
	if t.Natural >= 0 {
		t.FF = float64(t.Natural) / t.Length
	}
	return t
}

func addCount(a, b int) int {
	if a < 0 || b < 0 {
		return -1
	}
	return a + b
}
