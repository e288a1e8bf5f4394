package qa

import (
	"encoding/json"

	"corvane/internal/desurvey"
	"corvane/internal/jsonnum"
)

// Caution is stated in every report: QA findings guide judgement, they do not
// replace it.
const Caution = "QA flags point to data worth a second look; they guide a geologist's " +
	"judgement and do not replace it. Suggested corrections are never applied to the " +
	"logged values. Orientations feed slope and excavation design: base any design on " +
	"local codes and the judgement of a licensed practitioner."

// Collar is a hole's collar and final depth. Azimuth and dip follow the
// project conventions (dip negative below horizontal).
type Collar struct {
	HoleID    string  `json:"hole_id"`
	East      float64 `json:"easting"`
	North     float64 `json:"northing"`
	Elevation float64 `json:"elevation"`
	Azimuth   float64 `json:"azimuth"`
	Dip       float64 `json:"dip"`
	Depth     float64 `json:"depth"`
	Line      int     `json:"line,omitempty"` // source line, for messages; 0 if none
	// Problem is a problem of the whole hole found by the hole model (a
	// north correction it needs and cannot have, a station past the final
	// depth), "" when none; ProblemSource and ProblemLine locate it. Such a
	// hole is reported once and its measurements are not checked.
	Problem       string `json:"problem,omitempty"`
	ProblemSource string `json:"problem_source,omitempty"`
	ProblemLine   int    `json:"problem_line,omitempty"`
	// Path is the hole's path from the hole model (package holemodel), built
	// from the same collar and stations; nil to build it here.
	Path *desurvey.Path `json:"-"`
	// DeclinationSource says where the declination applied to the hole's
	// magnetic azimuths came from, as the hole model reports it (a computed
	// one names its model and decimal year); "" when none was applied.
	DeclinationSource string `json:"-"`
}

// Station is one survey station. Azimuth is in the same north reference as
// the collar azimuth and the picks (the caller applies declination and grid
// convergence first). Magnetic reports whether the shot was taken by a
// magnetic instrument (azimuth reference "magnetic" in the source).
type Station struct {
	HoleID   string  `json:"hole_id"`
	Depth    float64 `json:"depth"`
	Azimuth  float64 `json:"azimuth"`
	Dip      float64 `json:"dip"`
	Magnetic bool    `json:"magnetic,omitempty"`
	Line     int     `json:"line,omitempty"`
}

// OrientationRun is one orientation run: the core between From and To carries one
// orientation mark. Confidence is the logger's rating of the mark; Mismatch
// is the angle in degrees seen between this run's mark and the previous
// run's across the break at From (nil when not recorded).
type OrientationRun struct {
	HoleID     string   `json:"hole_id"`
	From       float64  `json:"from"`
	To         float64  `json:"to"`
	Confidence string   `json:"confidence"`
	Mismatch   *float64 `json:"mismatch,omitempty"`
	Line       int      `json:"line,omitempty"`
	ID         int64    `json:"id,omitempty"` // store id, when the run comes from one
}

// Measurement is one structure measurement as logged on the core.
type Measurement struct {
	HoleID string  `json:"hole_id"`
	Depth  float64 `json:"depth"`
	Alpha  float64 `json:"alpha"`
	// Beta is NaN for an unoriented measurement (no beta): its depth is
	// checked, nothing that needs an orientation.
	Beta   float64 `json:"beta"`
	Type   string  `json:"type,omitempty"`
	Logger string  `json:"logged_by,omitempty"`
	Line   int     `json:"line,omitempty"`
	ID     int64   `json:"id,omitempty"` // store id, when the measurement comes from one
}

// Pick is an orientation of the same hole from another source (for example
// an oriented borehole image log), on its own depth scale.
type Pick struct {
	HoleID       string  `json:"hole_id"`
	Depth        float64 `json:"depth"`
	Dip          float64 `json:"dip"`
	DipDirection float64 `json:"dip_direction"`
	Line         int     `json:"line,omitempty"`
}

// MagneticZone is a depth interval of a hole where magnetic rock makes
// magnetic survey azimuths unreliable.
type MagneticZone struct {
	HoleID string  `json:"hole_id"`
	From   float64 `json:"from"`
	To     float64 `json:"to"`
}

