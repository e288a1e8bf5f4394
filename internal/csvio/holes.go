package csvio

import (
	"encoding/binary"
	"fmt"
	"io"
	"math"
	"math/bits"
	"slices"
	"strconv"
	"strings"
	"time"

	"corvane/internal/desurvey"
	"corvane/internal/domain"
	"corvane/internal/localgrid"
	"corvane/internal/uncertainty"
)

// CollarRow is one row of a collars file.
type CollarRow struct {
	Line   int // line in the file (the header is line 1)
	HoleID string
	// Collar holds easting, northing, elevation, azimuth, dip and final depth.
	Collar desurvey.Collar
	// Declination and GridConvergence are the optional per-hole corrections
	// in degrees; NaN when the cell is empty or the column absent.
	Declination, GridConvergence float64
	// AzimuthRef is the reference of the collar azimuth: "true", "grid",
	// "magnetic", or "" when not given.
	AzimuthRef string
	// CRS is the coordinate system label of the collar (e.g. EPSG:32750), ""
	// when not given.
	CRS string
	// SurveyDate is the date of the hole's survey (survey_date column,
	// YYYY-MM-DD), used for a magnetic collar azimuth and for survey rows
	// without a date of their own; zero when not given.
	SurveyDate time.Time
	// LocalGrid is the hole's own local grid (local_grid column: a JSON
	// declaration, checked by localgrid.Parse), nil when not given.
	LocalGrid *localgrid.Grid
}

// CollarColumns are the required columns of a collars file.
var CollarColumns = []string{ColHoleID, ColEasting, ColNorthing, ColElevation, ColAzimuth, ColDip, ColDepth}

// ReadCollars reads a whole collars file: required columns hole_id, easting,
// northing, elevation, azimuth (0..360), dip (-90..90, negative down) and
// depth (> 0); optional declination, grid_convergence, azimuth_reference,
// crs, survey_date and local_grid (the hole's own local grid as a JSON
// declaration, the form of a --local-grid file). Hole ids must be unique (compared exactly, after trimming spaces).
//
// file names the file in messages. A missing column or broken CSV is an
// error at once; bad rows are all reported, one problem each, in one error
// (see the package doc). On error no rows are returned.
func ReadCollars(r io.Reader, file string) ([]CollarRow, error) {
	seen := map[string]int{}
	return readRows(r, file, "collar", CollarColumns, func(rw *row) CollarRow {
		line := rw.line
		cw := CollarRow{Line: line, HoleID: rw.cell(ColHoleID)}
		if cw.HoleID == "" {
			rw.fail(ColHoleID, "hole_id is empty")
		} else if prev, dup := seen[cw.HoleID]; dup {
			rw.fail(ColHoleID, "hole %q is already on line %d", cw.HoleID, prev)
		}
		var ok bool
		cw.Collar.East, _ = rw.num(ColEasting, true)
		cw.Collar.North, _ = rw.num(ColNorthing, true)
		cw.Collar.Elevation, _ = rw.num(ColElevation, true)
		cw.Collar.Azimuth, ok = rw.num(ColAzimuth, true)
		rw.inRange(ColAzimuth, cw.Collar.Azimuth, ok, 0, 360)
		cw.Collar.Dip, ok = rw.num(ColDip, true)
		rw.inRange(ColDip, cw.Collar.Dip, ok, -90, 90)
		cw.Collar.Depth, ok = rw.num(ColDepth, true)
		if ok && cw.Collar.Depth <= 0 {
			rw.fail(ColDepth, "depth %g must be greater than 0", cw.Collar.Depth)
		}
		cw.Declination, ok = rw.num(ColDeclination, false)
		rw.inRange(ColDeclination, cw.Declination, ok, -180, 180)
		cw.GridConvergence, ok = rw.num(ColGridConvergence, false)
		rw.inRange(ColGridConvergence, cw.GridConvergence, ok, -180, 180)
		if ref, err := ParseAzimuthRef(rw.cell(ColAzimuthRef)); err != nil {
			rw.fail(ColAzimuthRef, "%v", err)
		} else {
			cw.AzimuthRef = ref
		}
		cw.CRS = rw.cell(ColCRS)
		cw.SurveyDate = rw.date(ColSurveyDate)
		if doc := rw.cell(ColLocalGrid); doc != "" {
			g, _, err := localgrid.Parse([]byte(doc))
			if err != nil {
				rw.fail(ColLocalGrid, "%v", err)
			}
			cw.LocalGrid = g
		}
		if rw.bad == nil {
			seen[cw.HoleID] = line
		}
		return cw
	})
}

