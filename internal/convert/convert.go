package convert

import (
	"context"
	"errors"
	"fmt"
	"io"
	"runtime"
	"slices"
	"strings"
	"sync"
	"sync/atomic"

	"corvane/internal/csvio"
	"corvane/internal/domain"
	"corvane/internal/holemodel"
	"corvane/internal/uncertainty"
)

// Measurement is one core-angle measurement to convert.
type Measurement struct {
	HoleID string
	holemodel.Measurement
}

// Orient converts one measurement with its hole's model. Errors are
// *domain.Error of kind Invalid naming the field (Loc.Column): an unknown
// hole or a hole with a problem (hole_id), a depth outside the hole (depth),
// an angle out of range (alpha, beta, gamma). It does not allocate when it
// succeeds.
func (hs *Holes) Orient(m Measurement) (holemodel.Result, error) {
	var r holemodel.Result
	err := hs.orient(&r, hs.holes[m.HoleID], &m)
	return r, err
}

// orient is Orient with hole h of m (nil when unknown), writing the result
// into r (the zero Result when there is an error).
func (hs *Holes) orient(r *holemodel.Result, h *Hole, m *Measurement) error {
	if h == nil {
		*r = holemodel.Result{}
		return fieldErr(csvio.ColHoleID, "unknown hole %q (not in the collars)", m.HoleID)
	}
	if h.Err != nil {
		*r = holemodel.Result{}
		return fieldErr(csvio.ColHoleID, "%s", h.Err.Error())
	}
	if err := h.OrientTo(r, &m.Measurement); err != nil {
		e := err.(*holemodel.Error)
		return fieldErr(e.Field, "%s", e.Msg)
	}
	return nil
}

func fieldErr(col, format string, args ...any) *domain.Error {
	e := domain.Errorf(domain.Invalid, format, args...)
	e.Loc.Column = col
	return e
}

// Output columns appended after the input columns, in order. ColTrueThickness
// is present only when the input has a thickness column.
const (
	ColHoleAzimuth       = "hole_azimuth"
	ColHoleDip           = "hole_dip"
	ColEasting           = "easting"
	ColNorthing          = "northing"
	ColElevation         = "elevation"
	ColDip               = "dip"
	ColDipDirection      = "dip_direction"
	ColStrike            = "strike"
	ColLineTrend         = "line_trend"
	ColLinePlunge        = "line_plunge"
	ColWarnings          = "warnings"
	ColPoleTrend         = "pole_trend"
	ColPolePlunge        = "pole_plunge"
	ColTrueThickness     = "true_thickness"
	ColAzimuthReference  = "azimuth_reference"
	ColDeclination       = "declination"
	ColDeclinationSource = "declination_source"
	ColGridConvergence   = "grid_convergence"
	ColConvergenceSource = "convergence_source"
	ColSurveySet         = "survey_set"
	ColPoleCone95        = csvio.ColPoleCone95
	ColPoleLong95        = "pole_long95"
	ColPoleShort95       = "pole_short95"
	ColPoleMethod        = "pole_method"
	ColLineCone95        = "line_cone95"
	ColLineLong95        = "line_long95"
	ColLineShort95       = "line_short95"
	ColLineMethod        = "line_method"
	ColSurveyInstrument  = "survey_instrument"
	ColError             = "error"
)

// UncertaintyColumns are the columns of a measurement's 95% regions and the
// survey instrument whose errors they carry (see [WriteResult]).
var UncertaintyColumns = []string{ColPoleCone95, ColPoleLong95, ColPoleShort95, ColPoleMethod,
	ColLineCone95, ColLineLong95, ColLineShort95, ColLineMethod, ColSurveyInstrument}

// OutputColumns returns the columns Convert appends to the input columns.
func OutputColumns(thickness bool) []string {
	cols := []string{ColHoleAzimuth, ColHoleDip, ColEasting, ColNorthing, ColElevation, ColDip, ColDipDirection,
		ColStrike, ColLineTrend, ColLinePlunge, ColWarnings, ColPoleTrend, ColPolePlunge}
	if thickness {
		cols = append(cols, ColTrueThickness)
	}
	cols = append(cols, ColAzimuthReference, ColDeclination, ColDeclinationSource, ColGridConvergence, ColConvergenceSource, ColSurveySet)
	cols = append(cols, UncertaintyColumns...)
	return append(cols, ColError)
}

