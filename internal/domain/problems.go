package domain

import (
	"fmt"
	"strconv"
	"strings"
)

// MaxProblemGroups bounds the distinct problems a [ProblemList] keeps; the
// rows of further distinct problems are counted but not listed.
const MaxProblemGroups = 1000

// maxRanges bounds the line ranges written out in one summarised problem.
const maxRanges = 12

// ProblemList gathers the row problems of a file, all of them: problems with
// the same message in the same file and column are summarised as one, with
// their count and lines ("426 rows: ... (lines 2-427)"), instead of being
// listed one by one. It is the one rule for reporting bad rows, used by the
// CSV readers, the imports and the commands.
type ProblemList struct {
	groups   []*problemGroup
	index    map[problemKey]*problemGroup
	rows     int // problems added
	unlisted int // problems of groups past MaxProblemGroups
}

type problemKey struct {
	file, column, field, msg string
}

type problemGroup struct {
	first *Error
	lines []int // ascending as added
	n     int
}

// Add records a problem.
func (pl *ProblemList) Add(e *Error) {
	pl.rows++
	k := problemKey{e.Loc.File, e.Loc.Column, e.Loc.Field, e.Msg}
	if g, ok := pl.index[k]; ok {
		g.n++
		if e.Loc.Line > 0 {
			g.lines = append(g.lines, e.Loc.Line)
		}
		return
	}
	if len(pl.groups) >= MaxProblemGroups {
		pl.unlisted++
		return
	}
	if pl.index == nil {
		pl.index = map[problemKey]*problemGroup{}
	}
	g := &problemGroup{first: e, n: 1}
	if e.Loc.Line > 0 {
		g.lines = []int{e.Loc.Line}
	}
	pl.index[k] = g
	pl.groups = append(pl.groups, g)
}

// Len is the number of problems added.
func (pl *ProblemList) Len() int { return pl.rows }

// Unlisted is the number of problems left out of [ProblemList.Errors]
// because there were more than MaxProblemGroups distinct ones.
func (pl *ProblemList) Unlisted() int { return pl.unlisted }

// Errors returns one error per distinct problem, in the order first seen: a
// problem met once as it was added, one met on several rows as "N rows:
// message (lines a-b, c)" located at its first line.
func (pl *ProblemList) Errors() []*Error {
	out := make([]*Error, 0, len(pl.groups))
	for _, g := range pl.groups {
		if g.n == 1 {
			out = append(out, g.first)
			continue
		}
		e := *g.first
		e.Msg = fmt.Sprintf("%d rows: %s", g.n, g.first.Msg)
		if len(g.lines) > 0 {
			e.Msg += " (" + LineRanges(g.lines) + ")"
		}
		out = append(out, &e)
	}
	return out
}

// LineRanges writes ascending line numbers as "lines 2-5, 9, 12-40", at most
// a dozen ranges, then "and N more".
func LineRanges(lines []int) string {
	if len(lines) == 1 {
		return "line " + strconv.Itoa(lines[0])
	}
	var parts []string
	more := 0
	for i := 0; i < len(lines); {
		j := i
		for j+1 < len(lines) && lines[j+1] == lines[j]+1 {
			j++
		}
		if len(parts) == maxRanges {
			more += j - i + 1
		} else if j > i {
			parts = append(parts, fmt.Sprintf("%d-%d", lines[i], lines[j]))
		} else {
			parts = append(parts, strconv.Itoa(lines[i]))
		}
		i = j + 1
	}
	s := "lines " + strings.Join(parts, ", ")
	if more > 0 {
		s += fmt.Sprintf(" and %d more", more)
	}
	return s
}