// SurveyRow is one row of a surveys file.
type SurveyRow struct {
	Line    int
	HoleID  string
	Station desurvey.Station
	// AzimuthRef is "true", "grid", "magnetic", or "" when not given.
	AzimuthRef string
	// Date is the survey date (survey_date column, YYYY-MM-DD); zero when
	// not given.
	Date time.Time
	// Kind is the kind of survey set the row belongs to (gyro, magnetic,
	// planned, other; kind column), "" for the hole's survey set.
	Kind string
	// Instrument is the kind of survey instrument of the row's set
	// (instrument column: magnetic, gyro or unknown), "" when not given.
	// Every row of one set (a hole's survey set, or its set of a kind) that
	// gives one must give the same.
	Instrument uncertainty.Instrument
	// Preferred is true on the rows of the hole's preferred set (preferred
	// column: yes/no, true/false or 1/0, any case; empty says nothing).
	// Only a set with a kind can be preferred, at most one per hole, and
	// every row of a set that says must say the same.
	Preferred bool
	// PreferredSaid is true when the row's preferred cell is not empty.
	PreferredSaid bool
}

// SurveyColumns are the required columns of a surveys file.
var SurveyColumns = []string{ColHoleID, ColDepth, ColAzimuth, ColDip}

// ReadSurveys reads a whole surveys file: hole_id, depth (>= 0), azimuth
// (0..360) and dip (-90..90); optional azimuth_reference, survey_date, kind,
// instrument (magnetic, gyro or unknown; one per set) and preferred (the
// hole's preferred set: yes on its rows; at most one set of a kind per hole). The stations of
// each hole's set (its survey set, or its set of a kind) must come in
// strictly increasing depth order (the holes and sets may be interleaved).
// Errors as for [ReadCollars].
func ReadSurveys(r io.Reader, file string) ([]SurveyRow, error) {
	type setKey struct{ hole, kind string } // a hole's survey set
	type last struct {
		depth float64
		line  int
	}
	// prev holds the last good station of each set; the one of the set of
	// the row before is kept aside (cur) and stored when the set changes,
	// as rows come set by set.
	prev := map[setKey]last{}
	var cur setKey
	var curLast last
	haveCur := false
	lastOf := func(k setKey) (last, bool) {
		if haveCur && k == cur {
			return curLast, true
		}
		l, ok := prev[k]
		return l, ok
	}
	setLast := func(k setKey, l last) {
		if haveCur && k != cur {
			prev[cur] = curLast
		}
		cur, curLast, haveCur = k, l, true
	}
	type named struct {
		k    uncertainty.Instrument
		line int
	}
	inst := map[setKey]named{} // the first row of each set that names an instrument
	type said struct {
		yes  bool
		line int
	}
	pref := map[setKey]said{}     // the first row of each set that says whether it is preferred
	prefHole := map[string]said{} // the first row marking a set of each hole preferred, by hole
	prefKind := map[string]string{}
	return readRows(r, file, "survey", SurveyColumns, func(rw *row) SurveyRow {
		line := rw.line
		s := SurveyRow{Line: line, HoleID: rw.cell(ColHoleID), Kind: strings.ToLower(rw.cell(ColKind))}
		if s.HoleID == "" {
			rw.fail(ColHoleID, "hole_id is empty")
		}
		if s.Kind != "" && !slices.Contains(domain.SurveyKinds, s.Kind) {
			rw.fail(ColKind, "kind %q is not one of %s (or empty for the hole's survey set)", rw.cell(ColKind), strings.Join(domain.SurveyKinds, ", "))
		}
		key := setKey{s.HoleID, s.Kind}
		var ok bool
		s.Station.Depth, ok = rw.num(ColDepth, true)
		if ok && s.Station.Depth < 0 {
			rw.fail(ColDepth, "depth %g is negative", s.Station.Depth)
		}
		if p, seen := lastOf(key); ok && seen && rw.bad == nil {
			if s.Station.Depth == p.depth {
				rw.fail(ColDepth, "depth %g of hole %q repeats line %d", s.Station.Depth, s.HoleID, p.line)
			} else if s.Station.Depth < p.depth {
				rw.fail(ColDepth, "depth %g of hole %q is less than %g on line %d: stations must be sorted by depth", s.Station.Depth, s.HoleID, p.depth, p.line)
			}
		}
		s.Station.Azimuth, ok = rw.num(ColAzimuth, true)
		rw.inRange(ColAzimuth, s.Station.Azimuth, ok, 0, 360)
		s.Station.Dip, ok = rw.num(ColDip, true)
		rw.inRange(ColDip, s.Station.Dip, ok, -90, 90)
		if ref, err := ParseAzimuthRef(rw.cell(ColAzimuthRef)); err != nil {
			rw.fail(ColAzimuthRef, "%v", err)
		} else {
			s.AzimuthRef = ref
		}
		s.Date = rw.date(ColSurveyDate)
		if c := rw.cell(ColInstrument); c != "" {
			k, err := uncertainty.ParseInstrument(c)
			if err != nil {
				rw.fail(ColInstrument, "%v", err)
			} else if p, seen := inst[key]; seen && p.k != k {
				rw.fail(ColInstrument, "instrument %q of %s differs from %q on line %d: one instrument per survey set", k, setName(s), p.k, p.line)
			} else if !seen {
				inst[key] = named{k, line}
			}
			s.Instrument = k
		}
		if c := rw.cell(ColPreferred); c != "" {
			yes, err := ParseYesNo(c)
			switch p, seen := pref[key]; {
			case err != nil:
				rw.fail(ColPreferred, "preferred %v", err)
			case yes && s.Kind == "":
				rw.fail(ColPreferred, "the survey set of hole %q has no kind and cannot be preferred: give its rows a kind (gyro, magnetic, planned or other)", s.HoleID)
			case seen && p.yes != yes:
				rw.fail(ColPreferred, "preferred %q of %s differs from line %d: a set is preferred or not as a whole", c, setName(s), p.line)
			case yes && prefHole[s.HoleID].line != 0 && prefKind[s.HoleID] != s.Kind:
				rw.fail(ColPreferred, "hole %q has two preferred survey sets: the %s set here and the %s set on line %d", s.HoleID, s.Kind, prefKind[s.HoleID], prefHole[s.HoleID].line)
			default:
				if !seen {
					pref[key] = said{yes, line}
				}
				if yes && prefHole[s.HoleID].line == 0 {
					prefHole[s.HoleID], prefKind[s.HoleID] = said{true, line}, s.Kind
				}
			}
			s.Preferred, s.PreferredSaid = yes, true
		}
		if rw.bad == nil {
			setLast(key, last{s.Station.Depth, line})
		}
		return s
	})
}