// Decimals written in the output: angles to 0.01 degree, positions and
// thicknesses to 0.001 of the length unit (csvio's, shared with the other
// CSV outputs), corrections to 0.001 degree.
const (
	angleDecimals      = csvio.AngleDecimals
	lengthDecimals     = csvio.LengthDecimals
	correctionDecimals = 3
)

// Decimals returns the decimals [WriteResult] writes in output column col,
// -1 for a text column.
func Decimals(col string) int {
	switch col {
	case ColEasting, ColNorthing, ColElevation, ColTrueThickness:
		return lengthDecimals
	case ColDeclination, ColGridConvergence:
		return correctionDecimals
	case ColHoleAzimuth, ColHoleDip, ColDip, ColDipDirection, ColStrike, ColLineTrend, ColLinePlunge, ColPoleTrend, ColPolePlunge,
		ColPoleCone95, ColPoleLong95, ColPoleShort95, ColLineCone95, ColLineLong95, ColLineShort95:
		return angleDecimals
	}
	return -1
}

// Summary counts the rows of a conversion.
type Summary struct {
	Rows      int // structure rows written
	BadRows   int // rows written with an error
	WarnRows  int // rows written with at least one warning (a warnings cell)
	Extrapols int // rows below the last survey station of their hole
	// PerHole counts the rows of each hole id (the trimmed hole_id cell, ""
	// when absent), in order of first appearance in the input.
	PerHole []HoleRows
}

// HoleRows counts the output rows of one hole id.
type HoleRows struct {
	HoleID   string
	Rows     int // rows written
	WarnRows int // rows with a warning, the hole's caution or the run's rating, and no error
	BadRows  int // rows written with an error
}

// Convert streams the structures file from r to w: one output row per input
// row, in input order, with the input columns followed by [OutputColumns].
// A row that cannot be converted keeps its place with empty results and a
// message naming file, line and column in the error column; Summary.BadRows
// counts them. An error is returned, and the output must be discarded, when
// the file cannot be read as a whole (missing column, broken CSV, an input
// column named like an output column) or when writing fails; ctx is checked
// between batches of rows.
//
// [Options].Workers goroutines (the caller's among them) take turns reading
// batches of 512 records; each parses, converts and formats its own batch,
// and batches are written in input order by whichever worker finishes the
// one whose turn it is. Output order does not depend on the workers. Memory
// use is bounded by the batches in flight (four per worker).
func (hs *Holes) Convert(ctx context.Context, r io.Reader, w io.Writer) (Summary, error) {
	var sum Summary
	file := nameOr(hs.opt.StructuresFile, "structures")
	sr, err := csvio.NewStructureReader(r, file)
	if err != nil {
		return sum, err
	}
	thick := sr.HasThickness()
	outCols := OutputColumns(thick)
	for _, c := range outCols {
		if i := sr.Header.Index(c); i >= 0 {
			return sum, domain.Errorf(domain.Invalid, "input column %q has the name of an output column; rename it", sr.Header.Names[i]).
				At(domain.Location{File: file, Line: 1, Column: sr.Header.Names[i]})
		}
	}
	cw := csvio.NewWriter(w)
	cw.Strings(sr.Header.Names)
	cw.Strings(outCols)
	cw.EndRow()
	if err := cw.Flush(); err != nil {
		return sum, fmt.Errorf("writing the output: %w", err)
	}

	// Workers take turns reading a batch of records, then each parses,
	// converts and formats its own batch, and whichever worker finds the
	// next batch in input order finished writes it (and any finished ones
	// after it). No goroutine only reads or only writes, so as many
	// goroutines as cores do all the work without waiting to be scheduled.
	// A fixed number of batches circulate, so memory stays bounded however
	// long the input.
	cv := &converter{hs: hs, sr: sr, file: file, ncols: len(sr.Header.Names), nout: len(outCols), thick: thick,
		iHole: sr.Header.Index(csvio.ColHoleID), batchRows: hs.opt.batchRows}
	if cv.batchRows <= 0 {
		cv.batchRows = batchRows
	}
	return cv.run(ctx, w, hs.opt.Workers)
}

// add adds the row totals of o to s (not PerHole: see mergeHoleRows).
func (s *Summary) add(o Summary) {
	s.Rows += o.Rows
	s.BadRows += o.BadRows
	s.WarnRows += o.WarnRows
	s.Extrapols += o.Extrapols
}

