package service

import (
	"encoding/json"
	"strconv"

	"corvane/internal/convert"
	"corvane/internal/csvio"
)

// MarshalJSON writes the derived values at the precision the CSV export
// and `corvane convert` write the same-named columns (convert.Decimals:
// angles to 0.01 degree, positions and thicknesses to 0.001 of the length
// unit, corrections to 0.001 degree), so a JSON client and a CSV client
// read the same numbers, and no floating-point noise such as
// 72.64999999999995 reaches the JSON.
func (d Derived) MarshalJSON() ([]byte, error) {
	type plain Derived // no MarshalJSON: no recursion
	r := plain(d)
	for _, f := range []struct {
		v   **float64
		col string
	}{
		{&r.HoleAzimuth, convert.ColHoleAzimuth}, {&r.HoleDip, convert.ColHoleDip},
		{&r.East, convert.ColEasting}, {&r.North, convert.ColNorthing}, {&r.Elevation, convert.ColElevation},
		{&r.Dip, convert.ColDip}, {&r.DipDirection, convert.ColDipDirection}, {&r.Strike, convert.ColStrike},
		{&r.PoleTrend, convert.ColPoleTrend}, {&r.PolePlunge, convert.ColPolePlunge},
		{&r.LineTrend, convert.ColLineTrend}, {&r.LinePlunge, convert.ColLinePlunge},
		{&r.TrueThickness, convert.ColTrueThickness},
		{&r.GridConvergence, convert.ColGridConvergence}, {&r.Declination, convert.ColDeclination},
		{&r.PoleCone95, convert.ColPoleCone95}, {&r.PoleLong95, convert.ColPoleLong95}, {&r.PoleShort95, convert.ColPoleShort95},
		{&r.LineCone95, convert.ColLineCone95}, {&r.LineLong95, convert.ColLineLong95}, {&r.LineShort95, convert.ColLineShort95},
	} {
		roundOpt(f.v, convert.Decimals(f.col))
	}
	return json.Marshal(r)
}

// roundAs returns v as the CSV writes it with prec decimals (csvio's
// rounding: half away from zero, no -0), read back.
func roundAs(v float64, prec int) float64 {
	x, err := strconv.ParseFloat(csvio.FormatFloat(v, prec), 64)
	if err != nil { // NaN is written as nothing; keep it for the encoder to refuse
		return v
	}
	return x
}

// MarshalJSON writes the corrections at the precision of the derived values'
// declination and grid_convergence columns (convert.Decimals), the
// precision the hole summary of `corvane convert --hole-summary` writes.
func (c HoleCorrections) MarshalJSON() ([]byte, error) {
	type plain HoleCorrections // no MarshalJSON: no recursion
	r := plain(c)
	roundOpt(&r.Declination, convert.Decimals(convert.ColDeclination))
	roundOpt(&r.GridConvergence, convert.Decimals(convert.ColGridConvergence))
	return json.Marshal(r)
}

// MarshalJSON writes a path point as the derived values write the same
// quantities (convert.Decimals): positions and depth to 0.001 of the length
// unit, the hole's azimuth and dip and the dogleg severity to 0.01 degree.
func (p PathPoint) MarshalJSON() ([]byte, error) {
	type plain PathPoint // no MarshalJSON: no recursion
	r := plain(p)
	for _, f := range []struct {
		v   *float64
		col string
	}{
		{&r.Depth, convert.ColEasting}, // a length, as positions are
		{&r.East, convert.ColEasting}, {&r.North, convert.ColNorthing}, {&r.Elevation, convert.ColElevation},
		{&r.Azimuth, convert.ColHoleAzimuth}, {&r.Dip, convert.ColHoleDip},
	} {
		*f.v = roundAs(*f.v, convert.Decimals(f.col))
	}
	roundOpt(&r.DoglegSeverity, convert.Decimals(convert.ColHoleDip)) // degrees (per 30 m)
	return json.Marshal(r)
}

// roundOpt rounds an optional number in place (a copy: the value it pointed
// to is left alone) by roundAs.
func roundOpt(v **float64, prec int) {
	if *v != nil {
		x := roundAs(**v, prec)
		*v = &x
	}
}
