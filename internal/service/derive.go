package service

import (
	"context"
	"encoding/json"
	"math"
	"strings"
	"sync"
	"time"

	"corvane/internal/convert"
	"corvane/internal/coreangle"
	"corvane/internal/desurvey"
	"corvane/internal/domain"
	"corvane/internal/holemodel"
	"corvane/internal/localgrid"
	"corvane/internal/northref"
	"corvane/internal/uncertainty"
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
	// GridConvergence is the convergence applied to the hole's azimuths,
	// degrees (grid = true - C), null when none was applied;
	// ConvergenceSource says where it came from: "given" (for the hole),
	// "project" (the project's default), "computed" (from the collar's crs
	// label and position) or "none" (not applied).
	GridConvergence   *float64 `json:"grid_convergence"`
	ConvergenceSource string   `json:"convergence_source"`
	// Declination is the magnetic declination applied at the depth, degrees
	// (true = magnetic + D), null when no magnetic azimuth was involved;
	// DeclinationSource as ConvergenceSource ("given" is a number sent with
	// the survey set or the hole; "computed" from the magnetic model at the
	// collar on the survey date).
	Declination       *float64 `json:"declination"`
	DeclinationSource string   `json:"declination_source"`
	// PoleCone95, PoleLong95 and PoleShort95 are the 95% region of the
	// pole, degrees: the cone's half-angle and the elongated region's
	// semi-axes, of the region in use; PoleMethod says which method gave it
	// ("first-order" or "monte-carlo", see package uncertainty). The Line
	// fields are the same for the lineation. Null and "" when there is no
	// region (a vertical hole, no lineation). The errors are the project's
	// error model for the hole's survey instrument and the run covering the
	// depth; the Monte Carlo run is uncertainty.PerMeasurement at every door.
	PoleCone95  *float64 `json:"pole_cone95"`
	PoleLong95  *float64 `json:"pole_long95"`
	PoleShort95 *float64 `json:"pole_short95"`
	PoleMethod  string   `json:"pole_method"`
	LineCone95  *float64 `json:"line_cone95"`
	LineLong95  *float64 `json:"line_long95"`
	LineShort95 *float64 `json:"line_short95"`
	LineMethod  string   `json:"line_method"`
	// SurveyInstrument is the instrument of the survey in use, whose errors
	// the regions carry: magnetic, gyro or unknown.
	SurveyInstrument string `json:"survey_instrument"`
	// Unoriented is true for a measurement without beta: the hole
	// direction, position and angle to the core axis are known, the dip
	// direction, strike, pole and line are null (the dip too, except in a
	// vertical hole). Statistics leave it out of set means and count it.
	Unoriented bool `json:"unoriented"`
	// SurveySet names the survey the hole's path was built from: "survey"
	// (the hole's survey set), the kind of a set by kind ("gyro",
	// "magnetic", "planned", "other": the preferred one, else the first of
	// the project's survey priority the hole has), absent when the hole has
	// no survey.
	SurveySet string `json:"survey_set,omitempty"`
	// RunConfidence is the confidence of the orientation run covering the
	// depth, "" when no run covers it; RunMismatch the mismatch logged for
	// it (null when none) and RunFrom the depth where it starts (null when
	// no run covers the depth, and in POST /v1/convert, which names no run
	// start): measurements with the same RunFrom in a hole share one mark
	// error in the set statistics.
	RunConfidence string   `json:"run_confidence"`
	RunMismatch   *float64 `json:"run_mismatch"`
	RunFrom       *float64 `json:"run_from"`
	// Warnings are short phrases, e.g. "hole near vertical".
	Warnings []string `json:"warnings"`
	// Error explains why nothing could be computed.
	Error string `json:"error,omitempty"`
}

