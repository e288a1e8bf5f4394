package cli

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"math"
	"path/filepath"

	"corvane/internal/netsvg"
)

func init() {
	register(command{
		name:    "rose",
		summary: "rose diagram (SVG) of dip directions, strikes or line trends from a CSV",
		run:     runRose,
	})
}

const roseUsage = `Usage:
  corvane rose --in FILE -o ROSE.svg [--of dip-direction|strike|trend] [--bin DEG]
               [--min-dip DEG] [--weighting terzaghi[:CAP]] [--type TYPE]

Draws a rose diagram from the same CSV as corvane stats: dip directions of planes
(default), strikes of planes (right-hand rule, drawn both ways), or trends of lines.
Petal area is proportional to the count. --min-dip leaves out flatter planes, whose
dip direction and strike are poorly defined.

` + statsCaution + `

Options:
`

func runRose(_ context.Context, env *Env, args []string) int {
	fs := flag.NewFlagSet("rose", flag.ContinueOnError)
	fs.SetOutput(env.Stderr)
	fs.Usage = func() {
		fmt.Fprint(env.Stderr, roseUsage)
		fs.PrintDefaults()
	}
	var c orientFlags
	c.register(fs, false)
	fs.StringVar(&c.of, "of", "dip-direction", "dip-direction, strike or trend")
	bin := fs.Float64("bin", 10, "bin width in degrees (must divide 180)")
	minDip := fs.Float64("min-dip", 0, "leave out planes dipping less than this")
	title := fs.String("title", "", "title on the sheet")
	fail, code, done := parseOrientArgs(env, fs, "rose", args)
	if done {
		return code
	}
	if c.out == "" {
		return fail(errors.New("-o ROSE.svg is required"))
	}
	if c.of != "dip-direction" && c.of != "strike" && c.of != "trend" {
		return fail(fmt.Errorf("--of %q: want dip-direction, strike or trend", c.of))
	}
	if q := 180 / *bin; !(*bin > 0) || math.Abs(q-math.Round(q)) > 1e-9 {
		return fail(fmt.Errorf("--bin %v: want a width in degrees that divides 180", *bin))
	}
	if !(*minDip >= 0 && *minDip <= 90) {
		return fail(fmt.Errorf("--min-dip %v: want 0 to 90", *minDip))
	}
	w, err := parseWeightingFlag(c.weighting)
	if err != nil {
		return fail(err)
	}
	in, err := loadOrientations(env, c.in, c.typ)
	if err != nil {
		return fail(err)
	}
	r := netsvg.Rose{BinWidth: *bin, Caution: statsCaution, Subtitle: filepath.Base(in.file)}
	r.Title = *title
	if r.Title == "" {
		r.Title = "Rose: " + filepath.Base(in.file)
	}
	kind := "planes"
	if c.of == "trend" {
		kind = "lines"
	}
	g := buildGroup(in, kind, w)
	skipped := 0
	for i, ri := range g.rows {
		row := in.rows[ri]
		var az float64
		switch c.of {
		case "dip-direction", "strike":
			if row.Plane.Dip < *minDip {
				skipped++
				continue
			}
			az = row.Plane.DipDirection
			if c.of == "strike" {
				az = row.Plane.Strike()
			}
		case "trend":
			az = row.LineDir.Trend
		}
		r.Azimuths = append(r.Azimuths, az)
		if g.weights != nil {
			r.Weights = append(r.Weights, g.weights[i])
		}
	}
	if len(r.Azimuths) == 0 {
		return fail(fmt.Errorf("%s: no %s to draw", in.file, kind))
	}
	r.Quantity = map[string]string{"dip-direction": "dip directions", "strike": "strikes", "trend": "line trends"}[c.of]
	r.Axial = c.of == "strike"
	if skipped > 0 {
		r.Notes = append(r.Notes, fmt.Sprintf("%d planes dipping less than %g left out", skipped, *minDip))
	}
	if w.on {
		r.Notes = append(r.Notes, fmt.Sprintf("Terzaghi weights, cap %.3g", w.cap))
	}
	if len(in.problems) > 0 {
		r.Notes = append(r.Notes, fmt.Sprintf("%d rows rejected (see messages)", len(in.problems)))
	}
	out, closeOut, err := orientOut(env, c.out)
	if err != nil {
		return fail(err)
	}
	if err := netsvg.WriteRose(out, r); err != nil {
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
