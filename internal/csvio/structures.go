package csvio

import (
	"bytes"
	"encoding/binary"
	"io"
	"math"
	"math/bits"
	"slices"
	"strings"
	"unicode"
	"unicode/utf8"

	"corvane/internal/domain"
)

// StructureColumns are the required columns of a structures file.
var StructureColumns = []string{ColHoleID, ColDepth, ColAlpha, ColBeta}

// StructureRow is one measurement row read by a [StructureReader]. It is
// valid until the next call of Next.
type StructureRow struct {
	Line   int
	Record []string // all cells of the row as read, in header order
	// Raw is the row's text as read (CSV, quotes kept, line ends normalised
	// to "\n", without the final one), for copying the input columns through.
	Raw    []byte
	HoleID string
	Depth  float64
	Alpha  float64
	// Beta is NaN and HasBeta false when the beta cell is empty: an
	// unoriented measurement (alpha without beta).
	Beta    float64
	HasBeta bool
	// Gamma is the lineation angle; HasGamma is false (and Gamma NaN) when
	// the gamma column is absent or the cell empty.
	Gamma    float64
	HasGamma bool
	// Thickness is the apparent (along-core) thickness from the
	// apparent_thickness or thickness column; NaN when absent or empty.
	Thickness    float64
	HasThickness bool
	// RunConfidence and RunMismatch describe the orientation run holding
	// the measurement, from the optional run_confidence (good, fair, poor or
	// none, any case; stored lower case) and run_mismatch (0..180 degrees)
	// columns: "" and NaN when absent or empty. They set the mark's error of
	// the uncertainty columns.
	RunConfidence string
	RunMismatch   float64
	// Err is the row's first problem (a value that is not a number, out of
	// range, missing, or a row with the wrong number of fields), nil when the
	// row is good. A bad row keeps its place in the stream.
	Err *domain.Error
}

// StructureReader streams the rows of a structures file: required columns
// hole_id, depth (>= 0), alpha (0..90), beta (0..360, or empty for an
// unoriented measurement), optional gamma
// (0..360, empty when there is no lineation), apparent_thickness or
// thickness (>= 0), run_confidence and run_mismatch; any further columns are carried in Record. Memory use
// does not grow with the number of rows.
type StructureReader struct {
	Header                                       *Header
	cr                                           *recordReader
	file                                         string
	iHole, iDepth, iAlpha, iBeta, iGamma, iThick int
	iRunConf, iRunMismatch                       int
	row                                          StructureRow
}

// NewStructureReader reads the header of a structures file. file names it in
// messages. A missing column or an unreadable header is an error.
func NewStructureReader(r io.Reader, file string) (*StructureReader, error) {
	cr := newRecordReader(r)
	h, err := readHeader(cr, file, StructureColumns...)
	if err != nil {
		return nil, err
	}
	s := &StructureReader{Header: h, cr: cr, file: file,
		iHole: h.Index(ColHoleID), iDepth: h.Index(ColDepth), iAlpha: h.Index(ColAlpha),
		iBeta: h.Index(ColBeta), iGamma: h.Index(ColGamma), iThick: h.Index(ColApparentThick),
		iRunConf: h.Index(ColRunConfidence), iRunMismatch: h.Index(ColRunMismatch)}
	if s.iThick < 0 {
		s.iThick = h.Index(ColThickness)
	}
	return s, nil
}

// HasThickness reports whether the file has an apparent_thickness or
// thickness column.
func (s *StructureReader) HasThickness() bool { return s.iThick >= 0 }

// ThicknessColumn returns the name of the thickness column, "" when none.
func (s *StructureReader) ThicknessColumn() string {
	if s.iThick < 0 {
		return ""
	}
	return s.Header.Names[s.iThick]
}

// Next returns the next row, io.EOF after the last, or a located error when
// the file cannot be read on (broken CSV). Problems of a single row are in
// the row's Err, not in the returned error. Next is NextRaw then Parse.
func (s *StructureReader) Next() (*StructureRow, error) {
	r, err := s.NextRaw()
	if err != nil {
		return nil, err
	}
	s.Parse(r)
	return r, nil
}

// NextRaw reads the next row without interpreting it: only Line, Record and
// Raw are set. Errors as for Next. Use [StructureReader.Parse] to fill in the
// rest, possibly on another goroutine (Parse only reads the header).
func (s *StructureReader) NextRaw() (*StructureRow, error) {
	rec, err := s.cr.Read()
	if err == io.EOF {
		return nil, io.EOF
	}
	if err != nil {
		return nil, parseErr(s.file, err)
	}
	r := &s.row
	*r = StructureRow{Line: s.cr.recLine, Record: rec, Raw: s.cr.raw}
	return r, nil
}

