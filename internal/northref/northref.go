// Package northref computes the two corrections that turn survey azimuths
// into the project's north reference for a hole: the magnetic declination at
// the collar on the survey date, and the grid convergence at the collar.
//
// Sign conventions (the project's conventions):
//
//   - Declination D is positive when magnetic north lies east of true north:
//     true azimuth = magnetic azimuth + D.
//   - Convergence C is positive when grid north lies east of true north:
//     grid azimuth = true azimuth - C.
//
// So a magnetic azimuth becomes a grid azimuth as grid = magnetic + D - C.
//
// Collars are placed by a coordinate system label "EPSG:code" for the UTM
// zones of WGS 84 (EPSG:326NN north, 327NN south), NAD83, ETRS89, GDA94 and
// GDA2020 (MGA) and SIRGAS 2000 (the table [utm.Families]), written in any
// letter case. The collar's easting and northing are projected back to
// latitude and longitude with package utm (Krüger series, Karney 2011), the
// declination comes from the magnetic model chosen (see [MagneticModel]:
// the World Magnetic Model in package wmm for 2025.0-2030.0, the
// International Geomagnetic Reference Field in package igrf for 1900.0
// onwards), and the collar elevation (metres) is used as height above the WGS 84 ellipsoid.
// Collar elevations are usually above the geoid (sea level); the two differ by
// at most about 100 m, which changes the declination by far less than the
// model's own uncertainty, so no geoid model is applied.
//
// Dates are decimal years by the WMM convention (see [DecimalYear]).
//
// The package is pure and safe for concurrent use. Errors are *[Error]
// values naming the offending field so that callers can add the hole, file
// and line.
//
// Caution: a computed declination is a model value of the main field; it
// ignores local magnetic anomalies (common near magnetic orebodies) and
// magnetic storms. Where orientations feed slope or excavation design,
// check declinations against local observations and follow local codes and
// licensed practice.
package northref

import (
	"fmt"
	"math"
	"strconv"
	"strings"
	"time"

	"corvane/internal/geom"
	"corvane/internal/utm"
	"corvane/internal/wmm"
)

// Source says where a correction used in a conversion came from. The
// converter and the service print these words in their outputs.
type Source string

// The sources of a correction.
const (
	SourceNone     Source = "none"     // not applied (not needed for this reference)
	SourceGiven    Source = "given"    // a number supplied with the data; always wins
	SourceComputed Source = "computed" // computed here from the collar and survey date
)

// Fields named by an [Error].
const (
	FieldCRS        = "crs"
	FieldEasting    = "easting"
	FieldNorthing   = "northing"
	FieldElevation  = "elevation"
	FieldSurveyDate = "survey_date"
)

// Error reports input that prevents a correction from being computed. Field
// is one of the Field* constants, Value the offending text or number.
type Error struct {
	Field string
	Value string
	Msg   string
	Err   error // underlying cause, if any
}

func (e *Error) Error() string {
	if e.Value != "" {
		return fmt.Sprintf("%s %q: %s", e.Field, e.Value, e.Msg)
	}
	return fmt.Sprintf("%s: %s", e.Field, e.Msg)
}

func (e *Error) Unwrap() error { return e.Err }

// CRS is a coordinate system corvane can place collars in: a UTM zone of one
// of the datums in [utm.Families] (WGS 84, NAD83, ETRS89, GDA94 and GDA2020
// MGA, SIRGAS 2000).
type CRS struct {
	EPSG int      // e.g. 32750 or 7850
	Zone utm.Zone // zone number and hemisphere
	// Name is EPSG's name, e.g. "GDA2020 / MGA zone 50"; Grid the
	// projection on the datum's ellipsoid.
	Name string
	Grid *utm.TransverseMercator
}

// String returns the canonical label, e.g. "EPSG:32750".
func (c CRS) String() string { return "EPSG:" + strconv.Itoa(c.EPSG) }

