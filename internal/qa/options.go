package qa

import (
	"fmt"
	"math"

	"corvane/internal/coreangle"
	"corvane/internal/uncertainty"
)

// Options are the thresholds and choices of a QA run. A zero field takes its
// default (see [DefaultOptions]); every default is stated with where it comes
// from.
type Options struct {
	// Convention is the project's core-angle convention (reference line,
	// beta apex). The zero value is bottom-of-hole line, beta to the
	// down-hole apex. The report states it as text.
	Convention coreangle.Convention `json:"-"`

	// Feet reports whether depths are in feet; dogleg severity is then per
	// 100 ft instead of per 30 m.
	Feet bool `json:"feet,omitempty"`

	// ConfidentRatings are the run confidence ratings counted as oriented
	// with confidence; UnusableRatings are those meaning the mark cannot be
	// used. Compared without regard to case. Defaults: good, fair; none,
	// unusable (the vocabulary of corvane's demo data).
	ConfidentRatings []string `json:"confident_ratings"`
	UnusableRatings  []string `json:"unusable_ratings"`
	// MismatchTolerance, degrees: mark mismatch across a run break beyond it
	// is flagged. Default 10 (common practice, from memory; adjust to the
	// programme's own standard).
	MismatchTolerance float64 `json:"mismatch_tolerance"`

	// PersistentType is the structure type treated as a persistent fabric
	// (for example bedding); empty skips the mark-rotation check.
	PersistentType string `json:"persistent_type,omitempty"`
	// Reference is "neighbours" (default: the fabric in the nearest
	// Neighbours runs on each side, the run itself left out) or "hole" (the
	// hole-wide fabric, the run itself left out).
	Reference  string `json:"reference"`
	Neighbours int    `json:"neighbours"` // default 3
	// MinReference is the number of persistent poles the neighbours must
	// hold; with fewer the hole-wide fabric is the reference. Default 5.
	MinReference int `json:"min_reference"`
	// RotationTolerance, degrees: a run's mark is flagged when the 95%
	// interval of its rotation, computed with the error model from however
	// many measurements the run has, excludes zero by more than this (every
	// value in the interval is beyond +-RotationTolerance). Default 10
	// (the mismatch tolerance, common practice).
	RotationTolerance float64 `json:"rotation_tolerance"`
	// Errors is the error model (reading, mark and survey standard errors);
	// zero fields take the defaults of package uncertainty. A logger whose
	// alpha or beta fails the terminal-digit test has that reading error
	// widened by the rounding (uncertainty.RoundingSD) instead of raising
	// flags.
	Errors uncertainty.Model `json:"error_model"`

	// RotationThreshold and MinRunCount apply to the beta offsets implied by
	// reference picks: a run is flagged when |offset| exceeds
	// RotationThreshold degrees, its 95% interval excludes 0 and it rests on
	// at least MinRunCount matches. Defaults 15 and 5.
	RotationThreshold float64 `json:"rotation_threshold"`
	MinRunCount       int     `json:"min_run_count"`
	// FabricMisfit, degrees: a measurement whose pole stays further than this
	// from the reference after the best rotation about the core axis is left
	// out of the estimate (not the same fabric). Default 20.
	FabricMisfit float64 `json:"fabric_misfit"`

	// PickWindow is the depth window for matching picks to core
	// measurements once the depth shift is applied (default 0.3, in the
	// project's length unit); MaxDepthShift bounds the shift search (default
	// 3) and ShiftStep is its grid step (default 0.01).
	PickWindow    float64 `json:"pick_window"`
	MaxDepthShift float64 `json:"max_depth_shift"`
	ShiftStep     float64 `json:"shift_step"`

	// DoglegThreshold is the dogleg severity in degrees per 30 m (or per 100
	// ft) above which an interval is flagged. Default 3 (common practice).
	DoglegThreshold float64 `json:"dogleg_threshold"`
	// OutlierFactor and OutlierFloor: a station is flagged when its
	// leave-one-out residual exceeds OutlierFactor times the median residual
	// of the hole's other stations (its neighbours left out) and is above
	// OutlierFloor degrees. Defaults 4 (about 4.7 standard deviations for
	// normal shot errors, whose residuals are Rayleigh distributed) and 1.
	OutlierFactor float64 `json:"outlier_factor"`
	OutlierFloor  float64 `json:"outlier_floor"`
	// NominalResidual, degrees, stands in for the median residual of a hole
	// with too few stations to show its own (fewer than three besides the
	// station and its neighbours). Default 0.5 (a typical single-shot
	// precision, from memory).
	NominalResidual float64 `json:"nominal_residual"`
	// GapThreshold: a gap between stations (or from the collar to the first
	// station) longer than this is flagged. Default 60 (twice the usual 30 m
	// survey interval, common practice).
	GapThreshold float64 `json:"gap_threshold"`
	// ShortTolerance: a survey whose last station is more than this above
	// the final depth is flagged. Default 30.
	ShortTolerance float64 `json:"short_tolerance"`
	// CollarTolerance, degrees: the first station may differ from the collar
	// direction by this plus the dogleg threshold over its depth. Default 5.
	CollarTolerance float64 `json:"collar_tolerance"`

	// InterferenceThreshold, degrees: where a hole has a magnetic and a gyro
	// survey set, magnetic stations whose azimuth departs from the gyro
	// set's by more than this (beyond the two sets' median difference) are
	// flagged as likely magnetic interference. Default 2 (about twice a
	// magnetic single-shot's azimuth uncertainty of about 1 degree, from
	// memory).
	InterferenceThreshold float64 `json:"interference_threshold"`

	// HighAlpha: measurements with alpha at or above it are noted (beta
	// poorly defined). Default 85.
	HighAlpha float64 `json:"high_alpha"`
	// NearVertical, degrees from vertical: a hole steeper than this at a
	// measurement cannot be oriented reliably by gravity. Default 5.
	NearVertical float64 `json:"near_vertical"`

	// DigitMinCount, DigitP and DigitShare05: a logger's alpha or beta values
	// are flagged for digit preference when there are at least DigitMinCount
	// of them, the chi-square p-value is below DigitP and the share of 0s and
	// 5s is at least DigitShare05. Defaults 50, 0.001, 0.3 (0.2 expected).
	DigitMinCount int     `json:"digit_min_count"`
	DigitP        float64 `json:"digit_p"`
	DigitShare05  float64 `json:"digit_share_0_5"`
	// BetaZeroP and BetaZeroShare: beta 0/360 in bulk is flagged when the
	// binomial p-value is below BetaZeroP and the share at least
	// BetaZeroShare. Defaults 0.001 and 0.01 (1/360 = 0.0028 expected).
	BetaZeroP     float64 `json:"beta_zero_p"`
	BetaZeroShare float64 `json:"beta_zero_share"`
}

