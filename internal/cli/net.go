package cli

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"path/filepath"
	"strings"

	"corvane/internal/density"
	"corvane/internal/dirstat"
	"corvane/internal/netsvg"
	"corvane/internal/projection"
)

func init() {
	register(command{
		name:    "net",
		summary: "lower-hemisphere net (SVG) of poles, planes, lines, sets and density from a CSV",
		run:     runNet,
	})
}

const netUsage = `Usage:
  corvane net --in FILE -o NET.svg [--projection equal-area|equal-angle]
              [--show poles,planes,lines,density,sets] [--sets auto:N | --set NAME:TREND/PLUNGE:CONE ...]
              [--density exponential|kamb] [--units mud|sigma] [--weighting terzaghi[:CAP]] [--type TYPE]

Draws a lower-hemisphere net as SVG from the same CSV as corvane stats: poles to planes
(filled markers), planes as great circles, lines (open markers), set means with their
95% cones of confidence drawn as small circles, and filled density contours of the poles
(of the lines when the file has no planes). Sets use the same options as corvane stats;
with "sets" in --show and no set options, the mean of all measurements is drawn.

Density: exponential smoothing (Vollmer 1995, default) or Kamb (1959) counting, in
multiples of uniform density (default) or sigma units; Terzaghi weights are honoured
with --weighting.

` + statsCaution + `

Options:
`