// Conventions are the choices a conversion depends on; a project carries
// them. Declination and Convergence are the project's defaults, null while
// unset.
type Conventions struct {
	RefLine          string   `json:"ref_line"`
	BetaApex         string   `json:"beta_apex"`
	GammaSense       string   `json:"gamma_sense"`
	LengthUnit       string   `json:"length_unit"`
	OutputAzimuthRef string   `json:"output_azimuth_ref"`
	Declination      *float64 `json:"declination"`
	Convergence      *float64 `json:"convergence"`
	// ErrorModel is the project's error model for the uncertainty of each
	// orientation (a zero field is its default).
	ErrorModel uncertainty.Model `json:"error_model"`
	// MagneticModel chooses the model of computed declinations: "auto"
	// (default), "wmm" or "igrf" (see domain.Project).
	MagneticModel string `json:"magnetic_model"`
	// LocalGrid is the project's local (mine) grid, null when none (package
	// localgrid's declaration, as the project's local_grid): holes whose crs
	// is "local" are in it, and output_azimuth_ref "local" gives azimuths
	// and coordinates in it (a hole's own local grid wins over it).
	LocalGrid json.RawMessage `json:"local_grid,omitempty"`
	// SurveyPriority orders survey set kinds for holes with sets by kind
	// (the project's survey_priority, e.g. "gyro,magnetic,planned"); ""
	// for none.
	SurveyPriority string `json:"survey_priority,omitempty"`
	// grid is LocalGrid resolved, nil when none.
	grid *localgrid.Grid
}

// ConventionsOf returns the project's conventions, with its local grid
// (checked when the project was stored; one that no longer reads is left
// out, so its "local" holes have the error of a collar that cannot be
// placed).
func ConventionsOf(p domain.Project) Conventions {
	c := Conventions{RefLine: p.RefLine, BetaApex: p.BetaApex, GammaSense: p.GammaSense, LengthUnit: p.LengthUnit,
		OutputAzimuthRef: p.OutputAzimuthRef, Declination: p.Declination, Convergence: p.Convergence, ErrorModel: p.ErrorModel,
		MagneticModel: p.MagneticModel, LocalGrid: p.LocalGrid, SurveyPriority: p.SurveyPriority}
	c.grid = storedGrid(p.LocalGrid)
	return c
}

// normalize fills defaults and validates c, reusing the project rules; an
// output reference "local" (azimuths and coordinates in the local grid) is
// allowed here, as a request's choice.
func (c *Conventions) normalize() error {
	out, err := outputOf(c.OutputAzimuthRef)
	if err != nil {
		return domain.FieldErr("output_azimuth_ref", "%v", err)
	}
	p := domain.Project{Name: "x", RefLine: c.RefLine, BetaApex: c.BetaApex, GammaSense: c.GammaSense, LengthUnit: c.LengthUnit,
		Declination: c.Declination, Convergence: c.Convergence, ErrorModel: c.ErrorModel,
		MagneticModel: c.MagneticModel, LocalGrid: c.LocalGrid, SurveyPriority: c.SurveyPriority}
	if out != holemodel.Local {
		p.OutputAzimuthRef = out
	}
	if err := p.Normalize(); err != nil {
		return err
	}
	if err := checkLocalGrid(&p); err != nil {
		return err
	}
	if out == holemodel.Local {
		p.OutputAzimuthRef = out
	}
	*c = ConventionsOf(p)
	return nil
}