// NextUnsplit reads the next row without interpreting it, as NextRaw,
// and returns its line, cells and raw text instead of a row. A row without
// quotes is not split into fields: rec is nil and unsplit is true, and its
// fields are raw split at every comma ([SplitFields]). A reader that hands
// rows to other goroutines can then split them there, from one string per
// batch of rows. raw and rec are valid until the next call. Errors as for
// Next.
func (s *StructureReader) NextUnsplit() (line int, rec []string, raw []byte, unsplit bool, err error) {
	rec, unsplit, err = s.cr.ReadUnsplit()
	if err == io.EOF {
		return 0, nil, nil, false, io.EOF
	}
	if err != nil {
		return 0, nil, nil, false, parseErr(s.file, err)
	}
	return s.cr.recLine, rec, s.cr.raw, unsplit, nil
}

// The ranges of a structure row's numbers: the one rule of Parse, which
// reports a value outside them, and of ParseUnquoted, which leaves such a
// row to Parse.
func nonNegative(v float64) bool { return v >= 0 }             // depth, thickness
func alphaIn(v float64) bool     { return v >= 0 && v <= 90 }  // alpha
func turnIn(v float64) bool      { return v >= 0 && v <= 360 } // beta, gamma
func mismatchIn(v float64) bool  { return v >= 0 && v <= 180 } // run_mismatch

// Parse fills in the values and the problem of a row read by NextRaw from
// its Line and Record. It is safe to call concurrently on different rows.
func (s *StructureReader) Parse(r *StructureRow) {
	rec, line := r.Record, r.Line
	*r = StructureRow{Line: line, Record: rec, Raw: r.Raw, Gamma: math.NaN(), Thickness: math.NaN(), RunMismatch: math.NaN()}
	if len(rec) != len(s.Header.Names) {
		r.Err = invalid(s.file, line, "", "row has %d fields, the header has %d", len(rec), len(s.Header.Names))
		return
	}
	r.HoleID = strings.TrimSpace(rec[s.iHole])
	if r.HoleID == "" {
		r.Err = invalid(s.file, line, s.Header.Names[s.iHole], "hole_id is empty")
		return
	}
	var ok bool
	if r.Depth, ok = s.num(r, s.iDepth, true); ok && !nonNegative(r.Depth) {
		s.fail(r, s.iDepth, "depth %g is negative", r.Depth)
	}
	if r.Alpha, ok = s.num(r, s.iAlpha, true); ok && !alphaIn(r.Alpha) {
		s.fail(r, s.iAlpha, "alpha %g is outside 0..90", r.Alpha)
	}
	if r.Beta, r.HasBeta = s.num(r, s.iBeta, false); r.HasBeta && !turnIn(r.Beta) {
		s.fail(r, s.iBeta, "beta %g is outside 0..360", r.Beta)
	}
	if s.iGamma >= 0 {
		if r.Gamma, r.HasGamma = s.num(r, s.iGamma, false); r.HasGamma && !turnIn(r.Gamma) {
			s.fail(r, s.iGamma, "gamma %g is outside 0..360", r.Gamma)
		}
	}
	if s.iThick >= 0 {
		if r.Thickness, r.HasThickness = s.num(r, s.iThick, false); r.HasThickness && !nonNegative(r.Thickness) {
			s.fail(r, s.iThick, "%s %g is negative", s.Header.Names[s.iThick], r.Thickness)
		}
	}
	if s.iRunConf >= 0 {
		if c := strings.ToLower(strings.TrimSpace(rec[s.iRunConf])); c != "" {
			if slices.Contains(Confidences, c) {
				r.RunConfidence = c
			} else {
				s.fail(r, s.iRunConf, "run_confidence %q is not one of %s", rec[s.iRunConf], strings.Join(Confidences, ", "))
			}
		}
	}
	if s.iRunMismatch >= 0 {
		var ok bool
		if r.RunMismatch, ok = s.num(r, s.iRunMismatch, false); ok && !mismatchIn(r.RunMismatch) {
			s.fail(r, s.iRunMismatch, "run_mismatch %g is outside 0..180", r.RunMismatch)
		}
	}
}