// setName names a row's survey set in messages: the hole's survey set, or
// its set of a kind.
func setName(s SurveyRow) string {
	if s.Kind == "" {
		return fmt.Sprintf("the survey set of hole %q", s.HoleID)
	}
	return fmt.Sprintf("the %s survey set of hole %q", s.Kind, s.HoleID)
}

// Run confidence ratings, best first. A run rated ConfidenceNone is unusable:
// its orientation line is not to be trusted at all.
const (
	ConfidenceGood = "good" // marks consistent across the run and with its neighbours
	ConfidenceFair = "fair" // usable, with small mismatches or a doubtful break
	ConfidencePoor = "poor" // usable with care; treat its orientations as suspect
	ConfidenceNone = "none" // unusable: no orientation line
)

// Confidences lists the confidence vocabulary, best first.
var Confidences = []string{ConfidenceGood, ConfidenceFair, ConfidencePoor, ConfidenceNone}

// RunRow is one orientation run: the core from From to To (measured depths)
// oriented by one orientation mark.
type RunRow struct {
	Line       int
	HoleID     string
	From, To   float64
	Confidence string // one of Confidences
	// Mismatch is the angle in degrees (0..180) around the core between this
	// run's orientation line and the one carried across the join from the run
	// above; NaN when not measured.
	Mismatch float64
}

// RunColumns are the required columns of a runs file.
var RunColumns = []string{ColHoleID, ColFrom, ColTo, ColConfidence}

