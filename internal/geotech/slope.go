package geotech

import (
	"fmt"
	"strconv"

	"corvane/internal/dirstat"
	"corvane/internal/fabric"
	"corvane/internal/geom"
	"corvane/internal/kinematic"
	"corvane/internal/netsvg"
	"corvane/internal/projection"
	"corvane/internal/structdomain"
)

// ZoneCount is a count in a critical zone and its percentage.
type ZoneCount struct {
	Count   int        `json:"count"`
	Percent fabric.Num `json:"percent"`
}

// SlopeCounts are the checks over a group of planes and their pairs.
type SlopeCounts struct {
	Poles         int       `json:"poles"`
	Planar        ZoneCount `json:"planar"`
	Flexural      ZoneCount `json:"flexural"`
	Base          ZoneCount `json:"toppling_base"`
	Intersections int       `json:"intersections"`
	Wedge         ZoneCount `json:"wedge"`
	Direct        ZoneCount `json:"direct_toppling"`
	Oblique       ZoneCount `json:"oblique_toppling"`
	PairsSkipped  string    `json:"pairs_skipped,omitempty"`
}

func countsOf(c kinematic.Counts) SlopeCounts {
	pc := func(n, of int) ZoneCount { return ZoneCount{n, fabric.Num(kinematic.Percent(n, of))} }
	j := SlopeCounts{Poles: c.Poles, Planar: pc(c.Planar, c.Poles), Flexural: pc(c.Flexural, c.Poles), Base: pc(c.Base, c.Poles),
		Intersections: c.Intersections, Wedge: pc(c.Wedge, c.Intersections), Direct: pc(c.DirectPrimary, c.Intersections),
		Oblique: pc(c.DirectOblique, c.Intersections)}
	if c.PairsSkipped {
		j.PairsSkipped = fmt.Sprintf("more than %d planes: pairs not intersected; narrow the input (a type or a domain)", kinematic.MaxPairPlanes)
	}
	return j
}

// SlopeSet is the check of one set: its mean plane and its members.
type SlopeSet struct {
	Name     string      `json:"name"`
	Count    int         `json:"count"`
	Mean     fabric.Mean `json:"mean"`
	Planar   bool        `json:"planar"`
	Flexural bool        `json:"flexural"`
	Base     bool        `json:"toppling_base"`
	Members  SlopeCounts `json:"members"`
}

// SlopePair is the check of the intersection of two sets' mean planes.
type SlopePair struct {
	Sets         [2]string    `json:"sets"`
	Intersection *fabric.Line `json:"intersection,omitempty"`
	Wedge        bool         `json:"wedge"`
	Toppling     string       `json:"toppling"`
	Note         string       `json:"note,omitempty"`
}

// SlopeReport is the report of [Slope]. Input, TypeFilter, Problems and SVG
// are filled in by the door. Domain names the structural domain checked,
// absent when every row is.
type SlopeReport struct {
	Source
	Domain     string      `json:"domain,omitempty"`
	Face       fabric.Mean `json:"face"`
	Friction   fabric.Num  `json:"friction_angle"`
	Lateral    fabric.Num  `json:"lateral_limit"`
	Methods    []string    `json:"methods"`
	Unoriented int         `json:"unoriented_left_out"`
	All        SlopeCounts `json:"measurements"`
	SetMethod  string      `json:"set_method,omitempty"`
	Sets       []SlopeSet  `json:"sets,omitempty"`
	Pairs      []SlopePair `json:"set_pairs,omitempty"`
	SVG        []string    `json:"svg,omitempty"`
	Caution    string      `json:"caution"`
}

var topplingNames = map[int]string{kinematic.NotToppling: "none", kinematic.DirectPrimary: "direct", kinematic.DirectOblique: "oblique"}

// SlopeMethods describes the checks, one line each.
var SlopeMethods = []string{
	"planar: dip direction within the lateral limit of the face's, friction < dip < face's apparent dip in that direction (Hoek & Bray 1981; Wyllie & Mah 2004)",
	"wedge: intersection plunge > friction and < face's apparent dip in its trend (Markland 1972; Hoek & Bray 1981)",
	"flexural toppling: dips into the face within the lateral limit, dip > (90 - face dip) + friction (Goodman 1980; Goodman & Bray 1976)",
	"direct toppling: intersection plunging into the slope within the lateral limit (oblique: outside it); base planes dip out of the face at less than friction (Hudson & Harrison 1997)",
	"boundaries: exactly at the friction angle does not count; exactly at the lateral limit counts",
}

// slopeWork is what the report and the nets share.
type slopeWork struct {
	g         *sets
	poles     []int        // the poles of g checked (all, or the domain's)
	planes    []geom.Plane // per pole checked
	setMarks  []netsvg.SetMark
	pairLines []netsvg.Mark
}