// Input is everything one QA run looks at. Nothing in it is changed.
type Input struct {
	Collars       []Collar         `json:"collars"`
	Surveys       []Station        `json:"surveys"`
	Runs          []OrientationRun `json:"runs"`
	Measurements  []Measurement    `json:"measurements"`
	Picks         []Pick           `json:"picks,omitempty"`
	MagneticZones []MagneticZone   `json:"magnetic_zones,omitempty"`
	// SurveySets are a hole's several surveys by kind; a magnetic and a gyro
	// set of one hole are compared (see [CompareSets]).
	SurveySets []SurveySet `json:"survey_sets,omitempty"`
	// Problems are findings made while reading the inputs (for example rows
	// that could not be parsed); they are carried into the report as given.
	Problems []Finding `json:"problems,omitempty"`
}

// Severity of a finding.
const (
	SeverityFlag    = "flag"    // likely wrong: look at it before the data is used
	SeverityWarning = "warning" // suspect or degraded
	SeverityInfo    = "info"    // worth knowing
)

// Check codes, one per kind of finding.
const (
	CheckRunOverlap         = "run-overlap"
	CheckRunInvalid         = "run-invalid"
	CheckRunPastDepth       = "run-past-final-depth"
	CheckMismatch           = "mark-mismatch"
	CheckOutsideRun         = "measurement-outside-run"
	CheckUnusableRun        = "measurement-in-unusable-run"
	CheckMarkRotation       = "mark-rotation"
	CheckPickOffset         = "pick-beta-offset"
	CheckPickUnmatched      = "pick-unmatched"
	CheckPickShift          = "pick-depth-shift"
	CheckDogleg             = "survey-dogleg"
	CheckSurveyOutlier      = "survey-shot-outlier"
	CheckSurveyGap          = "survey-gap"
	CheckSurveyShort        = "survey-short-of-final-depth"
	CheckCollarDisagree     = "survey-collar-disagreement"
	CheckMagneticZone       = "survey-magnetic-in-zone"
	CheckInterference       = "survey-magnetic-interference"
	CheckSetOffset          = "survey-set-offset"
	CheckSurveyInvalid      = "survey-invalid"
	CheckHighAlpha          = "alpha-85-or-more"
	CheckNearVertical       = "near-vertical-hole"
	CheckPastFinalDepth     = "depth-past-final-depth"
	CheckDuplicate          = "duplicate-measurement"
	CheckDuplicateDepth     = "duplicate-depth"
	CheckBetaZero           = "beta-zero-in-bulk"
	CheckDigitPreference    = "digit-preference"
	CheckUnknownHole        = "unknown-hole"
	CheckMeasurementInvalid = "measurement-invalid"
)

// Finding is one QA observation: what, where, how large and why.
type Finding struct {
	Check    string  `json:"check"`
	Severity string  `json:"severity"`
	HoleID   string  `json:"hole_id,omitempty"`
	Depth    float64 `json:"depth"`              // depth of the finding (from-depth of an interval)
	DepthTo  float64 `json:"depth_to,omitempty"` // end of an interval finding
	Size     float64 `json:"size"`               // the measured quantity that triggered it
	Unit     string  `json:"unit,omitempty"`
	Source   string  `json:"source,omitempty"`  // input set: collars, surveys, runs, structures, picks
	Line     int     `json:"line,omitempty"`    // line in that input, when known
	ID       int64   `json:"id,omitempty"`      // store id of the run or measurement, when known
	Station  int     `json:"station,omitempty"` // survey findings: 1-based index of the station in the hole's survey sorted by depth
	Logger   string  `json:"logged_by,omitempty"`
	Message  string  `json:"message"`
}

// Pole is a lower-hemisphere line (for plane poles) in degrees.
type Pole struct {
	Trend  float64 `json:"trend"`
	Plunge float64 `json:"plunge"`
}

