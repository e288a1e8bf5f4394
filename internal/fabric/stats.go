package fabric

import (
	"fmt"

	"corvane/internal/dirstat"
	"corvane/internal/geom"
	"corvane/internal/uncertainty"
)

// SpreadFormula is the definition of the spread reported.
const SpreadFormula = "angular standard deviation sqrt(sum w_i d_i^2 / (N - 1)), d_i the angle to the mean " +
	"(Butler 1992); theta63 = 81/sqrt(k)"

// Conventions states the report's angles.
const Conventions = "planes as dip/dip direction, poles and lines as trend/plunge, degrees, lower hemisphere; " +
	"poles and lines are axes; eigenvalues of the normalised orientation tensor, largest first"

// WindowMethod names grouping by user windows.
const WindowMethod = "user windows (centre and cone; an axis in several windows joins the nearest centre)"

// TypeMethod names grouping by type code.
const TypeMethod = "one set per type code"

// group is the axes of one kind (poles of planes, or lines) with their
// weights and set assignment.
type group struct {
	kind     string
	axes     []geom.Vec3
	rows     []int     // index into the used rows
	weights  []float64 // nil unless weighting
	noHole   int       // planes weighted 1 for lack of a hole direction
	assign   []int     // nil when there are no sets
	setNames []string
	method   string
}

func buildGroup(rows []Row, kind string, w Weighting) *group {
	g := &group{kind: kind}
	for i, row := range rows {
		switch {
		case kind == kindPlanes && row.HasPlane:
			n := row.Plane.Normal()
			g.axes = append(g.axes, n)
			g.rows = append(g.rows, i)
			if w.On {
				wt := 1.0
				if row.HasHole {
					wt = dirstat.TerzaghiWeight(n, row.Hole, w.Cap)
				} else {
					g.noHole++
				}
				g.weights = append(g.weights, wt)
			}
		case kind == kindLines && row.HasLine:
			g.axes = append(g.axes, row.Line.Vec())
			g.rows = append(g.rows, i)
		}
	}
	return g
}

// setsApply reports whether sets s are formed for kind, given the used rows.
func setsApply(s Sets, rows []Row, kind string) bool {
	if !s.any() {
		return false
	}
	switch s.On {
	case "both":
		return true
	case kindPlanes, kindLines:
		return s.On == kind
	}
	hasPlanes := false
	for _, r := range rows {
		if r.HasPlane {
			hasPlanes = true
			break
		}
	}
	return (kind == kindPlanes) == hasPlanes
}

func (g *group) assignSets(rows []Row, s Sets) error {
	switch {
	case s.Auto > 0:
		c, err := dirstat.ClusterAxes(g.axes, g.weights, s.Auto, 8, s.Seed)
		if err != nil {
			return optErr("sets", fmt.Sprintf("auto:%d", s.Auto), "%s: %v", g.kind, err)
		}
		g.assign = c.Assign
		for j := 0; j < s.Auto; j++ {
			g.setNames = append(g.setNames, AutoSetName(j))
		}
		g.method = dirstat.ClusterMethod
	case s.ByType:
		g.setNames = typeNames(rows, g.rows)
		idx := map[string]int{}
		for j, n := range g.setNames {
			idx[n] = j
		}
		g.assign = make([]int, len(g.rows))
		for i, r := range g.rows {
			g.assign[i] = idx[rows[r].Type]
		}
		for j, n := range g.setNames {
			if n == "" {
				g.setNames[j] = "(no type)"
			}
		}
		g.method = TypeMethod
	case len(s.Windows) > 0:
		a, err := dirstat.AssignWindows(g.axes, s.Windows)
		if err != nil {
			return optErr("set", "", "%v", err)
		}
		g.assign = a
		for _, w := range s.Windows {
			g.setNames = append(g.setNames, w.Name)
		}
		g.method = WindowMethod
	}
	return nil
}

// members returns the axes (and weights) of set j, or of all when j < 0.
func (g *group) members(j int) ([]geom.Vec3, []float64) {
	if j < 0 {
		return g.axes, g.weights
	}
	var vs []geom.Vec3
	var ws []float64
	for i, a := range g.assign {
		if a == j {
			vs = append(vs, g.axes[i])
			if g.weights != nil {
				ws = append(ws, g.weights[i])
			}
		}
	}
	return vs, ws
}

