// Package uncertainty says how sure a measurement made on oriented core is: it
// carries the errors of the alpha, beta and gamma readings, of the
// orientation mark and of the hole survey into the pole (and lineation) of
// each measurement and into the mean of a set.
//
// The error model ([Model]) gives one standard error per source, in degrees,
// taken as normal and centred:
//
//   - alpha, beta, gamma readings: independent between measurements; a logger
//     who rounds to a step s adds s^2/12 of variance (a uniform rounding
//     error, common practice);
//   - the orientation mark: one error per run, shared by every measurement of
//     the run, acting as a rotation of the core about its axis (the same as an
//     error added to every beta of the run);
//   - the survey azimuth and dip: one error per survey interval (the stretch
//     of hole between two stations), shared by every measurement in it,
//     acting as a rotation of the whole hole frame.
//
// A measurement's region ([Measure]) is computed two ways: by first-order
// propagation (the exact Jacobian of the transform: every error turns the
// direction about an axis) and by seeded Monte Carlo through the exact
// transform. Each is given as a cone (the half-angle around the measured
// pole holding 95%) and as an
// elongated region: an ellipse in coordinates that follow the core axis
// (rotation about the axis, angle from the axis), which on a net is a curved
// "banana" along the small circle the pole sweeps when the core turns, the
// shape shown by Stigsson & Munier (2013, Computers & Geosciences 55,
// "Orientation uncertainty goes bananas").
//
// A set's mean ([SetMean]) is given the classical Fisher (1953) cone and a
// Monte Carlo cone in which every run's mark error and every survey
// interval's error is drawn once per trial and shared by its members.
//
// Uncertainty figures depend on the error model chosen; they are no
// substitute for the reviewer's judgement or local practice.
//
// The package is pure (standard library, gonum, corvane's math packages) and
// safe for concurrent use.
package uncertainty

import (
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strings"
)

// Instrument is the kind of survey instrument behind a hole interval.
type Instrument string

const (
	Magnetic        Instrument = "magnetic"
	Gyro            Instrument = "gyro"
	UnknownSurvey   Instrument = "unknown"
	defaultRounding            = 5.0
)

// ParseInstrument reads "magnetic", "gyro" or "unknown" (any case; empty is
// unknown).
func ParseInstrument(s string) (Instrument, error) {
	switch strings.ToLower(strings.TrimSpace(s)) {
	case "magnetic":
		return Magnetic, nil
	case "gyro":
		return Gyro, nil
	case "", "unknown":
		return UnknownSurvey, nil
	}
	return "", fmt.Errorf("survey instrument %q: want magnetic, gyro or unknown", s)
}

// SurveyError is the standard error, in degrees, of a survey's azimuth and
// dip.
type SurveyError struct {
	Azimuth float64 `json:"azimuth"`
	Dip     float64 `json:"dip"`
}

// Model is a project's error model: standard errors in degrees. A zero field
// takes its default (see [DefaultModel] and [Model.Sources]); to model a
// source as exact give it a tiny value such as 1e-9.
type Model struct {
	Alpha float64 `json:"alpha"` // alpha reading
	Beta  float64 `json:"beta"`  // beta reading
	Gamma float64 `json:"gamma"` // gamma reading

	// Mark errors by the run's confidence rating, compared without regard
	// to case: good, fair, poor; MarkUnrated for any other rating.
	MarkGood    float64 `json:"mark_good"`
	MarkFair    float64 `json:"mark_fair"`
	MarkPoor    float64 `json:"mark_poor"`
	MarkUnrated float64 `json:"mark_unrated"`

	// Survey errors by instrument kind.
	Magnetic SurveyError `json:"magnetic"`
	Gyro     SurveyError `json:"gyro"`
	Unknown  SurveyError `json:"unknown"`
}

// Source is one entry of the error model with where its value comes from.
type Source struct {
	Name  string  `json:"name"`
	Value float64 `json:"value"` // standard error, degrees
	Basis string  `json:"basis"`
}

// The defaults. None is a measured property of any instrument; each is a
// typical figure and a project should replace it by its own.
const (
	basisReading = "common practice (from memory): a reading with a protractor or goniometer on the core"
	basisMark    = "common practice (from memory): how far a mark rated so is typically off; replace with the programme's own"
	basisSurvey  = "common practice (from memory): typical single-shot precision of the instrument kind"
)

var defaults = Model{
	Alpha: 2, Beta: 3, Gamma: 3,
	MarkGood: 3, MarkFair: 7, MarkPoor: 15, MarkUnrated: 10,
	Magnetic: SurveyError{Azimuth: 1.5, Dip: 0.3},
	Gyro:     SurveyError{Azimuth: 0.5, Dip: 0.2},
	Unknown:  SurveyError{Azimuth: 3, Dip: 0.5},
}

// DefaultModel returns the model with every default filled in.
func DefaultModel() Model { return Model{}.WithDefaults() }

// WithDefaults returns m with each zero field replaced by its default.
func (m Model) WithDefaults() Model {
	def := func(p *float64, v float64) {
		if *p == 0 {
			*p = v
		}
	}
	def(&m.Alpha, defaults.Alpha)
	def(&m.Beta, defaults.Beta)
	def(&m.Gamma, defaults.Gamma)
	def(&m.MarkGood, defaults.MarkGood)
	def(&m.MarkFair, defaults.MarkFair)
	def(&m.MarkPoor, defaults.MarkPoor)
	def(&m.MarkUnrated, defaults.MarkUnrated)
	def(&m.Magnetic.Azimuth, defaults.Magnetic.Azimuth)
	def(&m.Magnetic.Dip, defaults.Magnetic.Dip)
	def(&m.Gyro.Azimuth, defaults.Gyro.Azimuth)
	def(&m.Gyro.Dip, defaults.Gyro.Dip)
	def(&m.Unknown.Azimuth, defaults.Unknown.Azimuth)
	def(&m.Unknown.Dip, defaults.Unknown.Dip)
	return m
}

