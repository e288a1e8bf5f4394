// Package desurvey computes the path of a drill hole from its collar and its
// survey stations: position and down-hole direction at any measured depth, and
// the dogleg of every survey interval.
//
// The frame is corvane's: x = East, y = North, z = Up (elevation); azimuths in
// degrees clockwise from the project's north reference; hole dip in degrees,
// negative below horizontal. Lengths are in the project's unit (metres by
// default, or feet); only dogleg severity depends on the unit.
//
// Between stations the default method is minimum curvature: the path is the
// circular arc through both station directions, with the ratio factor
// RF = 2/DL tan(DL/2). The numerics follow Sawaryn & Thorogood (2005), SPE
// Drilling & Completion 20(1): the dogleg is 2 atan2(|t2-t1|, |t2+t1|), which
// stays accurate for nearly parallel directions, and RF = 1 + DL²/12 + DL⁴/120
// for tiny doglegs. The balanced tangential and tangential methods are offered
// for comparison.
//
// A Path is immutable once built and safe for concurrent use.
package desurvey

import (
	"errors"
	"fmt"
	"math"

	"corvane/internal/geom"
)

// Method selects how the path runs between two survey stations.
type Method int

const (
	// MinimumCurvature joins stations by the circular arc tangent to both
	// station directions. It is the default.
	MinimumCurvature Method = iota
	// BalancedTangential runs the first half of each interval along the upper
	// station's direction and the second half along the lower station's.
	BalancedTangential
	// Tangential runs the whole interval along the lower station's direction.
	Tangential
)

// String returns the method's name as used on the command line.
func (m Method) String() string {
	switch m {
	case MinimumCurvature:
		return "minimum-curvature"
	case BalancedTangential:
		return "balanced-tangential"
	case Tangential:
		return "tangential"
	}
	return fmt.Sprintf("Method(%d)", int(m))
}

// ParseMethod parses minimum-curvature, balanced-tangential or tangential.
func ParseMethod(s string) (Method, error) {
	for _, m := range []Method{MinimumCurvature, BalancedTangential, Tangential} {
		if s == m.String() {
			return m, nil
		}
	}
	return 0, fmt.Errorf("unknown desurvey method %q (want minimum-curvature, balanced-tangential or tangential)", s)
}

// Unit is the length unit of a path. It only matters for dogleg severity.
type Unit int

const (
	// Metres: dogleg severity in degrees per 30 m. The default.
	Metres Unit = iota
	// Feet: dogleg severity in degrees per 100 ft.
	Feet
)

// SeverityLength returns the course length over which dogleg severity is
// expressed: 30 for metres, 100 for feet (common practice).
func (u Unit) SeverityLength() float64 {
	if u == Feet {
		return 100
	}
	return 30
}

// Station is one survey measurement: measured depth along the hole, azimuth
// (degrees, [0, 360]) and dip (degrees, -90..90, negative downward).
type Station struct {
	Depth, Azimuth, Dip float64
}

// Collar is the top of a hole: position (East, North, Elevation), the hole's
// azimuth and dip at the collar, and its final measured depth (> 0).
type Collar struct {
	East, North, Elevation float64
	Azimuth, Dip           float64
	Depth                  float64
}

// Options are the choices for [NewWith]. The zero value is minimum curvature
// in metres.
type Options struct {
	Method Method
	Unit   Unit
}

// Point is the state of the hole at a measured depth.
type Point struct {
	Depth float64
	// Pos is the position (East, North, Elevation).
	Pos geom.Vec3
	// Dir is the unit down-hole direction.
	Dir geom.Vec3
	// Extrapolated is true below the last survey station, where the path runs
	// straight on along the last surveyed direction.
	Extrapolated bool
}

// Interval is one survey interval of a path.
type Interval struct {
	From, To float64 // measured depths of the two stations
	// Dogleg is the total change of direction over the interval, in degrees.
	Dogleg float64
	// Severity is the dogleg per 30 m (or per 100 ft for a path in feet).
	Severity float64
}

// ErrPastEnd is wrapped by the error of [Path.At] for a depth beyond the
// hole's final depth.
var ErrPastEnd = errors.New("depth past the hole's final depth")

// StationError is a problem with one survey station given to [NewWith].
type StationError struct {
	Index int // position of the station in the slice given to NewWith, from 0
	Depth float64
	Msg   string
}

func (e *StationError) Error() string {
	return fmt.Sprintf("station %d at depth %g: %s", e.Index+1, e.Depth, e.Msg)
}

func stationErr(i int, depth float64, format string, args ...any) error {
	return &StationError{Index: i, Depth: depth, Msg: fmt.Sprintf(format, args...)}
}

// Path is a desurveyed hole. Build it with [New] or [NewWith].
type Path struct {
	opt   Options
	depth float64 // final depth
	md    []float64
	pos   []geom.Vec3
	dir   []geom.Vec3
	dl    []float64 // dogleg of interval i (between station i and i+1), radians
	sdl   []float64 // sin(dl[i]), used by At at every depth in the interval
	rf    []float64 // ratio factor of interval i (minimum curvature)
	// perDepth is the number of intervals per unit of depth down to the
	// last station, for At's first guess of the interval of a depth.
	perDepth float64
}

