package cli

import (
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
	"corvane/internal/fabric"
	"corvane/internal/geom"
	"corvane/internal/structdomain"
)

// domainFlags collects repeated --domain NAME=HOLE[:FROM..TO],...[;rock=A|B].
type domainFlags []structdomain.Domain

func (d *domainFlags) String() string { return fmt.Sprint(len(*d), " domains") }

const domainSyntax = "NAME=HOLE[:FROM..TO][,HOLE[:FROM..TO]...][;rock=TYPE|TYPE...]"

func (d *domainFlags) Set(s string) error {
	name, rest, ok := strings.Cut(s, "=")
	if !ok || strings.TrimSpace(name) == "" || strings.TrimSpace(rest) == "" {
		return fmt.Errorf("%q: want %s", s, domainSyntax)
	}
	dom := structdomain.Domain{Name: strings.TrimSpace(name)}
	parts, rock, hasRock := strings.Cut(rest, ";")
	if hasRock {
		r, ok := strings.CutPrefix(strings.TrimSpace(rock), "rock=")
		if !ok || strings.TrimSpace(r) == "" {
			return fmt.Errorf("%q: %q: want rock=TYPE|TYPE...", s, rock)
		}
		for _, t := range strings.Split(r, "|") {
			dom.RockTypes = append(dom.RockTypes, strings.TrimSpace(t))
		}
	}
	for _, p := range strings.Split(parts, ",") {
		hole, rng, hasRange := strings.Cut(strings.TrimSpace(p), ":")
		part := structdomain.Part{Hole: strings.TrimSpace(hole), From: 0, To: math.Inf(1)}
		if hasRange {
			a, b, ok := strings.Cut(rng, "..")
			from, e1 := strconv.ParseFloat(strings.TrimSpace(a), 64)
			to, e2 := strconv.ParseFloat(strings.TrimSpace(b), 64)
			if !ok || e1 != nil || e2 != nil {
				return fmt.Errorf("%q: depth range %q: want FROM..TO", s, rng)
			}
			part.From, part.To = from, to
		}
		dom.Parts = append(dom.Parts, part)
	}
	all := append(append([]structdomain.Domain(nil), *d...), dom)
	if err := structdomain.Validate(all); err != nil {
		return err
	}
	*d = all
	return nil
}

// geoInput is the rows of a geotechnical command's input after --type
// filtering, with depth, alpha, rock type and unoriented rows.
type geoInput struct {
	file     string
	rows     []csvio.OrientationRow
	problems []*domain.Error
}

// planeGroup is the poles of the input's planes and their sets.
type planeGroup struct {
	axes     []geom.Vec3
	rows     []int // index into geoInput.rows
	assign   []int // set per pole, dirstat.Unassigned for none
	setNames []string
	method   string
}

// members returns the poles of set j.
func (g *planeGroup) members(j int) []geom.Vec3 {
	var vs []geom.Vec3
	for k, a := range g.assign {
		if a == j {
			vs = append(vs, g.axes[k])
		}
	}
	return vs
}

// geoSets are the sets of a geotechnical command: the planes' group (poles,
// set assignment by --sets/--set) over all rows.
type geoSets struct {
	in      *geoInput
	group   *planeGroup
	setOf   map[int]int      // row index -> set index (planes only)
	windows []dirstat.Window // the --set windows, nil for other set methods
}

// readTypedRows reads path ("-" for standard input) with opt and returns
// the rows of type typ (all when typ is empty) and the problems, which are
// also written to stderr.
func readTypedRows(env *Env, path, typ string, opt csvio.OrientationOptions) ([]csvio.OrientationRow, []*domain.Error, error) {
	if path == "" {
		return nil, nil, errors.New("--in FILE is required")
	}
	r, closeIn, err := openInput(env, path)
	if err != nil {
		return nil, nil, err
	}
	defer closeIn()
	rows, problems, err := csvio.ReadOrientationsWith(r, path, opt)
	if err != nil {
		return nil, nil, err
	}
	for _, p := range problems {
		fmt.Fprintf(env.Stderr, "corvane: %v (row skipped)\n", p)
	}
	kept := rows[:0]
	for _, row := range rows {
		if typ == "" || strings.EqualFold(row.Type, typ) {
			kept = append(kept, row)
		}
	}
	if len(kept) == 0 {
		if typ != "" {
			return nil, nil, fmt.Errorf("%s: no usable rows of type %q", path, typ)
		}
		return nil, nil, fmt.Errorf("%s: no usable rows", path)
	}
	return kept, problems, nil
}

// loadGeoInput reads the rows of a geotechnical command: with depth,
// alpha, rock type and unoriented rows.
func loadGeoInput(env *Env, path, typ string) (*geoInput, error) {
	rows, problems, err := readTypedRows(env, path, typ, csvio.OrientationOptions{Geotech: true})
	if err != nil {
		return nil, err
	}
	return &geoInput{file: path, rows: rows, problems: problems}, nil
}

