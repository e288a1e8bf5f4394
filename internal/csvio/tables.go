// Package csvio reads and writes corvane's CSV files: collars, surveys,
// orientation runs and structure measurements as inputs, the converter's
// output, and orientation tables for the statistics commands.
//
// Common rules of the input files: the first line is a header; names are
// matched without regard to case or surrounding spaces (a leading byte-order
// mark is ignored); columns may come in any order; extra columns are kept and
// carried through where the format says so. Numbers are decimal with a point;
// an empty cell is a missing value; "NaN" and infinities are rejected.
//
// Problems are *domain.Error values of kind Invalid located at the file,
// line and column. Readers of the small files (collars, surveys, runs) read
// the whole file and report every bad row, one problem per row, as the
// Problems of a single error; the structure reader streams and reports each
// bad row with the row.
package csvio

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"time"
	"unicode/utf8"

	"corvane/internal/domain"
)

// Column names of the input files.
const (
	ColHoleID          = "hole_id"
	ColEasting         = "easting"
	ColNorthing        = "northing"
	ColElevation       = "elevation"
	ColAzimuth         = "azimuth"
	ColDip             = "dip"
	ColDepth           = "depth"
	ColDeclination     = "declination"
	ColGridConvergence = "grid_convergence"
	ColAzimuthRef      = "azimuth_reference"
	ColCRS             = "crs"
	ColSurveyDate      = "survey_date"
	ColKind            = "kind"       // surveys: the kind of survey set a row belongs to
	ColInstrument      = "instrument" // surveys: the instrument of that set
	ColPreferred       = "preferred"  // surveys: yes on the rows of a hole's preferred set
	ColLocalGrid       = "local_grid" // collars: the hole's own local grid (JSON declaration)
	ColAlpha           = "alpha"
	ColBeta            = "beta"
	ColGamma           = "gamma"
	ColThickness       = "thickness"
	ColApparentThick   = "apparent_thickness"
	ColFrom            = "from"
	ColTo              = "to"
	ColConfidence      = "confidence"
	ColMismatch        = "mismatch"
	ColRunConfidence   = "run_confidence"
	ColRunMismatch     = "run_mismatch"
	ColRunFrom         = "run_from"
)

// aliases are other names a header may give a column: the JSON field's
// name where it differs from the column's (one vocabulary, README). A
// header that has both names of one column is refused.
var aliases = map[string]string{
	"hole":        ColHoleID,     // JSON's hole (the name); the column hole_id holds the name too
	"azimuth_ref": ColAzimuthRef, // JSON's azimuth_ref
}

// Azimuth references accepted in an azimuth_reference column.
const (
	RefTrue     = "true"
	RefGrid     = "grid"
	RefMagnetic = "magnetic"
)

// Header is a parsed header line.
type Header struct {
	File  string   // file name used in messages
	Names []string // the names as written (trimmed, byte-order mark removed)
	idx   map[string]int
	// keys and at are idx as two lists, for looking up names already in
	// lower case (the column constants) without hashing: readers look up
	// several columns on every row.
	keys []string
	at   []int
}

// Index returns the position of the named column (matched without regard
// to case), or -1.
func (h *Header) Index(name string) int {
	for i, k := range h.keys {
		if k == name {
			return h.at[i]
		}
	}
	for i := 0; i < len(name); i++ {
		if c := name[i]; c >= 'A' && c <= 'Z' || c >= utf8.RuneSelf {
			if i, ok := h.idx[strings.ToLower(name)]; ok {
				return i
			}
			return -1
		}
	}
	return -1 // in lower case already, and not a key
}

// Has reports whether the header has the named column.
func (h *Header) Has(name string) bool { return h.Index(name) >= 0 }

// readHeader reads and checks the header line: not empty, no duplicate or
// empty names, all required columns present.
func readHeader(cr interface{ Read() ([]string, error) }, file string, required ...string) (*Header, error) {
	rec, err := cr.Read()
	if err == io.EOF {
		return nil, invalid(file, 1, "", "empty file: want a header line with columns %s", strings.Join(required, ", "))
	}
	if err != nil {
		return nil, parseErr(file, err)
	}
	h := &Header{File: file, Names: make([]string, len(rec)), idx: make(map[string]int, len(rec))}
	for i, n := range rec {
		if i == 0 {
			n = strings.TrimPrefix(n, "\ufeff")
		}
		n = strings.TrimSpace(n)
		h.Names[i] = n
		k := strings.ToLower(n)
		if k == "" {
			return nil, invalid(file, 1, "", "header column %d has no name", i+1)
		}
		if _, dup := h.idx[k]; dup {
			return nil, invalid(file, 1, n, "column %q appears twice in the header", n)
		}
		h.idx[k] = i
	}
	for alias, col := range aliases {
		i, ok := h.idx[alias]
		if !ok {
			continue
		}
		if j, both := h.idx[col]; both {
			return nil, invalid(file, 1, h.Names[max(i, j)], "columns %q and %q are the same column; keep one", h.Names[j], h.Names[i])
		}
		h.idx[col] = i
	}
	for k, i := range h.idx {
		h.keys = append(h.keys, k)
		h.at = append(h.at, i)
	}
	var missing []string
	for _, c := range required {
		if !h.Has(c) {
			missing = append(missing, c)
		}
	}
	switch len(missing) {
	case 0:
	case 1:
		return nil, invalid(file, 1, missing[0], "missing column %q (the header has %s)", missing[0], strings.Join(h.Names, ", "))
	default:
		return nil, invalid(file, 1, "", "missing columns %q (the header has %s)", missing, strings.Join(h.Names, ", "))
	}
	return h, nil
}