// outputOf reads an output reference as a request gives it (grid, true or
// local, any case; "" is the project's), by convert.ParseOutput's rule.
func outputOf(s string) (string, error) {
	if s == "" {
		return "", nil
	}
	r, err := convert.ParseOutput(s)
	if err != nil {
		return "", err
	}
	return r.String(), nil
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

// project is the hole model's project of the conventions: minimum
// curvature, the project's unit, output reference and defaults.
func (c Conventions) project() holemodel.Project {
	p := holemodel.Project{Convention: c.core(), Method: desurvey.MinimumCurvature, Output: c.OutputAzimuthRef,
		Declination: c.Declination, GridConvergence: c.Convergence, Model: northref.MagneticModel(c.MagneticModel), LocalGrid: c.grid}
	if c.LengthUnit == domain.UnitFoot {
		p.Unit = desurvey.Feet
	}
	return p
}

// holeInput is the hole model's neutral input for the stored hole h and its
// survey set ss (nil when none), named set (see domain.UsedSurvey).
func holeInput(h domain.Hole, ss *domain.SurveySet, set string) holemodel.Input {
	in := holemodel.Input{ID: h.Name, CRS: h.CRS, CollarRef: h.AzimuthRef,
		Collar:      desurvey.Collar{East: h.East, North: h.North, Elevation: h.Elevation, Azimuth: h.Azimuth, Dip: h.Dip, Depth: h.FinalDepth},
		Declination: h.Declination, GridConvergence: h.GridConvergence, SurveySet: set, LocalGrid: storedGrid(h.LocalGrid)}
	in.SurveyDate, _ = time.Parse(time.DateOnly, h.SurveyDate)
	if ss != nil {
		in.Instrument = uncertainty.Instrument(ss.Instrument)
		in.SurveyDeclination = ss.Declination
		var date time.Time
		if ss.SurveyDate != "" {
			date, _ = time.Parse(time.DateOnly, ss.SurveyDate)
		}
		in.Stations = make([]holemodel.Station, len(ss.Stations))
		for i, st := range ss.Stations {
			in.Stations[i] = holemodel.Station{Depth: st.Depth, Azimuth: st.Azimuth, Dip: st.Dip, Ref: ss.AzimuthRef, Date: date}
		}
	}
	return in
}

// holeModel is a hole ready for derived values: the hole model of package
// holemodel, the stored hole and survey set it was built from, its runs.
type holeModel struct {
	*holemodel.Hole
	// ms measures the uncertainty of the hole's measurements (shared by the
	// models of one request, which uses them on one goroutine); nil for a
	// model that derives no measurements.
	ms     *uncertainty.Measurer
	em     uncertainty.Model
	name   string
	conv   Conventions
	runs   []domain.Run
	hole   domain.Hole
	survey *domain.SurveySet
	// set names the survey the model was built from: "survey" (the hole's
	// survey set), a kind of set ("gyro"...), "" when none.
	set string
}

// newHoleModel builds the model of the stored hole h with survey set ss (nil
// when the hole has none), named set, and runs.
func newHoleModel(c Conventions, h domain.Hole, ss *domain.SurveySet, set string, runs []domain.Run) *holeModel {
	return &holeModel{Hole: holemodel.New(holeInput(h, ss, set), c.project()), em: c.ErrorModel, name: h.Name, conv: c, runs: runs, hole: h, survey: ss, set: set}
}

// perMeasurement holds the normals of uncertainty.PerMeasurement, drawn
// once; each request forks its own measurer from it.
var perMeasurement = convert.NewMeasurer(false)

// uncertainty returns the 95% regions of the measurement oriented as r (nil
// when it has none), with the run covering its depth.
func (m *holeModel) uncertainty(r *holemodel.Result, hm holemodel.Measurement) *uncertainty.Result {
	if m.ms == nil {
		return nil
	}
	conf, mismatch := "", math.NaN()
	if run := m.runCovering(hm.Depth); run != nil {
		conf = run.Confidence
		if run.Mismatch != nil {
			mismatch = *run.Mismatch
		}
	}
	u, ok := m.Uncertainty(m.ms, m.em, r, hm, conf, mismatch)
	if !ok {
		return nil
	}
	return &u
}

func opt(x float64) *float64 {
	if math.IsNaN(x) {
		return nil
	}
	return &x
}

// orient orients one measurement with the hole model (beta nil: an
// unoriented measurement); hm is the measurement as the hole model takes it.
func (m *holeModel) orient(depth, alpha float64, beta, gamma, apparent *float64) (r holemodel.Result, hm holemodel.Measurement, err error) {
	hm = holemodel.Measurement{Depth: depth, Alpha: alpha}
	if beta != nil {
		hm.Beta = *beta
	} else {
		hm.NoBeta = true
	}
	if gamma != nil {
		hm.Gamma, hm.HasGamma = *gamma, true
	}
	if apparent != nil {
		hm.Thickness, hm.HasThickness = *apparent, true
	}
	r, err = m.Orient(hm)
	return r, hm, err
}

// derive computes the derived values of one measurement, with r and err
// from orient.
func (m *holeModel) derive(depth, alpha float64, beta, gamma, apparent *float64) Derived {
	r, hm, err := m.orient(depth, alpha, beta, gamma, apparent)
	var u *uncertainty.Result
	if err == nil {
		u = m.uncertainty(&r, hm)
	}
	return m.derived(depth, &r, err, u)
}

// derived is the derived values of the measurement at depth oriented as r
// (or err) with uncertainty u (nil when none).
func (m *holeModel) derived(depth float64, r *holemodel.Result, err error, u *uncertainty.Result) Derived {
	d := Derived{AzimuthRef: m.Output, SurveySet: m.set, Warnings: []string{}}
	conv, decl := m.Convergence, m.Declination(depth)
	if err == nil {
		conv, decl = r.Convergence, r.Declination
	}
	d.GridConvergence, d.ConvergenceSource = opt(conv.Value), string(conv.Source)
	d.Declination, d.DeclinationSource = opt(decl.Value), string(decl.Source)
	if err != nil {
		d.Error = err.Error()
		return d
	}
	d.HoleAzimuth, d.HoleDip = opt(r.HoleAzimuth), opt(r.HoleDip)
	d.East, d.North, d.Elevation = opt(r.Point.Pos.X), opt(r.Point.Pos.Y), opt(r.Point.Pos.Z)
	d.Dip, d.DipDirection, d.Strike = opt(r.Plane.Dip), opt(r.Plane.DipDirection), opt(r.Strike())
	pole := r.Pole()
	d.PoleTrend, d.PolePlunge = opt(pole.Trend), opt(pole.Plunge)
	if r.HasLine {
		d.LineTrend, d.LinePlunge = opt(r.Line.Trend), opt(r.Line.Plunge)
	}
	d.TrueThickness = opt(r.TrueThickness)
	d.Unoriented = r.Unoriented
	if s := convert.Warnings(r, m.Hole); s != "" {
		d.Warnings = append(d.Warnings, strings.Split(s, "; ")...)
	}
	if u != nil {
		g := u.Pole.Region()
		d.PoleCone95, d.PoleLong95, d.PoleShort95, d.PoleMethod = &g.Cone95, &g.Long95, &g.Short95, u.Pole.Used
		if u.Line != nil {
			g := u.Line.Region()
			d.LineCone95, d.LineLong95, d.LineShort95, d.LineMethod = &g.Cone95, &g.Long95, &g.Short95, u.Line.Used
		}
	}
	d.SurveyInstrument = string(convert.SurveyInstrument(m.Hole))
	d.RunConfidence, d.Warnings = m.runAt(depth, d.Warnings)
	if run := m.runCovering(depth); run != nil {
		d.RunMismatch, d.RunFrom = run.Mismatch, &run.From
	}
	return d
}

// runCovering returns the orientation run covering depth, nil when none.
func (m *holeModel) runCovering(depth float64) *domain.Run {
	for i := range m.runs {
		if r := &m.runs[i]; depth >= r.From && depth <= r.To {
			return r
		}
	}
	return nil
}

// runAt returns the confidence of the orientation run covering depth (""
// when none) and warn with the run's warning added.
func (m *holeModel) runAt(depth float64, warn []string) (string, []string) {
	if r := m.runCovering(depth); r != nil {
		if w := convert.RunWarning(r.Confidence); w != "" {
			warn = append(warn, w)
		}
		return r.Confidence, warn
	}
	if len(m.runs) > 0 {
		warn = append(warn, "no orientation run covers this depth")
	}
	return "", warn
}

// deriver builds hole models on demand within one request, so a list of
// measurements desurveys each hole once, from the store state of that
// request. With a cache (the service's), it first reads the project's model
// stamp and takes the models built at that stamp and project version from
// the cache; models it builds go into the cache at once when st is not a
// transaction, or by keep after the caller's transaction has committed.
type deriver struct {
	st       domain.Store
	conv     Conventions
	priority string // the project's survey priority
	models   map[int64]*holeModel
	ms       *uncertainty.Measurer

	cache    *modelCache // nil: no cache
	inTx     bool        // st is a transaction: keep the new models until keep
	project  domain.Project
	stamp    int64
	stamped  bool
	newModel []*holeModel // built in a transaction, for keep
}

func newDeriver(st domain.Store, p domain.Project) *deriver {
	return &deriver{st: st, conv: ConventionsOf(p), priority: p.SurveyPriority, models: map[int64]*holeModel{}, ms: perMeasurement.Fork(), project: p}
}

// deriver returns a deriver over st (the service's store, or a transaction
// of it) that uses the service's model cache.
func (s *Service) deriver(st domain.Store, p domain.Project) *deriver {
	d := newDeriver(st, p)
	d.cache, d.inTx = s.models, st != s.store
	return d
}

// stampedAt gives d the model stamp the caller read before anything a
// model is built from, so that model does not read it again.
func (d *deriver) stampedAt(stamp int64) *deriver {
	d.stamp, d.stamped = stamp, true
	return d
}

func (d *deriver) model(ctx context.Context, holeID int64) (*holeModel, error) {
	if m, ok := d.models[holeID]; ok {
		return m, nil
	}
	if d.cache != nil && !d.stamped {
		// The stamp is read before anything a model is built from, so a
		// model is never older than the stamp it is kept at.
		n, err := d.st.ModelStamp(ctx, d.project.ID)
		if err != nil {
			return nil, err
		}
		d.stamp, d.stamped = n, true
	}
	if d.cache != nil {
		if c := d.cache.get(holeID, d.project, d.stamp); c != nil {
			m := *c
			m.ms = d.ms
			d.models[holeID] = &m
			return &m, nil
		}
	}
	h, err := d.st.GetHole(ctx, holeID)
	if err != nil {
		return nil, err
	}
	ss, set, _, err := usedSurvey(ctx, d.st, holeID, d.priority)
	if err != nil {
		return nil, err
	}
	runs, err := d.st.ListRuns(ctx, holeID)
	if err != nil {
		return nil, err
	}
	m := newHoleModel(d.conv, h, ss, set, runs)
	if d.cache != nil && h.ProjectID == d.project.ID {
		if d.inTx {
			d.newModel = append(d.newModel, m)
		} else {
			d.cache.put(m, d.project, d.stamp)
		}
	}
	use := *m
	use.ms = d.ms
	d.models[holeID] = &use
	return &use, nil
}

// keep puts the models built in the transaction into the cache; call it
// once the transaction has committed (what it read is then the committed
// state at the stamp it read).
func (d *deriver) keep() {
	for _, m := range d.newModel {
		d.cache.put(m, d.project, d.stamp)
	}
	d.newModel = nil
}

// modelCache keeps hole models between requests, each with the project
// version, model stamp and output reference it was built at (domain.Store.ModelStamp: any
// change of a project's settings, holes, surveys or runs, by any writer,
// moves the stamp). A model is used only at the same version, stamp and
// output reference, so it is never stale nor in another north. Models hold no per-request state (their measurer is
// set per use). Safe for concurrent use.
type modelCache struct {
	mu sync.Mutex
	m  map[int64]cachedModel // by hole id
}

// modelKey is everything a hole model is built from, as seen at one
// moment: the project (its id and version: settings, corrections, output
// reference), the model stamp (domain.Store.ModelStamp: holes, surveys,
// survey sets, runs) and the output reference the request asked for (it may
// differ from the project's, output_reference). Both caches (hole models
// here and the kept rows, rowcache.go) are keyed by it, so an input added
// to a model is added to both at once.
type modelKey struct {
	project, version, stamp int64
	output                  string
}

func newModelKey(p domain.Project, stamp int64) modelKey {
	return modelKey{project: p.ID, version: p.Version, stamp: stamp, output: p.OutputAzimuthRef}
}

type cachedModel struct {
	key   modelKey
	model *holeModel
}

// maxCachedModels bounds the cache; past it the cache starts afresh.
const maxCachedModels = 20000

func newModelCache() *modelCache { return &modelCache{m: map[int64]cachedModel{}} }

func (c *modelCache) get(holeID int64, p domain.Project, stamp int64) *holeModel {
	c.mu.Lock()
	defer c.mu.Unlock()
	if e, ok := c.m[holeID]; ok && e.key == newModelKey(p, stamp) {
		return e.model
	}
	return nil
}

func (c *modelCache) put(m *holeModel, p domain.Project, stamp int64) {
	c.mu.Lock()
	defer c.mu.Unlock()
	if len(c.m) >= maxCachedModels {
		clear(c.m)
	}
	c.m[m.hole.ID] = cachedModel{key: newModelKey(p, stamp), model: m}
}

// view returns the measurement with its hole name and derived values.
func (d *deriver) view(ctx context.Context, m domain.Measurement) (MeasurementView, error) {
	hm, err := d.model(ctx, m.HoleID)
	if err != nil {
		return MeasurementView{}, err
	}
	return hm.view(m), nil
}

// view returns the measurement m of the model's hole with its hole name and
// derived values. It reads nothing from the store: a write reads the model
// inside its transaction and derives after the commit, so the store's one
// writer is not held while the uncertainty is computed.
func (m *holeModel) view(ms domain.Measurement) MeasurementView {
	return MeasurementView{Measurement: ms, Hole: m.name, Derived: m.derive(ms.Depth, ms.Alpha, ms.Beta, ms.Gamma, ms.ApparentThickness)}
}
