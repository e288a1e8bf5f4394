// Package holemodel owns "a hole ready to orient": one neutral description
// of a hole (its collar, survey stations, per-hole corrections and survey
// date) and of the project it belongs to (core-angle convention, desurvey
// method, length unit, output north reference, project defaults that may be
// unset) goes through one constructor, [New], and comes out as a [Hole]: the
// resolved declination and grid convergence with their sources and
// cautions, the desurveyed path in the output reference, and
// [Hole.Orient] for one measurement.
//
// Every front end builds its holes here: the CSV commands (convert, qa,
// declination) and the service (derived values, /v1/convert, hole paths,
// the logging preview, QA over the store). No other package applies a
// declination or a grid convergence to an azimuth; a test in
// internal/importrules checks that.
//
// North references. A survey or collar azimuth is against true, grid or
// magnetic north. With declination D (true = magnetic + D) and grid
// convergence C (grid = true - C), every azimuth is brought to the output
// reference, grid or true. A correction is taken, in this order, from:
//
//  1. a number given for the hole (for the declination, a number given with
//     the survey set first, then the hole's own) — source "given";
//  2. the project's default, when someone set it — source "project";
//  3. computed by package northref from the collar's crs label and position
//     (and, for the declination, the survey date with the project's magnetic
//     model) — source "computed"; a computed declination's source names the
//     model and decimal year, e.g. "computed (IGRF-14 at 2023.5808)".
//
// A correction is looked up only when an azimuth needs it, and only what was
// applied is reported (source "none" otherwise). A correction that is needed
// but cannot be had is the hole's problem ([Hole.Err]): every measurement of
// that hole carries it, never a silent zero. The same goes for a path that
// cannot be built (a station past the final depth, say): the problem belongs
// to that hole and names the station.
//
// Caution: the results feed geological models and slope or excavation
// design. They are only as good as the orientation marks, surveys and
// corrections behind them; check the warnings and cautions and follow local
// codes and licensed practice.
package holemodel

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"strings"
	"time"

	"corvane/internal/coreangle"
	"corvane/internal/desurvey"
	"corvane/internal/geom"
	"corvane/internal/localgrid"
	"corvane/internal/northref"
	"corvane/internal/uncertainty"
)

// North references, in the words of the files and the API. Local is an
// output reference only: the hole's local grid (see [Input].LocalGrid).
const (
	True     = "true"
	Grid     = "grid"
	Magnetic = "magnetic"
	Local    = "local"
)

// Source says where a correction came from.
type Source string

// The sources of a correction.
const (
	SourceNone    Source = "none"    // not applied: no azimuth needed it
	SourceGiven   Source = "given"   // a number given for the hole or its survey
	SourceProject Source = "project" // the project's default, set by someone
	// SourceComputed is a correction computed by package northref; a
	// computed declination's source adds the model and decimal year in
	// brackets ([Source.Computed] tells both apart from the others).
	SourceComputed Source = "computed"
)

// Computed reports whether s is SourceComputed, with or without the model
// and year of a computed declination.
func (s Source) Computed() bool {
	return s == SourceComputed || strings.HasPrefix(string(s), string(SourceComputed)+" (")
}

// Fields named by an [Error]: the column names of the files.
const (
	FieldHoleID          = "hole_id"
	FieldDepth           = "depth"
	FieldAlpha           = "alpha"
	FieldBeta            = "beta"
	FieldGamma           = "gamma"
	FieldDeclination     = "declination"
	FieldGridConvergence = "grid_convergence"
	FieldCRS             = "crs"
	FieldLocalGrid       = "local_grid"
)

// Station is one survey station as recorded.
type Station struct {
	Depth, Azimuth, Dip float64
	// Ref is the station azimuth's north: True, Grid or Magnetic; "" means
	// the project's output reference.
	Ref string
	// Date is the survey date of the station; zero means the hole's
	// SurveyDate.
	Date time.Time
	// Line locates the station in its source (a file line), 0 when none.
	Line int
}

