package cli

import (
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
	"strings"

	"corvane/internal/csvio"
	"corvane/internal/dirstat"
	"corvane/internal/domain"
	"corvane/internal/geom"
)

func init() {
	register(command{
		name:    "stats",
		summary: "set statistics of planes and lines from a CSV (Fisher, orientation tensor, Terzaghi)",
		run:     runStats,
	})
}

// statsCaution is printed with every statistics report and net.
const statsCaution = "Statistics and nets summarise the measurements given; they are only as good as the " +
	"orientation marks, surveys and logging behind them. Where they feed slope or excavation design, " +
	"check the QA findings and base any design on local codes and the judgement of a licensed practitioner."

const spreadFormula = "angular standard deviation sqrt(sum w_i d_i^2 / (N - 1)), d_i the angle to the mean " +
	"(Butler 1992); theta63 = 81/sqrt(k)"

const statsUsage = `Usage:
  corvane stats --in FILE [--sets auto:N | --set NAME:TREND/PLUNGE:CONE ...]
                [--sets-on planes|lines|both] [--weighting terzaghi[:CAP]] [--type TYPE]
                [--of planes|lines|both] [-o OUT.json]

Reads planes (columns dip, dip_direction) and/or lines (line_trend, line_plunge) from a
CSV such as the one corvane convert writes (header names in any case; hole_azimuth and
hole_dip, with dip negative down, give the hole direction for weighting; a type column
allows --type). Prints JSON with, for all measurements and for each set: count, mean
(dip and dip direction of planes, from the mean pole; trend and plunge of lines), the
Fisher (1953) resultant R, concentration k = (N-1)/(N-R), the exact 95% cone of
confidence, the angular spread, the orientation-tensor eigenvalues and eigenvectors,
and the fabric shape (Woodcock 1977 K and C; Vollmer 1990 P, G, R, B). Poles and lines
are treated as axes: the end given does not matter.

Sets:
  --set NAME:TREND/PLUNGE:CONE   a window: every axis within CONE degrees of the axis
                                 TREND/PLUNGE (for planes, the pole) joins NAME; an axis
                                 in several windows joins the nearest centre. Repeatable.
  --sets auto:N                  N sets by k-means on axes (see "set_method" in the output),
                                 deterministic for a given --seed.
  --sets-on planes|lines|both    what the sets apply to: by default the planes (their
                                 poles), or the lines when the file has no planes.

Weighting:
  --weighting terzaghi[:CAP]     Terzaghi (1965) weight 1/|cos delta| for each plane, delta
                                 the angle between its pole and the hole, capped at CAP
                                 (default 2.924 = 1/cos 70, after Brady & Brown 2004 citing
                                 Goodman 1976). Weighted and unweighted results are shown
                                 side by side. Lines are not weighted.

Rows that cannot be read are reported with file, line and column on standard error and
in "problems"; the other rows are used and the exit status is 1.

` + statsCaution + `

Options:
`

// weightingSpec is a parsed --weighting value.
type weightingSpec struct {
	on  bool
	cap float64
}

func parseWeightingFlag(s string) (weightingSpec, error) {
	if s == "" || s == "none" {
		return weightingSpec{}, nil
	}
	name, capStr, hasCap := strings.Cut(s, ":")
	if !strings.EqualFold(name, "terzaghi") {
		return weightingSpec{}, fmt.Errorf("--weighting %q: want terzaghi or terzaghi:CAP", s)
	}
	w := weightingSpec{on: true, cap: dirstat.DefaultTerzaghiCap}
	if hasCap {
		c, err := strconv.ParseFloat(capStr, 64)
		if err != nil || !(c >= 1) || math.IsInf(c, 0) {
			return weightingSpec{}, fmt.Errorf("--weighting %q: cap %q must be a number >= 1", s, capStr)
		}
		w.cap = c
	}
	return w, nil
}

// windowFlags collects repeated --set NAME:TREND/PLUNGE:CONE values.
type windowFlags []dirstat.Window

func (w *windowFlags) String() string { return fmt.Sprint(len(*w), " windows") }

