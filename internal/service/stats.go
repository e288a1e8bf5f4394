package service

import (
	"context"
	"fmt"
	"io"
	"math"
	"sort"
	"strings"

	"corvane/internal/density"
	"corvane/internal/dirstat"
	"corvane/internal/domain"
	"corvane/internal/geom"
	"corvane/internal/netsvg"
	"corvane/internal/projection"
)

// MaxStatsMeasurements bounds the measurements one statistics or net request
// may gather; narrow the filter beyond that.
const MaxStatsMeasurements = 200000

// Caution is shown with statistics and nets: they may feed design work.
const Caution = "Statistics and nets summarise the stored measurements; they are only as good as the " +
	"orientation marks, surveys and logging behind them. Where they feed slope or excavation design, " +
	"check the warnings and QA findings and base any design on local codes and the judgement of a licensed practitioner."

// StatsQuery selects the measurements and how to group them.
type StatsQuery struct {
	MeasurementQuery
	// Sets > 0 groups the poles into that many sets by k-means on axes
	// (dirstat.ClusterAxes, seed 1); 0 groups by type code.
	Sets int
	// Weighting adds Terzaghi (1965) weighted statistics beside the
	// unweighted ones, w = 1/|cos delta| capped at TerzaghiCap (0 means
	// dirstat.DefaultTerzaghiCap: delta <= 70 degrees, Brady & Brown 2004
	// citing Goodman 1976).
	Weighting   bool
	TerzaghiCap float64
}

// TrendPlunge is an axis.
type TrendPlunge struct {
	Trend  float64 `json:"trend"`
	Plunge float64 `json:"plunge"`
}

// Summary is the statistics of one group of axes. Non-finite values (k of
// identical axes, shape measures of degenerate fabrics) are null.
type Summary struct {
	Count int `json:"count"`
	// MeanDip and MeanDipDirection: the plane of the mean pole (planes).
	MeanDip          *float64 `json:"mean_dip,omitempty"`
	MeanDipDirection *float64 `json:"mean_dip_direction,omitempty"`
	// MeanTrend and MeanPlunge: the mean axis (lines).
	MeanTrend  *float64 `json:"mean_trend,omitempty"`
	MeanPlunge *float64 `json:"mean_plunge,omitempty"`
	// R, K, Cone95 (degrees), Spread (angular standard deviation, degrees):
	// Fisher (1953) statistics of the axes (package dirstat).
	R      *float64 `json:"r"`
	K      *float64 `json:"k"`
	Cone95 *float64 `json:"cone95"`
	Spread *float64 `json:"spread"`
	// Eigenvalues S1 >= S2 >= S3 of the orientation tensor and their axes.
	Eigenvalues  [3]float64     `json:"eigenvalues"`
	Eigenvectors [3]TrendPlunge `json:"eigenvectors"`
	// Woodcock (1977) K and C, Vollmer (1990) P, G, R.
	ShapeK *float64 `json:"woodcock_k"`
	ShapeC *float64 `json:"woodcock_c"`
	ShapeP *float64 `json:"vollmer_p"`
	ShapeG *float64 `json:"vollmer_g"`
	ShapeR *float64 `json:"vollmer_r"`
}

// GroupStats is one group: a type code, or an automatic set.
type GroupStats struct {
	Name       string   `json:"name"`
	Kind       string   `json:"kind"` // "planes" (poles) or "lines"
	Unweighted Summary  `json:"unweighted"`
	Weighted   *Summary `json:"weighted,omitempty"`
}

// StatsResult is the statistics over a filter.
type StatsResult struct {
	AzimuthRef string `json:"azimuth_ref"`
	// Matched counts the measurements passing the filter; Skipped those with
	// no usable orientation (vertical hole, depth past the end, ...).
	Matched    int          `json:"matched"`
	Skipped    int          `json:"skipped"`
	Groups     []GroupStats `json:"groups"`
	Unassigned int          `json:"unassigned"`
	Method     string       `json:"method"`
	Caution    string       `json:"caution"`
}

