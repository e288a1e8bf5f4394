package service

import (
	"context"
	"io"
	"slices"
	"strings"

	"corvane/internal/dirstat"
	"corvane/internal/domain"
	"corvane/internal/fabric"
	"corvane/internal/geotech"
	"corvane/internal/kinematic"
	"corvane/internal/netsvg"
	"corvane/internal/projection"
	"corvane/internal/spacing"
	"corvane/internal/structdomain"
)

// The geotechnical reports (core intervals, spacing, domains, slope checks)
// run package geotech exactly as the corvane intervals, spacing, domains and
// slope-check commands do, on the stored measurements and core intervals;
// the options are those of the commands.

// Bounds of the geotechnical options.
const (
	MaxDomains = 20   // domains in one request
	MaxCap     = 100. // largest Terzaghi cap
)

// GeoQuery selects the measurements of a geotechnical report and its sets
// and domains (each in the form of structdomain.Syntax).
type GeoQuery struct {
	MeasurementQuery
	SetQuery
	Domains []string
}

// SpacingQuery is the spacing report's query: the options of corvane
// spacing. Cap nil means the default Terzaghi cap.
type SpacingQuery struct {
	GeoQuery
	Cap    *float64
	Values bool
}

// SlopeQuery is the slope check's query: the options of corvane
// slope-check. Face is DIP/DIP_DIRECTION; Lateral nil means the default.
// Domain, when not "", checks one structural domain (structdomain.Syntax)
// as corvane slope-check --domain does: sets formed on every measurement
// passing the filter, only the domain's checked (see geotech.Slope); the
// GeoQuery's Domains are not used. Stored measurements carry no rock type,
// so a domain of rock types has nothing to check.
type SlopeQuery struct {
	GeoQuery
	Face     string
	Friction float64
	Lateral  *float64
	Domain   string
}

// geotechRow is the geotechnical pipeline's row for a derived measurement:
// the statistics' row (fabricRow) with hole, depth and alpha. A row with a
// hole direction and no plane (no beta, or a vertical hole) is unoriented,
// the rule csvio applies to the files the commands read.
func geotechRow(m *storedRow, fr fabric.Row) geotech.Row {
	return geotech.Row{HoleID: m.Hole, Depth: m.Depth, Type: m.TypeCode, HasPlane: fr.HasPlane, Plane: fr.Plane,
		HasHole: fr.HasHole, Hole: fr.Hole, Alpha: m.Alpha, Unoriented: !fr.HasPlane && fr.HasHole,
		NoAzimuth: fr.NoAzimuth, Error: fr.Error}
}

// geoInput derives the measurements passing q as the pipeline's input.
func (s *Service) geoInput(ctx context.Context, projectID int64, q MeasurementQuery) (domain.Project, geotech.Input, error) {
	var in geotech.Input
	p, err := s.eachRow(ctx, projectID, q, nil, func(m *storedRow, r fabric.Row) {
		in.Rows = append(in.Rows, geotechRow(m, r))
	})
	return p, in, err
}

// setsAndInput parses q's set options and derives the measurements passing
// its filter.
func (s *Service) setsAndInput(ctx context.Context, projectID int64, q GeoQuery) (fabric.Sets, geotech.Input, error) {
	sets, err := q.SetQuery.parse()
	if err != nil {
		return sets, geotech.Input{}, err
	}
	_, in, err := s.geoInput(ctx, projectID, q.MeasurementQuery)
	return sets, in, err
}

// parseDomains reads the domain parameters and checks them together.
func parseDomains(ss []string) ([]structdomain.Domain, error) {
	if len(ss) > MaxDomains {
		return nil, domain.FieldErr("domain", "at most %d domains, got %d", MaxDomains, len(ss))
	}
	var ds []structdomain.Domain
	for _, s := range ss {
		d, err := structdomain.Parse(s)
		if err != nil {
			return nil, domain.FieldErr("domain", "domain %v", err)
		}
		ds = append(ds, d)
	}
	if err := structdomain.Validate(ds); err != nil {
		return nil, domain.FieldErr("domain", "%v", err)
	}
	return ds, nil
}

// geoFail makes a pipeline error about the request's options Invalid.
func geoFail(err error) error {
	if err == nil {
		return nil
	}
	if _, ok := err.(*domain.Error); ok {
		return err
	}
	return domain.Errorf(domain.Invalid, "%v", err)
}

