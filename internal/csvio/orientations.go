package csvio

import (
	"encoding/csv"
	"errors"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"

	"corvane/internal/domain"
	"corvane/internal/geom"
	"corvane/internal/uncertainty"
)

// OrientationRow is one measurement read by [ReadOrientations]: a plane, a
// line, or both (a plane with a lineation on it), with the hole direction at
// its depth when the file gives it.
type OrientationRow struct {
	Line   int    // line number in the file, from 1 (the header is line 1)
	HoleID string // hole_id column, "" when absent
	Type   string // type column (e.g. "bedding", "joint"), "" when absent

	HasPlane bool
	Plane    geom.Plane // from dip, dip_direction

	HasLine bool
	LineDir geom.Line // from line_trend, line_plunge

	HasHole bool
	Hole    geom.Vec3 // down-hole unit vector from hole_azimuth, hole_dip (negative down)

	// NoAzimuth: the row gives a dip without a dip direction, or a
	// line_plunge without a line_trend, as `corvane convert` writes a
	// measurement in a vertical hole. Plane and LineDir are then unset.
	NoAzimuth bool
	// Error is the error column: why the row could not be converted.
	Error string
	// AzimuthRef is the azimuth_reference column ("" when absent).
	AzimuthRef string
	// Depth is the depth column, NaN when the file has none or the cell is
	// empty (with [OrientationOptions].Geotech it must also be >= 0).
	Depth float64
	// HasPos is true when easting, northing and elevation are all given
	// (the position `corvane convert` writes); Pos holds them.
	HasPos bool
	Pos    geom.Vec3
	// Set and Warnings are the set and warnings columns, "" when absent.
	Set, Warnings string
	// PoleCone95 is the pole_cone95 column (the 95% cone of the pole's
	// uncertainty, degrees, as `corvane convert` writes it), NaN when the
	// file has none or the cell is empty.
	PoleCone95 float64
	// The measurement's error sources, for the set statistics: the
	// survey_instrument column (unknown when absent or empty) and the
	// run_confidence, run_mismatch and run_from columns of the orientation
	// run holding it ("" and NaN when absent or empty).
	SurveyInstrument     uncertainty.Instrument
	RunConfidence        string
	RunMismatch, RunFrom float64

	// Read only with [OrientationOptions].Geotech:
	Alpha    float64 // alpha column, NaN when absent or empty
	RockType string  // rock_type column, "" when absent
	// Unoriented is true for a row with alpha and a hole direction but no
	// plane (no beta, so no dip and dip direction; or a vertical hole, where
	// convert writes a dip without a dip direction): an unoriented
	// measurement. Without Geotech only a row with no plane, no line, no
	// error and an alpha is so marked (the statistics count it as left out).
	Unoriented bool
}

// OrientationOptions changes what [ReadOrientationsWith] reads.
type OrientationOptions struct {
	// Geotech also checks depth >= 0, reads alpha and rock_type, and keeps unoriented
	// rows (alpha and hole direction without a plane) instead of reporting
	// them as having no plane and no line.
	Geotech bool
}

// Orientation columns, matched case-insensitively after trimming spaces.
const (
	colDip          = "dip"
	colDipDirection = ColDipDirection
	colLineTrend    = "line_trend"
	colLinePlunge   = "line_plunge"
	colHoleAzimuth  = "hole_azimuth"
	colHoleDip      = "hole_dip"
	colType         = ColType
	colHoleID       = "hole_id"
	colError        = "error"
	colAzimuthRef   = "azimuth_reference"
	colRockType     = "rock_type"
	colWarnings     = "warnings"
	// ColPoleCone95 is the half-angle of the 95% cone of the pole's
	// uncertainty in degrees, as `corvane convert` writes it.
	ColPoleCone95 = "pole_cone95"
	// survey_instrument as `corvane convert` writes it (convert's
	// ColSurveyInstrument).
	colSurveyInstrument = "survey_instrument"
)

// ReadOrientations reads planes and lines from a CSV file whose header has
// dip and dip_direction and/or line_trend and line_plunge (the columns
// `corvane convert` writes; other columns such as hole_azimuth, hole_dip,
// type and hole_id are used when present, and any further ones are ignored).
// Header names are matched without regard to case. Lines starting with # are
// comments. name is the file name used in messages.
//
// A dip without a dip direction, or a line_plunge without a line_trend, is
// what `corvane convert` writes for a vertical hole: the row is returned with
// NoAzimuth set (what to do with it is the reader's rule). A row whose error
// column is not empty is returned with Error set and no plane or line.
//
// A row that cannot be used (a value that is not a number, out of range, a
// dip direction or trend without its dip or plunge, or no plane, no line and
// no error at all) is left out and reported in problems as a domain.Invalid error located at its file, line
// and column; the other rows are still returned. err is non-nil only when the
// file as a whole cannot be read: no header, or neither column pair present.
func ReadOrientations(r io.Reader, name string) (rows []OrientationRow, problems []*domain.Error, err error) {
	return ReadOrientationsWith(r, name, OrientationOptions{})
}