func runNet(_ context.Context, env *Env, args []string) int {
	fs := flag.NewFlagSet("net", flag.ContinueOnError)
	fs.SetOutput(env.Stderr)
	fs.Usage = func() {
		fmt.Fprint(env.Stderr, netUsage)
		fs.PrintDefaults()
	}
	var c orientFlags
	c.register(fs, true)
	proj := fs.String("projection", "equal-area", "equal-area or equal-angle")
	show := fs.String("show", "poles,lines,density,sets", "comma-separated: poles, planes, lines, density, sets")
	method := fs.String("density", "exponential", "exponential or kamb")
	units := fs.String("units", "mud", "density units: mud (multiples of uniform density) or sigma")
	title := fs.String("title", "", "title on the sheet (default from the input file name)")
	grid := fs.Int("grid", 161, "density grid nodes per side (40 to 600)")
	fail, code, done := parseOrientArgs(env, fs, "net", args)
	if done {
		return code
	}
	if c.out == "" {
		return fail(errors.New("-o NET.svg is required"))
	}
	k, err := projection.Parse(*proj)
	if err != nil {
		return fail(err)
	}
	dm, err := density.Parse(*method)
	if err != nil {
		return fail(err)
	}
	if *units != "mud" && *units != "sigma" {
		return fail(fmt.Errorf("--units %q: want mud or sigma", *units))
	}
	if *grid < 40 || *grid > 600 {
		return fail(fmt.Errorf("--grid %d: want 40 to 600", *grid))
	}
	want := map[string]bool{}
	for _, s := range strings.Split(*show, ",") {
		s = strings.TrimSpace(s)
		switch s {
		case "poles", "planes", "lines", "density", "sets":
			want[s] = true
		case "":
		default:
			return fail(fmt.Errorf("--show: unknown item %q (want poles, planes, lines, density, sets)", s))
		}
	}
	w, err := parseWeightingFlag(c.weighting)
	if err != nil {
		return fail(err)
	}
	so, err := c.setOptions()
	if err != nil {
		return fail(err)
	}
	in, err := loadOrientations(env, c.in, c.typ)
	if err != nil {
		return fail(err)
	}

	planes := buildGroup(in, "planes", w)
	lines := buildGroup(in, "lines", w)
	hasSets := so.auto > 0 || len(so.windows) > 0
	for _, g := range []*orientGroup{planes, lines} {
		if len(g.axes) == 0 || !hasSets || !c.setsApply(in, g.kind) {
			continue
		}
		if err := g.assignSets(so); err != nil {
			return fail(err)
		}
	}
	setOf := func(g *orientGroup, i int) int {
		if g.assign == nil {
			return -1
		}
		return g.assign[i]
	}

	n := netsvg.Net{Projection: k, Caution: statsCaution}
	n.Title = *title
	if n.Title == "" {
		n.Title = "Net: " + filepath.Base(in.file)
	}
	n.Subtitle = filepath.Base(in.file)
	if c.typ != "" {
		n.Subtitle += "  (type " + c.typ + ")"
	}
	// Sets: poles' sets first (their indices match markers), then lines' sets.
	// Lines' markers use indices offset by the number of pole sets.
	lineOffset := 0
	if want["sets"] {
		addSets := func(g *orientGroup, ofLines bool) {
			if len(g.axes) == 0 || (hasSets && g.assign == nil) {
				return
			}
			if g.assign == nil {
				if f, err := dirstat.FisherMean(g.axes, g.weights, true); err == nil {
					name := "mean of poles"
					if ofLines {
						name = "mean of lines"
					}
					n.Sets = append(n.Sets, netsvg.SetMark{Name: name, Mean: f.Mean, Cone: f.Cone95, Count: f.N, Lines: ofLines})
				}
				return
			}
			for j, name := range g.setNames {
				vs, ws := g.members(j)
				sm := netsvg.SetMark{Name: name, Count: len(vs), Lines: ofLines}
				if f, err := dirstat.FisherMean(vs, ws, true); err == nil {
					sm.Mean, sm.Cone = f.Mean, f.Cone95
				} else {
					continue
				}
				if ofLines {
					sm.Name = name + " (lines)"
				}
				n.Sets = append(n.Sets, sm)
			}
		}
		addSets(planes, false)
		lineOffset = len(n.Sets)
		addSets(lines, true)
	}
	markSet := func(g *orientGroup, i, offset int) int {
		s := setOf(g, i)
		if s < 0 || !want["sets"] || g.assign == nil {
			return -1
		}
		return s + offset
	}
	if want["poles"] {
		for i, a := range planes.axes {
			n.Poles = append(n.Poles, netsvg.Mark{Axis: a, Set: markSet(planes, i, 0)})
		}
	}
	if want["planes"] {
		for i, r := range planes.rows {
			n.Planes = append(n.Planes, netsvg.PlaneMark{Plane: in.rows[r].Plane, Set: markSet(planes, i, 0)})
		}
	}
	if want["lines"] {
		for i, a := range lines.axes {
			n.Lines = append(n.Lines, netsvg.Mark{Axis: a, Set: markSet(lines, i, lineOffset)})
		}
	}
	var notes []string
	if want["density"] {
		g := planes
		of := "poles"
		if len(g.axes) == 0 {
			g, of = lines, "lines"
		}
		e, err := density.New(dm, g.axes, g.weights)
		if err != nil {
			return fail(err)
		}
		n.Density = netsvg.ContourGrid(k, e, *grid, *units == "sigma")
		notes = append(notes, fmt.Sprintf("density of %d %s", len(g.axes), of))
	}
	if w.on {
		notes = append(notes, fmt.Sprintf("Terzaghi weights, cap %.3g", w.cap))
	}
	if hasSets && len(so.windows) == 0 {
		notes = append(notes, fmt.Sprintf("sets: k-means on axes, seed %d", so.seed))
	}
	for _, g := range []*orientGroup{planes, lines} {
		if g.assign == nil || !want["sets"] {
			continue
		}
		un := 0
		for _, a := range g.assign {
			if a == dirstat.Unassigned {
				un++
			}
		}
		if un > 0 {
			notes = append(notes, fmt.Sprintf("%d %s in no set (grey)", un, g.kind))
		}
	}
	if len(in.problems) > 0 {
		notes = append(notes, fmt.Sprintf("%d rows rejected (see messages)", len(in.problems)))
	}
	n.Notes = notes

	out, closeOut, err := orientOut(env, c.out)
	if err != nil {
		return fail(err)
	}
	if err := netsvg.WriteNet(out, n); err != nil {
		closeOut()
		return fail(err)
	}
	if err := closeOut(); err != nil {
		return fail(err)
	}
	if len(in.problems) > 0 {
		return ExitRows
	}
	return ExitOK
}