// ParseCRS reads a coordinate system label "EPSG:code" for a code of the
// table [utm.Families]: WGS 84 / UTM (326NN north, 327NN south), NAD83 /
// UTM, ETRS89 / UTM, GDA94 and GDA2020 / MGA, SIRGAS 2000 / UTM. Case and
// surrounding spaces are ignored ("epsg:32750" is accepted). Other labels,
// including local mine grids, give an *Error naming the supported families.
//
// Latitude and longitude are then on the label's datum; the datums differ
// from WGS 84 by a few metres at most, which changes neither the
// declination nor the convergence measurably, so no datum shift is applied.
func ParseCRS(label string) (CRS, error) {
	s := strings.ToUpper(strings.TrimSpace(label))
	fail := func(msg string) (CRS, error) {
		return CRS{}, &Error{Field: FieldCRS, Value: label, Msg: msg}
	}
	if s == "" {
		return fail("no coordinate system label; give one such as EPSG:32750 (WGS 84 / UTM zone 50S), or give the corrections as numbers")
	}
	code, ok := strings.CutPrefix(s, "EPSG:")
	if !ok {
		return fail("unknown coordinate system label; corvane can place collars given as EPSG codes of these families: " + utm.SupportedText())
	}
	n, err := strconv.Atoi(strings.TrimSpace(code))
	if err != nil {
		return fail("the EPSG code is not a number")
	}
	c, err := utm.LookupEPSG(n)
	if err != nil {
		return fail("unsupported coordinate system; corvane can place collars given as EPSG codes of these families: " + utm.SupportedText())
	}
	return CRS{EPSG: n, Zone: c.Zone, Name: c.Name, Grid: c.TM}, nil
}

// Limits on collar coordinates: outside them the numbers are almost surely
// not UTM coordinates of the labelled zone (for example a local mine grid
// labelled as UTM, or the wrong hemisphere), and corrections from them would
// be silently wrong.
const (
	MinEasting       = 100000.0  // m; about 3.6 degrees west of the central meridian at the equator
	MaxEasting       = 900000.0  // m
	MaxNorthingNorth = 9500000.0 // m; UTM reaches 84N at about 9 329 000 m
	MinNorthingSouth = 1000000.0 // m; UTM reaches 80S at about 1 116 900 m
	MaxAbsElevation  = 10000.0   // m
)

// Result is what [Corrections] computed for one collar and date.
type Result struct {
	CRS      CRS
	Lat, Lon float64 // collar position, degrees (WGS 84)

	// Declination, degrees, positive east; set when HasDeclination.
	Declination    float64
	HasDeclination bool
	Year           float64   // decimal year the declination is for
	Model          string    // magnetic model name, e.g. "WMM-2025" or "IGRF-14"
	Field          wmm.Field // the full model result at the collar
	// PoleZone is the WMM report's class by horizontal intensity: caution
	// below 6000 nT, blackout below 2000 nT. See [Result.Caution].
	PoleZone wmm.Zone

	// Convergence, degrees, positive when grid north is east of true north;
	// set when HasConvergence. ScaleFactor is the UTM point scale there.
	Convergence    float64
	HasConvergence bool
	ScaleFactor    float64
}

// Caution returns a warning to show with a computed declination near a
// magnetic pole, or "" when there is none.
func (r Result) Caution() string {
	if !r.HasDeclination {
		return ""
	}
	switch r.PoleZone {
	case wmm.Blackout:
		return fmt.Sprintf("horizontal magnetic field %.0f nT is below 2000 nT (blackout zone near a magnetic pole): magnetic azimuths and the computed declination are unreliable", r.Field.H)
	case wmm.Caution:
		return fmt.Sprintf("horizontal magnetic field %.0f nT is below 6000 nT (caution zone near a magnetic pole): magnetic azimuths and the computed declination are degraded", r.Field.H)
	}
	return ""
}

// Corrections computes, for a collar at easting and northing (metres) in the
// coordinate system labelled crs, at elevation elevationM metres (used as
// height above the WGS 84 ellipsoid), the magnetic declination on date when
// wantDecl and the grid convergence when wantConv. The date's calendar day
// is turned into a decimal year by [DecimalYear]; it is ignored when
// !wantDecl, so the zero time may be passed.
//
// Errors (*Error): an unknown or missing label, coordinates outside the
// zone's plausible range, a missing date (zero time) when a declination is
// wanted, or a date outside the years of the magnetic model (a *[RangeError];
// 1900.0 to 2030.0 under [ModelAuto]).
//
// The magnetic model is [ModelAuto]; [CorrectionsModel] takes a choice.
func Corrections(crs string, easting, northing, elevationM float64, date time.Time, wantDecl, wantConv bool) (Result, error) {
	return CorrectionsModel(ModelAuto, crs, easting, northing, elevationM, date, wantDecl, wantConv)
}

// CorrectionsModel is [Corrections] with the magnetic model chosen by model
// ("" is [ModelAuto]).
func CorrectionsModel(model MagneticModel, crs string, easting, northing, elevationM float64, date time.Time, wantDecl, wantConv bool) (Result, error) {
	year := 0.0
	if wantDecl {
		if date.IsZero() {
			return Result{}, &Error{Field: FieldSurveyDate, Msg: "no survey date: a magnetic survey needs its date to compute the declination (or give the declination)"}
		}
		year = DecimalYear(date)
	}
	return correctionsYear(model, crs, easting, northing, elevationM, year, date.Format(time.DateOnly), wantDecl, wantConv)
}

