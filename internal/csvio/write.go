package csvio

import (
	"io"
	"math"
	"strconv"
	"strings"
	"time"
)

// num formats v exactly (shortest form that reads back to the same float),
// NaN as an empty cell and -0 as 0.
func num(v float64) string {
	if math.IsNaN(v) {
		return ""
	}
	if v == 0 {
		v = 0 // no -0
	}
	return strconv.FormatFloat(v, 'f', -1, 64)
}

// WriteCollars writes rows as a collars file that [ReadCollars] reads back to
// the same values (Line aside): the required columns, then declination,
// grid_convergence, azimuth_reference, crs, survey_date and local_grid.
func WriteCollars(w io.Writer, rows []CollarRow) error {
	cw := NewWriter(w)
	cw.Strings(append(append([]string{}, CollarColumns...), ColDeclination, ColGridConvergence, ColAzimuthRef, ColCRS, ColSurveyDate, ColLocalGrid))
	cw.EndRow()
	for _, r := range rows {
		c := r.Collar
		var grid string
		if r.LocalGrid != nil {
			grid = string(r.LocalGrid.JSON())
		}
		cw.Strings([]string{r.HoleID, num(c.East), num(c.North), num(c.Elevation), num(c.Azimuth), num(c.Dip), num(c.Depth),
			num(r.Declination), num(r.GridConvergence), r.AzimuthRef, r.CRS, date(r.SurveyDate), grid})
		cw.EndRow()
	}
	return cw.Flush()
}

// date formats t as YYYY-MM-DD, the zero time as an empty cell.
func date(t time.Time) string {
	if t.IsZero() {
		return ""
	}
	return t.Format(time.DateOnly)
}

// WriteSurveys writes rows as a surveys file that [ReadSurveys] reads back:
// hole_id, depth, azimuth, dip, azimuth_reference, survey_date, kind,
// instrument, preferred (yes on the preferred set's rows, empty otherwise).
func WriteSurveys(w io.Writer, rows []SurveyRow) error {
	cw := NewWriter(w)
	cw.Strings(append(append([]string{}, SurveyColumns...), ColAzimuthRef, ColSurveyDate, ColKind, ColInstrument, ColPreferred))
	cw.EndRow()
	for _, r := range rows {
		s := r.Station
		pref := ""
		if r.Preferred {
			pref = "yes"
		}
		cw.Strings([]string{r.HoleID, num(s.Depth), num(s.Azimuth), num(s.Dip), r.AzimuthRef, date(r.Date), r.Kind, string(r.Instrument), pref})
		cw.EndRow()
	}
	return cw.Flush()
}

// WriteRuns writes rows as a runs file that [ReadRuns] reads back: hole_id,
// from, to, confidence, mismatch.
func WriteRuns(w io.Writer, rows []RunRow) error {
	cw := NewWriter(w)
	cw.Strings(append(append([]string{}, RunColumns...), ColMismatch))
	cw.EndRow()
	for _, r := range rows {
		cw.Strings([]string{r.HoleID, num(r.From), num(r.To), r.Confidence, num(r.Mismatch)})
		cw.EndRow()
	}
	return cw.Flush()
}

// WriteIntervals writes rows as a core intervals file that [ReadIntervals]
// reads back to the same values (Line aside): hole_id, from, to, recovered,
// solid, sound, pieces (";"-separated), natural_breaks, induced_breaks,
// confidence.
func WriteIntervals(w io.Writer, rows []IntervalRow) error {
	cw := NewWriter(w)
	cw.Strings(append(append([]string{}, IntervalColumns...), ColRecovered, ColSolid, ColSound, ColPieces, ColNaturalBreaks, ColInducedBreaks, ColConfidence))
	cw.EndRow()
	count := func(n int) string {
		if n < 0 {
			return ""
		}
		return strconv.Itoa(n)
	}
	for _, r := range rows {
		iv := r.Interval
		pieces := make([]string, len(iv.Pieces))
		for i, p := range iv.Pieces {
			pieces[i] = num(p)
		}
		cw.Strings([]string{r.HoleID, num(iv.From), num(iv.To), num(iv.Recovered), num(iv.Solid), num(iv.Sound),
			strings.Join(pieces, ";"), count(iv.NaturalBreaks), count(iv.InducedBreaks), iv.Confidence})
		cw.EndRow()
	}
	return cw.Flush()
}