func (w *windowFlags) Set(s string) error {
	parts := strings.Split(s, ":")
	if len(parts) != 3 || strings.TrimSpace(parts[0]) == "" {
		return fmt.Errorf("%q: want NAME:TREND/PLUNGE:CONE, e.g. J1:135/20:25", s)
	}
	tp := strings.Split(parts[1], "/")
	if len(tp) != 2 {
		return fmt.Errorf("%q: centre %q: want TREND/PLUNGE", s, parts[1])
	}
	tr, err1 := strconv.ParseFloat(strings.TrimSpace(tp[0]), 64)
	pl, err2 := strconv.ParseFloat(strings.TrimSpace(tp[1]), 64)
	cone, err3 := strconv.ParseFloat(strings.TrimSpace(parts[2]), 64)
	switch {
	case err1 != nil || tr < 0 || tr > 360:
		return fmt.Errorf("%q: trend %q must be a number in [0, 360]", s, tp[0])
	case err2 != nil || pl < 0 || pl > 90:
		return fmt.Errorf("%q: plunge %q must be a number in [0, 90]", s, tp[1])
	case err3 != nil || !(cone > 0 && cone <= 90):
		return fmt.Errorf("%q: cone %q must be a number in (0, 90]", s, parts[2])
	}
	for _, x := range *w {
		if x.Name == parts[0] {
			return fmt.Errorf("%q: set name %q used twice", s, parts[0])
		}
	}
	*w = append(*w, dirstat.Window{Name: strings.TrimSpace(parts[0]), Centre: geom.FromTrendPlunge(tr, pl), Cone: cone})
	return nil
}

// setOptions says how to form sets: auto > 0 for clustering, else windows.
type setOptions struct {
	auto    int
	windows []dirstat.Window
	seed    uint64
}

func parseAutoSets(s string) (int, error) {
	if s == "" {
		return 0, nil
	}
	v, ok := strings.CutPrefix(s, "auto:")
	n, err := strconv.Atoi(v)
	if !ok || err != nil || n < 1 || n > 20 {
		return 0, fmt.Errorf("--sets %q: want auto:N with N from 1 to 20", s)
	}
	return n, nil
}

// orientInput is the measurements of one input file after --type filtering.
type orientInput struct {
	file     string
	read     int // rows read without problems, before filtering
	rows     []csvio.OrientationRow
	problems []*domain.Error
}

// loadOrientations reads path ("-" for standard input) and keeps the rows of
// type typ (all when typ is empty). Problems are also written to stderr.
func loadOrientations(env *Env, path, typ string) (*orientInput, error) {
	if path == "" {
		return nil, errors.New("--in FILE is required")
	}
	var r io.Reader = env.Stdin
	if path != "-" {
		f, err := os.Open(path)
		if err != nil {
			return nil, err
		}
		defer f.Close()
		r = f
	}
	rows, problems, err := csvio.ReadOrientations(r, path)
	if err != nil {
		return nil, err
	}
	for _, p := range problems {
		fmt.Fprintf(env.Stderr, "corvane: %v (row skipped)\n", p)
	}
	in := &orientInput{file: path, read: len(rows), problems: problems}
	for _, row := range rows {
		if typ == "" || strings.EqualFold(row.Type, typ) {
			in.rows = append(in.rows, row)
		}
	}
	if len(in.rows) == 0 {
		if typ != "" {
			return nil, fmt.Errorf("%s: no usable rows of type %q", path, typ)
		}
		return nil, fmt.Errorf("%s: no usable rows", path)
	}
	return in, nil
}

// orientGroup is the axes of one kind (poles of planes or lines) with their
// weights and set assignment.
type orientGroup struct {
	kind     string // "planes" or "lines"
	axes     []geom.Vec3
	rows     []int     // index into orientInput.rows
	weights  []float64 // nil unless weighting
	noHole   int       // planes weighted 1 for lack of a hole direction
	assign   []int     // nil when there are no sets
	setNames []string
	method   string
}

func buildGroup(in *orientInput, kind string, w weightingSpec) *orientGroup {
	g := &orientGroup{kind: kind}
	for i, row := range in.rows {
		switch {
		case kind == "planes" && row.HasPlane:
			g.axes = append(g.axes, row.Plane.Normal())
			g.rows = append(g.rows, i)
			if w.on {
				wt := 1.0
				if row.HasHole {
					wt = dirstat.TerzaghiWeight(row.Plane.Normal(), row.Hole, w.cap)
				} else {
					g.noHole++
				}
				g.weights = append(g.weights, wt)
			}
		case kind == "lines" && row.HasLine:
			g.axes = append(g.axes, row.LineDir.Vec())
			g.rows = append(g.rows, i)
		}
	}
	return g
}

