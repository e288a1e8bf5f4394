package cli

import (
	"context"
	"corvane/internal/fabric"
	"flag"
	"fmt"
	"os"
	"path/filepath"
	"strconv"

	"corvane/internal/dirstat"
	"corvane/internal/geom"
	"corvane/internal/kinematic"
	"corvane/internal/netsvg"
	"corvane/internal/projection"
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

` + kinematic.Caution + `

Options:
`

type jCount struct {
	Count   int        `json:"count"`
	Percent fabric.Num `json:"percent"`
}

type jCounts struct {
	Poles         int    `json:"poles"`
	Planar        jCount `json:"planar"`
	Flexural      jCount `json:"flexural"`
	Base          jCount `json:"toppling_base"`
	Intersections int    `json:"intersections"`
	Wedge         jCount `json:"wedge"`
	Direct        jCount `json:"direct_toppling"`
	Oblique       jCount `json:"oblique_toppling"`
	PairsSkipped  string `json:"pairs_skipped,omitempty"`
}

func countsJSON(c kinematic.Counts) jCounts {
	pc := func(n, of int) jCount { return jCount{n, fabric.Num(kinematic.Percent(n, of))} }
	j := jCounts{Poles: c.Poles, Planar: pc(c.Planar, c.Poles), Flexural: pc(c.Flexural, c.Poles), Base: pc(c.Base, c.Poles),
		Intersections: c.Intersections, Wedge: pc(c.Wedge, c.Intersections), Direct: pc(c.DirectPrimary, c.Intersections),
		Oblique: pc(c.DirectOblique, c.Intersections)}
	if c.PairsSkipped {
		j.PairsSkipped = fmt.Sprintf("more than %d planes: pairs not intersected; narrow the input with --type or a smaller file", kinematic.MaxPairPlanes)
	}
	return j
}

type jKinSet struct {
	Name     string      `json:"name"`
	Count    int         `json:"count"`
	Mean     fabric.Mean `json:"mean"`
	Planar   bool        `json:"planar"`
	Flexural bool        `json:"flexural"`
	Base     bool        `json:"toppling_base"`
	Members  jCounts     `json:"members"`
}

type jKinPair struct {
	Sets         [2]string    `json:"sets"`
	Intersection *fabric.Line `json:"intersection,omitempty"`
	Wedge        bool         `json:"wedge"`
	Toppling     string       `json:"toppling"`
	Note         string       `json:"note,omitempty"`
}

type jKinReport struct {
	Input        string             `json:"input"`
	RowsSkipped  []fabric.SkipCount `json:"rows_skipped"`
	TypeFilter   string             `json:"type_filter,omitempty"`
	RowsUsed     int                `json:"rows_used"`
	RowsRejected int                `json:"rows_rejected"`
	Problems     []string           `json:"problems,omitempty"`
	Face         fabric.Mean        `json:"face"`
	Friction     fabric.Num         `json:"friction_angle"`
	Lateral      fabric.Num         `json:"lateral_limit"`
	Methods      []string           `json:"methods"`
	Unoriented   int                `json:"unoriented_left_out"`
	All          jCounts            `json:"measurements"`
	SetMethod    string             `json:"set_method,omitempty"`
	Sets         []jKinSet          `json:"sets,omitempty"`
	Pairs        []jKinPair         `json:"set_pairs,omitempty"`
	SVG          []string           `json:"svg,omitempty"`
	Caution      string             `json:"caution"`
}

var topplingNames = map[int]string{kinematic.NotToppling: "none", kinematic.DirectPrimary: "direct", kinematic.DirectOblique: "oblique"}

// slopeMethods describes the checks in the report, one line each.
var slopeMethods = []string{
	"planar: dip direction within the lateral limit of the face's, friction < dip < face's apparent dip in that direction (Hoek & Bray 1981; Wyllie & Mah 2004)",
	"wedge: intersection plunge > friction and < face's apparent dip in its trend (Markland 1972; Hoek & Bray 1981)",
	"flexural toppling: dips into the face within the lateral limit, dip > (90 - face dip) + friction (Goodman 1980; Goodman & Bray 1976)",
	"direct toppling: intersection plunging into the slope within the lateral limit (oblique: outside it); base planes dip out of the face at less than friction (Hudson & Harrison 1997)",
	"boundaries: exactly at the friction angle does not count; exactly at the lateral limit counts",
}

func runSlopeCheck(_ context.Context, env *Env, args []string) int {
	fs := flag.NewFlagSet("slope-check", flag.ContinueOnError)
	fs.SetOutput(env.Stderr)
	fs.Usage = func() {
		fmt.Fprint(env.Stderr, slopeCheckUsage)
		fs.PrintDefaults()
	}
	var c orientFlags
	registerGeoFlags(fs, &c)
	face := fs.String("face", "", "the face as DIP/DIP_DIRECTION, e.g. 65/180 (required)")
	friction := fs.Float64("friction", 0, "friction angle of the discontinuities in degrees (required)")
	lateral := fs.Float64("lateral", kinematic.DefaultLateral, "lateral limit in degrees")
	svg := fs.String("svg", "", "write one net per check to PREFIX-planar.svg, PREFIX-wedge.svg, PREFIX-flexural.svg, PREFIX-direct.svg")
	proj := fs.String("projection", "equal-area", "equal-area or equal-angle (for --svg)")
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
	gs, err := loadGeoSets(env, &c, false)
	if err != nil {
		return fail(err)
	}
	g := gs.group
	planes := make([]geom.Plane, len(g.rows))
	unoriented := 0
	for k, ri := range g.rows {
		planes[k] = gs.in.rows[ri].Plane
	}
	for _, r := range gs.in.rows {
		if r.Unoriented {
			unoriented++
		}
	}
	if len(planes) == 0 {
		return fail(fmt.Errorf("%s: no planes to check", gs.in.file))
	}
	rep := jKinReport{Input: gs.in.file, RowsSkipped: gs.in.skipped(), TypeFilter: c.typ, RowsUsed: len(gs.in.rows), RowsRejected: len(gs.in.problems),
		Face: fabric.Mean{Dip: numPtr(fp.Dip), DipDirection: numPtr(fp.DipDirection)}, Friction: fabric.Num(p.Friction), Lateral: fabric.Num(p.Lateral),
		Methods: slopeMethods, Unoriented: unoriented, All: countsJSON(p.Count(planes)), SetMethod: g.method, Caution: kinematic.Caution}
	for _, pr := range gs.in.problems {
		rep.Problems = append(rep.Problems, pr.Error())
	}
	var means []geom.Plane
	var setMarks []netsvg.SetMark
	for j, name := range g.setNames {
		var members []geom.Plane
		var vs []geom.Vec3
		for k := range g.rows {
			if g.assign[k] == j {
				members = append(members, planes[k])
				vs = append(vs, g.axes[k])
			}
		}
		js := jKinSet{Name: name, Count: len(members), Members: countsJSON(p.Count(members))}
		if len(vs) > 0 {
			f, err := dirstat.FisherMean(vs, nil, true)
			if err != nil {
				return fail(fmt.Errorf("set %s: %w", name, err))
			}
			mp := geom.PlaneOf(f.Mean)
			means = append(means, mp)
			r := p.CheckPlane(mp)
			js.Mean = fabric.Mean{Dip: numPtr(mp.Dip), DipDirection: numPtr(mp.DipDirection)}
			js.Planar, js.Flexural, js.Base = r.Planar, r.Flexural, r.Base
			setMarks = append(setMarks, netsvg.SetMark{Name: name, Mean: f.Mean, Cone: f.Cone95, Count: len(vs)})
		} else {
			means = append(means, geom.Plane{Dip: -1})
		}
		rep.Sets = append(rep.Sets, js)
	}
	var pairLines []netsvg.Mark
	for a := range means {
		for b := a + 1; b < len(means); b++ {
			jp := jKinPair{Sets: [2]string{g.setNames[a], g.setNames[b]}, Toppling: "none"}
			if means[a].Dip < 0 || means[b].Dip < 0 {
				jp.Note = "a set without members"
				rep.Pairs = append(rep.Pairs, jp)
				continue
			}
			r, err := p.CheckPair(means[a], means[b])
			if err != nil {
				jp.Note = "parallel mean planes: no intersection"
				rep.Pairs = append(rep.Pairs, jp)
				continue
			}
			jp.Intersection = &fabric.Line{Trend: fabric.Num(r.Line.Trend), Plunge: fabric.Num(r.Line.Plunge)}
			jp.Wedge, jp.Toppling = r.Wedge, topplingNames[r.Direct]
			rep.Pairs = append(rep.Pairs, jp)
			pairLines = append(pairLines, netsvg.Mark{Axis: r.Line.Vec(), Set: -1})
		}
	}
	if *svg != "" {
		files, err := writeSlopeNets(*svg, kind, p, g, setMarks, pairLines, rep.All, gs.in.file)
		if err != nil {
			return fail(err)
		}
		rep.SVG = files
	}
	if code := writeJSON(env, fail, c.out, rep); code != ExitOK {
		return code
	}
	if len(gs.in.problems) > 0 {
		return ExitRows
	}
	return ExitOK
}

// writeSlopeNets writes one net per check and returns the file names.
func writeSlopeNets(prefix string, kind projection.Kind, p kinematic.Params, g *planeGroup, sets []netsvg.SetMark,
	pairLines []netsvg.Mark, all jCounts, input string) ([]string, error) {
	var poles []netsvg.Mark
	for k, v := range g.axes {
		set := -1
		if g.assign != nil {
			set = g.assign[k]
		}
		poles = append(poles, netsvg.Mark{Axis: v, Set: set})
	}
	pct := func(c jCount) string {
		return strconv.Itoa(c.Count) + " (" + strconv.FormatFloat(float64(c.Percent), 'f', 1, 64) + "%)"
	}
	vertical := geom.Vec3{Z: -1}
	type sheet struct {
		check, title string
		showPoles    bool
		friction     netsvg.CircleMark
		frictionNote string
		notes        []string
	}
	base := fmt.Sprintf("friction %g, lateral limit %g", p.Friction, p.Lateral)
	poleCircle := netsvg.CircleMark{Axis: vertical, Half: p.Friction, Set: -1, Dashed: true}
	lineCircle := netsvg.CircleMark{Axis: vertical, Half: 90 - p.Friction, Set: -1, Dashed: true}
	of := func(n int, what string) string { return "of " + strconv.Itoa(n) + " " + what }
	sheets := []sheet{
		{"planar", "Planar sliding", true, poleCircle, "friction circle (poles)",
			[]string{base, "poles in the zone: " + pct(all.Planar), of(all.Poles, "poles")}},
		{"wedge", "Wedge sliding", false, lineCircle, "friction circle (lines)",
			[]string{base, "intersections in the zone: " + pct(all.Wedge), of(all.Intersections, "pairs of planes"),
				"open marks: set-mean intersections"}},
		{"flexural", "Flexural toppling", true, netsvg.CircleMark{Axis: vertical, Half: 90 - (p.Face.Dip - p.Friction), Set: -1, Dashed: true},
			"slip limit (poles)",
			[]string{base, "poles in the zone: " + pct(all.Flexural), of(all.Poles, "poles")}},
		{"direct", "Direct toppling", true, poleCircle, "friction circle (poles)",
			[]string{base, "direct: " + pct(all.Direct), "oblique: " + pct(all.Oblique), of(all.Intersections, "pairs of planes"),
				"base planes: " + pct(all.Base) + " " + of(all.Poles, "poles"), "open marks: set-mean intersections"}},
	}
	var files []string
	for _, sh := range sheets {
		n := netsvg.Net{Projection: kind, Title: sh.title, Subtitle: filepath.Base(input), Face: &p.Face, Notes: sh.notes,
			Sets: sets, Caution: kinematic.Caution, Circles: []netsvg.CircleMark{sh.friction}, CirclesNote: sh.frictionNote}
		if sh.showPoles {
			n.Poles = poles
		}
		if sh.check == "wedge" || sh.check == "direct" {
			n.Lines = pairLines
		}
		for _, z := range p.Zones(sh.check) {
			tone := 0
			switch z.Check {
			case "direct-oblique":
				tone = 1
			case "base":
				tone = 2
			}
			n.Zones = append(n.Zones, netsvg.Zone{Label: z.Label + " (" + z.Of + ")", Outline: z.Outline, Tone: tone})
		}
		name := prefix + "-" + sh.check + ".svg"
		f, err := os.Create(name)
		if err != nil {
			return files, err
		}
		if err := netsvg.WriteNet(f, n); err != nil {
			f.Close()
			return files, err
		}
		if err := f.Close(); err != nil {
			return files, err
		}
		files = append(files, name)
	}
	return files, nil
}
