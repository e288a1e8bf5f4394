// Package geotech is the one pipeline for the geotechnical reports on
// logged core: core intervals ([Intervals]: recovery, RQD, fracture
// frequency), set spacing and frequency per domain ([Spacing]), set
// statistics per structural domain with the common-mean test ([Domains])
// and kinematic checks against a face ([Slope], [SlopeNets]). Every door —
// the `corvane intervals`, `spacing`, `domains` and `slope-check` commands,
// and the service's routes when they come — builds [Row]s, calls the same
// function and writes the report it returns, so the same measurements give
// the same JSON and the same nets everywhere.
//
// Sets are formed on the poles of the planes by fabric.PlaneSets, the
// statistics' own grouping. Data rules (README, "Data rules"): a row with
// alpha and a hole direction but no plane is an unoriented measurement
// (counted in frequency and spacing, never in set means or slope checks); a
// row that could not be oriented is skipped and counted under the
// statistics' reasons.
//
// geotech is pure: it imports the standard library and corvane's math
// packages only.
package geotech

import (
	"errors"
	"fmt"
	"math"

	"corvane/internal/dirstat"
	"corvane/internal/fabric"
	"corvane/internal/geom"
	"corvane/internal/structdomain"
)

// RockMassCaution goes with the interval and spacing reports.
const RockMassCaution = "Recovery, RQD, frequency and spacing describe the core as logged; they depend on " +
	"drilling, handling and logging practice. Where they feed rock-mass classification or excavation and " +
	"slope design, base any design on local codes and the judgement of a licensed practitioner."

// Row is one logged structure.
type Row struct {
	HoleID   string
	Depth    float64 // measured depth; NaN when unknown
	Type     string  // type code, "" when none
	RockType string  // rock type, "" when none

	HasPlane bool
	Plane    geom.Plane

	HasHole bool
	Hole    geom.Vec3 // down-hole unit vector at the depth

	// Alpha is the core angle (NaN when unknown). Unoriented is true for a
	// row with alpha and a hole direction but no plane.
	Alpha      float64
	Unoriented bool

	// NoAzimuth and Error as in fabric.Row: a dip without a dip direction
	// (vertical hole), or why the row could not be oriented.
	NoAzimuth bool
	Error     string
}

// Input is what a door hands to the pipeline.
type Input struct {
	Rows []Row
	// Rejected counts rows the door could not read (it reports them itself).
	Rejected int
}

// Source describes a report's input. The pipeline fills the counts; the
// door fills Input, TypeFilter and Problems (the rows it could not read,
// located).
type Source struct {
	Input        string             `json:"input"`
	TypeFilter   string             `json:"type_filter,omitempty"`
	Rows         int                `json:"rows"`
	RowsSkipped  []fabric.SkipCount `json:"rows_skipped"`
	RowsRejected int                `json:"rows_rejected"`
	Problems     []string           `json:"problems,omitempty"`
}

func (in Input) source() Source {
	return Source{Rows: len(in.Rows), RowsSkipped: in.Skipped(), RowsRejected: in.Rejected}
}

// Skipped counts the rows that carry neither a plane nor an unoriented
// measurement, by the statistics' reasons.
func (in Input) Skipped() []fabric.SkipCount {
	n := map[string]int{}
	for _, r := range in.Rows {
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

// ErrNoSets is returned by reports that need sets when none are given.
var ErrNoSets = errors.New("give sets (automatic, by type code or by windows)")

// sets are the poles of the input's planes and their sets.
type sets struct {
	axes    []geom.Vec3
	rows    []int // index into Input.Rows
	assign  []int // set per pole, dirstat.Unassigned for none
	names   []string
	method  string
	windows []dirstat.Window // the windows when sets came from windows
	setOf   map[int]int      // row index -> set
}

func formSets(in Input, s fabric.Sets, need bool) (*sets, error) {
	if need && s.Auto == 0 && !s.ByType && len(s.Windows) == 0 {
		return nil, ErrNoSets
	}
	frows := make([]fabric.Row, len(in.Rows))
	for i, r := range in.Rows {
		frows[i] = fabric.Row{Type: r.Type, HasPlane: r.HasPlane, Plane: r.Plane}
	}
	assign, names, method, err := fabric.PlaneSets(frows, s)
	if err != nil {
		return nil, err
	}
	g := &sets{names: names, method: method, setOf: map[int]int{}}
	if len(s.Windows) > 0 {
		g.windows = s.Windows
	}
	for i, r := range in.Rows {
		if r.HasPlane {
			g.axes = append(g.axes, r.Plane.Normal())
			g.rows = append(g.rows, i)
			g.assign = append(g.assign, assign[i])
			g.setOf[i] = assign[i]
		}
	}
	if need && len(g.axes) == 0 {
		return nil, errors.New("no oriented planes to form sets from")
	}
	return g, nil
}

// members returns the poles of set j whose rows satisfy keep (nil: all).
func (g *sets) members(j int, keep func(row int) bool) []geom.Vec3 {
	var vs []geom.Vec3
	for k, a := range g.assign {
		if a == j && (keep == nil || keep(g.rows[k])) {
			vs = append(vs, g.axes[k])
		}
	}
	return vs
}

func (g *sets) setOfRow(i int) int {
	if s, ok := g.setOf[i]; ok {
		return s
	}
	return dirstat.Unassigned
}

// inDomain reports whether r belongs to dom (nil: every row).
func inDomain(r Row, dom *structdomain.Domain) bool {
	if dom == nil {
		return true
	}
	return !math.IsNaN(r.Depth) && dom.Contains(r.HoleID, r.Depth, r.RockType)
}

// FitAngle95 is the angle from a Fisher mean that holds about 95% of the
// distribution, 140/sqrt(k) degrees (from P(theta < a) = 1 - exp(-k(1 -
// cos a)) for large k), at most 90: the angle within which an unoriented
// measurement's cone must pass an automatic set's mean to be counted in it.
func FitAngle95(k float64) float64 {
	if !(k > 0) {
		return 90
	}
	return math.Min(90, 140/math.Sqrt(k))
}

func numPtr(v float64) *fabric.Num { n := fabric.Num(v); return &n }

func planeMean(v geom.Vec3) *fabric.Mean {
	pl, ml := geom.PlaneOf(v), geom.LineOf(v)
	return &fabric.Mean{Dip: numPtr(pl.Dip), DipDirection: numPtr(pl.DipDirection), PoleTrend: numPtr(ml.Trend), PolePlunge: numPtr(ml.Plunge)}
}

func wrap(what string, err error) error { return fmt.Errorf("%s: %w", what, err) }