// only returns the group of the axes whose used rows keepUsed marks, with
// their weights and sets (set names and method unchanged).
func (g *group) only(keepUsed []bool) *group {
	o := &group{kind: g.kind, setNames: g.setNames, method: g.method}
	for i, r := range g.rows {
		if !keepUsed[r] {
			continue
		}
		o.axes = append(o.axes, g.axes[i])
		o.rows = append(o.rows, r)
		if g.weights != nil {
			o.weights = append(o.weights, g.weights[i])
		}
		if g.assign != nil {
			o.assign = append(o.assign, g.assign[i])
		}
	}
	if g.assign != nil && o.assign == nil {
		o.assign = []int{}
	}
	return o
}

func (g *group) unassigned() int {
	n := 0
	for _, a := range g.assign {
		if a == dirstat.Unassigned {
			n++
		}
	}
	return n
}

// groups builds the planes and lines groups of the used rows with their sets.
// Sets are formed only for the kinds of (both, planes or lines).
func groups(used []Row, w Weighting, s Sets, of string) (planes, lines *group, err error) {
	planes = buildGroup(used, kindPlanes, w)
	lines = buildGroup(used, kindLines, w)
	for _, g := range []*group{planes, lines} {
		if len(g.axes) == 0 || (of != "both" && of != g.kind) || !setsApply(s, used, g.kind) {
			continue
		}
		if err := g.assignSets(used, s); err != nil {
			return nil, nil, err
		}
	}
	return planes, lines, nil
}

// Line is an axis.
type Line struct {
	Trend  Num `json:"trend"`
	Plunge Num `json:"plunge"`
}

// Mean is a mean direction: the plane and its pole for planes, the axis for
// lines.
type Mean struct {
	Dip          *Num `json:"dip,omitempty"`
	DipDirection *Num `json:"dip_direction,omitempty"`
	PoleTrend    *Num `json:"pole_trend,omitempty"`
	PolePlunge   *Num `json:"pole_plunge,omitempty"`
	Trend        *Num `json:"trend,omitempty"`
	Plunge       *Num `json:"plunge,omitempty"`
}

// Shape is the fabric shape: Woodcock (1977) K and C, Vollmer (1990) P, G,
// R, B. K and C are null where they are infinite or undefined, and the
// matching note says which and why.
type Shape struct {
	WoodcockK     Num    `json:"woodcock_K"`
	WoodcockKNote string `json:"woodcock_K_note,omitempty"`
	WoodcockC     Num    `json:"woodcock_C"`
	WoodcockCNote string `json:"woodcock_C_note,omitempty"`
	VollmerP      Num    `json:"vollmer_P"`
	VollmerG      Num    `json:"vollmer_G"`
	VollmerR      Num    `json:"vollmer_R"`
	VollmerB      Num    `json:"vollmer_B"`
}

// Summary is the statistics of one group of axes.
type Summary struct {
	Mean         Mean    `json:"mean"`
	R            Num     `json:"R"`
	K            Num     `json:"k"`
	Cone95       Num     `json:"cone95"`
	Spread       Num     `json:"spread"`
	Theta63      Num     `json:"theta63"`
	Eigenvalues  [3]Num  `json:"eigenvalues"`
	Eigenvectors [3]Line `json:"eigenvectors"`
	Shape        Shape   `json:"shape"`
	SumOfWeights *Num    `json:"sum_of_weights,omitempty"`
}

// Set is one set (or all axes of a kind) with its statistics.
type Set struct {
	Name       string   `json:"name"`
	Count      int      `json:"count"`
	Unweighted *Summary `json:"unweighted,omitempty"`
	Weighted   *Summary `json:"weighted,omitempty"`
	// Uncertainty carries the measurement errors into the cone of the mean
	// pole or line, beside the Fisher cone (with the uncertainty option).
	Uncertainty *SetUncertainty `json:"measurement_uncertainty,omitempty"`
	Note        string          `json:"note,omitempty"`
}