// Slope checks every plane, every pair of planes, each set's mean plane and
// each pair of set means against the face in p (sets optional). With a
// domain (nil: every row), only the rows in it are checked: the sets are
// formed on every row, as for the net and the domains report, so each set
// keeps its name, and a set's mean is that of its members in the domain.
func Slope(in Input, p kinematic.Params, s fabric.Sets, dom *structdomain.Domain) (SlopeReport, error) {
	rep, _, err := slope(in, p, s, dom)
	return rep, err
}

func slope(in Input, p kinematic.Params, s fabric.Sets, dom *structdomain.Domain) (SlopeReport, *slopeWork, error) {
	if err := p.Validate(); err != nil {
		return SlopeReport{}, nil, err
	}
	g, err := formSets(in, s, false)
	if err != nil {
		return SlopeReport{}, nil, err
	}
	w := &slopeWork{g: g}
	for k, ri := range g.rows {
		if inDomain(in.Rows[ri], dom) {
			w.poles = append(w.poles, k)
			w.planes = append(w.planes, in.Rows[ri].Plane)
		}
	}
	if len(w.planes) == 0 {
		if dom != nil {
			return SlopeReport{}, nil, fmt.Errorf("no planes to check in domain %s", dom.Name)
		}
		return SlopeReport{}, nil, fmt.Errorf("no planes to check")
	}
	unoriented := 0
	for _, r := range in.Rows {
		if r.Unoriented && inDomain(r, dom) {
			unoriented++
		}
	}
	rep := SlopeReport{Source: in.source(),
		Face:     fabric.Mean{Dip: numPtr(p.Face.Dip), DipDirection: numPtr(p.Face.DipDirection)},
		Friction: fabric.Num(p.Friction), Lateral: fabric.Num(p.Lateral), Methods: SlopeMethods, Unoriented: unoriented,
		All: countsOf(p.Count(w.planes)), SetMethod: g.method, Caution: kinematic.Caution}
	if dom != nil {
		rep.Domain = dom.Name
	}
	var means []geom.Plane
	for j, name := range g.names {
		var members []geom.Plane
		var vs []geom.Vec3
		for i, k := range w.poles {
			if g.assign[k] == j {
				members = append(members, w.planes[i])
				vs = append(vs, g.axes[k])
			}
		}
		js := SlopeSet{Name: name, Count: len(members), Members: countsOf(p.Count(members))}
		if len(vs) > 0 {
			f, err := dirstat.FisherMean(vs, nil, true)
			if err != nil {
				return SlopeReport{}, nil, wrap("set "+name, err)
			}
			mp := geom.PlaneOf(f.Mean)
			means = append(means, mp)
			r := p.CheckPlane(mp)
			js.Mean = fabric.Mean{Dip: numPtr(mp.Dip), DipDirection: numPtr(mp.DipDirection)}
			js.Planar, js.Flexural, js.Base = r.Planar, r.Flexural, r.Base
			w.setMarks = append(w.setMarks, netsvg.SetMark{Name: name, Mean: f.Mean, Cone: f.Cone95, Count: len(vs)})
		} else {
			means = append(means, geom.Plane{Dip: -1})
		}
		rep.Sets = append(rep.Sets, js)
	}
	for a := range means {
		for b := a + 1; b < len(means); b++ {
			jp := SlopePair{Sets: [2]string{g.names[a], g.names[b]}, Toppling: "none"}
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
			w.pairLines = append(w.pairLines, netsvg.Mark{Axis: r.Line.Vec(), Set: -1})
		}
	}
	return rep, w, nil
}

// SlopeChecks are the checks with a net each, in the order of [SlopeNets].
var SlopeChecks = []string{"planar", "wedge", "flexural", "direct"}

// SlopeNets returns one net per check (see [SlopeChecks]) with its critical
// zones shaded, the face, the friction circle, the poles (or the set means'
// intersections) and the counts; with a domain, of the rows in it (see
// [Slope]), the domain named after the subtitle.
func SlopeNets(in Input, p kinematic.Params, s fabric.Sets, dom *structdomain.Domain, kind projection.Kind, subtitle string) ([]netsvg.Net, error) {
	rep, w, err := slope(in, p, s, dom)
	if err != nil {
		return nil, err
	}
	if dom != nil {
		subtitle += ", domain " + dom.Name
	}
	all := rep.All
	var poles []netsvg.Mark
	for _, k := range w.poles {
		poles = append(poles, netsvg.Mark{Axis: w.g.axes[k], Set: w.g.assign[k]})
	}
	pct := func(c ZoneCount) string {
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
	face := p.Face
	var nets []netsvg.Net
	for _, sh := range sheets {
		n := netsvg.Net{Projection: kind, Title: sh.title, Subtitle: subtitle, Face: &face, Notes: sh.notes,
			Sets: w.setMarks, Caution: kinematic.Caution, Circles: []netsvg.CircleMark{sh.friction}, CirclesNote: sh.frictionNote}
		if sh.showPoles {
			n.Poles = poles
		}
		if sh.check == "wedge" || sh.check == "direct" {
			n.Lines = w.pairLines
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
		nets = append(nets, n)
	}
	return nets, nil
}
