package cli

import (
	"context"
	"fmt"

	"corvane/internal/csvio"
	"corvane/internal/geotech"
)

func init() {
	register(command{
		name:    "intervals",
		summary: "core recovery, RQD and fracture frequency of logged core intervals from a CSV",
		run:     runIntervals,
	})
}

const intervalsUsage = `Usage:
  corvane intervals --intervals I.csv [--collars C.csv] [--feet] [-o OUT.json]

Reads logged core intervals and prints JSON with, per interval and per hole (and for
all holes together, each value weighted by interval length):
  length              to - from (the drilled length)
  tcr                 total core recovery, 100 * recovered / length
  scr                 solid core recovery, 100 * solid / length
  rqd                 rock quality designation, 100 * (sum of sound pieces >= 100 mm) / length
  fracture_frequency  natural breaks per unit length
A total is null when any interval lacks the value (it never covers part of a hole only).

RQD follows Deere (1964) and Deere & Deere (1988): only pieces at least 100 mm long
(0.328 ft with --feet), measured along the core axis between natural breaks, count; pieces
broken in drilling or handling are fitted together first; lost core counts as zero.

The intervals file has a header (names in any case, columns in any order):
  hole_id, from, to             required; 0 <= from < to
  recovered, solid              lengths of core recovered and of solid (full-diameter) core
  sound                         summed length of sound pieces >= 100 mm, or
  pieces                        the lengths of the pieces between natural breaks, separated by ";"
  natural_breaks, induced_breaks  counts of breaks
  confidence                    orientation confidence of the run: good, fair, poor, none
Rules: solid <= recovered <= length, sound <= solid; intervals of a hole do not overlap;
with --collars every interval lies inside its hole (to <= the collar's depth). A file
breaking a rule is reported with file, line and column and nothing is printed (exit 2).

` + geotech.RockMassCaution + `

Options:
`

// readIntervalsFile reads and checks an intervals file (and, when collars is
// not "", that every interval lies inside its hole).
func readIntervalsFile(env *Env, path, collars string) ([]csvio.IntervalRow, error) {
	r, closeIn, err := openInput(env, path)
	if err != nil {
		return nil, err
	}
	defer closeIn()
	rows, err := csvio.ReadIntervals(r, path)
	if err != nil {
		return nil, err
	}
	if collars != "" {
		cr, closeCollars, err := openInput(env, collars)
		if err != nil {
			return nil, err
		}
		defer closeCollars()
		cs, err := csvio.ReadCollars(cr, collars)
		if err != nil {
			return nil, err
		}
		depths := map[string]float64{}
		for _, c := range cs {
			depths[c.HoleID] = c.Collar.Depth
		}
		if err := csvio.CheckIntervalDepths(rows, path, depths); err != nil {
			return nil, err
		}
	}
	return rows, nil
}

func runIntervals(_ context.Context, env *Env, args []string) int {
	fs := newFlagSet(env, "intervals", intervalsUsage)
	in := fs.String("intervals", "", "core intervals CSV (required; - for standard input)")
	collars := fs.String("collars", "", "collars CSV: check that every interval lies inside its hole")
	feet := fs.Bool("feet", false, "lengths are in feet (RQD pieces from 0.328 ft)")
	out := fs.String("o", "", "output JSON file (default standard output)")
	fail, code, done := parseOrientArgs(env, fs, "intervals", args)
	if done {
		return code
	}
	if *in == "" {
		return fail(fmt.Errorf("--intervals FILE is required"))
	}
	rows, err := readIntervalsFile(env, *in, *collars)
	if err != nil {
		fmt.Fprint(env.Stderr, "corvane intervals: ")
		csvio.Report(env.Stderr, err)
		return ExitUsage
	}
	var ivs []geotech.IntervalRow
	for _, r := range rows {
		ivs = append(ivs, geotech.IntervalRow{Line: r.Line, HoleID: r.HoleID, Interval: r.Interval})
	}
	rep := geotech.Intervals(ivs, *feet)
	rep.Input = *in
	return writeJSON(env, fail, *out, rep)
}