type sample struct {
	axis, hole geom.Vec3
	typ        string
	dipDir     float64 // dip direction of a plane as derived (poles only)
}

// gather derives every measurement passing q and returns the poles and the
// lines with their hole directions.
func (s *Service) gather(ctx context.Context, projectID int64, q MeasurementQuery) (p domain.Project, poles, lines []sample, matched, skipped int, err error) {
	p, _, err = s.project(ctx, s.store, projectID, domain.RoleRead)
	if err != nil {
		return
	}
	f, err := filter(ctx, s.store, projectID, q)
	if err != nil {
		return
	}
	d := newDeriver(s.store, p)
	var after int64
	for {
		var ms []domain.Measurement
		ms, err = s.store.ListMeasurements(ctx, f, domain.Page{Limit: domain.MaxLimit, After: after})
		if err != nil {
			return
		}
		for _, m := range ms {
			matched++
			if matched > MaxStatsMeasurements {
				err = domain.Errorf(domain.Invalid, "more than %d measurements match: narrow the filter", MaxStatsMeasurements)
				return
			}
			var v MeasurementView
			if v, err = d.view(ctx, m); err != nil {
				return
			}
			dv := v.Derived
			if dv.DipDirection == nil || dv.HoleAzimuth == nil {
				skipped++
				continue
			}
			h := geom.HoleDirection(*dv.HoleAzimuth, *dv.HoleDip)
			pl := geom.Plane{Dip: *dv.Dip, DipDirection: *dv.DipDirection}
			poles = append(poles, sample{axis: pl.Normal(), hole: h, typ: m.TypeCode, dipDir: *dv.DipDirection})
			if dv.LineTrend != nil && dv.LinePlunge != nil {
				lines = append(lines, sample{axis: geom.FromTrendPlunge(*dv.LineTrend, *dv.LinePlunge), hole: h, typ: m.TypeCode})
			}
		}
		if len(ms) < domain.MaxLimit {
			return
		}
		after = ms[len(ms)-1].ID
	}
}

func fin(x float64) *float64 {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return nil
	}
	return &x
}

func summarise(vs []geom.Vec3, w []float64, planes bool) (Summary, error) {
	sm := Summary{Count: len(vs)}
	f, err := dirstat.FisherMean(vs, w, true)
	if err != nil {
		return sm, err
	}
	if planes {
		pl := geom.PlaneOf(f.Mean)
		sm.MeanDip, sm.MeanDipDirection = fin(pl.Dip), fin(pl.DipDirection)
	} else {
		l := geom.LineOf(f.Mean)
		sm.MeanTrend, sm.MeanPlunge = fin(l.Trend), fin(l.Plunge)
	}
	sm.R, sm.K, sm.Cone95, sm.Spread = fin(f.R), fin(f.K), fin(f.Cone95), fin(f.Spread)
	e, err := dirstat.Tensor(vs, w)
	if err != nil {
		return sm, err
	}
	sm.Eigenvalues = e.Values
	for i, v := range e.Vectors {
		l := geom.LineOf(v)
		sm.Eigenvectors[i] = TrendPlunge{Trend: l.Trend, Plunge: l.Plunge}
	}
	sh := dirstat.ShapeOf(e)
	sm.ShapeK, sm.ShapeC, sm.ShapeP, sm.ShapeG, sm.ShapeR = fin(sh.K), fin(sh.C), fin(sh.P), fin(sh.G), fin(sh.R)
	return sm, nil
}

// grouping assigns each sample a group name: its type code, or its k-means set.
func grouping(ss []sample, k int) (names []string, assign []int, err error) {
	assign = make([]int, len(ss))
	if k <= 0 {
		idx := map[string]int{}
		for i, s := range ss {
			j, ok := idx[s.typ]
			if !ok {
				j = len(names)
				idx[s.typ] = j
				names = append(names, s.typ)
			}
			assign[i] = j
		}
		return names, assign, nil
	}
	vs := make([]geom.Vec3, len(ss))
	for i, s := range ss {
		vs[i] = s.axis
	}
	c, err := dirstat.ClusterAxes(vs, nil, k, 8, 1)
	if err != nil {
		return nil, nil, domain.FieldErr("sets", "%v", err)
	}
	for j := range k {
		names = append(names, fmt.Sprintf("set %d", j+1))
	}
	return names, c.Assign, nil
}