// RotationEstimate is a run's estimated mark rotation from the persistent
// fabric, or from reference picks.
type RotationEstimate struct {
	// Offset is the beta correction in degrees, (-180, 180]: adding it to
	// every logged beta of the run brings the run onto the reference. The
	// mark itself is estimated to be off by -Offset.
	Offset float64 `json:"beta_offset"`
	// SE is the standard error in degrees, -1 when undefined: for the
	// persistent fabric, from the error model (readings, fabric scatter,
	// the reference and its runs' marks); for picks, the circular standard
	// error of the offsets.
	SE          float64 `json:"standard_error"`
	HalfWidth95 float64 `json:"half_width_95"` // degrees; the 95% interval is Offset +- HalfWidth95
	Rbar        float64 `json:"mean_resultant_length"`
	N           int     `json:"n"`        // measurements the estimate rests on
	Excluded    int     `json:"excluded"` // measurements left out (too near the core axis or not the same fabric)
	// Reference is the fabric pole the run was compared with, and
	// ReferenceN the number of measurements behind it.
	Reference  Pole   `json:"reference"`
	ReferenceN int    `json:"reference_n"`
	RefSource  string `json:"reference_source"` // "neighbours", "hole", or "picks"
	// MisfitBefore and MisfitAfter are the median angles in degrees between
	// the run's poles and the reference before and after the correction.
	MisfitBefore float64 `json:"median_misfit_before"`
	MisfitAfter  float64 `json:"median_misfit_after"`
	Flagged      bool    `json:"flagged"`
	// Persistent fabric only: Tolerance is the tolerance the interval was
	// judged against (degrees); FabricSD the fabric's natural scatter
	// estimated from the reference (degrees); ReferenceSE the reference's
	// share of SE; Inconsistent is true when the run's offsets disagree more
	// than the error model allows (chi-square beyond its 99% point) and SE
	// was widened to their scatter.
	Tolerance    float64 `json:"tolerance,omitempty"`
	FabricSD     float64 `json:"fabric_sd,omitempty"`
	ReferenceSE  float64 `json:"reference_se,omitempty"`
	Inconsistent bool    `json:"inconsistent,omitempty"`
	// Before and After are the run's persistent-fabric poles as logged and as
	// they would be with the suggested correction; given for flagged runs
	// only, to keep reports of large programmes small.
	Before []Pole `json:"poles_before,omitempty"`
	After  []Pole `json:"poles_after,omitempty"`
}

// Suggestion is a corrected orientation for one measurement of a flagged run.
// It is a suggestion only: the logged values are not changed.
type Suggestion struct {
	Line                  int     `json:"line,omitempty"`
	ID                    int64   `json:"id,omitempty"`
	Depth                 float64 `json:"depth"`
	Type                  string  `json:"type,omitempty"`
	Alpha                 float64 `json:"alpha"`
	Beta                  float64 `json:"beta"`
	SuggestedBeta         float64 `json:"suggested_beta"`
	Dip                   float64 `json:"dip"`
	DipDirection          float64 `json:"dip_direction"`
	SuggestedDip          float64 `json:"suggested_dip"`
	SuggestedDipDirection float64 `json:"suggested_dip_direction"`
}

// MisfitStats summarises angles in degrees between matched poles.
type MisfitStats struct {
	N      int     `json:"n"`
	Mean   float64 `json:"mean"`
	Median float64 `json:"median"`
	P90    float64 `json:"p90"`
	Max    float64 `json:"max"`
}

// RunReport is what QA found about one orientation run.
type RunReport struct {
	From         float64  `json:"from"`
	To           float64  `json:"to"`
	Confidence   string   `json:"confidence"`
	Class        string   `json:"class"` // "confident", "other" or "unusable"
	Mismatch     *float64 `json:"mismatch,omitempty"`
	ID           int64    `json:"id,omitempty"`
	Measurements int      `json:"measurements"`
	Persistent   int      `json:"persistent"` // measurements of the persistent type
	Line         int      `json:"line,omitempty"`
	// Rotation is the estimate from the persistent fabric; nil when no
	// persistent type was named or the run has no usable measurements of it.
	Rotation    *RotationEstimate `json:"rotation,omitempty"`
	Suggestions []Suggestion      `json:"suggestions,omitempty"`
	// Picks compares the run with the reference picks matched in it.
	Picks *RunPicks `json:"picks,omitempty"`
}

// RunPicks is the comparison of one run with the reference picks.
type RunPicks struct {
	Misfit MisfitStats       `json:"misfit"`
	Offset *RotationEstimate `json:"implied_rotation,omitempty"`
}

// PickMatch is one matched pair of a reference pick and a core measurement.
type PickMatch struct {
	PickLine        int     `json:"pick_line,omitempty"`
	MeasurementLine int     `json:"measurement_line,omitempty"`
	MeasurementID   int64   `json:"measurement_id,omitempty"`
	PickDepth       float64 `json:"pick_depth"`
	CoreDepth       float64 `json:"core_depth"`
	Misfit          float64 `json:"misfit"` // degrees between the poles
}

// Unmatched is a pick or a measurement that found no partner.
type Unmatched struct {
	Line  int     `json:"line,omitempty"`
	Depth float64 `json:"depth"`
}

