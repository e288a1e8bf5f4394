// Package convert turns a programme's core-angle measurements into true
// orientations: it desurveys every hole from its collar and surveys, brings
// all azimuths into one north reference, and converts each measurement's
// alpha, beta and gamma at its depth into a plane and a line.
//
// Collars and surveys are small and are loaded whole ([Load]); structure
// measurements stream row by row from a reader to a writer ([Holes.Convert]),
// so memory stays flat however many rows there are. [Holes.Orient] converts a
// single measurement for callers that are not CSV files (the HTTP service).
//
// Azimuth references: a survey azimuth may be against true, grid or magnetic
// north. With declination D (true = magnetic + D) and grid convergence C
// (grid = true - C), every azimuth is brought to the output reference, grid
// (the default, matching the collar coordinates) or true. Corrections come,
// in this order, from the hole's collar columns, from one value for all holes
// ([Options].Declination, [Options].GridConvergence), or are computed by
// package northref from the collar's coordinate system label (crs column) and
// the survey date; given numbers always win.
//
// Caution: the results feed geological models and slope or excavation
// design. They are only as good as the orientation marks, surveys and
// corrections behind them; check the warnings and follow local codes and
// licensed practice.
package convert

import (
	"errors"
	"fmt"
	"io"
	"math"
	"time"

	"corvane/internal/coreangle"
	"corvane/internal/csvio"
	"corvane/internal/desurvey"
	"corvane/internal/domain"
	"corvane/internal/geom"
	"corvane/internal/northref"
)

// Reference is a north reference for azimuths.
type Reference int

const (
	Grid     Reference = iota // grid north of the collar coordinates (default output)
	True                      // true (geographic) north
	Magnetic                  // magnetic north (input only)
)

func (r Reference) String() string {
	switch r {
	case True:
		return csvio.RefTrue
	case Magnetic:
		return csvio.RefMagnetic
	}
	return csvio.RefGrid
}

// ParseReference parses true, grid or magnetic (any case).
func ParseReference(s string) (Reference, error) {
	t, err := csvio.ParseAzimuthRef(s)
	if err != nil || t == "" {
		return 0, fmt.Errorf("%q is not an azimuth reference (want true, grid or magnetic)", s)
	}
	switch t {
	case csvio.RefTrue:
		return True, nil
	case csvio.RefMagnetic:
		return Magnetic, nil
	}
	return Grid, nil
}

// Given is an optional number supplied by the user.
type Given struct {
	Value float64
	Set   bool
}

// Options are the choices of a conversion. The zero value converts with
// minimum curvature in metres, the default core-angle convention, grid
// output, and corrections computed where needed.
type Options struct {
	Convention coreangle.Convention
	Method     desurvey.Method
	Unit       desurvey.Unit
	// Output is Grid or True.
	Output Reference
	// Declination and GridConvergence apply to every hole whose collar row
	// does not give its own.
	Declination, GridConvergence Given
	// NoCompute turns off computing missing corrections with package
	// northref; a hole that needs one then has an error.
	NoCompute bool
	// File names used in messages.
	CollarsFile, SurveysFile, StructuresFile string
	// Workers is the number of goroutines that convert batches of structure
	// rows in Convert; 0 means one per CPU (GOMAXPROCS). Output order never
	// depends on it.
	Workers int
}

// Correction is a declination or convergence applied to a hole.
type Correction struct {
	Value  float64 // degrees; NaN when Source is none
	Source northref.Source
}

// Hole is one desurveyed hole.
type Hole struct {
	ID   string
	Line int // line of its collar row
	// Path is nil when Err is set.
	Path *desurvey.Path
	// Err is a problem with the whole hole (a correction that is needed but
	// cannot be had); every measurement on the hole reports it.
	Err *domain.Error
	// Convergence applied to the hole's azimuths.
	Convergence Correction
	// Caution is a warning about the hole's corrections (e.g. near a
	// magnetic pole), "" when none.
	Caution string
	decl    []declAt  // declination by station depth, sorted; one entry when constant
	out     Reference // the output reference
	// tail is the formatted reference and correction columns when they are
	// the same on every row of the hole, nil otherwise.
	tail []byte
}

type declAt struct {
	depth float64
	c     Correction
}

// Declination returns the declination applied to the survey station at or
// above depth md (the first station's when md is above all of them).
func (h *Hole) Declination(md float64) Correction {
	if len(h.decl) == 0 {
		return Correction{Value: math.NaN(), Source: northref.SourceNone}
	}
	lo, hi := 0, len(h.decl) // largest lo with depth <= md, or 0
	for hi-lo > 1 {
		m := int(uint(lo+hi) >> 1)
		if h.decl[m].depth <= md {
			lo = m
		} else {
			hi = m
		}
	}
	return h.decl[lo].c
}

// Holes is a loaded programme: the desurveyed holes and the options.
// It is immutable after Load and safe for concurrent use.
type Holes struct {
	opt   Options
	holes map[string]*Hole
	order []*Hole
}

// Hole returns the hole with the given id, or nil.
func (hs *Holes) Hole(id string) *Hole { return hs.holes[id] }

