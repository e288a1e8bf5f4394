package cli

import (
	"context"
	"fmt"
	"path/filepath"

	"corvane/internal/geotech"
	"corvane/internal/kinematic"
	"corvane/internal/projection"
	"corvane/internal/structdomain"
)

func init() {
	register(command{
		name:    "slope-check",
		summary: "kinematic checks of planes and sets against a slope face: planar, wedge, toppling (JSON, SVG)",
		run:     runSlopeCheck,
	})
}

const slopeCheckUsage = `Usage:
  corvane slope-check --in FILE --face DIP/DIP_DIRECTION --friction PHI [--lateral 20]
                      [--sets auto:N | --set NAME:TREND/PLUNGE:CONE ...] [--type TYPE]
                      [--domain ` + structdomain.Syntax + `]
                      [--svg PREFIX] [--projection equal-area|equal-angle] [-o OUT.json]

Checks every plane of the input (dip, dip_direction columns, as corvane convert writes)
and every pair of planes, and each set's mean plane and each pair of set means, against
a slope or excavation face and a friction angle (degrees):
  planar    the plane dips out of the face within the lateral limit of its dip
            direction, more steeply than the friction angle and less steeply than the
            face's apparent dip in its dip direction (daylights) (Hoek & Bray 1981)
  wedge     the intersection line plunges more steeply than the friction angle and
            daylights in the face (Markland 1972)
  flexural  the plane dips into the face within the lateral limit, steeper than
            (90 - face dip) + friction (Goodman 1980; Goodman & Bray 1976)
  direct    the intersection line plunges into the slope: within the lateral limit of
            the reverse of the face's dip direction (direct) or outside it (oblique);
            base planes dip out of the face at less than the friction angle
            (Hudson & Harrison 1997)
Boundaries: a plane or line exactly at the friction angle does not count; one exactly at
the lateral limit does. Wyllie & Mah (2004) restate all four tests.

The JSON gives counts and percentages of the poles (and of the pairs' intersection
lines) in each critical zone, overall and per set, and the result for each set mean and
pair of set means. With --svg PREFIX, one net per check is written to PREFIX-planar.svg,
PREFIX-wedge.svg, PREFIX-flexural.svg and PREFIX-direct.svg, the critical zones shaded.
Unoriented measurements (no dip) cannot be checked and are counted as left out.

With --domain only the rows of one structural domain are checked (as corvane domains
defines it; the file needs hole_id and depth, and rock_type for a domain of rock types).
Sets are formed on all rows, so each set keeps the name it has in corvane stats, net and
domains; a set's mean is that of its members in the domain. Run once per domain.

` + kinematic.Caution + `

Options:
`

func runSlopeCheck(_ context.Context, env *Env, args []string) int {
	fs := newFlagSet(env, "slope-check", slopeCheckUsage)
	var c orientFlags
	registerGeoFlags(fs, &c)
	face := fs.String("face", "", "the face as DIP/DIP_DIRECTION, e.g. 65/180 (required)")
	friction := fs.Float64("friction", 0, "friction angle of the discontinuities in degrees (required)")
	lateral := fs.Float64("lateral", kinematic.DefaultLateral, "lateral limit in degrees")
	svg := fs.String("svg", "", "write one net per check to PREFIX-planar.svg, PREFIX-wedge.svg, PREFIX-flexural.svg, PREFIX-direct.svg")
	proj := fs.String("projection", "equal-area", "equal-area or equal-angle (for --svg)")
	var domainSpec onceFlag
	fs.Var(&domainSpec, "domain", "check only this structural domain "+structdomain.Syntax+" (once; sets still formed on all rows)")
	fail, code, done := parseOrientArgs(env, fs, "slope-check", args)
	if done {
		return code
	}
	if *face == "" {
		return fail(fmt.Errorf("--face DIP/DIP_DIRECTION is required"))
	}
	fp, err := parseFace(*face)
	if err != nil {
		return fail(err)
	}
	p := kinematic.Params{Face: fp, Friction: *friction, Lateral: *lateral}
	if err := p.Validate(); err != nil {
		return fail(err)
	}
	kind, err := projection.Parse(*proj)
	if err != nil {
		return fail(err)
	}
	dom, err := domainSpec.domain()
	if err != nil {
		return fail(err)
	}
	gi, so, err := loadGeo(env, &c)
	if err != nil {
		return fail(err)
	}
	rep, err := geotech.Slope(gi.in, p, so, dom)
	if err != nil {
		return fail(fmt.Errorf("%s: %w", gi.file, err))
	}
	rep.Input, rep.TypeFilter, rep.Problems = gi.file, c.typ, gi.problems
	if *svg != "" {
		nets, err := geotech.SlopeNets(gi.in, p, so, dom, kind, filepath.Base(gi.file))
		if err != nil {
			return fail(err)
		}
		for i, n := range nets {
			name := *svg + "-" + geotech.SlopeChecks[i] + ".svg"
			if err := writeSVG(name, n); err != nil {
				return fail(err)
			}
			rep.SVG = append(rep.SVG, name)
		}
	}
	if code := writeJSON(env, fail, c.out, rep); code != ExitOK {
		return code
	}
	return gi.exit()
}
