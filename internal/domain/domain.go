// Package domain holds corvane's service entities, their validation rules, the
// error type with kinds, and the contract every store implements.
//
// domain imports only the standard library. Entities are plain values; the
// business rules that span several entities (derived values, imports,
// authorisation) live in package service, never in a store.
//
// Angles follow the project's conventions (design/conventions.md): azimuths
// clockwise from north in [0, 360) (360 is accepted and stored as 0), hole dip
// negative below horizontal, core angles alpha in [0, 90] and beta, gamma in
// [0, 360). Lengths are in the project's unit (m or ft).
package domain

import (
	"corvane/internal/uncertainty"
	"encoding/json"
	"slices"
	"strings"
	"time"
)

// Vocabularies of the conventions a project records its core angles in. The
// words are those of the convert command line.
const (
	RefLineBottom = "bottom" // bottom-of-hole reference line (default)
	RefLineTop    = "top"    // top-of-hole reference line

	BetaApexDownHole = "downhole" // beta measured to the down-hole apex (default)
	BetaApexUpHole   = "uphole"

	GammaClockwise     = "clockwise" // default
	GammaAnticlockwise = "anticlockwise"

	UnitMetre = "m"
	UnitFoot  = "ft"

	MagneticAuto = "auto" // magnetic model choices (package northref's words)
	MagneticWMM  = "wmm"
	MagneticIGRF = "igrf"

	AzimuthTrue     = "true"
	AzimuthGrid     = "grid"
	AzimuthMagnetic = "magnetic"
)

// Project is one drilling programme and the conventions its data are recorded in.
type Project struct {
	ID          int64  `json:"id"`
	Name        string `json:"name"`
	Description string `json:"description"`
	// RefLine is the orientation reference line: "bottom" or "top".
	RefLine string `json:"ref_line"`
	// BetaApex is the ellipse apex beta is measured to: "downhole" or "uphole".
	BetaApex string `json:"beta_apex"`
	// GammaSense is the sense gamma is measured in: "clockwise" or "anticlockwise".
	GammaSense string `json:"gamma_sense"`
	// LengthUnit is "m" or "ft".
	LengthUnit string `json:"length_unit"`
	// OutputAzimuthRef is the north reference of derived azimuths: "grid" or "true".
	OutputAzimuthRef string `json:"output_azimuth_ref"`
	// Declination is the project's default magnetic declination in degrees,
	// positive when magnetic north is east of true north (true = magnetic +
	// D); nil until someone sets it. It applies to magnetic azimuths of holes
	// without a declination of their own (survey set, then hole); when it is
	// unset the declination is computed from the collar's crs and the survey
	// date with the project's magnetic model, and a hole where that is
	// impossible has an error.
	Declination *float64 `json:"declination"`
	// Convergence is the project's default grid convergence in degrees,
	// positive when grid north is east of true north (grid = true - C); nil
	// until someone sets it. It applies to holes without their own; when it
	// is unset it is computed from the collar's crs label (an EPSG code).
	Convergence *float64 `json:"convergence"`
	// MagneticModel chooses the model of computed declinations: "auto"
	// (default: the World Magnetic Model for 2025.0-2030.0, IGRF-14 before),
	// "wmm" or "igrf".
	MagneticModel string `json:"magnetic_model"`
	// LocalGrid declares the project's local (mine) grid, null when none: a
	// JSON object of package localgrid's Spec (name, grid_crs, and rotation,
	// scale, origin or control_points). The service checks it.
	LocalGrid json.RawMessage `json:"local_grid"`
	// ErrorModel is the project's standard errors for the uncertainty of
	// its orientations (package uncertainty; a zero field is its default).
	ErrorModel uncertainty.Model `json:"error_model"`
	// PersistentFabric is the type code of the fabric that runs through
	// the holes (e.g. bedding), used by the QA's fabric checks when a
	// request names none; "" when not set.
	PersistentFabric string `json:"persistent_fabric"`
	// SurveyPriority orders the survey set kinds for holes with several
	// sets and none preferred, e.g. "gyro,magnetic,planned": the first kind a
	// hole has is used. "" leaves such holes on their survey set.
	SurveyPriority string    `json:"survey_priority"`
	Version        int64     `json:"version"`
	CreatedAt      time.Time `json:"created_at"`
	UpdatedAt      time.Time `json:"updated_at"`
}

// TypeCode is one word of a project's structure vocabulary, e.g. "BD" for
// bedding. Measurements must use a code of their project's vocabulary.
type TypeCode struct {
	ProjectID   int64  `json:"project_id"`
	Code        string `json:"code"`
	Description string `json:"description"`
	// Kind is "plane" or "line": a line type's measurements carry gamma (the
	// lineation), a plane type's never do.
	Kind string `json:"kind"`
	// Colour (#rrggbb) and Mark (a shape of visual.Marks) draw the type in
	// every view; the service fills empty ones with the next free default.
	Colour string `json:"colour"`
	Mark   string `json:"mark"`
	// Version counts the entry's changes (sync compares it).
	Version int64 `json:"version"`
}