// List returns the holes in collar-file order.
func (hs *Holes) List() []*Hole { return hs.order }

// Options returns the options the holes were loaded with.
func (hs *Holes) Options() Options { return hs.opt }

// Load reads the collars and surveys files and desurveys every hole.
//
// Errors that make a file unusable are returned as a *domain.Error located at
// file, line and column, with one problem per bad row: missing columns, broken
// CSV, bad values, unsorted or repeated station depths, a survey of a hole
// not in the collars, a station past the hole's final depth. A hole that only
// lacks a correction it needs is loaded with its Err set instead.
func Load(collars, surveys io.Reader, opt Options) (*Holes, error) {
	if opt.Output != Grid && opt.Output != True {
		return nil, fmt.Errorf("output reference must be grid or true, not %v", opt.Output)
	}
	cf, sf := nameOr(opt.CollarsFile, "collars"), nameOr(opt.SurveysFile, "surveys")
	crows, err := csvio.ReadCollars(collars, cf)
	if err != nil {
		return nil, err
	}
	srows, err := csvio.ReadSurveys(surveys, sf)
	if err != nil {
		return nil, err
	}
	return Build(crows, srows, opt)
}

// Build desurveys holes from rows already read (see [Load]).
func Build(crows []csvio.CollarRow, srows []csvio.SurveyRow, opt Options) (*Holes, error) {
	cf, sf := nameOr(opt.CollarsFile, "collars"), nameOr(opt.SurveysFile, "surveys")
	hs := &Holes{opt: opt, holes: make(map[string]*Hole, len(crows))}
	byHole := map[string][]csvio.SurveyRow{}
	var problems []*domain.Error
	idx := map[string]int{}
	for i, c := range crows {
		idx[c.HoleID] = i
	}
	for _, s := range srows {
		if _, ok := idx[s.HoleID]; !ok {
			problems = append(problems, domain.Errorf(domain.Invalid, "survey of hole %q, which is not in the collars file %s", s.HoleID, cf).
				At(domain.Location{File: sf, Line: s.Line, Column: csvio.ColHoleID}))
			continue
		}
		byHole[s.HoleID] = append(byHole[s.HoleID], s)
	}
	for _, c := range crows {
		h, bad := hs.build(c, byHole[c.HoleID], cf, sf)
		if bad != nil {
			problems = append(problems, bad)
			continue
		}
		h.tail = h.formatTail(opt.Output)
		hs.holes[h.ID] = h
		hs.order = append(hs.order, h)
	}
	if len(problems) == 1 {
		return nil, problems[0]
	}
	if len(problems) > 1 {
		return nil, &domain.Error{Kind: domain.Invalid, Msg: fmt.Sprintf("%d problems in the collars and surveys, the first at %s: %s", len(problems), problems[0].Loc, problems[0].Msg), Problems: problems}
	}
	return hs, nil
}

// formatTail formats the columns azimuth_reference, declination,
// declination_source, grid_convergence, convergence_source when they do not
// vary with depth.
func (h *Hole) formatTail(out Reference) []byte {
	for _, d := range h.decl {
		if d.c != h.decl[0].c && !(math.IsNaN(d.c.Value) && math.IsNaN(h.decl[0].c.Value)) {
			return nil
		}
	}
	return h.appendTail(nil, out, h.Declination(0))
}

func (h *Hole) appendTail(b []byte, out Reference, d Correction) []byte {
	b = append(b, out.String()...)
	b = append(b, ',')
	b = csvio.AppendFloat(b, d.Value, correctionDecimals)
	b = append(b, ',')
	b = append(b, d.Source...)
	b = append(b, ',')
	b = csvio.AppendFloat(b, h.Convergence.Value, correctionDecimals)
	b = append(b, ',')
	return append(b, h.Convergence.Source...)
}

func nameOr(s, def string) string {
	if s == "" {
		return def
	}
	return s
}

// needs reports which corrections turning azimuths of reference from into
// the output reference requires.
func needs(from, out Reference) (decl, conv bool) {
	if from == out {
		return false, false
	}
	decl = from == Magnetic
	conv = (from == Grid && out == True) || (from != Grid && out == Grid)
	return decl, conv
}

// toOutput turns azimuth az of reference from into the output reference.
func toOutput(az float64, from, out Reference, d, c float64) float64 {
	if from == out {
		return az
	}
	t := az
	switch from {
	case Magnetic:
		t = az + d
	case Grid:
		t = az + c
	}
	if out == Grid {
		t -= c
	}
	return geom.NormAzimuth(t)
}