// mergeHoleRows adds the per-hole counts of one batch to all, keeping the
// order of first appearance; index maps a hole id to its place in all.
func mergeHoleRows(all []HoleRows, index map[string]int, batch []HoleRows) []HoleRows {
	for _, h := range batch {
		i, ok := index[h.HoleID]
		if !ok {
			i = len(all)
			index[h.HoleID] = i
			all = append(all, HoleRows{HoleID: h.HoleID})
		}
		all[i].Rows += h.Rows
		all[i].WarnRows += h.WarnRows
		all[i].BadRows += h.BadRows
	}
	return all
}

// converter holds what the workers of one Convert call share; it is only
// read by them.
type converter struct {
	hs          *Holes
	sr          *csvio.StructureReader
	file        string
	ncols, nout int
	thick       bool
	iHole       int // the hole_id column
	batchRows   int // rows in a batch
}

// batchRows is the number of rows in one batch.
const batchRows = 512

// batch is a run of rows: the reader fills lines, fields, spans, raw and
// rawSpans; the worker makes rows from them (Record and Raw point into
// fields, split and raw) and formats them into out.
type batch struct {
	seq      int   // place of the batch in the input, from 0
	lines    []int // line of each row, as read
	rows     []csvio.StructureRow
	fields   []string // fields of the rows with quotes, as read
	spans    []int    // start of each row's fields in fields, -1 for a row to split
	split    []string // fields of the rows without quotes, split by the worker
	raw      []byte
	rawSpans []int
	err      error         // the read error that ended the input, if any
	out      *csvio.Writer // the formatted output rows
	sum      Summary
	perHole  []HoleRows // backing array of sum.PerHole, reused
	// holeIndex maps a hole id to its place in sum.PerHole.
	holeIndex map[string]int
	tail      []byte
}

// pipeline is the shared state of the workers of one Convert call.
type pipeline struct {
	cv  *converter
	ctx context.Context
	w   io.Writer
	// slots holds the free batches: a worker takes one before reading and
	// the batch goes back once written, so at most cap(slots) batches are
	// in flight and a worker that runs too far ahead waits.
	slots chan *batch
	quit  chan struct{} // closed when the conversion fails
	stop  atomic.Bool   // set with quit

	readMu sync.Mutex
	seq    int  // number of the next batch read (under readMu)
	eof    bool // the input has ended (under readMu)

	writeMu sync.Mutex
	next    int      // number of the next batch to write (under writeMu)
	done    []*batch // converted batches waiting for their turn, by seq modulo len (under writeMu)
	sum     Summary
	index   map[string]int // hole id -> position in sum.PerHole
	err     error          // the first error; nothing is written after it
}

// run converts the input on workers goroutines, the caller's among them
// (workers <= 0: one per CPU), and returns the summary of the rows written.
func (cv *converter) run(ctx context.Context, w io.Writer, workers int) (Summary, error) {
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	inFlight := 4 * workers
	p := &pipeline{cv: cv, ctx: ctx, w: w, slots: make(chan *batch, inFlight), quit: make(chan struct{}),
		done: make([]*batch, inFlight), index: map[string]int{}}
	for i := 0; i < inFlight; i++ {
		p.slots <- &batch{out: csvio.NewWriter(nil)}
	}
	var wg sync.WaitGroup
	for i := 1; i < workers; i++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			p.work()
		}()
	}
	p.work()
	wg.Wait()
	return p.sum, p.err
}

// work is one worker: read a batch, convert it, hand it to be written,
// until the input ends or the conversion fails.
func (p *pipeline) work() {
	ms := p.cv.hs.measurer.Fork() // the worker's own buffers, the normals shared
	for {
		var b *batch
		select {
		case b = <-p.slots:
		case <-p.quit:
			return
		}
		if !p.read(b) {
			p.slots <- b
			return
		}
		p.cv.convert(b, ms)
		p.written(b)
	}
}

// read fills b with the next batch of raw records; false when there are
// none left or the conversion has failed.
func (p *pipeline) read(b *batch) bool {
	p.readMu.Lock()
	defer p.readMu.Unlock()
	if p.eof || p.stop.Load() {
		return false
	}
	cv := p.cv
	b.lines, b.fields, b.spans, b.raw, b.rawSpans, b.err = b.lines[:0], b.fields[:0], b.spans[:0], b.raw[:0], b.rawSpans[:0], nil
	b.seq = p.seq
	p.seq++
	for len(b.lines) < cv.batchRows {
		line, rec, raw, unsplit, err := cv.sr.NextUnsplit()
		if err == io.EOF {
			p.eof = true
			break
		}
		if err != nil {
			b.err, p.eof = err, true
			break
		}
		// A row without quotes is split by the worker (spans -1).
		if unsplit {
			b.spans = append(b.spans, -1)
		} else {
			b.spans = append(b.spans, len(b.fields))
			b.fields = append(b.fields, rec...)
		}
		b.rawSpans = append(b.rawSpans, len(b.raw))
		b.raw = append(b.raw, raw...)
		b.lines = append(b.lines, line)
	}
	return true
}