// ReadRuns reads a whole runs file: hole_id, from, to (0 <= from < to),
// confidence (good, fair, poor or none, any case) and optional mismatch
// (0..180 degrees). Errors as for [ReadCollars].
func ReadRuns(r io.Reader, file string) ([]RunRow, error) {
	return readRows(r, file, "run", RunColumns, func(rw *row) RunRow {
		line := rw.line
		run := RunRow{Line: line, HoleID: rw.cell(ColHoleID)}
		if run.HoleID == "" {
			rw.fail(ColHoleID, "hole_id is empty")
		}
		var okF, okT, ok bool
		run.From, okF = rw.num(ColFrom, true)
		if okF && run.From < 0 {
			rw.fail(ColFrom, "from %g is negative", run.From)
		}
		run.To, okT = rw.num(ColTo, true)
		if okF && okT && run.To <= run.From {
			rw.fail(ColTo, "to %g is not greater than from %g", run.To, run.From)
		}
		conf := strings.ToLower(rw.cell(ColConfidence))
		switch conf {
		case ConfidenceGood, ConfidenceFair, ConfidencePoor, ConfidenceNone:
			run.Confidence = conf
		default:
			rw.fail(ColConfidence, "confidence %q is not one of %s", rw.cell(ColConfidence), strings.Join(Confidences, ", "))
		}
		run.Mismatch, ok = rw.num(ColMismatch, false)
		rw.inRange(ColMismatch, run.Mismatch, ok, 0, 180)
		return run
	})
}

// FormatFloat formats v with prec decimals, writing -0 as 0 and NaN as "".
func FormatFloat(v float64, prec int) string {
	return string(AppendFloat(nil, v, prec))
}

// AppendFloat appends v with prec decimals (0..9; others go to strconv) to b: the value scaled by
// 10^prec and rounded half away from zero, so values that round to zero
// are written as unsigned zero; NaN is written as nothing. Values too large
// for that (|v| 10^prec >= 2^53) and infinities are formatted by strconv.
//
// It is the formatter of every number in the converter's output, so it is
// written for speed: the rounded integer's decimal digits are made eight at
// a time in the bytes of a uint64 ([digits8]), the leading zeros are
// dropped by shifting, and the digits and the point are put in place by a
// few 8-byte stores into the spare capacity of b; an angle (2 decimals,
// below 1000) takes its digits from two small tables instead.
func AppendFloat(b []byte, v float64, prec int) []byte {
	return appendFloat(b, false, v, prec)
}

// appendFloat is AppendFloat, after a comma when comma is true (the
// separator of [Writer.Float], written with the number).
func appendFloat(b []byte, comma bool, v float64, prec int) []byte {
	if uint(prec) > 7 {
		return appendFloatWide(b, comma, v, prec)
	}
	x := v * pow10[prec&7] // the same magnitude as |v| 10^prec: IEEE products are sign-symmetric
	neg := x < 0
	if neg {
		x = -x
	}
	if !(x < 1<<53) {
		return appendFloatOther(b, comma, v, prec)
	}
	// n = math.Round(x): below 2^53 the fraction x - trunc(x) is exact.
	// The rounding up is a conditional move, not a branch: it goes either
	// way at random, and a mispredicted branch costs more than a number.
	t := int64(x)
	var up uint64
	if x-float64(t) >= 0.5 {
		up = 1
	}
	n := uint64(t) + up
	// At most a comma, a sign, 16 digits and the point, written with stores of 8
	// bytes that may reach 7 bytes past the end: 40 bytes of room keep
	// every store (at an offset below 32) inside, without bounds checks.
	if cap(b)-len(b) < 40 {
		b = growFloat(b)
	}
	at := len(b)
	d := (*[40]byte)(b[at : at+40])
	i := 0
	if comma {
		d[0] = ','
		i = 1
	}
	if neg && n != 0 {
		d[i&1] = '-'
		i++
	}
	if prec == 2 && n < 1e5 {
		// An angle: the integer part (below 1000) and the point are one
		// word of a table, the two decimals another.
		ip := n / 100
		f := n - ip*100
		binary.LittleEndian.PutUint32(d[i&31:], dotted[ip&1023])
		i++
		if ip >= 10 {
			i++
		}
		if ip >= 100 {
			i++
		}
		binary.LittleEndian.PutUint16(d[(i+1)&31:], decimals2[f&127])
		return b[:at+i+3]
	}
	// The number of digits written, at least one before the point, is
	// counted from n directly, so that the length (and where the next
	// number goes) does not wait for the digits.
	nd := max(decimalLen(n), prec+1)
	const zeros = 0x3030303030303030 // "00000000"
	var w uint64                     // the word holding the last 8 digits
	if n < 1e8 {
		// One word of 8 digits, its 8 - nd leading zeros shifted out.
		w = digits8(n) + zeros
		binary.LittleEndian.PutUint64(d[i&31:], w>>((64-8*nd)&63))
	} else {
		// Two words: the first holds nd - 8 digits.
		hi := n / 1e8
		w = digits8(n-hi*1e8) + zeros
		binary.LittleEndian.PutUint64(d[i&31:], (digits8(hi)+zeros)>>((128-8*nd)&63))
		binary.LittleEndian.PutUint64(d[(i+nd-8)&31:], w)
	}
	l := i + nd
	if prec > 0 {
		binary.LittleEndian.PutUint64(d[(l-prec)&31:], '.'|w>>((64-8*prec)&63)<<8)
		l++
	}
	return b[:at+l]
}