// Check returns an error naming the first field that is negative or not
// finite.
func (m Model) Check() error {
	for _, s := range m.Sources() {
		if !(s.Value >= 0) || math.IsInf(s.Value, 0) {
			return fmt.Errorf("error model: %s = %v, want a finite standard error >= 0 degrees", s.Name, s.Value)
		}
	}
	return nil
}

// Sources lists every standard error of m (defaults filled in) with its
// basis: "project setting" for a value that differs from the default.
func (m Model) Sources() []Source {
	d := defaults
	f := m.WithDefaults()
	b := func(v, def float64, basis string) string {
		if v != def {
			return "project setting"
		}
		return basis
	}
	return []Source{
		{"alpha", f.Alpha, b(f.Alpha, d.Alpha, basisReading)},
		{"beta", f.Beta, b(f.Beta, d.Beta, basisReading)},
		{"gamma", f.Gamma, b(f.Gamma, d.Gamma, basisReading)},
		{"mark good", f.MarkGood, b(f.MarkGood, d.MarkGood, basisMark)},
		{"mark fair", f.MarkFair, b(f.MarkFair, d.MarkFair, basisMark)},
		{"mark poor", f.MarkPoor, b(f.MarkPoor, d.MarkPoor, basisMark)},
		{"mark unrated", f.MarkUnrated, b(f.MarkUnrated, d.MarkUnrated, basisMark)},
		{"magnetic azimuth", f.Magnetic.Azimuth, b(f.Magnetic.Azimuth, d.Magnetic.Azimuth, basisSurvey)},
		{"magnetic dip", f.Magnetic.Dip, b(f.Magnetic.Dip, d.Magnetic.Dip, basisSurvey)},
		{"gyro azimuth", f.Gyro.Azimuth, b(f.Gyro.Azimuth, d.Gyro.Azimuth, basisSurvey)},
		{"gyro dip", f.Gyro.Dip, b(f.Gyro.Dip, d.Gyro.Dip, basisSurvey)},
		{"unknown azimuth", f.Unknown.Azimuth, b(f.Unknown.Azimuth, d.Unknown.Azimuth, basisSurvey)},
		{"unknown dip", f.Unknown.Dip, b(f.Unknown.Dip, d.Unknown.Dip, basisSurvey)},
	}
}

// Mark returns the standard error in degrees of a run's orientation mark
// from its confidence rating and, when logged (mismatch not NaN), the
// mismatch seen at the run break. The mismatch is the difference of two
// marks' errors, so for marks of equal quality a single mismatch m suggests a
// mark error of |m|/sqrt(2); the larger of that and the rating's figure is
// used, so a logged mismatch can only widen the error.
func (m Model) Mark(confidence string, mismatch float64) float64 {
	f := m.WithDefaults()
	return f.mark(confidence, mismatch)
}

// mark is Mark of a model with its defaults filled in.
func (f *Model) mark(confidence string, mismatch float64) float64 {
	var s float64
	switch strings.ToLower(strings.TrimSpace(confidence)) {
	case "good":
		s = f.MarkGood
	case "fair":
		s = f.MarkFair
	case "poor":
		s = f.MarkPoor
	default:
		s = f.MarkUnrated
	}
	if !math.IsNaN(mismatch) && !math.IsInf(mismatch, 0) {
		s = math.Max(s, math.Abs(mismatch)/math.Sqrt2)
	}
	return s
}

// Survey returns the survey error for an instrument kind (unknown for any
// other value).
func (m Model) Survey(k Instrument) SurveyError {
	f := m.WithDefaults()
	return f.survey(k)
}

// survey is Survey of a model with its defaults filled in.
func (f *Model) survey(k Instrument) SurveyError {
	switch k {
	case Magnetic:
		return f.Magnetic
	case Gyro:
		return f.Gyro
	}
	return f.Unknown
}

// RoundingSD returns the standard deviation in degrees that rounding to a
// step of step degrees adds to a reading: step/sqrt(12), the standard
// deviation of a uniform error over one step (common practice). share is the
// part of the logger's readings that are rounded, in [0, 1].
func RoundingSD(step, share float64) float64 {
	if !(step > 0) || !(share > 0) {
		return 0
	}
	return step * math.Sqrt(math.Min(share, 1)/12)
}

// RoundedShare estimates the share of a logger's readings rounded to 5
// degrees from the share of values ending in 0 or 5 (0.2 expected of
// unrounded readings): (share05 - 0.2)/0.8, clipped to [0, 1].
func RoundedShare(share05 float64) float64 {
	return math.Max(0, math.Min(1, (share05-0.2)/0.8))
}

// DefaultRoundingStep is the rounding step, degrees, assumed for a logger
// whose readings pile up on 0s and 5s.
const DefaultRoundingStep = defaultRounding

// ReadModel reads an error model from JSON (the field names of [Model]'s
// JSON tags; absent fields take their defaults). Unknown fields and
// negative or non-finite values are errors that name the field.
func ReadModel(r io.Reader) (Model, error) {
	dec := json.NewDecoder(r)
	dec.DisallowUnknownFields()
	var m Model
	if err := dec.Decode(&m); err != nil {
		return Model{}, fmt.Errorf("error model: %w", err)
	}
	if err := m.Check(); err != nil {
		return Model{}, err
	}
	return m, nil
}