// written hands over the converted batch b and writes, in input order,
// every converted batch whose turn has come; ctx is checked before each.
func (p *pipeline) written(b *batch) {
	p.writeMu.Lock()
	defer p.writeMu.Unlock()
	n := len(p.done)
	p.done[b.seq%n] = b
	for {
		b := p.done[p.next%n]
		if b == nil || b.seq != p.next {
			return
		}
		p.done[p.next%n] = nil
		p.next++
		if p.err == nil {
			p.write(b)
		}
		p.slots <- b // never blocks: it has room for every batch
	}
}

// write writes batch b and adds its counts (under writeMu).
func (p *pipeline) write(b *batch) {
	if err := p.ctx.Err(); err != nil {
		p.fail(err)
		return
	}
	if _, err := p.w.Write(b.out.Buffered()); err != nil {
		p.fail(fmt.Errorf("writing the output: %w", err))
		return
	}
	p.sum.add(b.sum)
	p.sum.PerHole = mergeHoleRows(p.sum.PerHole, p.index, b.sum.PerHole)
	if b.err != nil {
		p.fail(b.err)
	}
}

// fail ends the conversion with err (under writeMu).
func (p *pipeline) fail(err error) {
	p.err = err
	p.stop.Store(true)
	close(p.quit)
}

// convert parses, converts and formats the rows of b into b.out, measuring
// uncertainty with ms.
func (cv *converter) convert(b *batch, ms *uncertainty.Measurer) {
	cw := b.out
	cw.Reset()
	b.sum = Summary{}
	b.split = b.split[:0]
	b.rows = slices.Grow(b.rows[:0], len(b.lines))[:len(b.lines)]
	for i := range b.rows {
		to := len(b.raw)
		if i+1 < len(b.rawSpans) {
			to = b.rawSpans[i+1]
		}
		from := b.rawSpans[i]
		b.rows[i].Line = b.lines[i] // Parse sets the rest from Line, Record and Raw
		b.rows[i].Raw = b.raw[from:to:to]
		if sp := b.spans[i]; sp >= 0 {
			to = len(b.fields)
			for j := i + 1; j < len(b.spans); j++ {
				if b.spans[j] >= 0 {
					to = b.spans[j]
					break
				}
			}
			b.rows[i].Record = b.fields[sp:to:to]
			continue
		}
		b.rows[i].Record = nil // a row without quotes: its fields are its text's
	}
	sum := &b.sum
	sum.PerHole = b.perHole[:0]
	if b.holeIndex == nil {
		b.holeIndex = map[string]int{}
	}
	clear(b.holeIndex)
	var last *Hole
	var sameHole string // the hole id of the last row that had one
	var m Measurement
	var res holemodel.Result
	var hc *HoleRows // counts of the row's hole id in sum.PerHole
	for i := range b.rows {
		row := &b.rows[i]
		if row.Record != nil {
			cv.sr.Parse(row)
		} else if !cv.sr.ParseUnquoted(row, row.Raw, sameHole) {
			// A row with a problem, or a form the short path leaves to Parse.
			at := len(b.split)
			b.split = csvio.SplitFields(b.split, string(row.Raw))
			row.Record = b.split[at:len(b.split):len(b.split)]
			cv.sr.Parse(row)
		}
		if row.HoleID != "" {
			sameHole = row.HoleID // the next row's, most likely
		}
		sum.Rows++
		id := row.HoleID
		if row.Err != nil && id == "" && cv.iHole < len(row.Record) {
			id = strings.TrimSpace(row.Record[cv.iHole]) // a row of the wrong width
		}
		if hc == nil || hc.HoleID != id {
			hc = b.holeRowsOf(id)
		}
		hc.Rows++
		if row.Record == nil || len(row.Record) == cv.ncols { // nil: taken by ParseUnquoted, as wide as the header
			cw.Raw(row.Raw) // the input columns exactly as read
		} else {
			writeRecord(cw, row.Record, cv.ncols)
		}
		if row.Err != nil {
			sum.BadRows++
			hc.BadRows++
			writeEmpty(cw, cv.nout-1)
			cw.String(row.Err.Error())
			cw.EndRow()
			continue
		}
		if last == nil || last.ID != row.HoleID {
			last = cv.hs.holes[row.HoleID]
		}
		m = Measurement{HoleID: row.HoleID, Measurement: holemodel.Measurement{Depth: row.Depth, Alpha: row.Alpha, Beta: row.Beta, NoBeta: !row.HasBeta,
			Gamma: row.Gamma, HasGamma: row.HasGamma, Thickness: row.Thickness, HasThickness: row.HasThickness}}
		err := cv.hs.orient(&res, last, &m)
		if err != nil {
			sum.BadRows++
			hc.BadRows++
			writeEmpty(cw, cv.nout-1)
			var de *domain.Error
			errors.As(err, &de)
			col := de.Loc.Column
			if i := cv.sr.Header.Index(col); i >= 0 {
				col = cv.sr.Header.Names[i]
			}
			cw.String(de.At(domain.Location{File: cv.file, Line: row.Line, Column: col}).Error())
			cw.EndRow()
			continue
		}
		if res.Point.Extrapolated {
			sum.Extrapols++
		}
		var u *uncertainty.Result
		if !cv.hs.opt.NoUncertainty {
			if ur, ok := last.Uncertainty(ms, cv.hs.opt.ErrorModel, &res, m.Measurement, row.RunConfidence, row.RunMismatch); ok {
				u = &ur
			}
		}
		warn := Warnings(&res, last.Hole)
		if rw := RunWarning(row.RunConfidence); rw != "" {
			if warn != "" {
				warn += "; "
			}
			warn += rw
		}
		if warn != "" { // the warnings cell: the conversion's, the hole's cautions, the run's rating
			sum.WarnRows++
			hc.WarnRows++
		}
		if u == nil && last.rest != nil {
			writeMeasured(cw, &res, cv.thick, warn)
			cw.Raw(last.rest)
		} else {
			b.tail = WriteResult(cw, &res, last.Hole, cv.thick, warn, last.tail, b.tail, u)
		}
		cw.Empty() // error
		cw.EndRow()
	}
	b.perHole = sum.PerHole
}