func (g *orientGroup) assignSets(o setOptions) error {
	switch {
	case o.auto > 0:
		c, err := dirstat.ClusterAxes(g.axes, g.weights, o.auto, 8, o.seed)
		if err != nil {
			return fmt.Errorf("%s: %w", g.kind, err)
		}
		g.assign = c.Assign
		for j := 0; j < o.auto; j++ {
			g.setNames = append(g.setNames, fmt.Sprintf("S%d", j+1))
		}
		g.method = dirstat.ClusterMethod
	case len(o.windows) > 0:
		a, err := dirstat.AssignWindows(g.axes, o.windows)
		if err != nil {
			return err
		}
		g.assign = a
		for _, w := range o.windows {
			g.setNames = append(g.setNames, w.Name)
		}
		g.method = "user windows (centre and cone; an axis in several windows joins the nearest centre)"
	}
	return nil
}

// members returns the axes (and weights) of set j, or of all when j == -2.
func (g *orientGroup) members(j int) ([]geom.Vec3, []float64) {
	if j == -2 {
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

// jnum is a float that encodes NaN and infinities as JSON null.
type jnum float64

func (v jnum) MarshalJSON() ([]byte, error) {
	f := float64(v)
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return []byte("null"), nil
	}
	return []byte(strconv.FormatFloat(math.Round(f*1e6)/1e6, 'f', -1, 64)), nil
}

type jLine struct {
	Trend  jnum `json:"trend"`
	Plunge jnum `json:"plunge"`
}

type jMean struct {
	Dip          *jnum `json:"dip,omitempty"`
	DipDirection *jnum `json:"dip_direction,omitempty"`
	PoleTrend    *jnum `json:"pole_trend,omitempty"`
	PolePlunge   *jnum `json:"pole_plunge,omitempty"`
	Trend        *jnum `json:"trend,omitempty"`
	Plunge       *jnum `json:"plunge,omitempty"`
}

type jShape struct {
	WoodcockK jnum `json:"woodcock_K"`
	WoodcockC jnum `json:"woodcock_C"`
	VollmerP  jnum `json:"vollmer_P"`
	VollmerG  jnum `json:"vollmer_G"`
	VollmerR  jnum `json:"vollmer_R"`
	VollmerB  jnum `json:"vollmer_B"`
}

type jStats struct {
	Mean         jMean    `json:"mean"`
	R            jnum     `json:"R"`
	K            jnum     `json:"k"`
	Cone95       jnum     `json:"cone95"`
	Spread       jnum     `json:"spread"`
	Theta63      jnum     `json:"theta63"`
	Eigenvalues  [3]jnum  `json:"eigenvalues"`
	Eigenvectors [3]jLine `json:"eigenvectors"`
	Shape        jShape   `json:"shape"`
	SumOfWeights *jnum    `json:"sum_of_weights,omitempty"`
}

type jSet struct {
	Name       string  `json:"name"`
	Count      int     `json:"count"`
	Unweighted *jStats `json:"unweighted,omitempty"`
	Weighted   *jStats `json:"weighted,omitempty"`
	Note       string  `json:"note,omitempty"`
}

type jGroup struct {
	Count      int    `json:"count"`
	All        jSet   `json:"all"`
	SetMethod  string `json:"set_method,omitempty"`
	Sets       []jSet `json:"sets,omitempty"`
	Unassigned *int   `json:"unassigned,omitempty"`
	NoHole     *int   `json:"weighted_1_without_hole_direction,omitempty"`
}

type jWeighting struct {
	Method    string `json:"method"`
	Cap       jnum   `json:"cap"`
	CapSource string `json:"cap_source"`
	AppliesTo string `json:"applies_to"`
}

type jReport struct {
	Input        string      `json:"input"`
	TypeFilter   string      `json:"type_filter,omitempty"`
	RowsUsed     int         `json:"rows_used"`
	RowsRejected int         `json:"rows_rejected"`
	Problems     []string    `json:"problems,omitempty"`
	Conventions  string      `json:"conventions"`
	Spread       string      `json:"spread_formula"`
	Seed         *uint64     `json:"seed,omitempty"`
	Weighting    *jWeighting `json:"weighting,omitempty"`
	Planes       *jGroup     `json:"planes,omitempty"`
	Lines        *jGroup     `json:"lines,omitempty"`
	Caution      string      `json:"caution"`
}

func jptr(v float64) *jnum { j := jnum(v); return &j }

func orientSummary(vs []geom.Vec3, ws []float64, planes bool) (*jStats, error) {
	f, err := dirstat.FisherMean(vs, ws, true)
	if err != nil {
		return nil, err
	}
	e, err := dirstat.Tensor(vs, ws)
	if err != nil {
		return nil, err
	}
	sh := dirstat.ShapeOf(e)
	s := &jStats{R: jnum(f.R), K: jnum(f.K), Cone95: jnum(f.Cone95), Spread: jnum(f.Spread), Theta63: jnum(f.Theta63)}
	mean := geom.LineOf(f.Mean)
	if planes {
		pl := geom.PlaneOf(f.Mean)
		s.Mean = jMean{Dip: jptr(pl.Dip), DipDirection: jptr(pl.DipDirection), PoleTrend: jptr(mean.Trend), PolePlunge: jptr(mean.Plunge)}
	} else {
		s.Mean = jMean{Trend: jptr(mean.Trend), Plunge: jptr(mean.Plunge)}
	}
	for k := 0; k < 3; k++ {
		s.Eigenvalues[k] = jnum(e.Values[k])
		l := geom.LineOf(e.Vectors[k])
		s.Eigenvectors[k] = jLine{Trend: jnum(l.Trend), Plunge: jnum(l.Plunge)}
	}
	s.Shape = jShape{jnum(sh.K), jnum(sh.C), jnum(sh.P), jnum(sh.G), jnum(sh.R), jnum(sh.B)}
	if ws != nil {
		s.SumOfWeights = jptr(f.SumW)
	}
	return s, nil
}

func setReport(name string, vs []geom.Vec3, ws []float64, planes bool) jSet {
	js := jSet{Name: name, Count: len(vs)}
	var err error
	if js.Unweighted, err = orientSummary(vs, nil, planes); err != nil {
		js.Note = err.Error()
		return js
	}
	if ws != nil {
		if js.Weighted, err = orientSummary(vs, ws, planes); err != nil {
			js.Note = err.Error()
		}
	}
	return js
}

func groupReport(g *orientGroup) *jGroup {
	planes := g.kind == "planes"
	jg := &jGroup{Count: len(g.axes)}
	jg.All = setReport("all", g.axes, g.weights, planes)
	if g.weights != nil && planes {
		n := g.noHole
		jg.NoHole = &n
	}
	if g.assign != nil {
		jg.SetMethod = g.method
		for j, name := range g.setNames {
			vs, ws := g.members(j)
			jg.Sets = append(jg.Sets, setReport(name, vs, ws, planes))
		}
		un := 0
		for _, a := range g.assign {
			if a == dirstat.Unassigned {
				un++
			}
		}
		jg.Unassigned = &un
	}
	return jg
}

// orientFlags are the flags shared by stats, net and rose.
type orientFlags struct {
	in, out, typ, of, weighting, sets string
	setsOn                            string
	windows                           windowFlags
	seed                              uint64
}

func (c *orientFlags) register(fs *flag.FlagSet, withSets bool) {
	fs.StringVar(&c.in, "in", "", "input CSV (\"-\" for standard input)")
	fs.StringVar(&c.out, "o", "", "output file (default standard output)")
	fs.StringVar(&c.typ, "type", "", "use only rows whose type column equals this (case-insensitive)")
	fs.StringVar(&c.weighting, "weighting", "", "terzaghi or terzaghi:CAP (planes only)")
	if withSets {
		fs.StringVar(&c.sets, "sets", "", "auto:N for N sets by k-means on axes")
		fs.Var(&c.windows, "set", "a set window NAME:TREND/PLUNGE:CONE (repeatable; for planes the centre is the pole)")
		fs.Uint64Var(&c.seed, "seed", 1, "seed for --sets auto:N")
		fs.StringVar(&c.setsOn, "sets-on", "", "planes, lines or both: what sets apply to (default planes, or lines when there are no planes)")
	}
}

func (c *orientFlags) setOptions() (setOptions, error) {
	n, err := parseAutoSets(c.sets)
	if err != nil {
		return setOptions{}, err
	}
	if n > 0 && len(c.windows) > 0 {
		return setOptions{}, errors.New("give either --sets auto:N or --set windows, not both")
	}
	switch c.setsOn {
	case "", "planes", "lines", "both":
	default:
		return setOptions{}, fmt.Errorf("--sets-on %q: want planes, lines or both", c.setsOn)
	}
	return setOptions{auto: n, windows: c.windows, seed: c.seed}, nil
}

// setsApply reports whether sets are formed for the kind ("planes" or
// "lines") of the input, following --sets-on.
func (c *orientFlags) setsApply(in *orientInput, kind string) bool {
	switch c.setsOn {
	case "both":
		return true
	case "planes", "lines":
		return c.setsOn == kind
	}
	hasPlanes := false
	for _, r := range in.rows {
		if r.HasPlane {
			hasPlanes = true
			break
		}
	}
	return kind == "planes" == hasPlanes
}

// openOut returns the writer for -o (stdout when empty) and a close function.
func orientOut(env *Env, path string) (io.Writer, func() error, error) {
	if path == "" || path == "-" {
		return env.Stdout, func() error { return nil }, nil
	}
	f, err := os.Create(path)
	if err != nil {
		return nil, nil, err
	}
	return f, f.Close, nil
}

// parseOrientArgs parses args for the orientation command name (stats, net or
// rose). fail reports an error as "corvane NAME: ..." and returns ExitUsage;
// done is true, with the exit code, when the command must stop here (help, a
// bad flag or an unexpected argument).
func parseOrientArgs(env *Env, fs *flag.FlagSet, name string, args []string) (fail func(error) int, code int, done bool) {
	fail = func(err error) int {
		fmt.Fprintf(env.Stderr, "corvane %s: %v\n", name, err)
		return ExitUsage
	}
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return fail, ExitOK, true
		}
		return fail, ExitUsage, true
	}
	if fs.NArg() > 0 {
		return fail, fail(fmt.Errorf("unexpected argument %q", fs.Arg(0))), true
	}
	return fail, ExitOK, false
}

