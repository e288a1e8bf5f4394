package cli

import (
	"context"
	"errors"
	"fmt"
	"io"
	"path/filepath"

	"corvane/internal/csvio"
	"corvane/internal/fabric"
	"corvane/internal/netsvg"
	"corvane/internal/projection"
	"corvane/internal/structdomain"
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
              [--show poles,planes,lines,density,sets] [--sets auto:N|type | --set NAME:TREND/PLUNGE:CONE ...]
              [--density exponential|kamb] [--units mud|sigma] [--weighting terzaghi[:CAP]] [--type TYPE]
              [--domain ` + structdomain.Syntax + `]
              [--regions all|type:CODE|cone:DEG] [--error-model M.json]

Draws a lower-hemisphere net as SVG from the same CSV as corvane stats: poles to planes
(filled markers), planes as great circles, lines (open markers), set means with their
95% cones of confidence drawn as small circles, and filled density contours of the poles
(of the lines when the file has no planes). Sets use the same options as corvane stats;
with "sets" in --show and no set options, the mean of all measurements is drawn.

With --domain the net draws one structural domain (as corvane domains defines it; the
file needs hole_id and depth, and rock_type for a domain of rock types): only the rows in
the domain are drawn, while sets are formed on all rows, so each set keeps the name and
colour it has in corvane stats and corvane domains. Run once per domain for a net each.

Regions: --regions draws the 95% uncertainty region of each selected measurement's pole
(and of its lineation, with lines shown): all, type:CODE (one type code) or cone:DEG (those
whose 95% cone is DEG degrees or more: the least sure), at most 500. The region is the
elongated one of corvane convert's pole_long95 and pole_short95 (first order, Monte Carlo
where first order is unreliable), bent along the small circle about the core axis; a
region that crosses the horizontal is drawn on both sides. Its errors come from
--error-model and the columns corvane stats reads for its measurement uncertainty
(hole_azimuth, hole_dip, survey_instrument, run_confidence, run_mismatch); rows
without a hole direction are counted, not drawn.

Density: exponential smoothing (Vollmer 1995, default) or Kamb (1959) counting, in
multiples of uniform density (default) or sigma units; Terzaghi weights are honoured
with --weighting.

` + fabric.Caution + `

Options:
`

func runNet(_ context.Context, env *Env, args []string) int {
	fs := newFlagSet(env, "net", netUsage)
	var c orientFlags
	c.register(fs, true)
	proj := fs.String("projection", "equal-area", "equal-area or equal-angle")
	show := fs.String("show", fabric.DefaultShow, "comma-separated: poles, planes, lines, density, sets")
	method := fs.String("density", "exponential", "exponential or kamb")
	units := fs.String("units", "mud", "density units: mud (multiples of uniform density) or sigma")
	title := fs.String("title", "", "title on the sheet (default from the input file name)")
	grid := fs.Int("grid", fabric.DefaultGrid, fmt.Sprintf("density grid nodes per side (%d to %d)", fabric.MinGrid, fabric.MaxGrid))
	var domainSpec onceFlag
	fs.Var(&domainSpec, "domain", "draw only this structural domain "+structdomain.Syntax+" (once; sets still formed on all rows)")
	regions := fs.String("regions", "none", "draw the 95% uncertainty regions of: none, all, type:CODE or cone:DEG")
	emPath := fs.String("error-model", "", "error model JSON for the regions (fields as in the README; absent fields take the defaults)")
	fail, code, done := parseOrientArgs(env, fs, "net", args)
	if done {
		return code
	}
	if c.out == "" {
		return fail(errors.New("-o NET.svg is required"))
	}
	o := fabric.NetOptions{Title: *title}
	var err error
	if o.Projection, err = projection.Parse(*proj); err != nil {
		return fail(err)
	}
	if o.Density, o.Sigma, o.Grid, err = fabric.ParseDensity(*method, *units, *grid); err != nil {
		return fail(err)
	}
	if o.Show, err = fabric.ParseShow(*show); err != nil {
		return fail(err)
	}
	if o.Weighting, o.Sets, err = c.options(); err != nil {
		return fail(err)
	}
	if o.Regions, err = fabric.ParseRegions(*regions); err != nil {
		return fail(err)
	}
	em, err := readErrorModel(*emPath)
	if err != nil {
		return fail(err)
	}
	dom, err := domainSpec.domain()
	if err != nil {
		return fail(err)
	}
	readOpt := csvio.OrientationOptions{Geotech: dom != nil} // the rock type, read as corvane domains reads it
	oi, err := loadOrientationsWith(env, c.in, c.typ, readOpt, em)
	if err != nil {
		return fail(err)
	}
	if dom != nil {
		o.Part = &fabric.Part{Name: "domain " + dom.Name}
		for _, w := range oi.where {
			o.Part.Keep = append(o.Part.Keep, dom.Contains(w.hole, w.depth, w.rock))
		}
	}
	if o.Title == "" {
		o.Title = "Net: " + filepath.Base(oi.file)
	}
	o.Source, o.AzimuthRef = orientSource(oi, c.typ), oi.azimuthRef
	n, err := fabric.Net(oi.in, o)
	if err != nil {
		return fail(err)
	}
	if err := writeOutput(c.out, func(w io.Writer) error { return netsvg.WriteNet(w, n) }); err != nil {
		return fail(err)
	}
	return orientExit(oi)
}

// orientSource names the input of a net or rose on its sheet.
func orientSource(oi *orientInput, typ string) string {
	s := filepath.Base(oi.file)
	if typ != "" {
		s += "  (type " + typ + ")"
	}
	return s
}

// onceFlag is the --domain of net and slope-check: one structural domain,
// given once.
type onceFlag string

func (f *onceFlag) String() string { return string(*f) }

func (f *onceFlag) Set(s string) error {
	if *f != "" {
		return errors.New("given twice; one domain at a time (run once per domain)")
	}
	*f = onceFlag(s)
	return nil
}

// domain parses the domain given (nil when none).
func (f onceFlag) domain() (*structdomain.Domain, error) {
	if f == "" {
		return nil, nil
	}
	d, err := structdomain.ParseOne(string(f))
	if err != nil {
		return nil, fmt.Errorf("--domain %v", err)
	}
	return &d, nil
}
