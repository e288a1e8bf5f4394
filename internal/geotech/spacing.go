package geotech

import (
	"fmt"
	"math"

	"corvane/internal/dirstat"
	"corvane/internal/fabric"
	"corvane/internal/netsvg"
	"corvane/internal/projection"
	"corvane/internal/spacing"
	"corvane/internal/structdomain"
	"corvane/internal/visual"
)

// Dist is a distribution of spacings in a report.
type Dist struct {
	N      int          `json:"n"`
	Mean   fabric.Num   `json:"mean"`
	Median fabric.Num   `json:"median"`
	Min    fabric.Num   `json:"min"`
	P10    fabric.Num   `json:"p10"`
	P25    fabric.Num   `json:"p25"`
	P75    fabric.Num   `json:"p75"`
	P90    fabric.Num   `json:"p90"`
	Max    fabric.Num   `json:"max"`
	SD     fabric.Num   `json:"sd"`
	CV     fabric.Num   `json:"cv"`
	StdErr fabric.Num   `json:"std_error_of_mean"`
	Values []fabric.Num `json:"values,omitempty"`
}

func distOf(d spacing.Dist, values bool) Dist {
	j := Dist{N: d.N, Mean: fabric.Num(d.Mean), Median: fabric.Num(d.Median), Min: fabric.Num(d.Min), P10: fabric.Num(d.P10),
		P25: fabric.Num(d.P25), P75: fabric.Num(d.P75), P90: fabric.Num(d.P90), Max: fabric.Num(d.Max), SD: fabric.Num(d.SD),
		CV: fabric.Num(d.CV), StdErr: fabric.Num(d.StdErr)}
	if values {
		for _, v := range d.Values {
			j.Values = append(j.Values, fabric.Num(v))
		}
	}
	return j
}

// SpacingRun is a set in one logged run of one hole.
type SpacingRun struct {
	Hole      string     `json:"hole_id"`
	From      fabric.Num `json:"from"`
	To        fabric.Num `json:"to"`
	Count     int        `json:"count"`
	P10       fabric.Num `json:"p10"`
	Delta     fabric.Num `json:"delta"`
	P10Normal fabric.Num `json:"p10_normal"`
	Capped    int        `json:"capped"`
}

// SpacingSet is one set in one domain.
type SpacingSet struct {
	Name              string       `json:"name"`
	OrientedMembers   int          `json:"oriented_members"`
	Mean              *fabric.Mean `json:"mean,omitempty"`
	K                 fabric.Num   `json:"k"`
	FitAngle          fabric.Num   `json:"unoriented_fit_angle"`
	UnorientedCounted int          `json:"unoriented_counted"`
	Count             int          `json:"count"`
	Length            fabric.Num   `json:"length"`
	P10               fabric.Num   `json:"p10"`
	P10Normal         fabric.Num   `json:"p10_normal"`
	MeanSpacing       fabric.Num   `json:"mean_spacing"`
	Capped            int          `json:"capped"`
	Along             Dist         `json:"spacing_along_hole"`
	True              Dist         `json:"true_spacing"`
	P32               fabric.Num   `json:"p32_estimate"`
	Runs              []SpacingRun `json:"runs"`
	Note              string       `json:"note,omitempty"`
}

// HoleTotal is every structure of a hole in a domain.
type HoleTotal struct {
	Hole        string     `json:"hole_id"`
	Length      fabric.Num `json:"length"`
	LengthFrom  string     `json:"length_from"`
	Count       int        `json:"count"`
	Unoriented  int        `json:"unoriented"`
	P10         fabric.Num `json:"p10"`
	P10Weighted fabric.Num `json:"p10_terzaghi_weighted"`
}

// Unoriented counts the unoriented measurements of a domain.
type Unoriented struct {
	Total             int    `json:"total"`
	CountedInOneSet   int    `json:"counted_in_one_set"`
	Ambiguous         int    `json:"fit_several_sets"`
	FitNone           int    `json:"fit_no_set"`
	ExcludedFromMeans int    `json:"excluded_from_set_means"`
	PossiblePoles     string `json:"possible_poles"`
	WeightWithoutBeta string `json:"terzaghi_weight"`
}

// SpacingDomain is the spacing report of one domain.
type SpacingDomain struct {
	Name       string       `json:"name"`
	Holes      []HoleTotal  `json:"holes"`
	Unoriented Unoriented   `json:"unoriented"`
	Sets       []SpacingSet `json:"sets"`
	Outside    int          `json:"structures_outside_logged_length"`
}

// SpacingReport is the report of [Spacing]. Input, Intervals, TypeFilter
// and Problems describe the source and are filled in by the door.
type SpacingReport struct {
	Source
	Intervals      string          `json:"intervals,omitempty"`
	RowsNoDepth    int             `json:"rows_without_depth_or_hole_direction"`
	SetMethod      string          `json:"set_method"`
	Cap            fabric.Num      `json:"terzaghi_cap"`
	Correction     string          `json:"correction"`
	P32Method      string          `json:"p32_method"`
	P32Assumptions string          `json:"p32_assumptions"`
	Domains        []SpacingDomain `json:"domains"`
	Caution        string          `json:"caution"`
}