// ParseUnquoted is Parse for a row read without quotes (see NextUnsplit),
// given its text: it fills in r from the text's fields (the text split at
// every comma) without making a string of each, and returns true, when the
// row is good and its numbers are plain decimals ([ParseNumber]'s common
// form) and its run_confidence, if any, is written in lower case. Otherwise
// it returns false, r keeping its Line and Raw: call Parse with the split
// fields, which reports the row's problem. Record is set to nil: the fields
// are the text's. HoleID is a new string, except when it equals sameHole
// (the hole id of a row parsed before, say): then it is sameHole itself, so
// that the rows of one hole make no string each. It is safe to call
// concurrently on different rows.
func (s *StructureReader) ParseUnquoted(r *StructureRow, text []byte, sameHole string) bool {
	const most = 32 // columns; wider files take the general path
	n := len(s.Header.Names)
	if n > most {
		return false
	}
	var ends [most]int // end of each field in text
	k := 0
	// The commas are found eight bytes at a time: m has the high bit of
	// every byte of w that is a comma (exactly, with no carries between
	// bytes).
	const highs, commas = 0x8080808080808080, ',' * 0x0101010101010101
	i := 0
	for ; i+8 <= len(text); i += 8 {
		x := binary.LittleEndian.Uint64(text[i:]) ^ commas // zero bytes at the commas
		m := ^((x&^highs + ^uint64(highs)) | x | ^uint64(highs))
		for m != 0 {
			if k == n-1 {
				return false // more fields than the header
			}
			ends[k] = i + bits.TrailingZeros64(m)>>3
			k++
			m &= m - 1
		}
	}
	for ; i < len(text); i++ {
		if text[i] == ',' {
			if k == n-1 {
				return false
			}
			ends[k] = i
			k++
		}
	}
	if k != n-1 {
		return false
	}
	ends[k] = len(text)
	cell := func(i int) []byte {
		from := 0
		if i > 0 {
			from = ends[i-1] + 1
		}
		return trimSpace(text[from:ends[i]])
	}
	// num parses an optional number cell: has is false for an empty cell,
	// ok false for anything but a plain decimal.
	num := func(i int) (v float64, has, ok bool) {
		c := cell(i)
		if len(c) == 0 {
			return math.NaN(), false, true
		}
		v, ok = parseSimple(c)
		return v, ok, ok
	}
	*r = StructureRow{Line: r.Line, Raw: r.Raw, Gamma: math.NaN(), Thickness: math.NaN(), RunMismatch: math.NaN()}
	row := r
	id := cell(s.iHole)
	if len(id) == 0 {
		return false
	}
	if string(id) == sameHole {
		row.HoleID = sameHole
	} else {
		row.HoleID = string(id)
	}
	var has, ok bool
	if row.Depth, has, ok = num(s.iDepth); !has || !ok || !nonNegative(row.Depth) {
		return false
	}
	if row.Alpha, has, ok = num(s.iAlpha); !has || !ok || !alphaIn(row.Alpha) {
		return false
	}
	if row.Beta, row.HasBeta, ok = num(s.iBeta); !ok || row.HasBeta && !turnIn(row.Beta) {
		return false
	}
	if s.iGamma >= 0 {
		if row.Gamma, row.HasGamma, ok = num(s.iGamma); !ok || row.HasGamma && !turnIn(row.Gamma) {
			return false
		}
	}
	if s.iThick >= 0 {
		if row.Thickness, row.HasThickness, ok = num(s.iThick); !ok || row.HasThickness && !nonNegative(row.Thickness) {
			return false
		}
	}
	if s.iRunConf >= 0 {
		if c := cell(s.iRunConf); len(c) != 0 {
			k := slices.Index(Confidences, string(c))
			if k < 0 {
				return false
			}
			row.RunConfidence = Confidences[k]
		}
	}
	if s.iRunMismatch >= 0 {
		if row.RunMismatch, has, ok = num(s.iRunMismatch); !ok || has && !mismatchIn(row.RunMismatch) {
			return false
		}
	}
	return true
}

// trimSpace is bytes.TrimSpace, quicker for the common cell that starts
// and ends with a printable ASCII character.
func trimSpace(c []byte) []byte {
	if len(c) == 0 || c[0] > ' ' && c[0] < utf8.RuneSelf && c[len(c)-1] > ' ' && c[len(c)-1] < utf8.RuneSelf {
		return c
	}
	return bytes.TrimSpace(c)
}

// fail records a problem in column i unless the row already has one.
func (s *StructureReader) fail(r *StructureRow, i int, format string, args ...any) {
	if r.Err == nil {
		r.Err = invalid(s.file, r.Line, s.Header.Names[i], format, args...)
	}
}