// build desurveys one hole. A returned *domain.Error is a file problem;
// a missing correction is set as h.Err.
func (hs *Holes) build(c csvio.CollarRow, st []csvio.SurveyRow, cf, sf string) (*Hole, *domain.Error) {
	opt := hs.opt
	h := &Hole{ID: c.HoleID, Line: c.Line, out: opt.Output, Convergence: Correction{Value: math.NaN(), Source: northref.SourceNone}}
	ref := func(s string) Reference {
		if s == "" {
			return opt.Output
		}
		r, _ := ParseReference(s)
		return r
	}
	collarRef := ref(c.AzimuthRef)
	collarUsed := len(st) == 0 || st[0].Station.Depth != 0
	var needD, needC bool
	mark := func(r Reference) {
		d, cv := needs(r, opt.Output)
		needD, needC = needD || d, needC || cv
	}
	if collarUsed {
		mark(collarRef)
	}
	for _, s := range st {
		mark(ref(s.AzimuthRef))
	}
	holeErr := func(col, format string, args ...any) {
		if h.Err == nil {
			h.Err = domain.Errorf(domain.Invalid, "hole %q: "+format, append([]any{h.ID}, args...)...).
				At(domain.Location{File: cf, Line: c.Line, Column: col})
		}
	}
	// Convergence: collar column, then the value for all, then computed.
	if needC {
		switch {
		case !math.IsNaN(c.GridConvergence):
			h.Convergence = Correction{c.GridConvergence, northref.SourceGiven}
		case opt.GridConvergence.Set:
			h.Convergence = Correction{opt.GridConvergence.Value, northref.SourceGiven}
		case opt.NoCompute:
			holeErr(csvio.ColGridConvergence, "azimuths need a grid convergence: give it in the collar's grid_convergence column or for all holes")
		default:
			res, err := northref.Corrections(c.CRS, c.Collar.East, c.Collar.North, metres(c.Collar.Elevation, opt.Unit), time.Time{}, false, true)
			if err != nil {
				holeErr(csvio.ColCRS, "azimuths need a grid convergence and it cannot be computed: %v; give it in the collar's grid_convergence column or for all holes", err)
			} else {
				h.Convergence = Correction{res.Convergence, northref.SourceComputed}
			}
		}
	}
	// Declination per station date: collar column, then the value for all,
	// then computed from the station's survey date.
	computed := map[time.Time]Correction{}
	declFor := func(date time.Time, line int) Correction {
		switch {
		case !math.IsNaN(c.Declination):
			return Correction{c.Declination, northref.SourceGiven}
		case opt.Declination.Set:
			return Correction{opt.Declination.Value, northref.SourceGiven}
		case opt.NoCompute:
			holeErr(csvio.ColDeclination, "magnetic azimuths need a declination: give it in the collar's declination column or for all holes")
			return Correction{math.NaN(), northref.SourceNone}
		}
		if v, ok := computed[date]; ok {
			return v
		}
		res, err := northref.Corrections(c.CRS, c.Collar.East, c.Collar.North, metres(c.Collar.Elevation, opt.Unit), date, true, false)
		if err != nil {
			where := ""
			if line > 0 {
				where = fmt.Sprintf(" (survey on %s line %d)", sf, line)
			}
			holeErr(csvio.ColDeclination, "magnetic azimuths need a declination and it cannot be computed%s: %v; give it in the collar's declination column or for all holes", where, err)
			return Correction{math.NaN(), northref.SourceNone}
		}
		if cau := res.Caution(); cau != "" && h.Caution == "" {
			h.Caution = cau
		}
		v := Correction{res.Declination, northref.SourceComputed}
		computed[date] = v
		return v
	}
	conv := h.Convergence.Value
	stations := make([]desurvey.Station, 0, len(st))
	for _, s := range st {
		r := ref(s.AzimuthRef)
		var d float64
		if r == Magnetic {
			dc := declFor(s.Date, s.Line)
			d = dc.Value
			h.decl = append(h.decl, declAt{s.Station.Depth, dc})
		}
		if h.Err != nil {
			return h, nil
		}
		stations = append(stations, desurvey.Station{Depth: s.Station.Depth, Azimuth: toOutput(s.Station.Azimuth, r, opt.Output, d, conv), Dip: s.Station.Dip})
	}
	collar := c.Collar
	if collarUsed {
		var d float64
		if collarRef == Magnetic {
			var date time.Time
			for _, s := range st {
				if !s.Date.IsZero() {
					date = s.Date
					break
				}
			}
			dc := declFor(date, 0)
			d = dc.Value
			h.decl = append([]declAt{{0, dc}}, h.decl...)
		}
		if h.Err != nil {
			return h, nil
		}
		collar.Azimuth = toOutput(collar.Azimuth, collarRef, opt.Output, d, conv)
	}
	p, err := desurvey.NewWith(collar, stations, desurvey.Options{Method: opt.Method, Unit: opt.Unit})
	if err != nil {
		loc := domain.Location{File: cf, Line: c.Line}
		// Point at the survey row when the error is about a station.
		var se *desurvey.StationError
		if errors.As(err, &se) && se.Index >= 0 && se.Index < len(st) {
			loc = domain.Location{File: sf, Line: st[se.Index].Line, Column: csvio.ColDepth}
		}
		return nil, domain.Errorf(domain.Invalid, "hole %q: %v", h.ID, err).At(loc)
	}
	h.Path = p
	return h, nil
}

func metres(v float64, u desurvey.Unit) float64 {
	if u == desurvey.Feet {
		return v * 0.3048
	}
	return v
}
