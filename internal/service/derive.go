package service

import (
	"context"
	"errors"
	"fmt"
	"math"
	"strings"

	"corvane/internal/coreangle"
	"corvane/internal/desurvey"
	"corvane/internal/domain"
	"corvane/internal/geom"
)

// Derived holds the values computed from a measurement, its hole's current
// collar and survey and the project's conventions. They are computed on every
// read and never stored, so they are never stale. Angles are degrees;
// azimuths are relative to AzimuthRef. A value that does not exist (the dip
// direction of a plane in a vertical hole, the line of a plane without gamma)
// is null. When the hole path cannot be computed at the depth, Error says why
// and the values are null.
type Derived struct {
	// AzimuthRef is the north reference of every azimuth here: "grid" or "true".
	AzimuthRef string `json:"azimuth_ref"`
	// HoleAzimuth and HoleDip are the hole direction at the depth (dip negative down).
	HoleAzimuth *float64 `json:"hole_azimuth"`
	HoleDip     *float64 `json:"hole_dip"`
	// East, North, Elevation locate the measurement in the collar's coordinate system.
	East      *float64 `json:"easting"`
	North     *float64 `json:"northing"`
	Elevation *float64 `json:"elevation"`
	// Dip and DipDirection of the plane; Strike by the right-hand rule.
	Dip          *float64 `json:"dip"`
	DipDirection *float64 `json:"dip_direction"`
	Strike       *float64 `json:"strike"`
	// PoleTrend and PolePlunge of the plane's lower-hemisphere pole.
	PoleTrend  *float64 `json:"pole_trend"`
	PolePlunge *float64 `json:"pole_plunge"`
	// LineTrend and LinePlunge of the lineation, when gamma was measured.
	LineTrend  *float64 `json:"line_trend"`
	LinePlunge *float64 `json:"line_plunge"`
	// TrueThickness is apparent thickness * sin(alpha), when an apparent thickness was logged.
	TrueThickness *float64 `json:"true_thickness"`
	// GridConvergence is the convergence used for the hole, degrees (grid =
	// true - C); ConvergenceSource says where it came from: "computed" from
	// the collar's crs label and position, or "project" (the project's
	// default, for a collar that cannot be placed).
	GridConvergence   *float64 `json:"grid_convergence"`
	ConvergenceSource string   `json:"convergence_source"`
	// Declination is the magnetic declination applied, degrees (true =
	// magnetic + D), when a magnetic azimuth was involved, else null;
	// DeclinationSource is "given" (a number sent with the survey set),
	// "computed" (from the magnetic model when the survey set was stored) or
	// "project" (the project's default).
	Declination       *float64 `json:"declination"`
	DeclinationSource string   `json:"declination_source,omitempty"`
	// RunConfidence is the confidence of the orientation run covering the
	// depth, "" when no run covers it.
	RunConfidence string `json:"run_confidence"`
	// Warnings are short phrases, e.g. "hole near vertical".
	Warnings []string `json:"warnings"`
	// Error explains why nothing could be computed.
	Error string `json:"error,omitempty"`
}

// Conventions are the choices a conversion depends on; a project carries them.
type Conventions struct {
	RefLine          string  `json:"ref_line"`
	BetaApex         string  `json:"beta_apex"`
	GammaSense       string  `json:"gamma_sense"`
	LengthUnit       string  `json:"length_unit"`
	OutputAzimuthRef string  `json:"output_azimuth_ref"`
	Declination      float64 `json:"declination"`
	Convergence      float64 `json:"convergence"`
}

// ConventionsOf returns the project's conventions.
func ConventionsOf(p domain.Project) Conventions {
	return Conventions{RefLine: p.RefLine, BetaApex: p.BetaApex, GammaSense: p.GammaSense, LengthUnit: p.LengthUnit,
		OutputAzimuthRef: p.OutputAzimuthRef, Declination: p.Declination, Convergence: p.Convergence}
}

// normalize fills defaults and validates c, reusing the project rules.
func (c *Conventions) normalize() error {
	p := domain.Project{Name: "x", RefLine: c.RefLine, BetaApex: c.BetaApex, GammaSense: c.GammaSense, LengthUnit: c.LengthUnit,
		OutputAzimuthRef: c.OutputAzimuthRef, Declination: c.Declination, Convergence: c.Convergence}
	if err := p.Normalize(); err != nil {
		return err
	}
	*c = ConventionsOf(p)
	return nil
}

func (c Conventions) core() coreangle.Convention {
	var cv coreangle.Convention
	if c.RefLine == domain.RefLineTop {
		cv.RefLine = coreangle.Top
	}
	if c.BetaApex == domain.BetaApexUpHole {
		cv.BetaApex = coreangle.UpHole
	}
	if c.GammaSense == domain.GammaAnticlockwise {
		cv.GammaSense = coreangle.Anticlockwise
	}
	return cv
}