// Input is one hole as recorded, before any correction.
type Input struct {
	ID string
	// Collar holds position, azimuth, dip and final depth (Collar.Depth).
	Collar desurvey.Collar
	// CollarRef is the collar azimuth's north; "" means the output reference.
	CollarRef string
	// CRS labels the collar coordinates (e.g. EPSG:32750); "" when unknown.
	CRS string
	// Declination and GridConvergence are numbers given for this hole, nil
	// when not given. SurveyDeclination is a declination given with the
	// hole's survey set; it wins over Declination.
	Declination, GridConvergence, SurveyDeclination *float64
	// SurveyDate is the date of the hole's survey, used for the collar
	// azimuth and for stations without a date of their own; zero when none.
	SurveyDate time.Time
	// Stations in increasing depth.
	Stations []Station
	// Instrument is the kind of survey instrument behind the stations, for
	// the survey's share of each measurement's uncertainty; "" is unknown.
	Instrument uncertainty.Instrument
	// SurveySet names the survey the stations come from ("survey" or a
	// kind, see domain.UsedSurvey), "" when none; reported with the results.
	SurveySet string
	// LocalGrid is the hole's own local grid, nil when it has none: it wins
	// over the project's (see [Project].LocalGrid).
	LocalGrid *localgrid.Grid
}

// Project holds the choices every hole of a project shares.
type Project struct {
	Convention coreangle.Convention
	Method     desurvey.Method
	Unit       desurvey.Unit
	// Output is Grid, True or Local; "" means Grid. Local needs a local
	// grid, the hole's or the project's.
	Output string
	// Declination and GridConvergence are the project's defaults, nil while
	// nobody has set them.
	Declination, GridConvergence *float64
	// NoCompute turns off computing a missing correction with package
	// northref; a hole that needs one then has an error.
	NoCompute bool
	// Model chooses the magnetic model of computed declinations ("" is
	// northref.ModelAuto: WMM2025 for 2025-2030, IGRF-14 before).
	Model northref.MagneticModel
	// LocalGrid is the project's local grid, nil when none; a hole's own
	// wins over it.
	LocalGrid *localgrid.Grid
}

// Correction is a declination or grid convergence as applied.
type Correction struct {
	Value  float64 // degrees; NaN when Source is SourceNone
	Source Source
}

func none() Correction { return Correction{Value: math.NaN(), Source: SourceNone} }

// Error is a problem with a hole or a measurement. Field names the column
// (one of the Field* constants or a file column); Station is the index in
// Input.Stations of the station it is about and Line that station's line,
// -1 and 0 when it is about the collar or the measurement.
type Error struct {
	Field   string
	Station int
	Line    int
	Msg     string
}

func (e *Error) Error() string { return e.Msg }

func errorf(field string, format string, args ...any) *Error {
	return &Error{Field: field, Station: -1, Msg: fmt.Sprintf(format, args...)}
}

// Hole is a hole ready to orient. It is immutable after New and safe for
// concurrent use.
type Hole struct {
	// In is the input the hole was built from.
	In Input
	// Output is the north reference of every azimuth out: Grid, True or
	// Local (the local grid's north; coordinates out are then local too).
	Output string
	// Convergence is the grid convergence applied to the hole's azimuths.
	Convergence Correction
	// Cautions about the corrections (a collar near a magnetic pole); empty
	// when none.
	Cautions []string
	// Err is a problem of the whole hole (a correction that is needed but
	// cannot be had, a path that cannot be built); every measurement of the
	// hole reports it. Path is nil when Err is set.
	Err  *Error
	Path *desurvey.Path
	// Collar and Stations are the path's input: azimuths in the output
	// reference (in the projected grid when the output is Local: see
	// OutputXY and OutputAzimuth). Magnetic[i] tells whether Stations[i]
	// was magnetic. When Err is set, Collar is the recorded one and
	// Stations may be short.
	Collar   desurvey.Collar
	Stations []desurvey.Station
	Magnetic []bool
	// Grid is the local grid in effect for the hole (its own, else the
	// project's), nil when none.
	Grid *localgrid.Grid

	// local is true when Output is Local: the path is built in Grid's
	// projected grid and results are turned into the local grid on the way
	// out (rotation by -theta, coordinates by the inverse transformation);
	// sinR, cosR are the sine and cosine of theta.
	local      bool
	sinR, cosR float64

	conv coreangle.Convention
	decl []declAt // declination by depth, sorted; empty when none applied
	// constDecl is true when every entry of decl is the same correction.
	constDecl bool
}