// holesOf returns the project's holes named in names (all when none), in
// id order; an unknown name is NotFound.
func holesOf(ctx context.Context, st domain.Store, projectID int64, names []string) ([]domain.Hole, error) {
	if len(names) > 0 {
		var hs []domain.Hole
		for _, n := range names {
			h, err := st.GetHoleByName(ctx, projectID, n)
			if err != nil {
				return nil, err
			}
			hs = append(hs, h)
		}
		slices.SortFunc(hs, func(a, b domain.Hole) int { return int(a.ID - b.ID) })
		return slices.CompactFunc(hs, func(a, b domain.Hole) bool { return a.ID == b.ID }), nil
	}
	var hs []domain.Hole
	pg := domain.Page{Limit: domain.MaxLimit}
	for {
		page, err := st.ListHoles(ctx, projectID, pg)
		if err != nil {
			return nil, err
		}
		hs = append(hs, page...)
		if len(page) < domain.MaxLimit {
			return hs, nil
		}
		pg.After = page[len(page)-1].ID
	}
}

// storedIntervals returns the core intervals of the holes (by name, in
// hole order, by depth within a hole).
func storedIntervals(ctx context.Context, st domain.Store, hs []domain.Hole) ([]geotech.IntervalRow, error) {
	var rows []geotech.IntervalRow
	for _, h := range hs {
		ivs, err := st.ListCoreIntervals(ctx, h.ID)
		if err != nil {
			return nil, err
		}
		for _, iv := range ivs {
			rows = append(rows, geotech.IntervalRow{HoleID: h.Name, Interval: interval(iv)})
		}
	}
	return rows, nil
}

// IntervalsReport derives TCR, SCR, RQD and fracture frequency of the
// stored core intervals of the holes named (all when none) (read), as
// corvane intervals does; a project in feet uses the 0.328 ft threshold.
func (s *Service) IntervalsReport(ctx context.Context, projectID int64, holes []string) (geotech.IntervalsReport, error) {
	var rep geotech.IntervalsReport
	err := s.store.Snapshot(ctx, func(ctx context.Context, st domain.Store) error {
		p, _, err := s.project(ctx, st, projectID, domain.RoleRead)
		if err != nil {
			return err
		}
		hs, err := holesOf(ctx, st, projectID, holes)
		if err != nil {
			return err
		}
		rows, err := storedIntervals(ctx, st, hs)
		if err != nil {
			return err
		}
		rep = geotech.Intervals(rows, p.LengthUnit == domain.UnitFoot)
		rep.Input = "core intervals of all holes"
		if len(holes) > 0 {
			rep.Input = "core intervals of holes " + strings.Join(holes, ", ")
		}
		return nil
	})
	return rep, err
}

// Spacing reports set spacing and frequency per domain of the measurements
// passing q (read), as corvane spacing does; the logged lengths are the
// stored core intervals of the holes measured, when any.
func (s *Service) Spacing(ctx context.Context, projectID int64, q SpacingQuery) (geotech.SpacingReport, error) {
	o := geotech.SpacingOptions{Cap: dirstat.DefaultTerzaghiCap, Values: q.Values}
	if q.Cap != nil {
		if !(*q.Cap >= 1 && *q.Cap <= MaxCap) {
			return geotech.SpacingReport{}, domain.FieldErr("cap", "cap %v: want a Terzaghi cap from 1 to %v", *q.Cap, MaxCap)
		}
		o.Cap = *q.Cap
	}
	var err error
	if o.Sets, err = q.SetQuery.parse(); err != nil {
		return geotech.SpacingReport{}, err
	}
	if o.Domains, err = parseDomains(q.Domains); err != nil {
		return geotech.SpacingReport{}, err
	}
	_, in, err := s.geoInput(ctx, projectID, q.MeasurementQuery)
	if err != nil {
		return geotech.SpacingReport{}, err
	}
	hs, err := holesOf(ctx, s.store, projectID, q.Holes)
	if err != nil {
		return geotech.SpacingReport{}, err
	}
	ivs, err := storedIntervals(ctx, s.store, hs)
	if err != nil {
		return geotech.SpacingReport{}, err
	}
	for _, r := range ivs {
		o.Extents = append(o.Extents, spacing.Extent{Hole: r.HoleID, From: r.Interval.From, To: r.Interval.To})
	}
	if err := ctx.Err(); err != nil {
		return geotech.SpacingReport{}, err
	}
	rep, err := geotech.Spacing(in, o)
	if err != nil {
		return rep, geoFail(err)
	}
	rep.Input, rep.TypeFilter = describe(q.MeasurementQuery), strings.Join(q.Types, ",")
	if len(ivs) > 0 {
		rep.Intervals = "stored core intervals"
	}
	return rep, nil
}