func invalid(file string, line int, col string, format string, args ...any) *domain.Error {
	return domain.Errorf(domain.Invalid, format, args...).At(domain.Location{File: file, Line: line, Column: col})
}

// parseErr turns an encoding/csv error into a located error.
func parseErr(file string, err error) *domain.Error {
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		return invalid(file, pe.Line, "", "broken CSV at column %d: %v", pe.Column, pe.Err)
	}
	return domain.Errorf(domain.Invalid, "reading: %w", err).At(domain.Location{File: file})
}

// collect gathers row problems of a whole-file reader: all of them,
// identical ones summarised (see [domain.ProblemList]).
type collect struct {
	file string
	pl   domain.ProblemList
}

func (c *collect) add(e *domain.Error) { c.pl.Add(e) }

// err returns nil when there were no problems, else one error listing them.
func (c *collect) err(what string) error {
	n := c.pl.Len()
	if n == 0 {
		return nil
	}
	ps := c.pl.Errors()
	e := &domain.Error{Kind: domain.Invalid, Loc: domain.Location{File: c.file}, Problems: ps}
	if len(ps) == 1 && c.pl.Unlisted() == 0 {
		// One problem, or one summarised for all its rows.
		e.Loc, e.Msg = ps[0].Loc, ps[0].Msg
		return e
	}
	e.Msg = fmt.Sprintf("%d bad %s rows", n, what)
	if u := c.pl.Unlisted(); u > 0 {
		e.Msg += fmt.Sprintf(" (%d further rows with other problems are not listed)", u)
	}
	return e
}

// Report writes err to w: the message, and then each row problem on its own
// line when err lists several, or one that its message does not already say
// (an import's "1 bad row; nothing was imported" and that row's problem).
func Report(w io.Writer, err error) {
	var de *domain.Error
	if errors.As(err, &de) && (len(de.Problems) > 1 || len(de.Problems) == 1 && de.Problems[0].Error() != de.Error()) {
		fmt.Fprintf(w, "%v:\n", de)
		for _, p := range de.Problems {
			fmt.Fprintf(w, "  %v\n", p)
		}
		return
	}
	fmt.Fprintln(w, err)
}

// row reads cells of one record and records the first problem.
type row struct {
	file string
	line int
	h    *Header
	rec  []string
	bad  *domain.Error
}

func (r *row) fail(col, format string, args ...any) {
	if r.bad == nil {
		r.bad = invalid(r.file, r.line, col, format, args...)
	}
}

// cell returns the trimmed cell of the named column, "" when absent.
func (r *row) cell(col string) string {
	i := r.h.Index(col)
	if i < 0 || i >= len(r.rec) {
		return ""
	}
	return strings.TrimSpace(r.rec[i])
}

// num parses a number; ok is false when the cell is empty or bad (a bad cell
// records a problem; an empty one records a problem only when required).
func (r *row) num(col string, required bool) (v float64, ok bool) {
	s := r.cell(col)
	if s == "" {
		if required {
			r.fail(col, "%s is empty", col)
		}
		return math.NaN(), false
	}
	v, msg := ParseNumber(s)
	if msg != "" {
		r.fail(col, "%s %s", col, msg)
		return math.NaN(), false
	}
	return v, true
}

// inRange checks lo <= v <= hi for a parsed value.
// date reads an optional YYYY-MM-DD cell; zero when empty or bad (a bad
// one fails the row).
func (r *row) date(col string) time.Time {
	d := r.cell(col)
	if d == "" {
		return time.Time{}
	}
	t, err := time.Parse(time.DateOnly, d)
	if err != nil {
		r.fail(col, "%s %q is not a date YYYY-MM-DD", col, d)
		return time.Time{}
	}
	return t
}

func (r *row) inRange(col string, v float64, ok bool, lo, hi float64) {
	if ok && (v < lo || v > hi) {
		r.fail(col, "%s %g is outside %g..%g", col, v, lo, hi)
	}
}