type declAt struct {
	depth float64
	c     Correction
}

// Declination returns the declination applied at depth md: that of the
// survey station at or above md (the first one's above all of them); a
// Correction with SourceNone when no magnetic azimuth was involved.
func (h *Hole) Declination(md float64) Correction {
	if len(h.decl) == 0 {
		return none()
	}
	if h.constDecl {
		return h.decl[0].c
	}
	lo, hi := 0, len(h.decl)
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

// DeclinationSource says where the declinations applied to the hole came
// from: the distinct sources in depth order joined by "; " (a computed one
// names its model and decimal year), "" when no magnetic azimuth was
// involved.
func (h *Hole) DeclinationSource() string {
	var out []string
	for i, x := range h.decl {
		if i == 0 || !slices.Contains(out, string(x.c.Source)) {
			out = append(out, string(x.c.Source))
		}
	}
	return strings.Join(out, "; ")
}

// ConstantDeclination reports whether the declination is the same at every
// depth (also when none applies).
func (h *Hole) ConstantDeclination() bool { return h.constDecl }

// Caution returns the cautions joined by "; ", "" when none.
func (h *Hole) Caution() string { return strings.Join(h.Cautions, "; ") }

// ParseRef reads true, grid or magnetic in any case, "" for an empty text.
func ParseRef(s string) (string, error) {
	t := strings.ToLower(strings.TrimSpace(s))
	switch t {
	case "", True, Grid, Magnetic:
		return t, nil
	}
	return "", fmt.Errorf("%q is not an azimuth reference (want true, grid or magnetic)", s)
}

// needs reports which corrections turning azimuths of reference from into
// reference out requires.
func needs(from, out string) (decl, conv bool) {
	if from == out {
		return false, false
	}
	decl = from == Magnetic
	conv = (from == Grid && out == True) || (from != Grid && out == Grid)
	return decl, conv
}

// toOutput turns azimuth az of reference from into reference out.
func toOutput(az float64, from, out string, d, c float64) float64 {
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

func metres(v float64, u desurvey.Unit) float64 {
	if u == desurvey.Feet {
		return v * 0.3048
	}
	return v
}

// New builds the hole. It always returns a hole; a problem that prevents
// orienting it is in Hole.Err. Input references are checked with
// [ParseRef]; an unknown one is an error of the hole.
//
// A local grid (the hole's own, else the project's) is used twice. A collar
// whose crs is "local" is in that grid: its easting and northing become
// projected coordinates of the grid's grid_crs, and every azimuth referenced
// to grid (given as grid, or without a reference when the output is grid
// or local) is a local-grid azimuth, turned by the rotation (grid = local +
// theta) — so corrections are computed at the true place. And with output
// Local, the hole is built in the projected grid and every result is
// brought into the local grid on the way out ([Hole.Orient],
// [Hole.OutputXY], [Hole.OutputAzimuth]); such a hole's collar must then be
// "local" or in the grid's grid_crs.
func New(in Input, p Project) *Hole {
	out := p.Output
	if out == "" {
		out = Grid
	}
	g := in.LocalGrid
	if g == nil {
		g = p.LocalGrid
	}
	h := &Hole{In: in, Output: out, Convergence: none(), Cautions: []string{}, conv: p.Convention, constDecl: true, Collar: in.Collar, Grid: g}
	fail := func(e *Error) *Hole {
		if h.Err == nil {
			h.Err = e
		}
		return h
	}
	if out != Grid && out != True && out != Local {
		return fail(errorf(FieldHoleID, "hole %q: output reference must be grid, true or local, not %q", in.ID, out))
	}
	if out == Local {
		if g == nil {
			return fail(errorf(FieldLocalGrid, "hole %q: output in the local grid needs a local grid: declare one for the hole (local_grid) or the project", in.ID))
		}
		if !localgrid.IsLocal(in.CRS) && strings.TrimSpace(in.CRS) != "" {
			a, errA := northref.ParseCRS(in.CRS)
			b, errB := northref.ParseCRS(g.Spec.GridCRS)
			if errA != nil || errB != nil || a.EPSG != b.EPSG {
				return fail(errorf(FieldCRS, "hole %q: output in the local grid needs the collar in the local grid (crs local) or in its projected grid %s, not in %s", in.ID, g.Spec.GridCRS, in.CRS))
			}
		}
		out = Grid // built in the projected grid, turned on the way out
		h.local = true
		h.sinR, h.cosR = math.Sincos(g.T.Rotation * math.Pi / 180)
	}
	switch {
	case g != nil && localgrid.IsLocal(in.CRS):
		// grid azimuths, and those without a reference when the output is
		// grid or local, are local-grid azimuths
		in = fromLocal(in, g, true, func(r string) bool { return r == Grid || r == "" && out == Grid })
		h.In, h.Collar = in, in.Collar
	case h.local:
		// azimuths without a reference are in the output: the local grid
		in = fromLocal(in, g, false, func(r string) bool { return r == "" })
		h.In, h.Collar = in, in.Collar
	}
	ref := func(s string) string {
		r, err := ParseRef(s)
		if err != nil || r == "" {
			return out
		}
		return r
	}
	collarRef := ref(in.CollarRef)
	collarUsed := len(in.Stations) == 0 || in.Stations[0].Depth != 0
	// The convergence is looked up once for the hole, when any azimuth
	// needs it; the declination per station, when its azimuth is magnetic.
	var needC bool
	mark := func(r string) {
		_, c := needs(r, out)
		needC = needC || c
	}
	if collarUsed {
		mark(collarRef)
	}
	for _, s := range in.Stations {
		mark(ref(s.Ref))
	}
	elev := metres(in.Collar.Elevation, p.Unit)
	if needC {
		switch {
		case in.GridConvergence != nil:
			h.Convergence = Correction{*in.GridConvergence, SourceGiven}
		case p.GridConvergence != nil:
			h.Convergence = Correction{*p.GridConvergence, SourceProject}
		case p.NoCompute:
			return fail(errorf(FieldGridConvergence, "hole %q: azimuths need a grid convergence: give it for the hole (grid_convergence) or as the project's default", in.ID))
		default:
			res, err := northref.Corrections(in.CRS, in.Collar.East, in.Collar.North, elev, time.Time{}, false, true)
			if err != nil {
				return fail(errorf(FieldCRS, "hole %q: azimuths need a grid convergence and it cannot be computed: %v; give it for the hole (grid_convergence) or as the project's default", in.ID, err))
			}
			h.Convergence = Correction{res.Convergence, SourceComputed}
		}
	}
	computed := map[time.Time]Correction{}
	declFor := func(date time.Time, station int) (Correction, *Error) {
		switch {
		case in.SurveyDeclination != nil:
			return Correction{*in.SurveyDeclination, SourceGiven}, nil
		case in.Declination != nil:
			return Correction{*in.Declination, SourceGiven}, nil
		case p.Declination != nil:
			return Correction{*p.Declination, SourceProject}, nil
		case p.NoCompute:
			return none(), errorf(FieldDeclination, "hole %q: magnetic azimuths need a declination: give it for the hole (declination) or as the project's default", in.ID)
		}
		if date.IsZero() {
			date = in.SurveyDate
		}
		if v, ok := computed[date]; ok {
			return v, nil
		}
		res, err := northref.CorrectionsModel(p.Model, in.CRS, in.Collar.East, in.Collar.North, elev, date, true, false)
		if err != nil {
			e := errorf(FieldDeclination, "hole %q: magnetic azimuths need a declination and it cannot be computed: %v; give it for the hole (declination) or as the project's default", in.ID, err)
			e.Station = station
			if station >= 0 {
				e.Line = in.Stations[station].Line
			}
			return none(), e
		}
		if c := res.Caution(); c != "" && len(h.Cautions) == 0 {
			h.Cautions = append(h.Cautions, c)
		}
		v := Correction{res.Declination, Source(res.ComputedSource())}
		computed[date] = v
		return v, nil
	}
	gc := h.Convergence.Value
	h.Stations = make([]desurvey.Station, 0, len(in.Stations))
	h.Magnetic = make([]bool, 0, len(in.Stations))
	for i, s := range in.Stations {
		r, err := ParseRef(s.Ref)
		if err != nil {
			e := errorf("azimuth_reference", "hole %q: %v", in.ID, err)
			e.Station, e.Line = i, s.Line
			return fail(e)
		}
		if r == "" {
			r = out
		}
		var d float64
		if r == Magnetic {
			dc, e := declFor(s.Date, i)
			if e != nil {
				return fail(e)
			}
			d = dc.Value
			h.decl = append(h.decl, declAt{s.Depth, dc})
		}
		h.Stations = append(h.Stations, desurvey.Station{Depth: s.Depth, Azimuth: toOutput(s.Azimuth, r, out, d, gc), Dip: s.Dip})
		h.Magnetic = append(h.Magnetic, r == Magnetic)
	}
	if _, err := ParseRef(in.CollarRef); err != nil {
		return fail(errorf("azimuth_reference", "hole %q: %v", in.ID, err))
	}
	if collarUsed {
		var d float64
		if collarRef == Magnetic {
			date := in.SurveyDate
			for _, s := range in.Stations {
				if date.IsZero() && !s.Date.IsZero() {
					date = s.Date
				}
			}
			dc, e := declFor(date, -1)
			if e != nil {
				return fail(e)
			}
			d = dc.Value
			h.decl = append([]declAt{{0, dc}}, h.decl...)
		}
		h.Collar.Azimuth = toOutput(in.Collar.Azimuth, collarRef, out, d, gc)
	}
	for _, x := range h.decl {
		if x.c != h.decl[0].c {
			h.constDecl = false
		}
	}
	path, err := desurvey.NewWith(h.Collar, h.Stations, desurvey.Options{Method: p.Method, Unit: p.Unit})
	if err != nil {
		e := errorf(FieldDepth, "hole %q: %v", in.ID, err)
		var se *desurvey.StationError
		if errors.As(err, &se) && se.Index >= 0 && se.Index < len(in.Stations) {
			e.Station, e.Line = se.Index, in.Stations[se.Index].Line
		}
		return fail(e)
	}
	h.Path = path
	return h
}

// fromLocal carries a hole from local grid g into its projected grid (see
// [New]): the collar's coordinates when coords (its crs becomes the grid's
// grid_crs), and the azimuths whose reference isLocal says are local-grid
// azimuths (they become grid azimuths).
func fromLocal(in Input, g *localgrid.Grid, coords bool, isLocal func(ref string) bool) Input {
	isGrid := func(ref string) bool {
		r, err := ParseRef(ref)
		return err == nil && isLocal(r)
	}
	if coords {
		in.Collar.East, in.Collar.North = g.T.ToGrid(in.Collar.East, in.Collar.North)
		in.CRS = g.Spec.GridCRS
	}
	if isGrid(in.CollarRef) {
		in.Collar.Azimuth, in.CollarRef = g.T.LocalToGridAzimuth(in.Collar.Azimuth), Grid
	}
	st := make([]Station, len(in.Stations))
	for i, s := range in.Stations {
		if isGrid(s.Ref) {
			s.Azimuth, s.Ref = g.T.LocalToGridAzimuth(s.Azimuth), Grid
		}
		st[i] = s
	}
	in.Stations = st
	return in
}

// OutputXY returns projected coordinates of the hole's path (the collar,
// Path.At) in the output's coordinates: local-grid coordinates when the
// output is Local, unchanged otherwise.
func (h *Hole) OutputXY(e, n float64) (float64, float64) {
	if !h.local {
		return e, n
	}
	return h.Grid.T.ToLocal(e, n)
}

// OutputAzimuth returns an azimuth of the hole's path (Collar, Stations,
// the path's directions), which is in the projected grid when the output is
// Local, in the output reference: local = grid - theta.
func (h *Hole) OutputAzimuth(az float64) float64 {
	if !h.local {
		return az
	}
	return geom.NormAzimuth(az - h.Grid.T.Rotation)
}

// toLocal turns a result built in the projected grid into the local grid.
func (h *Hole) toLocal(r *Result) {
	rot := h.Grid.T.Rotation
	d := r.Point.Dir
	if d.X != 0 || d.Y != 0 {
		r.HoleAzimuth = geom.NormAzimuth(r.HoleAzimuth - rot)
	}
	r.Point.Dir.X, r.Point.Dir.Y = d.X*h.cosR-d.Y*h.sinR, d.Y*h.cosR+d.X*h.sinR
	r.Point.Pos.X, r.Point.Pos.Y = h.Grid.T.ToLocal(r.Point.Pos.X, r.Point.Pos.Y)
	if !math.IsNaN(r.Plane.DipDirection) {
		r.Plane.DipDirection = geom.NormAzimuth(r.Plane.DipDirection - rot)
	}
	if r.HasLine && !math.IsNaN(r.Line.Trend) {
		r.Line.Trend = geom.NormAzimuth(r.Line.Trend - rot)
	}
}

// Measurement is one core-angle measurement on a hole.
type Measurement struct {
	Depth       float64
	Alpha, Beta float64
	// NoBeta marks an unoriented measurement (alpha without beta): Beta is
	// ignored and the result has the hole direction and alpha only.
	NoBeta bool
	// Gamma is used when HasGamma.
	Gamma    float64
	HasGamma bool
	// Thickness is the apparent (along-core) thickness, used when
	// HasThickness.
	Thickness    float64
	HasThickness bool
}

// Result is an oriented measurement.
type Result struct {
	// Point is the hole at the measurement depth: position (E, N, Elev) in
	// the collar's coordinates and down-hole direction.
	Point desurvey.Point
	// HoleAzimuth and HoleDip give the hole direction at the depth (dip
	// negative downward), in the output reference; HoleAzimuth is 0 in a
	// vertical hole.
	HoleAzimuth, HoleDip float64
	// Plane is the measured plane; in a vertical hole its DipDirection is NaN.
	Plane geom.Plane
	// Line is the lineation when HasLine; in a vertical hole its Trend is NaN.
	Line    geom.Line
	HasLine bool
	// TrueThickness is apparent thickness x sin(alpha), NaN without thickness.
	TrueThickness float64
	Warn          coreangle.Warn
	// Unoriented is true for a measurement without beta: Plane is NaN
	// (only its dip is known, in a vertical hole) and Warn has
	// coreangle.Unoriented. Alpha still gives the angle to the core axis.
	Unoriented bool
	// Declination and Convergence applied at the depth.
	Declination, Convergence Correction
}

// Pole returns the lower-hemisphere pole of the plane. In a vertical hole
// its trend is NaN.
func (r *Result) Pole() geom.Line {
	if math.IsNaN(r.Plane.DipDirection) {
		return geom.Line{Trend: math.NaN(), Plunge: 90 - r.Plane.Dip}
	}
	return geom.Line{Trend: fold(r.Plane.DipDirection + 180), Plunge: 90 - r.Plane.Dip}
}

// Strike returns the right-hand-rule strike, NaN in a vertical hole.
func (r *Result) Strike() float64 {
	if math.IsNaN(r.Plane.DipDirection) {
		return math.NaN()
	}
	return fold(r.Plane.DipDirection - 90)
}

// fold brings an azimuth in [-360, 720) into [0, 360) without math.Mod; it
// agrees with geom.NormAzimuth there.
func fold(a float64) float64 {
	if a >= 360 {
		a -= 360
	} else if a < 0 {
		a += 360
		if a >= 360 {
			a = 0
		}
	}
	return a
}

// azimuthDip is geom.Vec3.AzimuthDip for a unit vector, without math.Mod.
func azimuthDip(v geom.Vec3) (az, dip float64) {
	hz := math.Sqrt(v.X*v.X + v.Y*v.Y)
	dip = geom.Deg(math.Atan2(v.Z, hz))
	if hz == 0 {
		return 0, dip
	}
	return fold(geom.Deg(math.Atan2(v.X, v.Y))), dip
}

// Orient converts one measurement. Errors are *Error naming the field: the
// hole's own problem (hole_id), a depth outside the hole (depth), an angle
// out of range (alpha, beta, gamma). It does not allocate when it succeeds.
func (h *Hole) Orient(m Measurement) (Result, error) {
	var r Result
	err := h.OrientTo(&r, &m)
	return r, err
}

// OrientTo is [Hole.Orient] for callers that convert many measurements:
// it writes the result into r (the zero Result when there is an error) and
// copies neither the measurement nor the result.
func (h *Hole) OrientTo(r *Result, m *Measurement) error {
	if err := h.orient(r, m); err != nil {
		*r = Result{}
		return err
	}
	return nil
}

func (h *Hole) orient(r *Result, m *Measurement) *Error {
	if h.Err != nil {
		return &Error{Field: FieldHoleID, Station: -1, Msg: h.Err.Msg}
	}
	beta := m.Beta
	if m.NoBeta {
		if m.HasGamma {
			return errorf(FieldGamma, "gamma needs beta: a lineation cannot be placed on an unoriented plane")
		}
		beta = 0
	}
	if err := coreangle.CheckAngles(m.Alpha, beta, m.Gamma, m.HasGamma); err != nil {
		var ae *coreangle.AngleError
		errors.As(err, &ae)
		return errorf(ae.Field, "%v", err)
	}
	if math.IsNaN(m.Depth) || math.IsInf(m.Depth, 0) || m.Depth < 0 {
		return errorf(FieldDepth, "depth %g is outside the hole", m.Depth)
	}
	if m.Depth > h.Path.Depth() {
		return errorf(FieldDepth, "depth %g is past the final depth %g of hole %q", m.Depth, h.Path.Depth(), h.In.ID)
	}
	pt, err := h.Path.At(m.Depth)
	if err != nil {
		return errorf(FieldDepth, "%v", err)
	}
	*r = Result{Point: pt, TrueThickness: math.NaN(), Convergence: h.Convergence, Declination: h.Declination(m.Depth)}
	r.HoleAzimuth, r.HoleDip = azimuthDip(pt.Dir)
	if m.HasGamma { // then beta is m.Beta (checked above)
		r.Plane, r.Line, r.Warn = coreangle.PlaneAndLine(pt.Dir, m.Alpha, beta, m.Gamma, h.conv)
		r.HasLine = true
	} else {
		r.Plane, r.Warn = coreangle.Plane(pt.Dir, m.Alpha, beta, h.conv)
	}
	if m.NoBeta {
		// Without beta only a vertical hole gives the dip (90 - alpha).
		if !r.Warn.Has(coreangle.Vertical) {
			r.Plane = geom.Plane{Dip: math.NaN(), DipDirection: math.NaN()}
		}
		r.Warn = r.Warn&^coreangle.AlphaHigh | coreangle.Unoriented
		r.Unoriented = true
	}
	if pt.Extrapolated {
		r.Warn |= coreangle.Extrapolated
	}
	if m.HasThickness {
		r.TrueThickness = coreangle.TrueThickness(m.Thickness, m.Alpha)
	}
	if h.local {
		h.toLocal(r)
	}
	return nil
}

// FieldDipDirection names the dip direction of a plane given to
// [Hole.CoreAngles].
const FieldDipDirection = "dip_direction"

// CoreAngles returns the alpha and beta that plane p (dip, and dip direction
// in the hole's output reference) shows on the core at depth md: the inverse
// of [Hole.Orient] for a plane, with the hole's path and the project's
// core-angle convention (coreangle.Angles). It is how a plane logged
// elsewhere (an AGS4 DISC row, say) becomes a core measurement of this
// hole. Errors are *Error naming the field: the hole's own problem
// (hole_id), a depth outside the hole (depth), a vertical hole, where beta
// has no reference line (dip_direction).
func (h *Hole) CoreAngles(md float64, p geom.Plane) (alpha, beta float64, err error) {
	if h.Err != nil {
		return 0, 0, &Error{Field: FieldHoleID, Station: -1, Msg: h.Err.Msg}
	}
	if math.IsNaN(md) || math.IsInf(md, 0) || md < 0 || md > h.Path.Depth() {
		return 0, 0, errorf(FieldDepth, "depth %g is outside hole %q (0 to %g)", md, h.In.ID, h.Path.Depth())
	}
	pt, err := h.Path.At(md)
	if err != nil {
		return 0, 0, errorf(FieldDepth, "%v", err)
	}
	if h.local && !math.IsNaN(p.DipDirection) {
		p.DipDirection = geom.NormAzimuth(p.DipDirection + h.Grid.T.Rotation)
	}
	alpha, beta, w := coreangle.Angles(pt.Dir, p, h.conv)
	if w.Has(coreangle.Vertical) || math.IsNaN(beta) {
		return 0, 0, errorf(FieldDipDirection, "hole %q is vertical at depth %g: beta has no reference line, so the plane cannot be put on the core", h.In.ID, md)
	}
	return alpha, beta, nil
}

// Uncertainty returns the 95% regions of the pole and lineation of
// measurement m, oriented by this hole as r, measured by ms. The standard
// errors come from the project's error model em for the hole's survey
// instrument and the run holding the measurement (its confidence rating,
// "" when no run covers it, and its logged mismatch, NaN when none). ok is
// false when the measurement has no regions: in a vertical hole its dip
// direction is unknown, not uncertain, and an unoriented measurement has
// no plane at all. Every door that shows the
// uncertainty of a measurement calls this, with ms from
// uncertainty.PerMeasurement.
func (h *Hole) Uncertainty(ms *uncertainty.Measurer, em uncertainty.Model, r *Result, m Measurement, confidence string, mismatch float64) (u uncertainty.Result, ok bool) {
	if r.Unoriented || m.NoBeta {
		return u, false // no plane, so no region around it
	}
	rd := uncertainty.Reading{Hole: r.Point.Dir, Alpha: m.Alpha, Beta: m.Beta, Gamma: math.NaN(), Conv: h.conv,
		Sigma: em.Sigmas(h.In.Instrument, confidence, mismatch, 0)}
	if m.HasGamma {
		rd.Gamma = m.Gamma
	}
	u, err := ms.Measure(rd)
	return u, err == nil
}