// HolePicks is the comparison of a hole's core with its reference picks.
type HolePicks struct {
	// Shift is the estimated constant depth shift: core depth = pick depth + Shift.
	Shift              float64     `json:"depth_shift"`
	Picks              int         `json:"picks"`
	Matched            int         `json:"matched"`
	Misfit             MisfitStats `json:"misfit"`
	Matches            []PickMatch `json:"matches,omitempty"`
	UnmatchedPicks     []Unmatched `json:"unmatched_picks,omitempty"`
	UnmatchedCore      int         `json:"unmatched_measurements"`
	UnmatchedCoreItems []Unmatched `json:"unmatched_measurement_items,omitempty"`
}

// Coverage is the length of core under orientation runs.
type Coverage struct {
	Length         float64 `json:"length"`          // final depth(s)
	Oriented       float64 `json:"oriented"`        // under any run (overlaps counted once)
	Confident      float64 `json:"confident"`       // under runs rated confident
	Unusable       float64 `json:"unusable"`        // under runs rated unusable
	OrientedShare  float64 `json:"oriented_share"`  // Oriented / Length
	ConfidentShare float64 `json:"confident_share"` // Confident / Length
}

// StationReport is one survey station with its leave-one-out residual.
type StationReport struct {
	Depth    float64 `json:"depth"`
	Azimuth  float64 `json:"azimuth"`
	Dip      float64 `json:"dip"`
	Magnetic bool    `json:"magnetic,omitempty"`
	// Residual is the angle in degrees between the station's direction and
	// the one predicted from its two neighbours; -1 for the first and last
	// stations, which have no neighbour on one side.
	Residual float64 `json:"residual"`
	// DLS is the dogleg severity of the interval ending at this station.
	DLS float64 `json:"dogleg_severity"`
}

// HoleReport is what QA found about one hole.
type HoleReport struct {
	HoleID string `json:"hole_id"`
	// DeclinationSource is the collar's: where the declination applied to
	// the hole's magnetic azimuths came from, e.g.
	// "computed (IGRF-14 at 2023.5808)"; absent when none was applied.
	DeclinationSource string          `json:"declination_source,omitempty"`
	Depth             float64         `json:"depth"`
	Azimuth           float64         `json:"azimuth"`
	Dip               float64         `json:"dip"`
	Coverage          Coverage        `json:"coverage"`
	Measurements      int             `json:"measurements"`
	OutsideRuns       int             `json:"outside_runs"`
	InUnusable        int             `json:"in_unusable_runs"`
	Fabric            *Pole           `json:"fabric,omitempty"` // hole-wide mean pole of the persistent type
	FabricN           int             `json:"fabric_n,omitempty"`
	Runs              []RunReport     `json:"runs"`
	Stations          []StationReport `json:"stations"`
	// ScatterMAD is the hole's robust scatter of leave-one-out residuals
	// (1.4826 x median absolute deviation, degrees).
	ScatterMAD float64 `json:"survey_scatter"`
	// MedianResidual is the median leave-one-out residual (degrees).
	MedianResidual float64    `json:"survey_median_residual"`
	Picks          *HolePicks `json:"picks,omitempty"`
	Flags          int        `json:"flags"`
	Warnings       int        `json:"warnings"`
}

// Summary is the programme-wide picture.
type Summary struct {
	Holes        int            `json:"holes"`
	Measurements int            `json:"measurements"`
	Runs         int            `json:"runs"`
	Picks        int            `json:"picks"`
	Coverage     Coverage       `json:"coverage"`
	OutsideRuns  int            `json:"outside_runs"`
	InUnusable   int            `json:"in_unusable_runs"`
	BySeverity   map[string]int `json:"by_severity"`
	ByCheck      map[string]int `json:"by_check"`
	RunsFlagged  int            `json:"runs_flagged"`
}

// Report is the result of [Run].
type Report struct {
	Caution string `json:"caution"`
	// Convention is the core-angle convention the measurements were read
	// with, in the command-line words.
	Convention string         `json:"convention"`
	Options    Options        `json:"options"`
	Summary    Summary        `json:"summary"`
	Holes      []HoleReport   `json:"holes"`
	Digits     []DigitTest    `json:"digit_preference"`
	BetaZero   []BetaZeroTest `json:"beta_zero"`
	Findings   []Finding      `json:"findings"`
}

// MarshalJSON writes the report with every number rounded to 1e-6
// (jsonnum.RoundAll), so every door gives the same figures without
// floating-point noise such as 0.9999999999999999.
func (r Report) MarshalJSON() ([]byte, error) {
	type plain Report
	b, err := json.Marshal(plain(r))
	if err != nil {
		return nil, err
	}
	return jsonnum.RoundAll(b)
}