// New desurveys a hole from its collar and survey stations with method m, in
// metres. See [NewWith].
func New(c Collar, st []Station, m Method) (*Path, error) {
	return NewWith(c, st, Options{Method: m})
}

// NewWith desurveys a hole from its collar and survey stations.
//
// The stations must have finite values, depths strictly increasing from 0 up
// to at most the collar's final depth, azimuths in [0, 360] and dips in
// [-90, 90]. If no station is at depth 0, the collar's azimuth and dip act as
// the station at depth 0. Two consecutive stations with opposite directions
// (a dogleg of 180 degrees) have no defined arc and are an error. Problems
// with a station are *[StationError] values naming it by its index in st and
// its depth.
func NewWith(c Collar, st []Station, o Options) (*Path, error) {
	if o.Method < MinimumCurvature || o.Method > Tangential {
		return nil, fmt.Errorf("unknown desurvey method %d", int(o.Method))
	}
	for _, f := range []struct {
		name string
		v    float64
	}{{"easting", c.East}, {"northing", c.North}, {"elevation", c.Elevation}, {"azimuth", c.Azimuth}, {"dip", c.Dip}, {"depth", c.Depth}} {
		if math.IsNaN(f.v) || math.IsInf(f.v, 0) {
			return nil, fmt.Errorf("collar %s is not a finite number", f.name)
		}
	}
	if c.Depth <= 0 {
		return nil, fmt.Errorf("collar depth %g must be greater than 0", c.Depth)
	}
	if err := checkDirection(c.Azimuth, c.Dip); err != nil {
		return nil, fmt.Errorf("collar %w", err)
	}
	n := len(st)
	if n == 0 || st[0].Depth != 0 {
		n++
	}
	p := &Path{
		opt:   o,
		depth: c.Depth,
		md:    make([]float64, 0, n),
		pos:   make([]geom.Vec3, 0, n),
		dir:   make([]geom.Vec3, 0, n),
		dl:    make([]float64, 0, n),
		sdl:   make([]float64, 0, n),
		rf:    make([]float64, 0, n),
	}
	if len(st) == 0 || st[0].Depth != 0 {
		p.md = append(p.md, 0)
		p.dir = append(p.dir, geom.HoleDirection(c.Azimuth, c.Dip))
	}
	for i, s := range st {
		if math.IsNaN(s.Depth) || math.IsInf(s.Depth, 0) {
			return nil, stationErr(i, s.Depth, "depth is not a finite number")
		}
		if s.Depth < 0 {
			return nil, stationErr(i, s.Depth, "depth is negative")
		}
		if len(p.md) > 0 && s.Depth <= p.md[len(p.md)-1] {
			prev := p.md[len(p.md)-1]
			if s.Depth == prev {
				return nil, stationErr(i, s.Depth, "depth repeats the previous station")
			}
			return nil, stationErr(i, s.Depth, "depth is not greater than the previous depth %g (stations must be sorted by depth)", prev)
		}
		if s.Depth > c.Depth {
			return nil, stationErr(i, s.Depth, "depth is past the hole's final depth %g", c.Depth)
		}
		if err := checkDirection(s.Azimuth, s.Dip); err != nil {
			return nil, stationErr(i, s.Depth, "%v", err)
		}
		p.md = append(p.md, s.Depth)
		p.dir = append(p.dir, geom.HoleDirection(s.Azimuth, s.Dip))
	}
	p.pos = append(p.pos, geom.Vec3{X: c.East, Y: c.North, Z: c.Elevation})
	offset := len(p.md) - len(st) // 1 when the collar acts as the station at 0
	for i := 0; i+1 < len(p.md); i++ {
		t1, t2 := p.dir[i], p.dir[i+1]
		sum := t1.Add(t2).Norm()
		if sum < 1e-9 {
			return nil, stationErr(i+1-offset, p.md[i+1], "its direction is opposite to the one at depth %g: no arc joins them", p.md[i])
		}
		dl := 2 * math.Atan2(t2.Sub(t1).Norm(), sum)
		rf := ratioFactor(dl)
		p.dl = append(p.dl, dl)
		p.sdl = append(p.sdl, math.Sin(dl))
		p.rf = append(p.rf, rf)
		L := p.md[i+1] - p.md[i]
		var off geom.Vec3
		switch o.Method {
		case MinimumCurvature:
			off = t1.Add(t2).Scale(L / 2 * rf)
		case BalancedTangential:
			off = t1.Add(t2).Scale(L / 2)
		case Tangential:
			off = t2.Scale(L)
		}
		p.pos = append(p.pos, p.pos[i].Add(off))
	}
	if last := len(p.md) - 1; last > 0 {
		p.perDepth = float64(last) / p.md[last]
	}
	return p, nil
}