// Hole is a drill hole: its collar and its planned direction.
type Hole struct {
	ID int64 `json:"id"`
	// GlobalID is the hole's identity on every machine that holds it (a
	// UUID made where the row was created); the store makes one when empty.
	GlobalID  string  `json:"global_id"`
	ProjectID int64   `json:"project_id"`
	Name      string  `json:"name"` // the hole id used in files, e.g. "ZR001"; unique in a project
	East      float64 `json:"easting"`
	North     float64 `json:"northing"`
	Elevation float64 `json:"elevation"`
	// Azimuth and Dip of the collar; dip negative below horizontal. The collar
	// direction acts as the survey station at depth 0 when the survey has none.
	Azimuth float64 `json:"azimuth"`
	// AzimuthRef is the north the collar azimuth is given against: "grid"
	// (the default, matching the collar coordinates), "true" or "magnetic".
	AzimuthRef string  `json:"azimuth_ref"`
	Dip        float64 `json:"dip"`
	FinalDepth float64 `json:"final_depth"`
	CRS        string  `json:"crs"` // coordinate system label, e.g. "EPSG:32750"; free text
	// Declination and GridConvergence are numbers given for this hole
	// (degrees; true = magnetic + D, grid = true - C), nil when not given;
	// they win over the project's defaults and computed values.
	Declination     *float64 `json:"declination"`
	GridConvergence *float64 `json:"grid_convergence"`
	// SurveyDate is the date of the hole's survey (YYYY-MM-DD or empty), for
	// computing the declination of a magnetic collar azimuth or survey set
	// without a date of its own.
	SurveyDate string `json:"survey_date"`
	// LocalGrid declares the hole's own local (mine) grid, null when none:
	// it wins over the project's local_grid for this hole (same form).
	LocalGrid json.RawMessage `json:"local_grid"`
	Started   string          `json:"started"`  // YYYY-MM-DD or empty
	Finished  string          `json:"finished"` // YYYY-MM-DD or empty
	Version   int64           `json:"version"`
	CreatedAt time.Time       `json:"created_at"`
	UpdatedAt time.Time       `json:"updated_at"`
}

// Station is one survey station: measured depth along the hole, azimuth, dip.
type Station struct {
	Depth   float64 `json:"depth"`
	Azimuth float64 `json:"azimuth"`
	Dip     float64 `json:"dip"`
}

// Where a correction (declination, grid convergence) came from.
const (
	SourceGiven    = "given"    // a number sent with the data
	SourceComputed = "computed" // from the magnetic model or the projection
)

// SurveySet is the whole survey of one hole. It is always replaced as a whole.
type SurveySet struct {
	HoleID int64 `json:"hole_id"`
	// AzimuthRef is the north the station azimuths were measured from:
	// "true", "grid" or "magnetic".
	AzimuthRef string `json:"azimuth_ref"`
	SurveyDate string `json:"survey_date"` // YYYY-MM-DD or empty
	// Declination is a declination given with the set for its magnetic
	// azimuths; it wins over the hole's and the project's. nil means none.
	Declination *float64 `json:"declination"`
	// DeclinationSource is "given" when the set has a declination, "" when
	// not. It is read-only: the service sets it and ignores what a client
	// sends. (A declination the magnetic model gives is computed on every
	// read by the hole model, never stored.)
	DeclinationSource string `json:"declination_source"`
	// Instrument is the kind of survey instrument: "magnetic", "gyro" or
	// "unknown" (the default), for the survey's share of each
	// measurement's uncertainty.
	Instrument string    `json:"instrument"`
	Stations   []Station `json:"stations"`
	Version    int64     `json:"version"`
	UpdatedAt  time.Time `json:"updated_at"`
}

// Kinds of survey set: a hole may have one set of each kind beside its
// survey set (see [KindSet]).
const (
	SurveyGyro     = "gyro"
	SurveyMagnetic = "magnetic"
	SurveyPlanned  = "planned"
	SurveyOther    = "other"
)

// SurveyKinds lists the kinds in the order files and messages show them.
var SurveyKinds = []string{SurveyGyro, SurveyMagnetic, SurveyPlanned, SurveyOther}