// DefaultOptions returns the options with every default filled in.
func DefaultOptions() Options {
	var o Options
	return o.withDefaults()
}

func (o Options) withDefaults() Options {
	if len(o.ConfidentRatings) == 0 {
		o.ConfidentRatings = []string{"good", "fair"}
	}
	if len(o.UnusableRatings) == 0 {
		o.UnusableRatings = []string{"none", "unusable"}
	}
	def := func(p *float64, v float64) {
		if *p == 0 {
			*p = v
		}
	}
	defi := func(p *int, v int) {
		if *p == 0 {
			*p = v
		}
	}
	def(&o.MismatchTolerance, 10)
	if o.Reference == "" {
		o.Reference = "neighbours"
	}
	defi(&o.Neighbours, 3)
	def(&o.RotationThreshold, 15)
	def(&o.RotationTolerance, 10)
	defi(&o.MinReference, 5)
	o.Errors = o.Errors.WithDefaults()
	defi(&o.MinRunCount, 5)
	def(&o.FabricMisfit, 20)
	def(&o.PickWindow, 0.3)
	def(&o.MaxDepthShift, 3)
	def(&o.ShiftStep, 0.01)
	def(&o.DoglegThreshold, 3)
	def(&o.OutlierFactor, 4)
	def(&o.OutlierFloor, 1)
	def(&o.NominalResidual, 0.5)
	def(&o.GapThreshold, 60)
	def(&o.ShortTolerance, 30)
	def(&o.CollarTolerance, 5)
	def(&o.InterferenceThreshold, 2)
	def(&o.HighAlpha, 85)
	def(&o.NearVertical, 5)
	defi(&o.DigitMinCount, 50)
	def(&o.DigitP, 0.001)
	def(&o.DigitShare05, 0.3)
	def(&o.BetaZeroP, 0.001)
	def(&o.BetaZeroShare, 0.01)
	return o
}