// ReadOrientationsWith is [ReadOrientations] with options. With Geotech, a
// header with alpha, hole_azimuth and hole_dip suffices (a file of
// unoriented measurements only), depth must be >= 0 and alpha 0..90.
func ReadOrientationsWith(r io.Reader, name string, opt OrientationOptions) (rows []OrientationRow, problems []*domain.Error, err error) {
	cr := csv.NewReader(r)
	cr.Comment = '#'
	cr.FieldsPerRecord = -1
	cr.TrimLeadingSpace = true
	header, err := cr.Read()
	if err == io.EOF {
		return nil, nil, domain.Errorf(domain.Invalid, "empty file, want a header line").At(domain.Location{File: name, Line: 1})
	}
	if err != nil {
		return nil, nil, domain.Errorf(domain.Invalid, "reading the header: %w", err).At(domain.Location{File: name})
	}
	headerLine, _ := cr.FieldPos(0)
	col := map[string]int{}
	for i, h := range header {
		h = strings.ToLower(strings.TrimSpace(strings.TrimPrefix(h, "\ufeff")))
		if _, dup := col[h]; dup && h != "" {
			return nil, nil, domain.Errorf(domain.Invalid, "column %q appears twice in the header", h).At(domain.Location{File: name, Line: headerLine})
		}
		col[h] = i
	}
	has := func(c string) bool { _, ok := col[c]; return ok }
	planes := has(colDip) && has(colDipDirection)
	lines := has(colLineTrend) && has(colLinePlunge)
	hole := has(colHoleAzimuth) && has(colHoleDip)
	unoriented := opt.Geotech && hole && has(ColAlpha)
	if !planes && !lines && !unoriented {
		return nil, nil, domain.Errorf(domain.Invalid,
			"header has neither dip and dip_direction nor line_trend and line_plunge columns").At(domain.Location{File: name, Line: headerLine})
	}

	for {
		rec, rerr := cr.Read()
		if rerr == io.EOF {
			break
		}
		if rerr != nil {
			var pe *csv.ParseError
			if errors.As(rerr, &pe) {
				problems = append(problems, domain.Errorf(domain.Invalid, "%v", pe.Err).At(domain.Location{File: name, Line: pe.Line}))
				continue
			}
			return rows, problems, domain.Errorf(domain.Invalid, "reading: %w", rerr).At(domain.Location{File: name})
		}
		line, _ := cr.FieldPos(0)
		row := OrientationRow{Line: line, Depth: math.NaN(), Alpha: math.NaN(), RunMismatch: math.NaN(), RunFrom: math.NaN()}
		loc := func(c string) domain.Location { return domain.Location{File: name, Line: line, Column: c} }
		cell := func(c string) string {
			i, ok := col[c]
			if !ok || i >= len(rec) {
				return ""
			}
			return strings.TrimSpace(rec[i])
		}
		var bad *domain.Error
		// num parses the named column as a number in [lo, hi]; ok is false for an empty cell.
		num := func(c string, lo, hi float64) (v float64, ok bool) {
			s := cell(c)
			if s == "" || bad != nil {
				return 0, false
			}
			v, perr := strconv.ParseFloat(s, 64)
			if perr != nil || math.IsNaN(v) || math.IsInf(v, 0) {
				bad = domain.Errorf(domain.Invalid, "%q is not a number", s).At(loc(c))
				return 0, false
			}
			if v < lo || v > hi {
				bad = domain.Errorf(domain.Invalid, "%s %v is outside [%v, %v]", c, v, lo, hi).At(loc(c))
				return 0, false
			}
			return v, true
		}
		// pair reads two columns that go together; with azimuthLast, the
		// second (an azimuth) may be missing when the first is given: the
		// row is then marked NoAzimuth.
		pair := func(a, b string, alo, ahi, blo, bhi float64, azimuthLast bool) (x, y float64, ok bool) {
			x, okx := num(a, alo, ahi)
			y, oky := num(b, blo, bhi)
			if bad != nil {
				return 0, 0, false
			}
			if azimuthLast && okx && !oky {
				row.NoAzimuth = true
				return 0, 0, false
			}
			if okx != oky {
				missing, given := a, b
				if okx {
					missing, given = b, a
				}
				bad = domain.Errorf(domain.Invalid, "%s is empty but %s is given", missing, given).At(loc(missing))
				return 0, 0, false
			}
			return x, y, okx
		}
		if planes {
			dip, dd, ok := pair(colDip, colDipDirection, 0, 90, 0, 360, true)
			if ok {
				row.HasPlane = true
				row.Plane = geom.Plane{Dip: dip, DipDirection: geom.NormAzimuth(dd)}
			}
		}
		if lines {
			pl, tr, ok := pair(colLinePlunge, colLineTrend, 0, 90, 0, 360, true)
			if ok {
				row.HasLine = true
				row.LineDir = geom.Line{Trend: geom.NormAzimuth(tr), Plunge: pl}
			}
		}
		if hole {
			az, dip, ok := pair(colHoleAzimuth, colHoleDip, 0, 360, -90, 90, false)
			if ok {
				row.HasHole = true
				row.Hole = geom.HoleDirection(az, dip)
			}
		}
		row.Error = cell(colError)
		if k, err := uncertainty.ParseInstrument(cell(colSurveyInstrument)); err != nil {
			if bad == nil {
				bad = domain.Errorf(domain.Invalid, "%v", err).At(loc(colSurveyInstrument))
			}
		} else {
			row.SurveyInstrument = k
		}
		if c := strings.ToLower(cell(ColRunConfidence)); c != "" {
			if slices.Contains(Confidences, c) {
				row.RunConfidence = c
			} else if bad == nil {
				bad = domain.Errorf(domain.Invalid, "run_confidence %q is not one of %s", cell(ColRunConfidence), strings.Join(Confidences, ", ")).At(loc(ColRunConfidence))
			}
		}
		if v, ok := num(ColRunMismatch, 0, 180); ok {
			row.RunMismatch = v
		}
		if v, ok := num(ColRunFrom, 0, math.MaxFloat64); ok {
			row.RunFrom = v
		}
		if opt.Geotech {
			if v, ok := num(ColDepth, -math.MaxFloat64, math.MaxFloat64); ok {
				if v < 0 && bad == nil {
					bad = domain.Errorf(domain.Invalid, "depth %v is negative", v).At(loc(ColDepth))
				}
				row.Depth = v
			}
			if v, ok := num(ColAlpha, 0, 90); ok {
				row.Alpha = v
			}
			row.RockType = cell(colRockType)
			if bad == nil && !row.HasPlane && !math.IsNaN(row.Alpha) {
				switch {
				case row.HasHole:
					row.Unoriented = true
				case row.Error == "":
					bad = domain.Errorf(domain.Invalid, "an unoriented row (alpha without dip and dip_direction) needs hole_azimuth and hole_dip").At(domain.Location{File: name, Line: line})
				}
			}
		}
		if !opt.Geotech && bad == nil && hole && row.HasHole && !row.HasPlane && !row.HasLine && !row.NoAzimuth && row.Error == "" {
			// An unoriented measurement as `corvane convert` writes it
			// (alpha and hole direction, no plane): kept and marked, for
			// the statistics to count it as left out.
			if _, ok := num(ColAlpha, 0, 90); ok {
				row.Unoriented = true
			}
		}
		if bad == nil && !row.HasPlane && !row.HasLine && !row.NoAzimuth && row.Error == "" && !row.Unoriented {
			bad = domain.Errorf(domain.Invalid, "no plane and no line on this row").At(domain.Location{File: name, Line: line})
		}
		if bad != nil {
			problems = append(problems, bad)
			continue
		}
		if !opt.Geotech { // Geotech has read (and checked) it above
			if d, ok := num(ColDepth, math.Inf(-1), math.Inf(1)); ok {
				row.Depth = d
			}
		}
		e, okE := num(ColEasting, math.Inf(-1), math.Inf(1))
		n, okN := num(ColNorthing, math.Inf(-1), math.Inf(1))
		z, okZ := num(ColElevation, math.Inf(-1), math.Inf(1))
		if bad != nil {
			problems = append(problems, bad)
			continue
		}
		if okE && okN && okZ {
			row.HasPos, row.Pos = true, geom.Vec3{X: e, Y: n, Z: z}
		}
		row.PoleCone95 = math.NaN()
		if v, ok := num(ColPoleCone95, 0, 180); ok {
			row.PoleCone95 = v
		}
		if bad != nil {
			problems = append(problems, bad)
			continue
		}
		row.Type = cell(colType)
		row.HoleID = cell(colHoleID)
		row.AzimuthRef = cell(colAzimuthRef)
		row.Set = cell(ColSet)
		row.Warnings = cell(colWarnings)
		rows = append(rows, row)
	}
	return rows, problems, nil
}