// KindSet is one of a hole's several survey sets, at most one of each kind
// (a gyro survey after a magnetic single-shot one, the planned path). Each
// is replaced as a whole. At most one set of a hole is Preferred; without
// one the project's SurveyPriority chooses, and without either the hole's
// survey set ([SurveySet]) is used. The set in use is the one derived
// values, paths and corrections are built from, and they name it.
type KindSet struct {
	HoleID int64 `json:"hole_id"`
	// Kind is gyro, magnetic, planned or other.
	Kind string `json:"kind"`
	// Instrument is the kind of survey instrument that made the set:
	// "magnetic", "gyro" or "unknown" (the default), for the survey's share
	// of the uncertainty of measurements when the set is in use.
	Instrument string `json:"instrument"`
	// AzimuthRef is the north the station azimuths were measured from:
	// "true", "grid" or "magnetic".
	AzimuthRef string `json:"azimuth_ref"`
	SurveyDate string `json:"survey_date"` // YYYY-MM-DD or empty
	// Declination is a declination given with the set for its magnetic
	// azimuths; nil means none (the hole's, the project's or a computed one).
	Declination *float64  `json:"declination"`
	Preferred   bool      `json:"preferred"`
	Stations    []Station `json:"stations"`
	Version     int64     `json:"version"`
	UpdatedAt   time.Time `json:"updated_at"`
}

// SurveyOfHole names the hole's survey set where a survey in use is named
// ("survey"); a set by kind is named by its kind.
const SurveyOfHole = "survey"

// UsedSurvey is the one rule that picks the survey a hole's derived values,
// path and corrections are built from, at every door: the kind of its
// preferred set (preferred, "" when none); else the first kind of the
// project's priority (canonical, see [ParseSurveyPriority]) the hole has;
// else its survey set ("survey") when it has one; else its first kind in the
// order gyro, magnetic, planned, other. kinds are the kinds of the hole's
// sets. "" when the hole has no survey at all.
func UsedSurvey(kinds []string, preferred, priority string, hasSurvey bool) string {
	used, _ := UsedSurveyWhy(kinds, preferred, priority, hasSurvey)
	return used
}

// Reasons [UsedSurveyWhy] gives for the survey in use, one per step of the
// rule.
const (
	UsedPreferred = "preferred"  // the hole's set marked preferred
	UsedPriority  = "priority"   // the first kind of the project's survey priority the hole has
	UsedOnlySet   = "survey-set" // the hole's survey set (no preferred set, no priority kind)
	UsedKindOrder = "kind-order" // the first kind in the order gyro, magnetic, planned, other
)

// UsedSurveyWhy is [UsedSurvey] with the step of the rule that chose:
// [UsedPreferred], [UsedPriority], [UsedOnlySet] or [UsedKindOrder]; "" with
// no survey.
func UsedSurveyWhy(kinds []string, preferred, priority string, hasSurvey bool) (used, why string) {
	if preferred != "" {
		return preferred, UsedPreferred
	}
	if priority != "" {
		for _, k := range strings.Split(priority, ",") {
			if slices.Contains(kinds, k) {
				return k, UsedPriority
			}
		}
	}
	if hasSurvey {
		return SurveyOfHole, UsedOnlySet
	}
	for _, k := range SurveyKinds {
		if slices.Contains(kinds, k) {
			return k, UsedKindOrder
		}
	}
	return "", ""
}

// Survey returns the set as a [SurveySet], the shape the hole model reads.
func (k KindSet) Survey() SurveySet {
	ss := SurveySet{HoleID: k.HoleID, AzimuthRef: k.AzimuthRef, SurveyDate: k.SurveyDate, Declination: k.Declination,
		Instrument: k.Instrument, Stations: k.Stations, Version: k.Version, UpdatedAt: k.UpdatedAt}
	if k.Declination != nil {
		ss.DeclinationSource = SourceGiven
	}
	return ss
}

// Run confidence ratings, best first.
var Confidences = []string{"good", "fair", "poor", "none"}

// Run is one orientation run: the core between two depths oriented from one
// orientation mark.
type Run struct {
	ID       int64   `json:"id"`
	GlobalID string  `json:"global_id"` // identity on every machine (see [Hole])
	HoleID   int64   `json:"hole_id"`
	From     float64 `json:"from"`
	To       float64 `json:"to"`
	// Confidence is the mark-confidence rating, one of [Confidences]; "none"
	// means the run cannot be used for orientation.
	Confidence string `json:"confidence"`
	// Mismatch is the angle in degrees seen between the marks across the run
	// break; nil when not measured.
	Mismatch  *float64  `json:"mismatch"`
	Comment   string    `json:"comment"`
	Version   int64     `json:"version"`
	CreatedAt time.Time `json:"created_at"`
	UpdatedAt time.Time `json:"updated_at"`
}