// SpacingOptions are the options of [Spacing].
type SpacingOptions struct {
	Sets fabric.Sets
	// Domains to report; none means one domain "all" of every row.
	Domains []structdomain.Domain
	// Extents are the logged lengths of the holes (e.g. the core
	// intervals); none means the domains' ranges or the structures' span.
	Extents []spacing.Extent
	Cap     float64 // Terzaghi cap, >= 1
	Values  bool    // list every spacing
}

// Correction describes the Terzaghi correction in the spacing report.
const Correction = "Terzaghi (1965): true spacing = spacing along the hole * |cos delta|, frequency along the normal = " +
	"sum of 1/|cos delta|, delta the angle between the hole (at the crossings) and the set's mean pole; " +
	"1/|cos delta| capped (crossings at the cap are counted in \"capped\": there the values are bounds)"

// Spacing measures every set in every domain.
func Spacing(in Input, o SpacingOptions) (SpacingReport, error) {
	if !(o.Cap >= 1) || math.IsInf(o.Cap, 0) {
		return SpacingReport{}, fmt.Errorf("Terzaghi cap %v, want a finite number >= 1", o.Cap)
	}
	if err := structdomain.Validate(o.Domains); err != nil {
		return SpacingReport{}, err
	}
	g, err := formSets(in, o.Sets, true)
	if err != nil {
		return SpacingReport{}, err
	}
	rep := SpacingReport{Source: in.source(), SetMethod: g.method,
		Cap: fabric.Num(o.Cap), Correction: Correction, P32Method: spacing.P32Method, P32Assumptions: spacing.P32Assumptions,
		Caution: RockMassCaution}
	domains := []*structdomain.Domain{nil}
	if len(o.Domains) > 0 {
		domains = domains[:0]
		for i := range o.Domains {
			domains = append(domains, &o.Domains[i])
		}
	}
	noDepth := map[int]bool{}
	for _, dom := range domains {
		d, err := spacingDomain(in, g, dom, o, noDepth)
		if err != nil {
			return SpacingReport{}, err
		}
		rep.Domains = append(rep.Domains, d)
	}
	rep.RowsNoDepth = len(noDepth)
	return rep, nil
}

// clipExtents returns the extents of the domain: the logged extents (or, when
// there are none, the domain's own ranges with finite ends) within its parts.
func clipExtents(extents []spacing.Extent, dom *structdomain.Domain) []spacing.Extent {
	if dom == nil {
		return extents
	}
	var out []spacing.Extent
	for _, p := range dom.Parts {
		if len(extents) == 0 {
			if !math.IsInf(p.To, 1) {
				out = append(out, spacing.Extent{Hole: p.Hole, From: p.From, To: p.To})
			}
			continue
		}
		for _, e := range extents {
			if e.Hole != p.Hole {
				continue
			}
			from, to := math.Max(e.From, p.From), math.Min(e.To, p.To)
			if to > from {
				out = append(out, spacing.Extent{Hole: e.Hole, From: from, To: to})
			}
		}
	}
	return out
}