func runStats(_ context.Context, env *Env, args []string) int {
	fs := flag.NewFlagSet("stats", flag.ContinueOnError)
	fs.SetOutput(env.Stderr)
	fs.Usage = func() {
		fmt.Fprint(env.Stderr, statsUsage)
		fs.PrintDefaults()
	}
	var c orientFlags
	c.register(fs, true)
	fs.StringVar(&c.of, "of", "both", "planes, lines or both (those present)")
	fail, code, done := parseOrientArgs(env, fs, "stats", args)
	if done {
		return code
	}
	w, err := parseWeightingFlag(c.weighting)
	if err != nil {
		return fail(err)
	}
	so, err := c.setOptions()
	if err != nil {
		return fail(err)
	}
	if c.of != "both" && c.of != "planes" && c.of != "lines" {
		return fail(fmt.Errorf("--of %q: want planes, lines or both", c.of))
	}
	in, err := loadOrientations(env, c.in, c.typ)
	if err != nil {
		return fail(err)
	}
	rep := jReport{
		Input:        in.file,
		TypeFilter:   c.typ,
		RowsUsed:     len(in.rows),
		RowsRejected: len(in.problems),
		Conventions: "planes as dip/dip direction, poles and lines as trend/plunge, degrees, lower hemisphere; " +
			"poles and lines are axes; eigenvalues of the normalised orientation tensor, largest first",
		Spread:  spreadFormula,
		Caution: statsCaution,
	}
	for _, p := range in.problems {
		rep.Problems = append(rep.Problems, p.Error())
	}
	if so.auto > 0 {
		seed := so.seed
		rep.Seed = &seed
	}
	if w.on {
		rep.Weighting = &jWeighting{
			Method:    "Terzaghi (1965): w = 1/|cos delta|, delta the angle between the pole and the hole direction at the row",
			Cap:       jnum(w.cap),
			CapSource: "default 2.924 = 1/cos 70: Brady & Brown (2004), citing Goodman (1976), correct only for delta <= 70",
			AppliesTo: "planes; lines are unweighted",
		}
		if w.cap != dirstat.DefaultTerzaghiCap {
			rep.Weighting.CapSource = "given with --weighting; the default would be 2.924 = 1/cos 70 (Brady & Brown 2004, citing Goodman 1976)"
		}
	}
	for _, kind := range []string{"planes", "lines"} {
		if c.of != "both" && c.of != kind {
			continue
		}
		g := buildGroup(in, kind, w)
		if len(g.axes) == 0 {
			continue
		}
		if c.setsApply(in, kind) {
			if err := g.assignSets(so); err != nil {
				return fail(err)
			}
		}
		if kind == "planes" {
			rep.Planes = groupReport(g)
		} else {
			rep.Lines = groupReport(g)
		}
	}
	if rep.Planes == nil && rep.Lines == nil {
		return fail(fmt.Errorf("%s: no %s to summarise", in.file, c.of))
	}
	out, closeOut, err := orientOut(env, c.out)
	if err != nil {
		return fail(err)
	}
	enc := json.NewEncoder(out)
	enc.SetIndent("", "  ")
	enc.SetEscapeHTML(false)
	if err := enc.Encode(rep); err != nil {
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