// holeRowsOf returns the counts of hole id in b.sum.PerHole, adding them
// when new. It is called only when the hole id changes from one row to the
// next.
func (b *batch) holeRowsOf(id string) *HoleRows {
	i, ok := b.holeIndex[id]
	if !ok {
		i = len(b.sum.PerHole)
		b.holeIndex[id] = i
		b.sum.PerHole = append(b.sum.PerHole, HoleRows{HoleID: id})
	}
	return &b.sum.PerHole[i]
}

// writeRecord writes the input cells, padded or cut to the header's width so
// the output stays rectangular (such a row carries an error).
func writeRecord(cw *csvio.Writer, rec []string, n int) {
	if len(rec) > n {
		rec = rec[:n]
	}
	cw.Strings(rec)
	writeEmpty(cw, n-len(rec))
}

func writeEmpty(cw *csvio.Writer, n int) {
	for i := 0; i < n; i++ {
		cw.Empty()
	}
}

// WriteResult writes the derived columns of [OutputColumns] but the last
// (error) for result r of a measurement on hole h: the one writer of
// oriented measurements, used by `corvane convert` and the service's CSV
// export. warn is the warnings cell (see [Warnings]); tail, when not nil,
// is the hole's formatted correction columns ([AppendCorrections]); u is
// the measurement's uncertainty (holemodel.Hole.Uncertainty), nil when it
// has none (a vertical hole): the sizes of the region in use and which
// method gave it, then the survey instrument ([SurveyInstrument]); scratch
// is reused and returned.
func WriteResult(cw *csvio.Writer, r *holemodel.Result, h *holemodel.Hole, thick bool, warn string, tail, scratch []byte, u *uncertainty.Result) []byte {
	writeMeasured(cw, r, thick, warn)
	return writeHoleColumns(cw, r, h, tail, scratch, u)
}

