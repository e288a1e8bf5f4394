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
// Every hole is built by package holemodel, which alone corrects north: the
// collar's declination and grid_convergence columns, then one value for all
// holes ([Options].Declination, [Options].GridConvergence, the project's
// defaults), then values computed from the collar's crs and the survey date.
//
// Caution: the results feed geological models and slope or excavation
// design. They are only as good as the orientation marks, surveys and
// corrections behind them; check the warnings and follow local codes and
// licensed practice.
package convert

import (
	"fmt"
	"io"
	"math"
	"runtime"
	"slices"
	"strings"
	"sync"
	"sync/atomic"

	"corvane/internal/localgrid"
	"corvane/internal/uncertainty"

	"corvane/internal/coreangle"
	"corvane/internal/csvio"
	"corvane/internal/desurvey"
	"corvane/internal/domain"
	"corvane/internal/holemodel"
	"corvane/internal/northref"
)

// Reference is a north reference for azimuths.
type Reference int

const (
	Grid     Reference = iota // grid north of the collar coordinates (default output)
	True                      // true (geographic) north
	Magnetic                  // magnetic north (input only)
	Local                     // the local grid's north (output only; needs a local grid)
)

func (r Reference) String() string {
	switch r {
	case True:
		return csvio.RefTrue
	case Magnetic:
		return csvio.RefMagnetic
	case Local:
		return holemodel.Local
	}
	return csvio.RefGrid
}

// ParseOutput parses an output reference: grid, true or local (any case).
func ParseOutput(s string) (Reference, error) {
	if strings.EqualFold(strings.TrimSpace(s), holemodel.Local) {
		return Local, nil
	}
	r, err := ParseReference(s)
	if err != nil || r == Magnetic {
		return 0, fmt.Errorf("%q is not an output reference (want grid, true or local)", s)
	}
	return r, nil
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
	// Output is Grid, True or Local (the local grid's north and
	// coordinates; a hole without a local grid then has an error).
	Output Reference
	// Declination and GridConvergence are the project's defaults: they apply
	// to every hole whose collar row does not give its own (source
	// "project").
	Declination, GridConvergence Given
	// MagneticModel chooses the model of computed declinations ("" is
	// northref.ModelAuto).
	MagneticModel northref.MagneticModel
	// LocalGrid is the project's local grid, nil when none: holes whose
	// collar crs is "local" are in it, and output Local is in it (see
	// holemodel.New); a collar row's own local_grid wins over it.
	LocalGrid *localgrid.Grid
	// SurveyPriority orders survey set kinds for holes with sets by kind
	// (canonical, see domain.ParseSurveyPriority); "" for none.
	SurveyPriority string
	// NoCompute turns off computing missing corrections with package
	// northref; a hole that needs one then has an error.
	NoCompute bool
	// ErrorModel is the project's error model for the uncertainty columns
	// (zero: the defaults of package uncertainty). A measurement's mark
	// error comes from the structures file's run_confidence and
	// run_mismatch columns; without them (or with empty cells) it is that
	// of an unrated run.
	ErrorModel uncertainty.Model
	// NoUncertainty leaves the uncertainty columns empty.
	NoUncertainty bool
	// MonteCarlo runs the Monte Carlo of every measurement's region
	// (uncertainty.Always); by default it runs only where first order is
	// known to be unreliable (uncertainty.NeedsMonteCarlo).
	MonteCarlo bool
	// File names used in messages.
	CollarsFile, SurveysFile, StructuresFile string
	// Workers is the number of goroutines that convert batches of structure
	// rows in Convert; 0 means one per CPU (GOMAXPROCS). Output order never
	// depends on it.
	Workers int
	// batchRows is the number of rows in a batch of Convert, 0 for the
	// default (tests vary it).
	batchRows int
}

// Hole is one hole of a loaded programme: the hole model of package
// holemodel with its collar line and its problem located in the files (Err
// here is holemodel's Hole.Err placed at a file, line and column).
type Hole struct {
	*holemodel.Hole
	ID   string
	Line int // line of its collar row
	// Err is a problem with the whole hole (a correction that is needed but
	// cannot be had, a station past the final depth), located in the collars
	// or surveys file; every measurement on the hole reports it.
	Err *domain.Error
	// tail is the formatted reference and correction columns when they are
	// the same on every row of the hole, nil otherwise.
	tail []byte
	// rest is, when tail is not nil, the formatted columns after the pole
	// (or thickness) of a row without uncertainty: tail, the survey set,
	// the empty uncertainty columns and the survey instrument.
	rest []byte
	// Survey names the survey the hole is built from (domain.UsedSurvey):
	// "survey" (rows without a kind), a kind, "" when the hole has none.
	Survey string
	// Sets are the hole's survey sets by kind (rows with a kind column), each
	// built by the hole model on its own, in kind order.
	Sets []KindSet
}

