package cli

import (
	"context"
	"fmt"
	"math"
	"path/filepath"
	"strconv"

	"corvane/internal/csvio"
	"corvane/internal/dirstat"
	"corvane/internal/geotech"
	"corvane/internal/projection"
	"corvane/internal/spacing"
	"corvane/internal/structdomain"
)

func init() {
	register(command{
		name:    "spacing",
		summary: "frequency (P10), true spacing and a P32 estimate per set along the holes, per domain",
		run:     runSpacing,
	})
}

const spacingUsage = `Usage:
  corvane spacing --in FILE (--sets auto:N | --set NAME:TREND/PLUNGE:CONE ...)
                  [--intervals I.csv] [--domain ` + structdomain.Syntax + ` ...]
                  [--cap W] [--type TYPE] [-o OUT.json]

Reads structures from a CSV such as the one corvane convert writes (hole_id, depth,
dip, dip_direction, hole_azimuth, hole_dip; alpha and rock_type when present) and prints
JSON with, per domain (all rows when no --domain is given) and per set:
  p10                crossings per unit length of hole (per hole and pooled)
  p10_normal         Terzaghi (1965) corrected frequency along the set's mean pole:
                     sum of 1/|cos delta| over the length, delta between the hole and the
                     set's mean pole, capped at --cap
  mean_spacing       1 / p10_normal
  spacing_along_hole distribution of the gaps between consecutive crossings in a hole
  true_spacing       the same corrected to the mean pole: gap * |cos delta| (capped)
  p32_estimate       fracture area per unit volume estimated from P10 with the angle
                     factor of Mauldon & Mauldon (1997) / Wang (2005) for the set's Fisher
                     distribution (see "p32_assumptions" in the output)
and per hole every structure together (p10 and Terzaghi-weighted p10).

Sets are formed on the poles of the oriented planes of all rows as in corvane stats
(--sets auto:N or --set windows), and each set's mean and Fisher concentration are
taken from its members in the domain.

Unoriented measurements (alpha and hole direction, no dip: a row with an empty beta)
fix only the angle between the pole and the hole: their poles lie on a cone of half-angle
90 - alpha about the hole axis. They count in the hole totals with the Terzaghi weight
1/sin(alpha), and in a set's frequency and spacing when their cone passes within the
set's fit angle of its mean (the window's cone, or 140/sqrt(k) for automatic sets) and
no other set's; they never enter set means. Their counts are reported.

With --svg NET.svg a net shows the poles by set, the set means, and each unoriented
measurement's cone of possible poles as a dashed small circle.

Lengths: with --intervals the logged intervals (contiguous intervals join into one run;
a gap breaks the spacing), clipped to the domain's depth ranges; otherwise the domain's
depth ranges, or the span from the first to the last structure of the hole (an
under-estimate; the output says which).

` + geotech.RockMassCaution + `

Options:
`

// capFlag is a Terzaghi cap >= 1.
type capFlag float64

func (f *capFlag) String() string { return strconv.FormatFloat(float64(*f), 'g', 6, 64) }

func (f *capFlag) Set(s string) error {
	v, err := strconv.ParseFloat(s, 64)
	if err != nil || !(v >= 1) || math.IsInf(v, 0) {
		return fmt.Errorf("%q: want a number >= 1", s)
	}
	*f = capFlag(v)
	return nil
}

func runSpacing(_ context.Context, env *Env, args []string) int {
	fs := newFlagSet(env, "spacing", spacingUsage)
	var c orientFlags
	registerGeoFlags(fs, &c)
	var doms domainFlags
	registerDomainFlags(fs, &doms)
	intervals := fs.String("intervals", "", "core intervals CSV giving the logged length of each hole")
	maxW := capFlag(dirstat.DefaultTerzaghiCap)
	fs.Var(&maxW, "cap", "largest Terzaghi weight (default 2.924 = 1/cos 70: Brady & Brown 2004, citing Goodman 1976)")
	values := fs.Bool("values", false, "list every spacing in the distributions")
	svg := fs.String("svg", "", "also write a net (SVG) of the poles by set, the set means and the cones of possible poles of the unoriented measurements")
	fail, code, done := parseOrientArgs(env, fs, "spacing", args)
	if done {
		return code
	}
	gi, so, err := loadGeo(env, &c)
	if err != nil {
		return fail(err)
	}
	o := geotech.SpacingOptions{Sets: so, Domains: doms, Cap: float64(maxW), Values: *values}
	if *intervals != "" {
		rows, err := readIntervalsFile(env, *intervals, "")
		if err != nil {
			fmt.Fprint(env.Stderr, "corvane spacing: ")
			csvio.Report(env.Stderr, err)
			return ExitUsage
		}
		for _, r := range rows {
			o.Extents = append(o.Extents, spacing.Extent{Hole: r.HoleID, From: r.Interval.From, To: r.Interval.To})
		}
	}
	rep, err := geotech.Spacing(gi.in, o)
	if err != nil {
		return fail(err)
	}
	rep.Input, rep.Intervals, rep.TypeFilter, rep.Problems = gi.file, *intervals, c.typ, gi.problems
	if *svg != "" {
		n, err := geotech.UnorientedNet(gi.in, so, projection.EqualArea, filepath.Base(gi.file))
		if err != nil {
			return fail(err)
		}
		if err := writeSVG(*svg, n); err != nil {
			return fail(err)
		}
	}
	if code := writeJSON(env, fail, c.out, rep); code != ExitOK {
		return code
	}
	return gi.exit()
}
