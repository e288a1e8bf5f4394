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
		if *f.v != nil {
			x := roundAs(**f.v, convert.Decimals(f.col))
			*f.v = &x
		}
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
