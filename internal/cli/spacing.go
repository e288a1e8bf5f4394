package cli

import (
	"context"
	"corvane/internal/fabric"
	"flag"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"

	"corvane/internal/csvio"
	"corvane/internal/dirstat"
	"corvane/internal/geom"
	"corvane/internal/netsvg"
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
                  [--intervals I.csv] [--domain ` + domainSyntax + ` ...]
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

` + rockMassCaution + `

Options:
`

type jDist struct {
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

func distJSON(d spacing.Dist, values bool) jDist {
	j := jDist{N: d.N, Mean: fabric.Num(d.Mean), Median: fabric.Num(d.Median), Min: fabric.Num(d.Min), P10: fabric.Num(d.P10), P25: fabric.Num(d.P25),
		P75: fabric.Num(d.P75), P90: fabric.Num(d.P90), Max: fabric.Num(d.Max), SD: fabric.Num(d.SD), CV: fabric.Num(d.CV), StdErr: fabric.Num(d.StdErr)}
	if values {
		for _, v := range d.Values {
			j.Values = append(j.Values, fabric.Num(v))
		}
	}
	return j
}

type jSpacingHole struct {
	Hole      string     `json:"hole_id"`
	From      fabric.Num `json:"from"`
	To        fabric.Num `json:"to"`
	Count     int        `json:"count"`
	P10       fabric.Num `json:"p10"`
	Delta     fabric.Num `json:"delta"`
	P10Normal fabric.Num `json:"p10_normal"`
	Capped    int        `json:"capped"`
}

type jSpacingSet struct {
	Name              string         `json:"name"`
	OrientedMembers   int            `json:"oriented_members"`
	Mean              *fabric.Mean   `json:"mean,omitempty"`
	K                 fabric.Num     `json:"k"`
	FitAngle          fabric.Num     `json:"unoriented_fit_angle"`
	UnorientedCounted int            `json:"unoriented_counted"`
	Count             int            `json:"count"`
	Length            fabric.Num     `json:"length"`
	P10               fabric.Num     `json:"p10"`
	P10Normal         fabric.Num     `json:"p10_normal"`
	MeanSpacing       fabric.Num     `json:"mean_spacing"`
	Capped            int            `json:"capped"`
	Along             jDist          `json:"spacing_along_hole"`
	True              jDist          `json:"true_spacing"`
	P32               fabric.Num     `json:"p32_estimate"`
	Runs              []jSpacingHole `json:"runs"`
	Note              string         `json:"note,omitempty"`
}

type jHoleTotal struct {
	Hole        string     `json:"hole_id"`
	Length      fabric.Num `json:"length"`
	LengthFrom  string     `json:"length_from"`
	Count       int        `json:"count"`
	Unoriented  int        `json:"unoriented"`
	P10         fabric.Num `json:"p10"`
	P10Weighted fabric.Num `json:"p10_terzaghi_weighted"`
}

type jUnoriented struct {
	Total             int    `json:"total"`
	CountedInOneSet   int    `json:"counted_in_one_set"`
	Ambiguous         int    `json:"fit_several_sets"`
	FitNone           int    `json:"fit_no_set"`
	ExcludedFromMeans int    `json:"excluded_from_set_means"`
	PossiblePoles     string `json:"possible_poles"`
	WeightWithoutBeta string `json:"terzaghi_weight"`
}

type jSpacingDomain struct {
	Name       string        `json:"name"`
	Holes      []jHoleTotal  `json:"holes"`
	Unoriented jUnoriented   `json:"unoriented"`
	Sets       []jSpacingSet `json:"sets"`
	Skipped    int           `json:"structures_outside_logged_length"`
}

type jSpacingReport struct {
	Input          string             `json:"input"`
	RowsSkipped    []fabric.SkipCount `json:"rows_skipped"`
	Intervals      string             `json:"intervals,omitempty"`
	TypeFilter     string             `json:"type_filter,omitempty"`
	RowsUsed       int                `json:"rows_used"`
	RowsRejected   int                `json:"rows_rejected"`
	RowsNoDepth    int                `json:"rows_without_depth_or_hole_direction"`
	Problems       []string           `json:"problems,omitempty"`
	SetMethod      string             `json:"set_method"`
	Cap            fabric.Num         `json:"terzaghi_cap"`
	Correction     string             `json:"correction"`
	P32Method      string             `json:"p32_method"`
	P32Assumptions string             `json:"p32_assumptions"`
	Domains        []jSpacingDomain   `json:"domains"`
	Caution        string             `json:"caution"`
}

// registerGeoFlags adds the input and set flags of the geotechnical commands.
func registerGeoFlags(fs *flag.FlagSet, c *orientFlags) {
	fs.StringVar(&c.in, "in", "", "input CSV (\"-\" for standard input), e.g. the output of corvane convert")
	fs.StringVar(&c.out, "o", "", "output file (default standard output)")
	fs.StringVar(&c.typ, "type", "", "use only rows whose type column equals this (case-insensitive)")
	fs.StringVar(&c.sets, "sets", "", "auto:N for N sets by k-means on the poles")
	fs.Var(&c.windows, "set", "a set window NAME:TREND/PLUNGE:CONE on the poles (repeatable)")
	fs.Uint64Var(&c.seed, "seed", 1, "seed for --sets auto:N")
}

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
	fs := flag.NewFlagSet("spacing", flag.ContinueOnError)
	fs.SetOutput(env.Stderr)
	fs.Usage = func() {
		fmt.Fprint(env.Stderr, spacingUsage)
		fs.PrintDefaults()
	}
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
	gs, err := loadGeoSets(env, &c, true)
	if err != nil {
		return fail(err)
	}
	var extents []spacing.Extent
	if *intervals != "" {
		rows, err := readIntervalsFile(env, *intervals, "")
		if err != nil {
			fmt.Fprint(env.Stderr, "corvane spacing: ")
			csvio.Report(env.Stderr, err)
			return ExitUsage
		}
		for _, r := range rows {
			extents = append(extents, spacing.Extent{Hole: r.HoleID, From: r.Interval.From, To: r.Interval.To})
		}
	}
	rep := jSpacingReport{Input: gs.in.file, RowsSkipped: gs.in.skipped(), Intervals: *intervals, TypeFilter: c.typ, RowsUsed: len(gs.in.rows),
		RowsRejected: len(gs.in.problems), SetMethod: gs.group.method, Cap: fabric.Num(maxW),
		Correction: "Terzaghi (1965): true spacing = spacing along the hole * |cos delta|, frequency along the normal = " +
			"sum of 1/|cos delta|, delta the angle between the hole (at the crossings) and the set's mean pole; " +
			"1/|cos delta| capped (crossings at the cap are counted in \"capped\": there the values are bounds)",
		P32Method: spacing.P32Method, P32Assumptions: spacing.P32Assumptions, Caution: rockMassCaution}
	for _, p := range gs.in.problems {
		rep.Problems = append(rep.Problems, p.Error())
	}
	domains := []*structdomain.Domain{nil}
	if len(doms) > 0 {
		domains = domains[:0]
		for i := range doms {
			domains = append(domains, &doms[i])
		}
	}
	noDepth := map[int]bool{}
	for _, dom := range domains {
		jd, err := spacingDomain(gs, dom, extents, float64(maxW), *values, noDepth)
		if err != nil {
			return fail(err)
		}
		rep.Domains = append(rep.Domains, jd)
	}
	rep.RowsNoDepth = len(noDepth)
	if *svg != "" {
		if err := writeUnorientedNet(*svg, gs); err != nil {
			return fail(err)
		}
	}
	if code := writeJSON(env, fail, c.out, rep); code != ExitOK {
		return code
	}
	if len(gs.in.problems) > 0 {
		return ExitRows
	}
	return ExitOK
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

func spacingDomain(gs *geoSets, dom *structdomain.Domain, extents []spacing.Extent, maxW float64, values bool, noDepth map[int]bool) (jSpacingDomain, error) {
	name := "all"
	if dom != nil {
		name = dom.Name
	}
	jd := jSpacingDomain{Name: name}
	g := gs.group
	// set means from the members in the domain
	var defs []spacing.SetDef
	var jsets []jSpacingSet
	for j, sname := range g.setNames {
		var vs []geom.Vec3
		for k, ri := range g.rows {
			if g.assign[k] == j && gs.inDomain(ri, dom) {
				vs = append(vs, g.axes[k])
			}
		}
		js := jSpacingSet{Name: sname, OrientedMembers: len(vs)}
		def := spacing.SetDef{Name: sname}
		if len(vs) == 0 {
			js.Note = "no oriented member in this domain: not measured"
			nan := fabric.Num(math.NaN())
			js.K, js.FitAngle, js.P10, js.P10Normal, js.MeanSpacing, js.P32, js.Length = nan, nan, nan, nan, nan, nan, nan
			js.Along, js.True = distJSON(spacing.Describe(nil), false), distJSON(spacing.Describe(nil), false)
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
		def.Fit = fitAngle95(def.Kappa)
		if len(gs.windows) > 0 {
			def.Fit = gs.windows[j].Cone
		}
		pl := geom.PlaneOf(f.Mean)
		ml := geom.LineOf(f.Mean)
		js.Mean = &fabric.Mean{Dip: numPtr(pl.Dip), DipDirection: numPtr(pl.DipDirection), PoleTrend: numPtr(ml.Trend), PolePlunge: numPtr(ml.Plunge)}
		js.K, js.FitAngle = fabric.Num(f.K), fabric.Num(def.Fit)
		defs = append(defs, def)
		jsets = append(jsets, js)
	}
	// measurements in the domain
	var ms []spacing.Measurement
	for i, r := range gs.in.rows {
		if !(r.HasPlane || r.Unoriented) || !gs.inDomain(i, dom) {
			if math.IsNaN(r.Depth) && (r.HasPlane || r.Unoriented) {
				noDepth[i] = true
			}
			continue
		}
		if !r.HasHole {
			noDepth[i] = true
			continue
		}
		m := spacing.Measurement{Hole: r.HoleID, Depth: r.Depth, HoleDir: r.Hole, Alpha: r.Alpha}
		if r.HasPlane {
			m.Oriented, m.Pole, m.Set = true, r.Plane.Normal(), gs.setOfRow(i)
			if m.Set >= 0 && defs[m.Set].Mean.Norm() == 0 {
				m.Set = dirstat.Unassigned
			}
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
			ms[k].Set = liveIdx[ms[k].Set]
		}
	}
	rep, err := spacing.Assemble(ms, live, clipExtents(extents, dom), maxW)
	if err != nil {
		return jd, fmt.Errorf("domain %s: %w", name, err)
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
		js.Along, js.True = distJSON(res.Apparent, values), distJSON(res.True, values)
		for _, h := range res.Holes {
			js.Runs = append(js.Runs, jSpacingHole{Hole: h.Hole, From: fabric.Num(h.From), To: fabric.Num(h.To), Count: h.Count,
				P10: fabric.Num(h.P10), Delta: fabric.Num(h.Delta), P10Normal: fabric.Num(h.P10Normal), Capped: h.Capped})
		}
	}
	jd.Sets = jsets
	for _, h := range rep.Holes {
		jd.Holes = append(jd.Holes, jHoleTotal{Hole: h.Hole, Length: fabric.Num(h.Length), LengthFrom: h.LengthFrom, Count: h.Count,
			Unoriented: h.Unoriented, P10: fabric.Num(h.P10), P10Weighted: fabric.Num(h.P10Weighted)})
	}
	jd.Unoriented = jUnoriented{Total: rep.UnorientedTotal, CountedInOneSet: rep.UnorientedAssigned, Ambiguous: rep.UnorientedAmbiguous,
		FitNone: rep.UnorientedNoFit, ExcludedFromMeans: rep.UnorientedTotal,
		PossiblePoles:     "on the cone of half-angle 90 - alpha about the hole axis",
		WeightWithoutBeta: "1/sin(alpha), capped like every Terzaghi weight"}
	jd.Skipped = rep.Outside
	return jd, nil
}

// writeUnorientedNet writes a net of all rows: poles by set, set means and
// the small circle of possible poles of each unoriented measurement.
func writeUnorientedNet(path string, gs *geoSets) error {
	g := gs.group
	n := netsvg.Net{Projection: projection.EqualArea, Title: "Sets and unoriented measurements",
		Subtitle: filepath.Base(gs.in.file), Caution: rockMassCaution}
	for k, v := range g.axes {
		n.Poles = append(n.Poles, netsvg.Mark{Axis: v, Set: g.assign[k]})
	}
	for j, name := range g.setNames {
		vs := g.members(j)
		if f, err := dirstat.FisherMean(vs, nil, true); err == nil {
			n.Sets = append(n.Sets, netsvg.SetMark{Name: name, Mean: f.Mean, Cone: f.Cone95, Count: len(vs)})
		}
	}
	count := 0
	for _, r := range gs.in.rows {
		if !r.Unoriented {
			continue
		}
		c, err := spacing.UnorientedCone(r.Hole, r.Alpha)
		if err != nil {
			return err
		}
		count++
		n.Circles = append(n.Circles, netsvg.CircleMark{Axis: c.Axis, Half: c.Half, Set: -1, Dashed: true})
	}
	if count > 0 {
		n.CirclesNote = fmt.Sprintf("possible poles of %d unoriented", count)
	}
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	if err := netsvg.WriteNet(f, n); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}