func spacingDomain(in Input, g *sets, dom *structdomain.Domain, o SpacingOptions, noDepth map[int]bool) (SpacingDomain, error) {
	name := "all"
	if dom != nil {
		name = dom.Name
	}
	jd := SpacingDomain{Name: name}
	keep := func(row int) bool { return inDomain(in.Rows[row], dom) }
	// set means from the members in the domain
	var defs []spacing.SetDef
	var jsets []SpacingSet
	for j, sname := range g.names {
		vs := g.members(j, keep)
		js := SpacingSet{Name: sname, OrientedMembers: len(vs)}
		def := spacing.SetDef{Name: sname}
		if len(vs) == 0 {
			js.Note = "no oriented member in this domain: not measured"
			nan := fabric.Num(math.NaN())
			js.K, js.FitAngle, js.P10, js.P10Normal, js.MeanSpacing, js.P32, js.Length = nan, nan, nan, nan, nan, nan, nan
			js.Along, js.True = distOf(spacing.Describe(nil), false), distOf(spacing.Describe(nil), false)
			jsets = append(jsets, js)
			defs = append(defs, def)
			continue
		}
		f, err := dirstat.FisherMean(vs, nil, true)
		if err != nil {
			return jd, fmt.Errorf("domain %s, set %s: %w", name, sname, err)
		}
		def.Mean, def.Kappa = f.Mean, f.K
		if math.IsNaN(def.Kappa) {
			def.Kappa = math.Inf(1)
			js.Note = "one oriented member: taken as a parallel set"
		}
		def.Fit = FitAngle95(def.Kappa)
		if len(g.windows) > 0 {
			def.Fit = g.windows[j].Cone
		}
		js.Mean = planeMean(f.Mean)
		js.K, js.FitAngle = fabric.Num(f.K), fabric.Num(def.Fit)
		defs = append(defs, def)
		jsets = append(jsets, js)
	}
	// measurements in the domain
	var ms []spacing.Measurement
	for i, r := range in.Rows {
		if !(r.HasPlane || r.Unoriented) {
			continue
		}
		if math.IsNaN(r.Depth) || !r.HasHole {
			noDepth[i] = true
			continue
		}
		if !inDomain(r, dom) {
			continue
		}
		m := spacing.Measurement{Hole: r.HoleID, Depth: r.Depth, HoleDir: r.Hole, Alpha: r.Alpha}
		if r.HasPlane {
			m.Oriented, m.Pole, m.Set = true, r.Plane.Normal(), g.setOfRow(i)
		}
		ms = append(ms, m)
	}
	// sets without members cannot be measured: analyse the others
	var live []spacing.SetDef
	liveIdx := map[int]int{}
	for j, d := range defs {
		if d.Mean.Norm() > 0 {
			liveIdx[j] = len(live)
			live = append(live, d)
		}
	}
	for k := range ms {
		if ms[k].Oriented && ms[k].Set >= 0 {
			if li, ok := liveIdx[ms[k].Set]; ok {
				ms[k].Set = li
			} else {
				ms[k].Set = dirstat.Unassigned
			}
		}
	}
	rep, err := spacing.Assemble(ms, live, clipExtents(o.Extents, dom), o.Cap)
	if err != nil {
		return jd, wrap("domain "+name, err)
	}
	for j := range jsets {
		li, ok := liveIdx[j]
		if !ok {
			continue
		}
		sr := rep.Sets[li]
		res := sr.Result
		js := &jsets[j]
		js.UnorientedCounted = sr.Unoriented
		js.Count, js.Length, js.P10, js.P10Normal = res.Count, fabric.Num(res.Length), fabric.Num(res.P10), fabric.Num(res.P10Normal)
		js.MeanSpacing, js.Capped, js.P32 = fabric.Num(res.MeanSpacing), res.Capped, fabric.Num(res.P32)
		js.Along, js.True = distOf(res.Apparent, o.Values), distOf(res.True, o.Values)
		for _, h := range res.Holes {
			js.Runs = append(js.Runs, SpacingRun{Hole: h.Hole, From: fabric.Num(h.From), To: fabric.Num(h.To), Count: h.Count,
				P10: fabric.Num(h.P10), Delta: fabric.Num(h.Delta), P10Normal: fabric.Num(h.P10Normal), Capped: h.Capped})
		}
	}
	jd.Sets = jsets
	for _, h := range rep.Holes {
		jd.Holes = append(jd.Holes, HoleTotal{Hole: h.Hole, Length: fabric.Num(h.Length), LengthFrom: h.LengthFrom, Count: h.Count,
			Unoriented: h.Unoriented, P10: fabric.Num(h.P10), P10Weighted: fabric.Num(h.P10Weighted)})
	}
	jd.Unoriented = Unoriented{Total: rep.UnorientedTotal, CountedInOneSet: rep.UnorientedAssigned, Ambiguous: rep.UnorientedAmbiguous,
		FitNone: rep.UnorientedNoFit, ExcludedFromMeans: rep.UnorientedTotal,
		PossiblePoles:     "on the cone of half-angle 90 - alpha about the hole axis",
		WeightWithoutBeta: "1/sin(alpha), capped like every Terzaghi weight"}
	jd.Outside = rep.Outside
	return jd, nil
}

// UnorientedNet is the net of all rows: poles by set, set means with their
// 95% cones, and each unoriented measurement's cone of possible poles as a
// dashed small circle.
func UnorientedNet(in Input, s fabric.Sets, kind projection.Kind, subtitle string) (netsvg.Net, error) {
	g, err := formSets(in, s, false)
	if err != nil {
		return netsvg.Net{}, err
	}
	n := netsvg.Net{Projection: kind, Title: "Sets and unoriented measurements", Subtitle: subtitle, Caution: RockMassCaution}
	// Set j is drawn in the style of its index; pos[j] is its place in
	// n.Sets (-1 for a set without members, which is not drawn).
	pos := make([]int, len(g.names))
	for j, name := range g.names {
		pos[j] = -1
		vs := g.members(j, nil)
		if f, err := dirstat.FisherMean(vs, nil, true); err == nil {
			pos[j] = len(n.Sets)
			n.Sets = append(n.Sets, netsvg.SetMark{Name: name, Mean: f.Mean, Cone: f.Cone95, Count: len(vs), Style: visual.Pair(j)})
		}
	}
	for k, v := range g.axes {
		set := g.assign[k]
		if set >= 0 {
			set = pos[set]
		}
		n.Poles = append(n.Poles, netsvg.Mark{Axis: v, Set: set})
	}
	count := 0
	for _, r := range in.Rows {
		if !r.Unoriented {
			continue
		}
		c, err := spacing.UnorientedCone(r.Hole, r.Alpha)
		if err != nil {
			return netsvg.Net{}, err
		}
		count++
		n.Circles = append(n.Circles, netsvg.CircleMark{Axis: c.Axis, Half: c.Half, Set: -1, Dashed: true})
	}
	if count > 0 {
		n.CirclesNote = fmt.Sprintf("possible poles of %d unoriented", count)
	}
	return n, nil
}