func checkDirection(az, dip float64) error {
	if math.IsNaN(az) || math.IsInf(az, 0) || az < 0 || az > 360 {
		return fmt.Errorf("azimuth %g is outside 0..360", az)
	}
	if math.IsNaN(dip) || math.IsInf(dip, 0) || dip < -90 || dip > 90 {
		return fmt.Errorf("dip %g is outside -90..90", dip)
	}
	return nil
}

// ratioFactor returns RF = 2/DL tan(DL/2) for a dogleg DL in radians, by its
// series 1 + DL²/12 + DL⁴/120 when DL is tiny (Sawaryn & Thorogood 2005); the
// next term, 17 DL⁶/20160, is below 1e-19 for DL < 0.002.
func ratioFactor(dl float64) float64 {
	if dl < 0.002 {
		d2 := dl * dl
		return 1 + d2/12 + d2*d2/120
	}
	return 2 / dl * math.Tan(dl/2)
}

// Method returns the method the path was built with.
func (p *Path) Method() Method { return p.opt.Method }

// Unit returns the path's length unit.
func (p *Path) Unit() Unit { return p.opt.Unit }

// Depth returns the hole's final depth.
func (p *Path) Depth() float64 { return p.depth }

// LastStation returns the depth of the last survey station (0 when only the
// collar gives the direction).
func (p *Path) LastStation() float64 { return p.md[len(p.md)-1] }

// At returns position and direction at measured depth md.
//
// Between stations the point lies on the interval's path: for minimum
// curvature on the circular arc, its direction the spherical interpolation
// of the two station directions; for balanced tangential on the upper
// station's straight half, then the lower's; for tangential on the straight
// line along the lower station's direction. Below the last station the path
// runs straight on and the point is flagged Extrapolated. A depth that is
// negative, not a number, or past the final depth is an error (wrapping
// [ErrPastEnd] in the last case).
//
// At does not allocate when it succeeds; it finds the interval where the
// depth would fall with evenly spaced stations, else by binary search.
func (p *Path) At(md float64) (Point, error) {
	if math.IsNaN(md) || md < 0 {
		return Point{}, fmt.Errorf("depth %g is outside the hole", md)
	}
	if md > p.depth {
		return Point{}, fmt.Errorf("depth %g: %w %g", md, ErrPastEnd, p.depth)
	}
	last := len(p.md) - 1
	if md >= p.md[last] {
		return Point{
			Depth:        md,
			Pos:          p.pos[last].Add(p.dir[last].Scale(md - p.md[last])),
			Dir:          p.dir[last],
			Extrapolated: md > p.md[last],
		}, nil
	}
	// Largest i with md[i] <= md; md[0] == 0 <= md and md < md[last]. The
	// first guess is where md would fall with evenly spaced stations (most
	// surveys are); otherwise a binary search.
	i := min(int(md*p.perDepth), last-1)
	if p.md[i] > md || p.md[i+1] <= md {
		lo, hi := 0, last
		for hi-lo > 1 {
			m := int(uint(lo+hi) >> 1)
			if p.md[m] <= md {
				lo = m
			} else {
				hi = m
			}
		}
		i = lo
	}
	s := md - p.md[i]
	L := p.md[i+1] - p.md[i]
	t1, t2 := p.dir[i], p.dir[i+1]
	pt := Point{Depth: md}
	switch p.opt.Method {
	case MinimumCurvature:
		dl := p.dl[i]
		f := s / L
		var t geom.Vec3
		if dl < 1e-12 {
			t = t1.Scale(1 - f).Add(t2.Scale(f)).Unit()
		} else {
			sd := p.sdl[i]
			t = t1.Scale(math.Sin((1-f)*dl) / sd).Add(t2.Scale(math.Sin(f*dl) / sd))
		}
		pt.Dir = t
		pt.Pos = p.pos[i].Add(t1.Add(t).Scale(s / 2 * ratioFactor(f*dl)))
	case BalancedTangential:
		if s <= L/2 {
			pt.Dir = t1
			pt.Pos = p.pos[i].Add(t1.Scale(s))
		} else {
			pt.Dir = t2
			pt.Pos = p.pos[i].Add(t1.Scale(L / 2)).Add(t2.Scale(s - L/2))
		}
	case Tangential:
		pt.Dir = t2
		pt.Pos = p.pos[i].Add(t2.Scale(s))
	}
	return pt, nil
}

// Intervals returns the survey intervals with their doglegs and dogleg
// severities (degrees per 30 m, or per 100 ft for a path in feet). The
// straight run below the last station is not an interval.
func (p *Path) Intervals() []Interval {
	out := make([]Interval, len(p.dl))
	per := p.opt.Unit.SeverityLength()
	for i, dl := range p.dl {
		d := geom.Deg(dl)
		L := p.md[i+1] - p.md[i]
		out[i] = Interval{From: p.md[i], To: p.md[i+1], Dogleg: d, Severity: d / L * per}
	}
	return out
}