// Group is the statistics of one kind of axes.
type Group struct {
	Count      int    `json:"count"`
	All        Set    `json:"all"`
	SetMethod  string `json:"set_method,omitempty"`
	Sets       []Set  `json:"sets,omitempty"`
	Unassigned *int   `json:"unassigned,omitempty"`
	NoHole     *int   `json:"weighted_1_without_hole_direction,omitempty"`
}

// WeightingNote describes the weighting applied.
type WeightingNote struct {
	Method    string `json:"method"`
	Cap       Num    `json:"cap"`
	CapSource string `json:"cap_source"`
	AppliesTo string `json:"applies_to"`
}

// Report is the statistics report of [Stats]. Input, TypeFilter, AzimuthRef
// and Problems describe the source and are filled in by the door.
type Report struct {
	Input        string         `json:"input"`
	TypeFilter   string         `json:"type_filter,omitempty"`
	AzimuthRef   string         `json:"azimuth_ref,omitempty"`
	Rows         int            `json:"rows"`
	RowsUsed     int            `json:"rows_used"`
	RowsSkipped  []SkipCount    `json:"rows_skipped"`
	RowsRejected int            `json:"rows_rejected"`
	Problems     []string       `json:"problems,omitempty"`
	Conventions  string         `json:"conventions"`
	Spread       string         `json:"spread_formula"`
	Seed         *uint64        `json:"seed,omitempty"`
	Weighting    *WeightingNote `json:"weighting,omitempty"`
	// Uncertainty says how the sets' measurement uncertainty was found;
	// nil when it was not asked for.
	Uncertainty *UncertaintyNote `json:"measurement_uncertainty,omitempty"`
	Planes      *Group           `json:"planes,omitempty"`
	Lines       *Group           `json:"lines,omitempty"`
	Caution     string           `json:"caution"`
}

// Options are the options of [Stats].
type Options struct {
	Of        string // "both" (or ""), "planes" or "lines": see [ParseOf]
	Sets      Sets
	Weighting Weighting
	// Uncertainty carries the rows' measurement errors (Row.Errors, built
	// with ErrorModel by [RowErrors]) into each set, by UncertaintyMethod
	// (SetUncertaintyFirstOrder or "" for it, SetUncertaintyMonteCarlo;
	// SetUncertaintyOff as Uncertainty false); see [ParseSetUncertainty].
	Uncertainty       bool
	UncertaintyMethod string
	ErrorModel        uncertainty.Model
}

func summary(vs []geom.Vec3, ws []float64, planes bool) (*Summary, error) {
	f, err := dirstat.FisherMean(vs, ws, true)
	if err != nil {
		return nil, err
	}
	e, err := dirstat.Tensor(vs, ws)
	if err != nil {
		return nil, err
	}
	sh := dirstat.ShapeOf(e)
	s := &Summary{R: Num(f.R), K: Num(f.K), Cone95: Num(f.Cone95), Spread: Num(f.Spread), Theta63: Num(f.Theta63)}
	mean := geom.LineOf(f.Mean)
	if planes {
		pl := geom.PlaneOf(f.Mean)
		s.Mean = Mean{Dip: nptr(pl.Dip), DipDirection: nptr(pl.DipDirection), PoleTrend: nptr(mean.Trend), PolePlunge: nptr(mean.Plunge)}
	} else {
		s.Mean = Mean{Trend: nptr(mean.Trend), Plunge: nptr(mean.Plunge)}
	}
	for k := 0; k < 3; k++ {
		s.Eigenvalues[k] = Num(e.Values[k])
		l := geom.LineOf(e.Vectors[k])
		s.Eigenvectors[k] = Line{Trend: Num(l.Trend), Plunge: Num(l.Plunge)}
	}
	s.Shape = Shape{WoodcockK: Num(sh.K), WoodcockKNote: sh.KNote, WoodcockC: Num(sh.C), WoodcockCNote: sh.CNote,
		VollmerP: Num(sh.P), VollmerG: Num(sh.G), VollmerR: Num(sh.R), VollmerB: Num(sh.B)}
	if ws != nil {
		s.SumOfWeights = nptr(f.SumW)
	}
	return s, nil
}

