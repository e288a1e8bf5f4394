package service

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"strings"

	"corvane/internal/convert"
	"corvane/internal/dirstat"
	"corvane/internal/domain"
	"corvane/internal/fabric"
	"corvane/internal/geom"
	"corvane/internal/holemodel"
	"corvane/internal/netsvg"
	"corvane/internal/projection"
	"corvane/internal/structdomain"
	"corvane/internal/uncertainty"
)

// MaxStatsMeasurements bounds the measurements one statistics or net request
// may gather; narrow the filter beyond that.
const MaxStatsMeasurements = 200000

// SetQuery says how measurements are grouped into sets, in the words of
// [fabric.ParseSets] and [fabric.ParseWindow] (the options of corvane stats
// and net).
type SetQuery struct {
	Sets    string   // "", "none", "type" or "auto:N"
	Windows []string // NAME:TREND/PLUNGE:CONE
	SetsOn  string   // "", "planes", "lines" or "both"
	Seed    *uint64  // nil means fabric.DefaultSeed
}

// StatsQuery selects the measurements and how to summarise them; the fields
// are the options of corvane stats.
type StatsQuery struct {
	MeasurementQuery
	SetQuery
	Of        string // "both" (default), "planes" or "lines"
	Weighting string // "", "none", "terzaghi" or "terzaghi:CAP"
	// Uncertainty is "" or "true" (the sets carry the measurement errors of
	// the project's error model) or "false"; SetUncertainty the method
	// ("", first-order, monte-carlo, off): fabric.ParseSetUncertainty.
	Uncertainty    string
	SetUncertainty string
}

// optionErr turns a fabric option error into an Invalid error naming the
// query parameter.
func optionErr(err error) error {
	var oe *fabric.OptionError
	if errors.As(err, &oe) {
		return domain.FieldErr(oe.Option, "%v", oe)
	}
	return err
}

func (q SetQuery) parse() (fabric.Sets, error) {
	var ws []dirstat.Window
	for _, s := range q.Windows {
		w, err := fabric.ParseWindow(s, ws)
		if err != nil {
			return fabric.Sets{}, optionErr(err)
		}
		ws = append(ws, w)
	}
	seed := uint64(fabric.DefaultSeed)
	if q.Seed != nil {
		seed = *q.Seed
	}
	s, err := fabric.ParseSets(q.Sets, q.SetsOn, ws, seed)
	return s, optionErr(err)
}

func parseWeighting(s string) (fabric.Weighting, error) {
	w, err := fabric.ParseWeighting(s)
	return w, optionErr(err)
}

// gather orients every measurement passing q and returns them as rows of
// the statistics pipeline: a measurement whose orientation failed carries
// its error, one in a vertical hole (a dip without a dip direction) is
// marked so; package fabric decides what to do with them.
func (s *Service) gather(ctx context.Context, projectID int64, q MeasurementQuery) (p domain.Project, in fabric.Input, err error) {
	p, err = s.eachRow(ctx, projectID, q, func(n int) { in.Rows = make([]fabric.Row, 0, n) },
		func(_ *storedRow, r fabric.Row) { in.Rows = append(in.Rows, r) })
	return p, in, err
}

// eachRow orients every measurement passing q (read), at most
// MaxStatsMeasurements, and hands each to fn in id order with its row of
// the statistics pipeline; reserve, when not nil, is first told how many
// rows to expect (at most MaxStatsMeasurements + 1), so that a caller
// gathering the rows allocates once. A query over the whole project (no
// hole named) takes the project's kept rows (see projectRows), read from
// the store only when a measurement or anything of its hole models has
// changed since; a query naming holes reads those holes' rows.
func (s *Service) eachRow(ctx context.Context, projectID int64, q MeasurementQuery, reserve func(n int), fn func(m *storedRow, r fabric.Row)) (p domain.Project, err error) {
	p, _, err = s.project(ctx, s.store, projectID, domain.RoleRead)
	if err != nil {
		return
	}
	if err = q.withOutput(&p); err != nil {
		return
	}
	f, err := filter(ctx, s.store, projectID, q)
	if err != nil {
		return
	}
	tooMany := domain.Errorf(domain.Invalid, "more than %d measurements match: narrow the filter", MaxStatsMeasurements)
	if len(f.HoleIDs) == 0 {
		var pr *projectRows
		if pr, err = s.projectRows(ctx, p); err != nil {
			return
		}
		if pr != nil {
			n := 0
			for i := range pr.rows {
				if matches(&f, &pr.rows[i]) {
					n++
				}
			}
			if n > MaxStatsMeasurements {
				err = tooMany
				return
			}
			if reserve != nil {
				reserve(n)
			}
			for i := range pr.rows {
				if i%4096 == 0 && ctx.Err() != nil {
					err = ctx.Err()
					return
				}
				if matches(&f, &pr.rows[i]) {
					fn(&pr.rows[i], pr.fab[i])
				}
			}
			return
		}
	}
	if reserve != nil {
		var c int64
		if c, err = s.store.CountMeasurements(ctx, f); err != nil {
			return
		}
		reserve(int(min(c, MaxStatsMeasurements+1)))
	}
	n := 0
	err = s.orientStored(ctx, p, f, func(m *domain.Measurement, hole string, r fabric.Row) error {
		if n >= MaxStatsMeasurements {
			return tooMany
		}
		sr := storedRowOf(m, hole)
		fn(&sr, r)
		n++
		return nil
	})
	return
}