// KindSet is one of a hole's survey sets by kind, built by the hole model
// (its instrument, from the set's instrument column, is Hole.In.Instrument).
type KindSet struct {
	Kind string
	Hole *holemodel.Hole
}

// Holes is a loaded programme: the desurveyed holes and the options.
// It is immutable after Load and safe for concurrent use.
type Holes struct {
	opt      Options
	measurer *uncertainty.Measurer // uncertainty.PerMeasurement's normals
	holes    map[string]*Hole
	order    []*Hole
}

// NewMeasurer returns the measurer of the per-measurement regions at every
// door: uncertainty.PerMeasurement, with a Monte Carlo run for every
// measurement when always is true.
func NewMeasurer(always bool) *uncertainty.Measurer {
	if always {
		return uncertainty.NewMeasurer(uncertainty.Always(uncertainty.PerMeasurement))
	}
	return uncertainty.NewMeasurer(uncertainty.PerMeasurement)
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
// not in the collars. A problem of one hole only (a correction it needs and
// cannot have, a station past its final depth) is loaded as that hole's Err,
// located at the row, and its measurements carry it; other holes convert.
func Load(collars, surveys io.Reader, opt Options) (*Holes, error) {
	if opt.Output != Grid && opt.Output != True && opt.Output != Local {
		return nil, fmt.Errorf("output reference must be grid, true or local, not %v", opt.Output)
	}
	cf, sf := nameOr(opt.CollarsFile, "collars"), nameOr(opt.SurveysFile, "surveys")
	// The two files are read at the same time; a problem of the collars
	// is reported first, as when they were read one after the other.
	var crows []csvio.CollarRow
	var cerr error
	done := make(chan struct{})
	go func() {
		defer close(done)
		crows, cerr = csvio.ReadCollars(collars, cf)
	}()
	srows, serr := csvio.ReadSurveys(surveys, sf)
	<-done
	if cerr != nil {
		return nil, cerr
	}
	if serr != nil {
		return nil, serr
	}
	return Build(crows, srows, opt)
}

// Build desurveys holes from rows already read (see [Load]). Every hole is
// built by package holemodel from the neutral input of [HoleInput].
func Build(crows []csvio.CollarRow, srows []csvio.SurveyRow, opt Options) (*Holes, error) {
	cf, sf := nameOr(opt.CollarsFile, "collars"), nameOr(opt.SurveysFile, "surveys")
	hs := &Holes{opt: opt, holes: make(map[string]*Hole, len(crows)), measurer: NewMeasurer(opt.MonteCarlo)}
	byHole := map[string][]int{} // positions in srows of each hole's rows
	var problems []*domain.Error
	idx := map[string]int{}
	for i, c := range crows {
		idx[c.HoleID] = i
	}
	for i, s := range srows {
		if _, ok := idx[s.HoleID]; !ok {
			problems = append(problems, domain.Errorf(domain.Invalid, "survey of hole %q, which is not in the collars file %s", s.HoleID, cf).
				At(domain.Location{File: sf, Line: s.Line, Column: csvio.ColHoleID}))
			continue
		}
		byHole[s.HoleID] = append(byHole[s.HoleID], i)
	}
	if len(problems) == 1 {
		return nil, problems[0]
	}
	if len(problems) > 1 {
		return nil, &domain.Error{Kind: domain.Invalid, Msg: fmt.Sprintf("%d problems in the collars and surveys, the first at %s: %s", len(problems), problems[0].Loc, problems[0].Msg), Problems: problems}
	}
	// Holes are independent: they are built on one goroutine per CPU, each
	// taking the next collar row in turn, and listed in collar order.
	hs.order = make([]*Hole, len(crows))
	p := opt.Project()
	var next atomic.Int64
	var wg sync.WaitGroup
	for range min(runtime.GOMAXPROCS(0), len(crows)) {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for {
				i := int(next.Add(1)) - 1
				if i >= len(crows) {
					return
				}
				hs.order[i] = buildHole(crows[i], rowsOf(srows, byHole[crows[i].HoleID]), opt, p, cf, sf)
			}
		}()
	}
	wg.Wait()
	for _, h := range hs.order {
		hs.holes[h.ID] = h
	}
	return hs, nil
}

// rowsOf returns the survey rows at positions at of srows (increasing): a
// part of srows when they follow each other, as in a file sorted by hole.
func rowsOf(srows []csvio.SurveyRow, at []int) []csvio.SurveyRow {
	if len(at) == 0 {
		return nil
	}
	if at[len(at)-1]-at[0] == len(at)-1 {
		return srows[at[0] : at[0]+len(at) : at[0]+len(at)]
	}
	rows := make([]csvio.SurveyRow, len(at))
	for i, k := range at {
		rows[i] = srows[k]
	}
	return rows
}

