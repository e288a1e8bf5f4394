package cli

import (
	"context"
	"errors"
	"io"
	"path/filepath"

	"corvane/internal/fabric"
	"corvane/internal/netsvg"
	"corvane/internal/uncertainty"
)

func init() {
	register(command{
		name:    "rose",
		summary: "rose diagram (SVG) of dip directions, strikes or line trends from a CSV",
		run:     runRose,
	})
}

const roseUsage = `Usage:
  corvane rose --in FILE -o ROSE.svg [--of dip_direction|strike|trend] [--bin DEG]
               [--min-dip DEG] [--weighting terzaghi[:CAP]] [--type TYPE]

Draws a rose diagram from the same CSV as corvane stats: dip directions of planes
(default), strikes of planes (right-hand rule, drawn both ways), or trends of lines.
Petal area is proportional to the count. --min-dip leaves out flatter planes, whose
dip direction and strike are poorly defined.

` + fabric.Caution + `

Options:
`

func runRose(_ context.Context, env *Env, args []string) int {
	fs := newFlagSet(env, "rose", roseUsage)
	var c orientFlags
	c.register(fs, false)
	fs.StringVar(&c.of, "of", fabric.RoseDipDirection, "dip_direction (or dip-direction), strike or trend")
	bin := fs.Float64("bin", fabric.DefaultBin, "bin width in degrees (must divide 180)")
	minDip := fs.Float64("min-dip", 0, "leave out planes dipping less than this")
	title := fs.String("title", "", "title on the sheet")
	fail, code, done := parseOrientArgs(env, fs, "rose", args)
	if done {
		return code
	}
	if c.out == "" {
		return fail(errors.New("-o ROSE.svg is required"))
	}
	o := fabric.RoseOptions{Title: *title}
	var err error
	if o.Of, o.Bin, o.MinDip, err = fabric.ParseRose(c.of, *bin, *minDip); err != nil {
		return fail(err)
	}
	if o.Weighting, _, err = c.options(); err != nil {
		return fail(err)
	}
	oi, err := loadOrientations(env, c.in, c.typ, uncertainty.Model{})
	if err != nil {
		return fail(err)
	}
	if o.Title == "" {
		o.Title = "Rose: " + filepath.Base(oi.file)
	}
	o.Source, o.AzimuthRef = orientSource(oi, c.typ), oi.azimuthRef
	r, err := fabric.Rose(oi.in, o)
	if err != nil {
		return fail(err)
	}
	if err := writeOutput(c.out, func(w io.Writer) error { return netsvg.WriteRose(w, r) }); err != nil {
		return fail(err)
	}
	return orientExit(oi)
}