// toOutput converts an azimuth measured from north reference ref ("true",
// "grid" or "magnetic") into the output reference out ("grid" or "true"),
// with declination decl (true = magnetic + decl) and grid convergence conv
// (grid = true - conv), as in the project's conventions.
func toOutput(az float64, ref, out string, decl, conv float64) float64 {
	t := az
	switch ref {
	case domain.AzimuthMagnetic:
		t = az + decl
	case domain.AzimuthGrid:
		t = az + conv
	}
	if out == domain.AzimuthGrid {
		t -= conv
	}
	return geom.NormAzimuth(t)
}

// holeModel is a hole ready for derived values: its path in the output
// reference, its runs and the conventions.
type holeModel struct {
	name string
	// corrections applied to the hole's azimuths (see Derived)
	gc, decl         float64
	convSrc, declSrc string
	conv             Conventions
	core             coreangle.Convention
	path             *desurvey.Path
	err              error // why the path could not be built
	runs             []domain.Run
	depth            float64
	// the collar and survey set the model was built from
	hole   domain.Hole
	survey *domain.SurveySet
	// collar and stations are the path's input: the collar and survey
	// stations with their azimuths corrected to the output reference
	collar   desurvey.Collar
	stations []desurvey.Station
}

// newHoleModel builds the path of h from its survey set ss (nil when the
// hole has none). Station azimuths are in the set's reference, the collar
// azimuth in the hole's own; a magnetic one uses the set's declination when
// it has one and the project's otherwise. The grid convergence is computed
// at the collar from its crs label when the collar can be placed (package
// northref), else the project's default applies.
func newHoleModel(c Conventions, h domain.Hole, ss *domain.SurveySet, runs []domain.Run) *holeModel {
	m := &holeModel{name: h.Name, conv: c, core: c.core(), runs: runs, depth: h.FinalDepth, hole: h, survey: ss}
	var href string
	m.gc, m.convSrc, m.decl, m.declSrc, href = holeCorrections(c, h, ss)
	if ss != nil {
		m.stations = make([]desurvey.Station, len(ss.Stations))
		for i, st := range ss.Stations {
			m.stations[i] = desurvey.Station{Depth: st.Depth, Azimuth: toOutput(st.Azimuth, ss.AzimuthRef, c.OutputAzimuthRef, m.decl, m.gc), Dip: st.Dip}
		}
	}
	m.collar = desurvey.Collar{East: h.East, North: h.North, Elevation: h.Elevation,
		Azimuth: toOutput(h.Azimuth, href, c.OutputAzimuthRef, m.decl, m.gc), Dip: h.Dip, Depth: h.FinalDepth}
	opt := desurvey.Options{Method: desurvey.MinimumCurvature}
	if c.LengthUnit == domain.UnitFoot {
		opt.Unit = desurvey.Feet
	}
	m.path, m.err = desurvey.NewWith(m.collar, m.stations, opt)
	if m.err != nil {
		m.err = fmt.Errorf("hole %s: %w", h.Name, m.err)
	}
	return m
}

// holeCorrections returns the corrections the hole model applies to h with
// survey set ss (nil when none): the grid convergence gc and its source
// ("computed" at the collar from its crs label when the collar can be placed,
// else "project"), the declination decl and its source (the survey set's
// own source, "given" or "computed", when the set has a declination, else
// "project"; "" when no magnetic azimuth is involved), and
// the collar azimuth's reference href (the project's output reference when
// the hole gives none).
func holeCorrections(c Conventions, h domain.Hole, ss *domain.SurveySet) (gc float64, convSrc string, decl float64, declSrc, href string) {
	gc, convSrc = c.Convergence, "project"
	if h.CRS != "" {
		if cv, ok := convergenceAt(h); ok {
			gc, convSrc = cv, "computed"
		}
	}
	decl, declSrc = c.Declination, "project"
	href = h.AzimuthRef
	if href == "" {
		href = c.OutputAzimuthRef
	}
	magnetic := href == domain.AzimuthMagnetic
	if ss != nil {
		if ss.Declination != nil {
			decl, declSrc = *ss.Declination, ss.DeclinationSource
			if declSrc != domain.SourceComputed {
				// Sets stored before the source was recorded read as given.
				declSrc = domain.SourceGiven
			}
		}
		magnetic = magnetic || ss.AzimuthRef == domain.AzimuthMagnetic
	}
	if !magnetic {
		declSrc = ""
	}
	return gc, convSrc, decl, declSrc, href
}

func opt(x float64) *float64 {
	if math.IsNaN(x) {
		return nil
	}
	return &x
}