func setReport(name string, vs []geom.Vec3, ws []float64, planes bool, unc func() *SetUncertainty) Set {
	js := Set{Name: name, Count: len(vs)}
	if unc != nil {
		js.Uncertainty = unc()
	}
	var err error
	if js.Unweighted, err = summary(vs, nil, planes); err != nil {
		js.Note = err.Error()
		return js
	}
	if ws != nil {
		if js.Weighted, err = summary(vs, ws, planes); err != nil {
			js.Note = err.Error()
		}
	}
	return js
}

func groupReport(g *group, used []Row, withUnc bool, method string, budget *int) *Group {
	planes := g.kind == kindPlanes
	var cache *members
	unc := func(j int) func() *SetUncertainty {
		if !withUnc {
			return nil
		}
		if cache == nil {
			cache = newMembers(used, !planes, len(g.rows))
		}
		return func() *SetUncertainty {
			idx := cache.idx[:0]
			for i, r := range g.rows {
				if j < 0 || g.assign[i] == j {
					idx = append(idx, r)
				}
			}
			cache.idx = idx
			return setUncertainty(cache, used, idx, method, budget)
		}
	}
	jg := &Group{Count: len(g.axes)}
	jg.All = setReport("all", g.axes, g.weights, planes, unc(-1))
	if g.weights != nil && planes {
		n := g.noHole
		jg.NoHole = &n
	}
	if g.assign != nil {
		jg.SetMethod = g.method
		for j, name := range g.setNames {
			vs, ws := g.members(j)
			jg.Sets = append(jg.Sets, setReport(name, vs, ws, planes, unc(j)))
		}
		un := g.unassigned()
		jg.Unassigned = &un
	}
	if cache != nil {
		cache.done()
	}
	return jg
}

func weightingNote(w Weighting) *WeightingNote {
	if !w.On {
		return nil
	}
	n := &WeightingNote{
		Method:    "Terzaghi (1965): w = 1/|cos delta|, delta the angle between the pole and the hole direction at the row",
		Cap:       Num(w.Cap),
		CapSource: "default 2.924 = 1/cos 70: Brady & Brown (2004), citing Goodman (1976), correct only for delta <= 70",
		AppliesTo: "planes; lines are unweighted",
	}
	if w.Cap != dirstat.DefaultTerzaghiCap {
		n.CapSource = "given with the weighting option; the default would be 2.924 = 1/cos 70 (Brady & Brown 2004, citing Goodman 1976)"
	}
	return n
}

// Stats returns the statistics report of in: for planes (their poles) and
// lines, all axes and each set, unweighted and, with weighting, Terzaghi
// weighted. Rows without a dip direction or not oriented are skipped and
// counted (see the package comment). A kind with no axes is left out. The
// error is an [*OptionError] for options that do not fit the data (more
// automatic sets than axes).
func Stats(in Input, o Options) (Report, error) {
	of, err := ParseOf(o.Of)
	if err != nil {
		return Report{}, err
	}
	used, skipped := usable(in.Rows)
	rep := Report{
		Rows:         len(in.Rows),
		RowsUsed:     len(used),
		RowsSkipped:  skipped,
		RowsRejected: in.Rejected,
		Conventions:  Conventions,
		Spread:       SpreadFormula,
		Weighting:    weightingNote(o.Weighting),
		Caution:      Caution,
	}
	if o.Sets.Auto > 0 {
		seed := o.Sets.Seed
		rep.Seed = &seed
	}
	planes, lines, err := groups(used, o.Weighting, o.Sets, of)
	if err != nil {
		return Report{}, err
	}
	budget := MaxUncertaintyPoles
	method, err := ParseSetUncertainty(o.UncertaintyMethod, "")
	if err != nil {
		return Report{}, err
	}
	if method == SetUncertaintyOff {
		o.Uncertainty = false
	}
	if of != kindLines && len(planes.axes) > 0 {
		rep.Planes = groupReport(planes, used, o.Uncertainty, method, &budget)
	}
	if of != kindPlanes && len(lines.axes) > 0 {
		rep.Lines = groupReport(lines, used, o.Uncertainty, method, &budget)
	}
	if o.Uncertainty && (rep.Planes != nil || rep.Lines != nil) {
		rep.Uncertainty = uncertaintyNote(o.ErrorModel, method)
	}
	return rep, nil
}