// writeMeasured writes the columns of [WriteResult] from hole_azimuth to
// pole_plunge, and true_thickness when thick.
func writeMeasured(cw *csvio.Writer, r *holemodel.Result, thick bool, warn string) {
	cw.Float(r.HoleAzimuth, angleDecimals)
	cw.Float(r.HoleDip, angleDecimals)
	cw.Float(r.Point.Pos.X, lengthDecimals)
	cw.Float(r.Point.Pos.Y, lengthDecimals)
	cw.Float(r.Point.Pos.Z, lengthDecimals)
	cw.Float(r.Plane.Dip, angleDecimals)
	cw.Float(r.Plane.DipDirection, angleDecimals)
	cw.Float(r.Strike(), angleDecimals)
	if r.HasLine {
		cw.Float(r.Line.Trend, angleDecimals)
		cw.Float(r.Line.Plunge, angleDecimals)
	} else {
		cw.Empty()
		cw.Empty()
	}
	cw.String(warn)
	pole := r.Pole()
	cw.Float(pole.Trend, angleDecimals)
	cw.Float(pole.Plunge, angleDecimals)
	if thick {
		cw.Float(r.TrueThickness, lengthDecimals)
	}
}

// writeHoleColumns writes the columns of [WriteResult] after those of
// writeMeasured: the corrections (tail, or formatted from r when nil), the
// survey set, the uncertainty columns of u and the survey instrument. When
// u is nil and tail is not, they are the same on every row of the hole
// (see Hole.rest).
func writeHoleColumns(cw *csvio.Writer, r *holemodel.Result, h *holemodel.Hole, tail, scratch []byte, u *uncertainty.Result) []byte {
	if tail != nil {
		cw.Raw(tail)
	} else {
		scratch = AppendCorrections(scratch[:0], h.Output, r.Declination, r.Convergence)
		cw.Raw(scratch)
	}
	cw.String(h.In.SurveySet)
	var ue, le *uncertainty.Estimate
	if u != nil {
		ue, le = &u.Pole, u.Line
	}
	writeEstimate(cw, ue)
	writeEstimate(cw, le)
	cw.String(string(SurveyInstrument(h)))
	return scratch
}

// SurveyInstrument returns the instrument of the survey h is built from,
// uncertainty.UnknownSurvey when none is given: the survey errors of the
// uncertainty columns, and of the set statistics that read them back.
func SurveyInstrument(h *holemodel.Hole) uncertainty.Instrument {
	if h.In.Instrument == "" {
		return uncertainty.UnknownSurvey
	}
	return h.In.Instrument
}

// writeEstimate writes the cone, long and short semi-axes of the region in
// use and its method, all empty for nil.
func writeEstimate(cw *csvio.Writer, e *uncertainty.Estimate) {
	if e == nil {
		writeEmpty(cw, 4)
		return
	}
	g := e.Region()
	cw.Float(g.Cone95, angleDecimals)
	cw.Float(g.Long95, angleDecimals)
	cw.Float(g.Short95, angleDecimals)
	cw.String(e.Used)
}

// WriteError writes the derived columns of a row that could not be
// converted: empty values and the message in the error column.
func WriteError(cw *csvio.Writer, thick bool, msg string) {
	writeEmpty(cw, len(OutputColumns(thick))-1)
	cw.String(msg)
}

// RunWarning returns the warning for a measurement in an orientation run
// rated confidence, "" when the rating needs none: every door that knows
// the run adds it after [Warnings].
func RunWarning(confidence string) string {
	switch confidence {
	case "none":
		return "orientation run rated unusable"
	case "poor":
		return "orientation run rated poor"
	}
	return ""
}

// Warnings returns the warnings of result r on hole h as one text: the
// conversion's warnings, then the hole's cautions, joined by "; ".
func Warnings(r *holemodel.Result, h *holemodel.Hole) string {
	if len(h.Cautions) == 0 {
		return r.Warn.String()
	}
	if r.Warn == 0 {
		return h.Caution()
	}
	return r.Warn.String() + "; " + h.Caution()
}

// AppendCorrections formats the columns azimuth_reference, declination,
// declination_source, grid_convergence and convergence_source.
func AppendCorrections(b []byte, out string, d, c holemodel.Correction) []byte {
	b = append(b, out...)
	b = append(b, ',')
	b = csvio.AppendFloat(b, d.Value, correctionDecimals)
	b = append(b, ',')
	b = append(b, d.Source...)
	b = append(b, ',')
	b = csvio.AppendFloat(b, c.Value, correctionDecimals)
	b = append(b, ',')
	return append(b, c.Source...)
}