// ParseNumber parses a decimal number cell (already trimmed). msg is "" on
// success, else a short reason such as `"abc" is not a number`.
func ParseNumber(s string) (v float64, msg string) {
	if v, ok := parseSimple(s); ok {
		return v, ""
	}
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		return math.NaN(), fmt.Sprintf("%q is not a number", s)
	}
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return math.NaN(), fmt.Sprintf("%q is not a finite number", s)
	}
	return v, ""
}

// parseSimple parses the common plain decimal form [+-]digits[.digits] with
// at most 15 digits exactly as strconv.ParseFloat does, but faster: the
// digits form an integer m < 2^53 and the value is m / 10^k with k <= 15,
// one correctly rounded division of two exact numbers (the fast path of
// Clinger 1990). Anything else returns ok = false.
func parseSimple[S string | []byte](s S) (v float64, ok bool) {
	i, neg := 0, false
	if len(s) > 0 && (s[0] == '-' || s[0] == '+') {
		neg = s[0] == '-'
		i = 1
	}
	var m uint64
	nd, frac, dot := 0, 0, false
	for ; i < len(s); i++ {
		c := s[i]
		switch {
		case c >= '0' && c <= '9':
			m = m*10 + uint64(c-'0')
			nd++
			if dot {
				frac++
			}
		case c == '.' && !dot:
			dot = true
		default:
			return 0, false
		}
	}
	if nd == 0 || nd > 15 {
		return 0, false
	}
	v = float64(m)
	if frac > 0 {
		v /= pow10[frac]
	}
	if neg {
		v = -v
	}
	return v, true
}

// ParseAzimuthRef parses true, grid or magnetic (any case). "" is returned
// unchanged (no reference given).
func ParseAzimuthRef(s string) (string, error) {
	switch t := strings.ToLower(strings.TrimSpace(s)); t {
	case "", RefTrue, RefGrid, RefMagnetic:
		return t, nil
	}
	return "", fmt.Errorf("%q is not an azimuth reference (want true, grid or magnetic)", s)
}

// readRows reads a whole file of rows of one kind (what names it in the
// combined error): the header with the required columns, then every record.
// A record with the wrong field count, or one on which parse calls rw.fail,
// is collected as a problem; the others are returned in file order. A
// missing column or broken CSV is an error at once. On error no rows are
// returned. parse may check rw.bad at its end to keep state only for rows
// that are kept.
func readRows[T any](r io.Reader, file, what string, required []string, parse func(rw *row) T) ([]T, error) {
	cr := newRecordReader(r) // encoding/csv's records and errors, faster (see recordReader)
	h, err := readHeader(cr, file, required...)
	if err != nil {
		return nil, err
	}
	// Past rowChunk rows, rows are kept in chunks of that size and copied
	// once into a slice of the exact length at the end: growing one slice
	// of large rows by doubling allocated, zeroed and copied about twice
	// the final size.
	var chunks [][]T
	var rows []T
	c := collect{file: file}
	rw := &row{} // one for every record: parse is a function value, so a row given to it lives on the heap
	for {
		rec, err := cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, parseErr(file, err)
		}
		*rw = row{file: file, line: cr.recLine, h: h, rec: rec}
		if len(rec) != len(h.Names) {
			rw.fail("", "row has %d fields, the header has %d", len(rec), len(h.Names))
			c.add(rw.bad)
			continue
		}
		v := parse(rw)
		if rw.bad != nil {
			c.add(rw.bad)
			continue
		}
		if len(rows) == cap(rows) && cap(rows) >= rowChunk {
			chunks = append(chunks, rows)
			rows = make([]T, 0, rowChunk)
		}
		rows = append(rows, v)
	}
	if err := c.err(what); err != nil {
		return nil, err
	}
	if len(chunks) == 0 {
		return rows, nil
	}
	n := len(rows)
	for _, ch := range chunks {
		n += len(ch)
	}
	all := make([]T, 0, n)
	for _, ch := range chunks {
		all = appendRows(all, ch)
	}
	return appendRows(all, rows), nil
}

// appendRows appends rows to all (which has room for them) in pieces of
// rowPiece rows, each copied by a call that is not inlined. A copy of rows
// that hold pointers cannot be interrupted; the garbage collector, which
// the large all may well have started, waits for it with signals and spins
// on the other core until the goroutine reaches a function call. Copied
// in one go, the chunks cost several times the copy itself.
func appendRows[T any](all, rows []T) []T {
	for len(rows) > rowPiece {
		all = appendPiece(all, rows[:rowPiece])
		rows = rows[rowPiece:]
	}
	return appendPiece(all, rows)
}

// rowPiece is the number of rows appendRows copies at a time.
const rowPiece = 128

//go:noinline
func appendPiece[T any](all, rows []T) []T { return append(all, rows...) }

// rowChunk is the number of rows in a chunk of readRows (beyond the first, which grows to it).
const rowChunk = 1024