// loadGeoSets reads the rows and forms sets on the planes' poles with
// fabric.PlaneSets, the statistics' own grouping.
func loadGeoSets(env *Env, c *orientFlags, needSets bool) (*geoSets, error) {
	so, err := fabric.ParseSets(c.sets, "planes", c.windows, c.seed)
	if err != nil {
		return nil, cliOptionError(err)
	}
	if needSets && so.Auto == 0 && !so.ByType && len(so.Windows) == 0 {
		return nil, errors.New("give sets with --sets auto:N, --sets type or --set NAME:TREND/PLUNGE:CONE")
	}
	in, err := loadGeoInput(env, c.in, c.typ)
	if err != nil {
		return nil, err
	}
	frows := make([]fabric.Row, len(in.rows))
	for i, r := range in.rows {
		frows[i] = fabric.Row{Type: r.Type, HasPlane: r.HasPlane, Plane: r.Plane}
	}
	assign, names, method, err := fabric.PlaneSets(frows, so)
	if err != nil {
		return nil, cliOptionError(err)
	}
	g := &planeGroup{setNames: names, method: method}
	gs := &geoSets{in: in, group: g, setOf: map[int]int{}}
	if len(so.Windows) > 0 {
		gs.windows = so.Windows
	}
	for i, r := range in.rows {
		if r.HasPlane {
			g.axes = append(g.axes, r.Plane.Normal())
			g.rows = append(g.rows, i)
			g.assign = append(g.assign, assign[i])
			gs.setOf[i] = assign[i]
		}
	}
	if needSets && len(g.axes) == 0 {
		return nil, fmt.Errorf("%s: no oriented planes to form sets from", in.file)
	}
	return gs, nil
}

// numPtr returns a pointer to v as a report number.
func numPtr(v float64) *fabric.Num { n := fabric.Num(v); return &n }

// writeJSON writes v as indented JSON to path (standard output when "").
func writeJSON(env *Env, fail func(error) int, path string, v any) int {
	err := writeOutputOr(env.Stdout, path, func(w io.Writer) error {
		enc := json.NewEncoder(w)
		enc.SetIndent("", "  ")
		enc.SetEscapeHTML(false)
		return enc.Encode(v)
	})
	if err != nil {
		return fail(err)
	}
	return ExitOK
}

// setOfRow returns the set of row i (dirstat.Unassigned when none).
func (gs *geoSets) setOfRow(i int) int {
	if s, ok := gs.setOf[i]; ok {
		return s
	}
	return dirstat.Unassigned
}

// inDomain reports whether row i belongs to dom (nil: every row).
func (gs *geoSets) inDomain(i int, dom *structdomain.Domain) bool {
	if dom == nil {
		return true
	}
	r := gs.in.rows[i]
	return !math.IsNaN(r.Depth) && dom.Contains(r.HoleID, r.Depth, r.RockType)
}

// fitAngle95 is the angle from a Fisher mean that holds about 95% of the
// distribution, 140/sqrt(k) degrees (from P(theta < a) = 1 - exp(-k(1 - cos a))),
// at most 90.
func fitAngle95(k float64) float64 {
	if !(k > 0) {
		return 90
	}
	return math.Min(90, 140/math.Sqrt(k))
}

// parseFace parses DIP/DIPDIRECTION.
func parseFace(s string) (geom.Plane, error) {
	a, b, ok := strings.Cut(s, "/")
	dip, e1 := strconv.ParseFloat(strings.TrimSpace(a), 64)
	dd, e2 := strconv.ParseFloat(strings.TrimSpace(b), 64)
	if !ok || e1 != nil || e2 != nil || !(dip > 0 && dip <= 90) || !(dd >= 0 && dd <= 360) {
		return geom.Plane{}, fmt.Errorf("--face %q: want DIP/DIP_DIRECTION with 0 < dip <= 90 and dip direction 0..360", s)
	}
	return geom.Plane{Dip: dip, DipDirection: geom.NormAzimuth(dd)}, nil
}

// registerDomainFlags adds --domain.
func registerDomainFlags(fs *flag.FlagSet, d *domainFlags) {
	fs.Var(d, "domain", "a structural domain "+domainSyntax+" (repeatable; a hole without a range is the whole hole)")
}

// skipped counts the rows that carry neither a plane nor an unoriented
// measurement, by the statistics' reasons (README, "Data rules").
func (in *geoInput) skipped() []fabric.SkipCount {
	n := map[string]int{}
	for _, r := range in.rows {
		switch {
		case r.HasPlane || r.Unoriented:
		case r.Error != "":
			n[fabric.SkipNotOriented]++
		case r.NoAzimuth:
			n[fabric.SkipNoDipDirection]++
		}
	}
	out := []fabric.SkipCount{}
	for _, why := range []string{fabric.SkipNoDipDirection, fabric.SkipNotOriented} {
		if n[why] > 0 {
			out = append(out, fabric.SkipCount{Reason: why, Count: n[why]})
		}
	}
	return out
}

// openInput opens path for reading, standard input for "-"; the function
// returned closes it.
func openInput(env *Env, path string) (io.Reader, func(), error) {
	if path == "-" {
		return env.Stdin, func() {}, nil
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, nil, err
	}
	return f, func() { f.Close() }, nil
}