// CorrectionsYear is [Corrections] with the date given as a decimal year
// (for example from [ParseDate]).
func CorrectionsYear(crs string, easting, northing, elevationM, year float64, wantDecl, wantConv bool) (Result, error) {
	return correctionsYear(ModelAuto, crs, easting, northing, elevationM, year, strconv.FormatFloat(year, 'f', -1, 64), wantDecl, wantConv)
}

// correctionsYear computes the corrections; dateText is the date as the
// caller had it, for messages.
func correctionsYear(model MagneticModel, crs string, easting, northing, elevationM, year float64, dateText string, wantDecl, wantConv bool) (Result, error) {
	c, err := ParseCRS(crs)
	if err != nil {
		return Result{}, err
	}
	var res Result
	res.CRS = c
	if !wantDecl && !wantConv {
		return res, nil
	}
	num := func(v float64) string { return strconv.FormatFloat(v, 'f', -1, 64) }
	switch {
	case math.IsNaN(easting) || math.IsInf(easting, 0) || easting < MinEasting || easting > MaxEasting:
		return Result{}, &Error{Field: FieldEasting, Value: num(easting),
			Msg: fmt.Sprintf("is not a UTM easting in zone %v (expected %.0f to %.0f m); is the collar on a local grid or in another zone?", c.Zone, MinEasting, MaxEasting)}
	case math.IsNaN(northing) || math.IsInf(northing, 0):
		return Result{}, &Error{Field: FieldNorthing, Value: num(northing), Msg: "is not a number"}
	case !c.Zone.South && (northing < 0 || northing > MaxNorthingNorth):
		return Result{}, &Error{Field: FieldNorthing, Value: num(northing),
			Msg: fmt.Sprintf("is not a UTM northing in northern zone %v (expected 0 to %.0f m); is the hemisphere right?", c.Zone, MaxNorthingNorth)}
	case c.Zone.South && (northing < MinNorthingSouth || northing > utm.FalseNorthingSouth):
		return Result{}, &Error{Field: FieldNorthing, Value: num(northing),
			Msg: fmt.Sprintf("is not a UTM northing in southern zone %v (expected %.0f to %.0f m); is the hemisphere right?", c.Zone, MinNorthingSouth, utm.FalseNorthingSouth)}
	case wantDecl && (math.IsNaN(elevationM) || math.IsInf(elevationM, 0) || math.Abs(elevationM) > MaxAbsElevation):
		return Result{}, &Error{Field: FieldElevation, Value: num(elevationM),
			Msg: fmt.Sprintf("is not a collar elevation in metres (expected -%.0f to %.0f)", MaxAbsElevation, MaxAbsElevation)}
	}
	geo, err := c.Grid.Inverse(easting, northing)
	if err != nil {
		return Result{}, &Error{Field: FieldEasting, Value: num(easting), Msg: err.Error(), Err: err}
	}
	res.Lat, res.Lon = geo.Lat, geo.Lon
	if wantConv {
		res.Convergence, res.ScaleFactor, res.HasConvergence = geo.Convergence, geo.Scale, true
	}
	if wantDecl {
		f, name, err := FieldAt(model, geo.Lat, geo.Lon, elevationM/1000, year)
		if err != nil {
			return Result{}, &Error{Field: FieldSurveyDate, Value: dateText, Msg: err.Error(), Err: err}
		}
		res.Declination, res.HasDeclination = f.Declination, true
		res.Year, res.Model, res.Field, res.PoleZone = year, name, f, f.Zone
	}
	return res, nil
}

// DecimalYear converts a date to a decimal year by the WMM software's
// convention: year + (day of year - 1) / (days in the year), leap years
// having 366 days; the time of day is ignored. See [wmm.DecimalYear].
func DecimalYear(t time.Time) float64 { return wmm.DecimalYear(t) }

// ParseDate reads "YYYY-MM-DD" or a decimal year such as "2027.5" and
// returns a decimal year. See [wmm.ParseDate].
func ParseDate(s string) (float64, error) { return wmm.ParseDate(s) }

// ValidYears returns the first and last decimal year the magnetic models
// cover together under [ModelAuto] (1900.0 and 2030.0).
func ValidYears() (from, to float64) { return ModelAuto.Years() }

// GridAzimuth turns an azimuth measured against magnetic north into one
// against grid north, grid = magnetic + declination - convergence,
// normalised to [0, 360).
func GridAzimuth(magnetic, declination, convergence float64) float64 {
	return geom.NormAzimuth(magnetic + declination - convergence)
}

// TrueAzimuth turns a magnetic azimuth into a true azimuth,
// true = magnetic + declination, normalised to [0, 360).
func TrueAzimuth(magnetic, declination float64) float64 {
	return geom.NormAzimuth(magnetic + declination)
}