// derive computes the derived values of one measurement.
func (m *holeModel) derive(depth, alpha, beta float64, gamma, apparent *float64) Derived {
	d := Derived{AzimuthRef: m.conv.OutputAzimuthRef, Warnings: []string{},
		GridConvergence: opt(m.gc), ConvergenceSource: m.convSrc}
	if m.declSrc != "" {
		d.Declination, d.DeclinationSource = opt(m.decl), m.declSrc
	}
	if m.err != nil {
		d.Error = m.err.Error()
		return d
	}
	pt, err := m.path.At(depth)
	if err != nil {
		if errors.Is(err, desurvey.ErrPastEnd) {
			d.Error = fmt.Sprintf("depth %v is past the final depth %v of hole %s", depth, m.depth, m.name)
		} else {
			d.Error = fmt.Sprintf("hole %s at depth %v: %v", m.name, depth, err)
		}
		return d
	}
	az, dip := pt.Dir.AzimuthDip()
	d.HoleAzimuth, d.HoleDip = opt(az), opt(dip)
	d.East, d.North, d.Elevation = opt(pt.Pos.X), opt(pt.Pos.Y), opt(pt.Pos.Z)
	pl, w := coreangle.Plane(pt.Dir, alpha, beta, m.core)
	d.Dip = opt(pl.Dip)
	if !math.IsNaN(pl.DipDirection) {
		d.DipDirection, d.Strike = opt(pl.DipDirection), opt(pl.Strike())
		pole := pl.Pole()
		d.PoleTrend, d.PolePlunge = opt(pole.Trend), opt(pole.Plunge)
	} else {
		d.PolePlunge = opt(90 - pl.Dip)
	}
	if gamma != nil {
		ln, lw := coreangle.Line(pt.Dir, alpha, beta, *gamma, m.core)
		w |= lw
		d.LineTrend, d.LinePlunge = opt(ln.Trend), opt(ln.Plunge)
	}
	if apparent != nil {
		d.TrueThickness = opt(coreangle.TrueThickness(*apparent, alpha))
	}
	if pt.Extrapolated {
		w |= coreangle.Extrapolated
	}
	if s := w.String(); s != "" {
		d.Warnings = append(d.Warnings, strings.Split(s, "; ")...)
	}
	d.RunConfidence = "none"
	covered := false
	for _, r := range m.runs {
		if depth >= r.From && depth <= r.To {
			d.RunConfidence, covered = r.Confidence, true
			break
		}
	}
	switch {
	case !covered:
		d.RunConfidence = ""
		if len(m.runs) > 0 {
			d.Warnings = append(d.Warnings, "no orientation run covers this depth")
		}
	case d.RunConfidence == "none":
		d.Warnings = append(d.Warnings, "orientation run rated unusable")
	case d.RunConfidence == "poor":
		d.Warnings = append(d.Warnings, "orientation run rated poor")
	}
	return d
}

// deriver builds hole models on demand within one request, so a list of
// measurements desurveys each hole once, from the store state of that request.
type deriver struct {
	st     domain.Store
	conv   Conventions
	models map[int64]*holeModel
}

func newDeriver(st domain.Store, p domain.Project) *deriver {
	return &deriver{st: st, conv: ConventionsOf(p), models: map[int64]*holeModel{}}
}

func (d *deriver) model(ctx context.Context, holeID int64) (*holeModel, error) {
	if m, ok := d.models[holeID]; ok {
		return m, nil
	}
	h, err := d.st.GetHole(ctx, holeID)
	if err != nil {
		return nil, err
	}
	ss, err := surveyOf(ctx, d.st, holeID)
	if err != nil {
		return nil, err
	}
	runs, err := d.st.ListRuns(ctx, holeID)
	if err != nil {
		return nil, err
	}
	m := newHoleModel(d.conv, h, ss, runs)
	d.models[holeID] = m
	return m, nil
}

// surveyOf returns the hole's survey set from st, nil when it has none.
func surveyOf(ctx context.Context, st domain.Store, holeID int64) (*domain.SurveySet, error) {
	ss, err := st.GetSurvey(ctx, holeID)
	switch {
	case err == nil:
		return &ss, nil
	case domain.IsKind(err, domain.NotFound):
		return nil, nil
	default:
		return nil, err
	}
}

// view returns the measurement with its hole name and derived values.
func (d *deriver) view(ctx context.Context, m domain.Measurement) (MeasurementView, error) {
	hm, err := d.model(ctx, m.HoleID)
	if err != nil {
		return MeasurementView{}, err
	}
	return MeasurementView{Measurement: m, Hole: hm.name, Derived: hm.derive(m.Depth, m.Alpha, m.Beta, m.Gamma, m.ApparentThickness)}, nil
}