// Domains reports each set per structural domain with the common-mean test
// (read), as corvane domains does; at least one domain is needed.
func (s *Service) Domains(ctx context.Context, projectID int64, q GeoQuery) (geotech.DomainsReport, error) {
	sets, err := q.SetQuery.parse()
	if err != nil {
		return geotech.DomainsReport{}, err
	}
	doms, err := parseDomains(q.Domains)
	if err != nil {
		return geotech.DomainsReport{}, err
	}
	if len(doms) == 0 {
		return geotech.DomainsReport{}, domain.FieldErr("domain", "give at least one domain (two or more for the common-mean test)")
	}
	_, in, err := s.geoInput(ctx, projectID, q.MeasurementQuery)
	if err != nil {
		return geotech.DomainsReport{}, err
	}
	rep, err := geotech.Domains(in, sets, doms)
	if err != nil {
		return rep, geoFail(err)
	}
	rep.Input, rep.TypeFilter = describe(q.MeasurementQuery), strings.Join(q.Types, ",")
	return rep, nil
}

// params checks the face, friction angle and lateral limit.
func (q SlopeQuery) params() (kinematic.Params, error) {
	face, err := kinematic.ParseFace(q.Face)
	if err != nil {
		return kinematic.Params{}, domain.FieldErr("face", "face %v", err)
	}
	p := kinematic.Params{Face: face, Friction: q.Friction, Lateral: kinematic.DefaultLateral}
	if q.Lateral != nil {
		p.Lateral = *q.Lateral
	}
	if err := p.Validate(); err != nil {
		field := "friction"
		if strings.HasPrefix(err.Error(), "lateral") {
			field = "lateral"
		}
		return p, domain.FieldErr(field, "%v", err)
	}
	return p, nil
}

// SlopeCheck counts the poles and set intersections in the critical zones
// of planar sliding, wedge sliding, flexural and direct toppling for a face
// (read), as corvane slope-check does. The report carries the caution:
// kinematically possible is not unstable.
func (s *Service) SlopeCheck(ctx context.Context, projectID int64, q SlopeQuery) (geotech.SlopeReport, error) {
	p, err := q.params()
	if err != nil {
		return geotech.SlopeReport{}, err
	}
	dom, err := oneDomain(q.Domain)
	if err != nil {
		return geotech.SlopeReport{}, err
	}
	sets, in, err := s.setsAndInput(ctx, projectID, q.GeoQuery)
	if err != nil {
		return geotech.SlopeReport{}, err
	}
	rep, err := geotech.Slope(in, p, sets, dom)
	if err != nil {
		return rep, geoFail(err)
	}
	rep.Input, rep.TypeFilter = describe(q.MeasurementQuery), strings.Join(q.Types, ",")
	return rep, nil
}

// SpacingNet writes the net of corvane spacing --svg to w (read): the poles
// by set, the set means with their 95% cones, and each unoriented
// measurement's cone of possible poles as a dashed small circle.
func (s *Service) SpacingNet(ctx context.Context, projectID int64, q GeoQuery, w io.Writer) error {
	sets, in, err := s.setsAndInput(ctx, projectID, q)
	if err != nil {
		return err
	}
	n, err := geotech.UnorientedNet(in, sets, projection.EqualArea, describe(q.MeasurementQuery))
	if err != nil {
		return geoFail(err)
	}
	return netsvg.WriteNet(w, n)
}

// SlopeNet writes the net of one check (one of geotech.SlopeChecks) with
// its critical zone shaded, as corvane slope-check --svg does, to w (read).
// The net carries the caution.
func (s *Service) SlopeNet(ctx context.Context, projectID int64, q SlopeQuery, check, proj string, w io.Writer) error {
	i := slices.Index(geotech.SlopeChecks, check)
	if i < 0 {
		return domain.FieldErr("check", "check %q: want one of %s", check, strings.Join(geotech.SlopeChecks, ", "))
	}
	if proj == "" {
		proj = "equal-area"
	}
	kind, err := projection.Parse(proj)
	if err != nil {
		return domain.FieldErr("projection", "%v", err)
	}
	p, err := q.params()
	if err != nil {
		return err
	}
	dom, err := oneDomain(q.Domain)
	if err != nil {
		return err
	}
	sets, in, err := s.setsAndInput(ctx, projectID, q.GeoQuery)
	if err != nil {
		return err
	}
	nets, err := geotech.SlopeNets(in, p, sets, dom, kind, describe(q.MeasurementQuery))
	if err != nil {
		return geoFail(err)
	}
	return netsvg.WriteNet(w, nets[i])
}