// buildHole builds the hole of collar row c from its survey rows (in file
// order): its survey set (rows without a kind) and its sets by kind, the
// survey in use by the one rule of domain.UsedSurvey.
func buildHole(c csvio.CollarRow, rows []csvio.SurveyRow, opt Options, p holemodel.Project, cf, sf string) *Hole {
	// The rows of one set, in file order; all of them when they are all of
	// that set (the common case of one survey set per hole).
	setRows := func(kind string) []csvio.SurveyRow {
		n := 0
		for _, r := range rows {
			if r.Kind == kind {
				n++
			}
		}
		if n == len(rows) || n == 0 {
			return rows[:n]
		}
		set := make([]csvio.SurveyRow, 0, n)
		for _, r := range rows {
			if r.Kind == kind {
				set = append(set, r)
			}
		}
		return set
	}
	preferred := "" // csvio.ReadSurveys allows one preferred set per hole
	noKind := false
	for _, r := range rows {
		noKind = noKind || r.Kind == ""
		if r.Preferred {
			preferred = r.Kind
		}
	}
	var kinds []string
	for _, k := range domain.SurveyKinds {
		if slices.ContainsFunc(rows, func(r csvio.SurveyRow) bool { return r.Kind == k }) {
			kinds = append(kinds, k)
		}
	}
	used := domain.UsedSurvey(kinds, preferred, opt.SurveyPriority, noKind)
	key := used
	if used == domain.SurveyOfHole {
		key = ""
	}
	input := func(rows []csvio.SurveyRow, set string) holemodel.Input {
		in := HoleInput(c, rows)
		in.SurveySet = set
		return in
	}
	m := holemodel.New(input(setRows(key), used), p)
	h := &Hole{Hole: m, ID: c.HoleID, Line: c.Line, Survey: used}
	for _, k := range kinds {
		h.Sets = append(h.Sets, KindSet{Kind: k, Hole: holemodel.New(input(setRows(k), k), p)})
	}
	if m.Err != nil {
		h.Err = Locate(m.Err, c.Line, cf, sf)
	} else {
		h.tail = h.formatTail()
		if h.tail != nil {
			w := csvio.NewMemWriter()
			writeHoleColumns(w, nil, h.Hole, h.tail, nil, nil)
			h.rest = w.Buffered()
		}
	}
	return h
}

// Project returns the holemodel project of the options: the value for all
// holes is the project's default.
func (o Options) Project() holemodel.Project {
	p := holemodel.Project{Convention: o.Convention, Method: o.Method, Unit: o.Unit, Output: o.Output.String(), NoCompute: o.NoCompute, Model: o.MagneticModel,
		LocalGrid: o.LocalGrid}
	if o.Declination.Set {
		v := o.Declination.Value
		p.Declination = &v
	}
	if o.GridConvergence.Set {
		v := o.GridConvergence.Value
		p.GridConvergence = &v
	}
	return p
}

// HoleInput is the neutral hole-model input of a collar row and the survey
// rows of one of the hole's sets (the set in use, for the hole itself): the
// set's instrument is the one its rows name (csvio.ReadSurveys allows one
// per set).
func HoleInput(c csvio.CollarRow, st []csvio.SurveyRow) holemodel.Input {
	in := holemodel.Input{ID: c.HoleID, Collar: c.Collar, CollarRef: c.AzimuthRef, CRS: c.CRS, SurveyDate: c.SurveyDate,
		Declination: given(c.Declination), GridConvergence: given(c.GridConvergence), LocalGrid: c.LocalGrid}
	in.Stations = make([]holemodel.Station, len(st))
	for i, s := range st {
		if s.Instrument != "" {
			in.Instrument = s.Instrument
		}
		in.Stations[i] = holemodel.Station{Depth: s.Station.Depth, Azimuth: s.Station.Azimuth, Dip: s.Station.Dip,
			Ref: s.AzimuthRef, Date: s.Date, Line: s.Line}
	}
	return in
}

func given(v float64) *float64 {
	if math.IsNaN(v) {
		return nil
	}
	return &v
}

// Locate places a hole-model problem in the files: at the survey row of the
// station it is about, else at the hole's collar row (line collarLine of
// collarsFile).
func Locate(e *holemodel.Error, collarLine int, collarsFile, surveysFile string) *domain.Error {
	loc := domain.Location{File: collarsFile, Line: collarLine, Column: e.Field}
	if e.Station >= 0 && e.Line > 0 {
		loc = domain.Location{File: surveysFile, Line: e.Line, Column: e.Field}
	}
	return domain.Errorf(domain.Invalid, "%s", e.Msg).At(loc)
}

// formatTail formats the columns azimuth_reference, declination,
// declination_source, grid_convergence, convergence_source when they do not
// vary with depth.
func (h *Hole) formatTail() []byte {
	if !h.ConstantDeclination() {
		return nil
	}
	return AppendCorrections(nil, h.Output, h.Declination(0), h.Convergence)
}

func nameOr(s, def string) string {
	if s == "" {
		return def
	}
	return s
}