// num parses cell i of the current row. The first problem is kept in r.Err.
func (s *StructureReader) num(r *StructureRow, i int, required bool) (float64, bool) {
	c := strings.TrimSpace(r.Record[i])
	if c == "" {
		if required && r.Err == nil {
			r.Err = invalid(s.file, r.Line, s.Header.Names[i], "%s is empty", s.Header.Names[i])
		}
		return math.NaN(), false
	}
	v, msg := ParseNumber(c)
	if msg != "" {
		if r.Err == nil {
			r.Err = invalid(s.file, r.Line, s.Header.Names[i], "%s %s", s.Header.Names[i], msg)
		}
		return math.NaN(), false
	}
	return v, true
}

// Writer writes CSV rows field by field with the quoting rules of
// encoding/csv (comma separator, "\n" line ends), without building a
// []string per row. Numbers are appended directly. It buffers about 64 KiB;
// call Flush at the end. Write errors are sticky and returned by Flush.
type Writer struct {
	w     io.Writer
	buf   []byte
	first bool
	err   error
}

const writerFlushAt = 64 << 10

// NewWriter returns a Writer on w. With a nil w the Writer only collects the
// output in memory (see [Writer.Buffered]).
func NewWriter(w io.Writer) *Writer {
	return &Writer{w: w, first: true, buf: make([]byte, 0, writerFlushAt+4096)}
}

// NewMemWriter returns a Writer that only collects its output in memory
// (see [Writer.Buffered]), starting small: for a few fields formatted once.
func NewMemWriter() *Writer { return &Writer{first: true} }

func (w *Writer) sep() {
	if !w.first {
		w.buf = append(w.buf, ',')
	}
	w.first = false
}

// String writes one text field, quoted when it needs to be.
func (w *Writer) String(s string) {
	w.sep()
	if !fieldNeedsQuotes(s) {
		w.buf = append(w.buf, s...)
		return
	}
	w.buf = append(w.buf, '"')
	for i := 0; i < len(s); i++ {
		if s[i] == '"' {
			w.buf = append(w.buf, '"', '"')
		} else {
			w.buf = append(w.buf, s[i])
		}
	}
	w.buf = append(w.buf, '"')
}

// Raw writes pre-formatted bytes as one or more fields; the caller is
// responsible for separators inside and quoting.
func (w *Writer) Raw(b []byte) {
	w.sep()
	w.buf = append(w.buf, b...)
}

// Float writes v with prec decimals, or an empty field for NaN (see
// [AppendFloat]).
func (w *Writer) Float(v float64, prec int) {
	comma := !w.first
	w.first = false
	w.buf = appendFloat(w.buf, comma, v, prec)
}

// Empty writes an empty field.
func (w *Writer) Empty() { w.sep() }

// Strings writes each of fields as a text field.
func (w *Writer) Strings(fields []string) {
	for _, f := range fields {
		w.String(f)
	}
}

// EndRow ends the current row.
func (w *Writer) EndRow() {
	w.buf = append(w.buf, '\n')
	w.first = true
	if len(w.buf) >= writerFlushAt && w.w != nil {
		w.flush()
	}
}

// Write appends p verbatim (whole rows formatted elsewhere). It makes
// Writer an io.Writer; errors surface from Flush.
func (w *Writer) Write(p []byte) (int, error) {
	w.buf = append(w.buf, p...)
	if len(w.buf) >= writerFlushAt && w.w != nil {
		w.flush()
	}
	return len(p), nil
}

// Buffered returns the output not yet flushed. It stays valid until the
// next write or Reset.
func (w *Writer) Buffered() []byte { return w.buf }

// Reset drops the output not yet flushed and starts a new row.
func (w *Writer) Reset() {
	w.buf = w.buf[:0]
	w.first = true
}

func (w *Writer) flush() {
	if w.w == nil {
		return
	}
	if w.err == nil && len(w.buf) > 0 {
		_, w.err = w.w.Write(w.buf)
	}
	w.buf = w.buf[:0]
}

// Flush writes any buffered data and returns the first write error.
func (w *Writer) Flush() error {
	w.flush()
	return w.err
}

// needsQuote marks the bytes that force quoting anywhere in a field.
var needsQuote = [256]bool{',': true, '"': true, '\r': true, '\n': true}

// fieldNeedsQuotes is encoding/csv's rule for the comma separator.
func fieldNeedsQuotes(field string) bool {
	if field == "" {
		return false
	}
	for i := 0; i < len(field); i++ {
		if needsQuote[field[i]] {
			return true
		}
	}
	if field == `\.` {
		return true
	}
	c := field[0]
	if c < utf8.RuneSelf {
		return c == ' ' || c == '\t' || c == '\v' || c == '\f' || c == 0x85 || c == 0xA0
	}
	r1, _ := utf8.DecodeRuneInString(field)
	return unicode.IsSpace(r1)
}