// rowErrors is the measurement errors, under the error model em, of the
// statistics row of a measurement at depth in the hole: its survey
// instrument and the run covering the depth, as the derived values give
// them (survey_instrument, run_confidence, run_mismatch, run_from: the
// columns corvane stats reads).
func (m *holeModel) rowErrors(em uncertainty.Model, depth float64) *fabric.Errors {
	conf, mismatch, from := "", math.NaN(), math.NaN()
	if run := m.runCovering(depth); run != nil {
		conf, from = run.Confidence, run.From
		if run.Mismatch != nil {
			mismatch = *run.Mismatch
		}
	}
	return fabric.RowErrors(em, m.name, string(convert.SurveyInstrument(m.Hole)), conf, mismatch, from)
}

// fabricRow is the pipeline's row of a measurement of type typ oriented as
// r, or not oriented for err. A value the orientation does not have (the dip
// direction in a vertical hole) is NaN in r, as it is null in [Derived].
func fabricRow(typ string, r *holemodel.Result, err error) fabric.Row {
	if err != nil {
		return fabric.Row{Type: typ, Error: err.Error()}
	}
	row := fabric.Row{Type: typ, Unoriented: r.Unoriented}
	if dip, dd := r.Plane.Dip, r.Plane.DipDirection; !math.IsNaN(dip) && !math.IsNaN(dd) {
		row.HasPlane, row.Plane = true, r.Plane
	} else if !math.IsNaN(dip) {
		row.NoAzimuth = true
	}
	if r.HasLine {
		if !math.IsNaN(r.Line.Trend) && !math.IsNaN(r.Line.Plunge) {
			row.HasLine, row.Line = true, r.Line
		} else if !math.IsNaN(r.Line.Plunge) {
			row.NoAzimuth = true
		}
	}
	if !math.IsNaN(r.HoleAzimuth) && !math.IsNaN(r.HoleDip) {
		row.HasHole, row.Hole = true, geom.HoleDirection(r.HoleAzimuth, r.HoleDip)
	}
	return row
}

// Statistics returns the statistics report of the measurements passing q
// (read), from the same pipeline as corvane stats (package fabric): all
// planes and lines, and each set, with Terzaghi-weighted values beside when
// asked. Measurements without a dip direction (vertical holes) or whose
// derivation failed are skipped and counted with the reason.
func (s *Service) Statistics(ctx context.Context, projectID int64, q StatsQuery) (fabric.Report, error) {
	sets, err := q.SetQuery.parse()
	if err != nil {
		return fabric.Report{}, err
	}
	w, err := parseWeighting(q.Weighting)
	if err != nil {
		return fabric.Report{}, err
	}
	if _, err := fabric.ParseOf(q.Of); err != nil {
		return fabric.Report{}, optionErr(err)
	}
	method, err := fabric.ParseSetUncertainty(q.SetUncertainty, q.Uncertainty)
	if err != nil {
		return fabric.Report{}, optionErr(err)
	}
	p, in, err := s.gather(ctx, projectID, q.MeasurementQuery)
	if err != nil {
		return fabric.Report{}, err
	}
	if err := ctx.Err(); err != nil {
		return fabric.Report{}, err
	}
	rep, err := fabric.Stats(in, fabric.Options{Of: q.Of, Sets: sets, Weighting: w, Uncertainty: method != fabric.SetUncertaintyOff, UncertaintyMethod: method, ErrorModel: p.ErrorModel})
	if err != nil {
		return fabric.Report{}, optionErr(err)
	}
	rep.Input, rep.TypeFilter, rep.AzimuthRef = describe(q.MeasurementQuery), strings.Join(q.Types, ","), p.OutputAzimuthRef
	return rep, nil
}