// Statistics returns orientation statistics of the measurements passing q
// (read): per type code (or per automatic set) for poles of planes and for
// lineations, with Terzaghi-weighted values beside when asked.
func (s *Service) Statistics(ctx context.Context, projectID int64, q StatsQuery) (StatsResult, error) {
	var res StatsResult
	if q.Sets < 0 || q.Sets > 12 {
		return res, domain.FieldErr("sets", "sets must be 0 (by type) to 12, got %d", q.Sets)
	}
	wcap := q.TerzaghiCap
	if wcap == 0 {
		wcap = dirstat.DefaultTerzaghiCap
	}
	if wcap < 1 || math.IsNaN(wcap) || math.IsInf(wcap, 0) {
		return res, domain.FieldErr("terzaghi_cap", "terzaghi_cap must be a number >= 1, got %v", q.TerzaghiCap)
	}
	p, poles, lines, matched, skipped, err := s.gather(ctx, projectID, q.MeasurementQuery)
	if err != nil {
		return res, err
	}
	res = StatsResult{AzimuthRef: p.OutputAzimuthRef, Matched: matched, Skipped: skipped, Groups: []GroupStats{}, Caution: Caution,
		Method: "Fisher (1953) on axes; orientation tensor (Scheidegger 1965), Woodcock (1977), Vollmer (1990)"}
	if q.Sets > 0 {
		res.Method += fmt.Sprintf("; %d sets by %s, seed 1", q.Sets, dirstat.ClusterMethod)
	}
	if q.Weighting {
		res.Method += fmt.Sprintf("; Terzaghi (1965) weights capped at %.3f", wcap)
	}
	for _, kind := range []string{"planes", "lines"} {
		ss := poles
		k := q.Sets
		if kind == "lines" {
			ss, k = lines, 0 // lineations are grouped by type
		}
		if len(ss) == 0 {
			continue
		}
		names, assign, err := grouping(ss, k)
		if err != nil {
			return res, err
		}
		for j, name := range names {
			var vs []geom.Vec3
			var ws []float64
			for i, a := range assign {
				if a == j {
					vs = append(vs, ss[i].axis)
					ws = append(ws, dirstat.TerzaghiWeight(ss[i].axis, ss[i].hole, wcap))
				}
			}
			if len(vs) == 0 {
				continue
			}
			g := GroupStats{Name: name, Kind: kind}
			if g.Unweighted, err = summarise(vs, nil, kind == "planes"); err != nil {
				continue // a group with no mean direction is left out
			}
			if q.Weighting {
				if w, err := summarise(vs, ws, kind == "planes"); err == nil {
					g.Weighted = &w
				}
			}
			res.Groups = append(res.Groups, g)
		}
		for _, a := range assign {
			if a == dirstat.Unassigned {
				res.Unassigned++
			}
		}
	}
	sort.SliceStable(res.Groups, func(i, j int) bool {
		if res.Groups[i].Kind != res.Groups[j].Kind {
			return res.Groups[i].Kind == "planes"
		}
		return res.Groups[i].Name < res.Groups[j].Name
	})
	return res, nil
}

// NetQuery selects the measurements and what the net shows.
type NetQuery struct {
	MeasurementQuery
	// Projection is "equal-area" (default) or "equal-angle".
	Projection string
	// Density adds Kamb (1959) contours of the poles (of the lines when there
	// are no planes), in multiples of uniform density.
	Density bool
	// Planes draws great circles too.
	Planes bool
	Title  string
}