// growFloat returns b with room for AppendFloat's stores.
//
//go:noinline
func growFloat(b []byte) []byte { return slices.Grow(b, 40) }

// appendFloatOther is AppendFloat for NaN (nothing), the infinities and
// values of 2^53 and more after scaling (strconv).
func appendFloatOther(b []byte, comma bool, v float64, prec int) []byte {
	if comma {
		b = append(b, ',')
	}
	if math.IsNaN(v) {
		return b
	}
	return strconv.AppendFloat(b, v, 'f', prec, 64)
}

// appendFloatWide is AppendFloat for 8 and 9 decimals, its digits made by
// digits8 as well, and for decimals outside 0..9 (strconv).
func appendFloatWide(b []byte, comma bool, v float64, prec int) []byte {
	if prec > 9 || prec < 0 {
		return appendFloatOther(b, comma, v, prec)
	}
	x := v * pow10[prec]
	neg := x < 0
	if neg {
		x = -x
	}
	if !(x < 1<<53) {
		return appendFloatOther(b, comma, v, prec)
	}
	if comma {
		b = append(b, ',')
	}
	t := int64(x)
	n := uint64(t)
	if x-float64(t) >= 0.5 {
		n++
	}
	if neg && n != 0 {
		b = append(b, '-')
	}
	var tmp [16]byte
	hi := n / 1e8
	binary.LittleEndian.PutUint64(tmp[:8], digits8(hi)+0x3030303030303030)
	binary.LittleEndian.PutUint64(tmp[8:], digits8(n-hi*1e8)+0x3030303030303030)
	s := 0
	for s < 15-prec && tmp[s] == '0' {
		s++
	}
	b = append(b, tmp[s:16-prec]...)
	b = append(b, '.')
	return append(b, tmp[16-prec:]...)
}

// dotted holds, for i below 1000, the digits of i and a point, first in
// memory first; decimals2 the two digits of i below 100.
var dotted, decimals2 = func() (dotted [1024]uint32, decimals2 [128]uint16) {
	for i := range 1000 {
		s := strconv.Itoa(i) + "."
		for k := len(s) - 1; k >= 0; k-- {
			dotted[i] = dotted[i]<<8 | uint32(s[k])
		}
	}
	for i := range 100 {
		decimals2[i] = uint16('0'+i/10) | uint16('0'+i%10)<<8
	}
	return dotted, decimals2
}()

// decimalLen returns the number of decimal digits of n (1 for 0).
func decimalLen(n uint64) int {
	t := bits.Len64(n) * 1233 >> 12 // log10(2) ~ 1233/4096: t or t+1 digits
	if n >= pow10u[t] {
		t++
	}
	return max(t, 1)
}

var pow10u = [...]uint64{1, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19}

// digits8 returns the 8 decimal digits of n < 1e8, leading zeros included,
// as byte values 0..9 in the bytes of a uint64, the most significant digit
// in the lowest byte (first in memory, little endian): n is split into two
// halves of 4 digits in 32-bit lanes, each into two of 2 digits in 16-bit
// lanes, each into two digits in bytes, every lane divided at once by a
// multiplication and a shift that is exact in its range (x/100 =
// x*5243>>19 for x < 10000, x/10 = x*103>>10 for x < 100).
func digits8(n uint64) uint64 {
	hi := n / 10000
	x := hi | (n-hi*10000)<<32
	q := x * 5243 >> 19 & 0x0000007f0000007f
	x = q | (x-q*100)<<16
	t := x * 103 >> 10 & 0x000f000f000f000f
	return t | (x-t*10)<<8
}

var pow10 = [...]float64{1, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15}

// ParseYesNo reads yes/no, true/false or 1/0 in any case.
func ParseYesNo(s string) (bool, error) {
	switch strings.ToLower(strings.TrimSpace(s)) {
	case "yes", "true", "1":
		return true, nil
	case "no", "false", "0":
		return false, nil
	}
	return false, fmt.Errorf("%q is not yes or no", s)
}