// Bounds on the options that size the work of a run.
const (
	// MaxShiftSteps bounds the depth-shift grid: 2*MaxDepthShift/ShiftStep+1
	// shifts are tried, each against every pick.
	MaxShiftSteps = 20001
	// MaxNeighbours bounds Neighbours (runs on each side of a run).
	MaxNeighbours = 100
	// MaxPickWindow bounds PickWindow (length units).
	MaxPickWindow = 50.0
)

// OptionError names an option that is out of bounds by its JSON name.
type OptionError struct {
	Option string
	Msg    string
}

func (e *OptionError) Error() string { return e.Option + ": " + e.Msg }

func optErr(name, format string, args ...any) *OptionError {
	return &OptionError{Option: name, Msg: fmt.Sprintf(format, args...)}
}

// Check refuses options a run cannot use: thresholds that are negative or
// not numbers, an unknown fabric reference, and the options that size the
// work past their bounds (MaxShiftSteps, MaxNeighbours, MaxPickWindow). The
// error is an *OptionError naming the option by its JSON name. Zero values
// take the defaults and pass.
func (o Options) Check() error {
	switch o.Reference {
	case "", "neighbours", "hole":
	default:
		return optErr("reference", "reference must be neighbours or hole, got %q", o.Reference)
	}
	for _, f := range []struct {
		name string
		v    float64
	}{
		{"mismatch_tolerance", o.MismatchTolerance}, {"rotation_threshold", o.RotationThreshold}, {"rotation_tolerance", o.RotationTolerance},
		{"fabric_misfit", o.FabricMisfit}, {"pick_window", o.PickWindow}, {"max_depth_shift", o.MaxDepthShift},
		{"shift_step", o.ShiftStep}, {"dogleg_threshold", o.DoglegThreshold}, {"outlier_factor", o.OutlierFactor},
		{"outlier_floor", o.OutlierFloor}, {"nominal_residual", o.NominalResidual}, {"gap_threshold", o.GapThreshold},
		{"short_tolerance", o.ShortTolerance}, {"collar_tolerance", o.CollarTolerance}, {"interference_threshold", o.InterferenceThreshold}, {"high_alpha", o.HighAlpha},
		{"near_vertical", o.NearVertical}, {"digit_p", o.DigitP}, {"digit_share_0_5", o.DigitShare05},
		{"beta_zero_p", o.BetaZeroP}, {"beta_zero_share", o.BetaZeroShare},
	} {
		if math.IsNaN(f.v) || math.IsInf(f.v, 0) || f.v < 0 {
			return optErr(f.name, "%s must be a number >= 0 (0 takes the default), got %v", f.name, f.v)
		}
	}
	for _, f := range []struct {
		name string
		v    int
	}{{"neighbours", o.Neighbours}, {"min_run_count", o.MinRunCount}, {"min_reference", o.MinReference}, {"digit_min_count", o.DigitMinCount}} {
		if f.v < 0 {
			return optErr(f.name, "%s must be >= 0 (0 takes the default), got %d", f.name, f.v)
		}
	}
	if err := o.Errors.Check(); err != nil {
		return optErr("error_model", "%v", err)
	}
	d := o.withDefaults()
	if d.Neighbours > MaxNeighbours {
		return optErr("neighbours", "neighbours must be at most %d, got %d", MaxNeighbours, d.Neighbours)
	}
	if d.PickWindow > MaxPickWindow {
		return optErr("pick_window", "pick_window must be at most %v, got %v", MaxPickWindow, d.PickWindow)
	}
	if steps := 2*d.MaxDepthShift/d.ShiftStep + 1; !(steps <= MaxShiftSteps) {
		return optErr("shift_step", "the depth-shift search from -%v to %v in steps of %v would try %.3g shifts; at most %d: raise shift_step or lower max_depth_shift",
			d.MaxDepthShift, d.MaxDepthShift, d.ShiftStep, steps, MaxShiftSteps)
	}
	return nil
}