// Net writes an SVG net of the measurements passing q to w (read): poles
// and lineations marked by type code, each type's mean with its 95% cone,
// optional great circles and density contours.
func (s *Service) Net(ctx context.Context, projectID int64, q NetQuery, w io.Writer) error {
	proj := q.Projection
	if proj == "" {
		proj = "equal-area"
	}
	kind, err := projection.Parse(proj)
	if err != nil {
		return domain.FieldErr("projection", "%v", err)
	}
	p, poles, lines, matched, skipped, err := s.gather(ctx, projectID, q.MeasurementQuery)
	if err != nil {
		return err
	}
	n := netsvg.Net{Projection: kind, Title: q.Title, Caution: Caution}
	if n.Title == "" {
		n.Title = p.Name
	}
	n.Subtitle = describe(q.MeasurementQuery) + "; azimuths " + p.OutputAzimuthRef
	setIdx := map[string]int{}
	addSets := func(ss []sample, lines bool) {
		names, assign, _ := grouping(ss, 0)
		for j, name := range names {
			var vs []geom.Vec3
			for i, a := range assign {
				if a == j {
					vs = append(vs, ss[i].axis)
				}
			}
			sm := netsvg.SetMark{Name: name, Count: len(vs), Lines: lines}
			if f, err := dirstat.FisherMean(vs, nil, true); err == nil {
				sm.Mean, sm.Cone = f.Mean, f.Cone95
			} else {
				continue
			}
			key := name
			if lines {
				key, sm.Name = name+"\x00lines", name+" (lines)"
			}
			setIdx[key] = len(n.Sets)
			n.Sets = append(n.Sets, sm)
		}
	}
	addSets(poles, false)
	addSets(lines, true)
	set := func(key string) int {
		if i, ok := setIdx[key]; ok {
			return i
		}
		return -1
	}
	for _, sp := range poles {
		n.Poles = append(n.Poles, netsvg.Mark{Axis: sp.axis, Set: set(sp.typ)})
		if q.Planes {
			n.Planes = append(n.Planes, netsvg.PlaneMark{Plane: geom.PlaneOf(sp.axis), Set: set(sp.typ)})
		}
	}
	for _, sl := range lines {
		n.Lines = append(n.Lines, netsvg.Mark{Axis: sl.axis, Set: set(sl.typ + "\x00lines")})
	}
	n.Notes = append(n.Notes, fmt.Sprintf("%d measurements matched, %d poles, %d lines", matched, len(poles), len(lines)))
	if skipped > 0 {
		n.Notes = append(n.Notes, fmt.Sprintf("%d without a usable orientation", skipped))
	}
	if q.Density {
		src, of := poles, "poles"
		if len(src) == 0 {
			src, of = lines, "lines"
		}
		if len(src) > 0 {
			vs := make([]geom.Vec3, len(src))
			for i, sp := range src {
				vs[i] = sp.axis
			}
			e, err := density.New(density.Kamb, vs, nil)
			if err != nil {
				return domain.Errorf(domain.Invalid, "density: %v", err)
			}
			n.Density = netsvg.ContourGrid(kind, e, 160, false)
			n.Notes = append(n.Notes, fmt.Sprintf("Kamb density of %d %s", len(vs), of))
		}
	}
	return netsvg.WriteNet(w, n)
}

// describe says in words what a query selects.
func describe(q MeasurementQuery) string {
	var parts []string
	if len(q.Holes) > 0 {
		parts = append(parts, "holes "+strings.Join(q.Holes, ", "))
	}
	if len(q.Types) > 0 {
		parts = append(parts, "types "+strings.Join(q.Types, ", "))
	}
	if q.MinDepth != nil || q.MaxDepth != nil {
		lo, hi := "", ""
		if q.MinDepth != nil {
			lo = fmt.Sprint(*q.MinDepth)
		}
		if q.MaxDepth != nil {
			hi = fmt.Sprint(*q.MaxDepth)
		}
		parts = append(parts, "depth "+lo+".."+hi)
	}
	if q.LoggedFrom != nil || q.LoggedTo != nil {
		parts = append(parts, "logged in a date range")
	}
	if len(parts) == 0 {
		return "all measurements"
	}
	return strings.Join(parts, "; ")
}