// Measurement is one structure measured on oriented core. Derived values are
// not part of it: the service computes them on every read.
type Measurement struct {
	ID        int64   `json:"id"`
	GlobalID  string  `json:"global_id"` // identity on every machine (see [Hole])
	ProjectID int64   `json:"project_id"`
	HoleID    int64   `json:"hole_id"`
	Depth     float64 `json:"depth"`
	Alpha     float64 `json:"alpha"`
	// Beta is nil for an unoriented measurement (core without an
	// orientation mark): it keeps its angle to the core axis and the hole
	// direction, and has no dip or dip direction.
	Beta *float64 `json:"beta"`
	// Gamma locates a lineation on the plane; nil for a plane alone.
	Gamma             *float64  `json:"gamma"`
	TypeCode          string    `json:"type"`
	ApparentThickness *float64  `json:"apparent_thickness"`
	Comment           string    `json:"comment"`
	LoggedBy          string    `json:"logged_by"`
	LoggedAt          time.Time `json:"logged_at"`
	Version           int64     `json:"version"`
	CreatedAt         time.Time `json:"created_at"`
	UpdatedAt         time.Time `json:"updated_at"`
}

// Audit actions.
const (
	ActionCreate = "create"
	ActionUpdate = "update"
	ActionDelete = "delete"
)

// AuditEntry records who created, changed or deleted what and when.
type AuditEntry struct {
	ID        int64           `json:"id"`
	ProjectID int64           `json:"project_id"`
	ActorName string          `json:"actor"`
	TokenID   int64           `json:"token_id"` // 0 for the local command line
	Entity    string          `json:"entity"`   // "project", "hole", "survey", "run", "measurement", "type_code", "token"
	EntityID  string          `json:"entity_id"`
	Action    string          `json:"action"`
	At        time.Time       `json:"at"`
	Before    json.RawMessage `json:"before,omitempty"`
	After     json.RawMessage `json:"after,omitempty"`
}

// Role is what a token may do in its project. Roles are ordered:
// read < log < admin; a higher role may do all a lower one may.
type Role string

// The roles.
const (
	RoleRead  Role = "read"  // read everything in the project
	RoleLog   Role = "log"   // also create, change and delete measurements and runs
	RoleAdmin Role = "admin" // also projects, holes, surveys, vocabulary, imports of any kind
)

// Rank orders roles; an unknown role ranks 0.
func (r Role) Rank() int {
	switch r {
	case RoleRead:
		return 1
	case RoleLog:
		return 2
	case RoleAdmin:
		return 3
	}
	return 0
}

// AllProjects as a token's ProjectID makes it valid in every project (a site
// token); only such a token with the admin role may create projects.
const AllProjects int64 = 0

// Token is an API token. The secret itself is never stored: Hash is the hex
// SHA-256 of the secret. The secrets are 32 random bytes, so a fast hash is
// the right one (no password stretching is needed against guessing).
type Token struct {
	ID        int64     `json:"id"`
	ProjectID int64     `json:"project_id"` // AllProjects (0) for a site token
	Name      string    `json:"name"`
	Role      Role      `json:"role"`
	Hash      string    `json:"-"`
	CreatedAt time.Time `json:"created_at"`
}

// Idempotency remembers the result of a request made with an idempotency key,
// so a retry returns the first result and writes nothing.
type Idempotency struct {
	ProjectID   int64           `json:"project_id"`
	Key         string          `json:"key"`
	RequestHash string          `json:"request_hash"` // hex SHA-256 of what was asked
	Result      json.RawMessage `json:"result"`
	CreatedAt   time.Time       `json:"created_at"`
}

// CoreInterval is one core interval of a hole logged for rock-mass quality
// (a core run or a logged length): the lengths recovered, of solid core and
// of sound pieces, or the pieces themselves, and the counts of breaks.
// Optional values are nil when not logged. A hole's intervals are replaced
// as a whole; the service validates them with package coreinterval (no
// overlaps, inside the hole, solid <= recovered <= length, sound <= solid).
type CoreInterval struct {
	ID     int64   `json:"id"`
	HoleID int64   `json:"hole_id"`
	From   float64 `json:"from"`
	To     float64 `json:"to"`
	// Recovered is the length of core recovered; Solid the length of solid
	// (full-diameter) core; Sound the summed length of sound pieces at least
	// 100 mm long measured along the core axis (give Sound or Pieces).
	Recovered *float64 `json:"recovered"`
	Solid     *float64 `json:"solid"`
	Sound     *float64 `json:"sound"`
	// Pieces are the lengths of the core pieces between natural breaks
	// along the core axis; empty when not logged.
	Pieces []float64 `json:"pieces"`
	// NaturalBreaks and InducedBreaks count the natural and the
	// drilling-induced breaks.
	NaturalBreaks *int `json:"natural_breaks"`
	InducedBreaks *int `json:"induced_breaks"`
	// Confidence is the run's orientation confidence, one of [Confidences],
	// or "" when not given.
	Confidence string `json:"confidence"`
}
