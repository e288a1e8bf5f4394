package cli

import (
	"errors"
	"flag"
	"fmt"
	"math"
	"strconv"
	"strings"

	"corvane/internal/csvio"
	"corvane/internal/dirstat"
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

// geoSets are the sets of a geotechnical command: the planes' group (poles,
// set assignment by --sets/--set) over all rows, and the row index of each
// pole.
type geoSets struct {
	in      *orientInput
	group   *orientGroup
	setOf   map[int]int      // row index -> set index (planes only)
	windows []dirstat.Window // the --set windows, nil for automatic sets
}

// loadGeoSets reads the rows (with depth, alpha, rock type and unoriented
// rows) and forms sets on the planes' poles as stats does.
func loadGeoSets(env *Env, c *orientFlags, needSets bool) (*geoSets, error) {
	so, err := c.setOptions()
	if err != nil {
		return nil, err
	}
	if needSets && so.auto == 0 && len(so.windows) == 0 {
		return nil, errors.New("give sets with --sets auto:N or --set NAME:TREND/PLUNGE:CONE")
	}
	in, err := loadOrientationsWith(env, c.in, c.typ, csvio.OrientationOptions{Geotech: true})
	if err != nil {
		return nil, err
	}
	g := buildGroup(in, "planes", weightingSpec{})
	gs := &geoSets{in: in, group: g, setOf: map[int]int{}}
	if so.auto == 0 {
		gs.windows = so.windows
	}
	if len(g.axes) > 0 && (so.auto > 0 || len(so.windows) > 0) {
		if err := g.assignSets(so); err != nil {
			return nil, err
		}
		for k, ri := range g.rows {
			gs.setOf[ri] = g.assign[k]
		}
	}
	if needSets && len(g.axes) == 0 {
		return nil, fmt.Errorf("%s: no oriented planes to form sets from", in.file)
	}
	return gs, nil
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