// NetQuery selects the measurements and what the net shows; the fields are
// the options of corvane net.
type NetQuery struct {
	MeasurementQuery
	SetQuery
	Weighting  string
	Projection string // "equal-area" (default) or "equal-angle"
	Show       string // fabric.ParseShow; "" means fabric.DefaultShow
	Density    string // "exponential" (default) or "kamb"
	Units      string // "mud" (default) or "sigma"
	Grid       int    // density grid nodes per side; 0 means fabric.DefaultGrid
	Title      string // default: the project's name
	// Domain, when not "", draws one structural domain (structdomain.Syntax)
	// as corvane net --domain does: sets formed on every measurement passing
	// the filter, only the domain's drawn. Stored measurements carry no rock
	// type, so a domain of rock types draws nothing.
	Domain string
	// Regions selects the measurements whose 95% uncertainty regions are
	// drawn (fabric.ParseRegions), with the project's error model.
	Regions string
}

// Net writes the SVG net of the measurements passing q to w (read), from
// the same pipeline as corvane net (package fabric).
func (s *Service) Net(ctx context.Context, projectID int64, q NetQuery, w io.Writer) error {
	o := fabric.NetOptions{Title: q.Title}
	var err error
	proj := q.Projection
	if proj == "" {
		proj = "equal-area"
	}
	if o.Projection, err = projection.Parse(proj); err != nil {
		return domain.FieldErr("projection", "%v", err)
	}
	if o.Show, err = fabric.ParseShow(q.Show); err != nil {
		return optionErr(err)
	}
	if o.Density, o.Sigma, o.Grid, err = fabric.ParseDensity(q.Density, q.Units, q.Grid); err != nil {
		return optionErr(err)
	}
	if o.Sets, err = q.SetQuery.parse(); err != nil {
		return err
	}
	if o.Weighting, err = parseWeighting(q.Weighting); err != nil {
		return err
	}
	if o.Regions, err = fabric.ParseRegions(q.Regions); err != nil {
		return optionErr(err)
	}
	dom, err := oneDomain(q.Domain)
	if err != nil {
		return err
	}
	if dom != nil {
		o.Part = &fabric.Part{Name: "domain " + dom.Name}
	}
	in, err := s.sheetWith(ctx, projectID, q.MeasurementQuery, &o.Title, &o.Source, &o.AzimuthRef, func(m *storedRow) {
		if dom != nil {
			o.Part.Keep = append(o.Part.Keep, dom.Contains(m.Hole, m.Depth, ""))
		}
	})
	if err != nil {
		return err
	}
	if err := ctx.Err(); err != nil {
		return err
	}
	vocab, err := s.store.ListTypeCodes(ctx, projectID)
	if err != nil {
		return err
	}
	o.TypeStyles = TypeStyles(vocab)
	n, err := fabric.Net(in, o)
	if err != nil {
		return optionErr(err)
	}
	if err := ctx.Err(); err != nil {
		return err
	}
	return netsvg.WriteNet(w, n)
}

// oneDomain reads the one structural domain of a net or a slope check
// (structdomain.Syntax; nil for ""), as their --domain options do.
func oneDomain(s string) (*structdomain.Domain, error) {
	if s == "" {
		return nil, nil
	}
	d, err := structdomain.ParseOne(s)
	if err != nil {
		return nil, domain.FieldErr("domain", "domain %v", err)
	}
	return &d, nil
}

// sheet gathers the measurements of a net or rose sheet and fills in its
// words: the title (the project's name unless one is given), the selection
// and the north reference of its azimuths.
func (s *Service) sheet(ctx context.Context, projectID int64, q MeasurementQuery, title, source, ref *string) (fabric.Input, error) {
	return s.sheetWith(ctx, projectID, q, title, source, ref, nil)
}

// sheetWith is sheet that also hands each measurement to each (nil:
// none), in the order of the input's rows.
func (s *Service) sheetWith(ctx context.Context, projectID int64, q MeasurementQuery, title, source, ref *string, each func(m *storedRow)) (fabric.Input, error) {
	var in fabric.Input
	p, err := s.eachRow(ctx, projectID, q, func(n int) { in.Rows = make([]fabric.Row, 0, n) },
		func(m *storedRow, r fabric.Row) {
			in.Rows = append(in.Rows, r)
			if each != nil {
				each(m)
			}
		})
	if err != nil {
		return in, err
	}
	if *title == "" {
		*title = p.Name
	}
	*source, *ref = describe(q), p.OutputAzimuthRef
	return in, nil
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
