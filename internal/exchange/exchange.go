// Package exchange holds the neutral inputs of corvane's transfer formats
// (glTF, points-with-normals CSV, GeoJSON, AGS4): hole traces as lists of
// East-North-Up points and structures with their position and pole. The
// writers in its sub-packages take these values and know nothing of the
// service, the stores or HTTP.
//
// Frame: x = East, y = North, z = Up, metres (or the project's length unit),
// as everywhere in corvane. exchange imports only the standard library and
// the pure computation packages.
package exchange

import (
	"fmt"
	"math"
	"sort"

	"corvane/internal/desurvey"
	"corvane/internal/geom"
)

// TracePoint is one point of a hole trace.
type TracePoint struct {
	Depth float64   // measured depth along the hole
	Pos   geom.Vec3 // East, North, Up
	// Extrapolated is true below the last survey station, where the path
	// runs straight on along the last surveyed direction.
	Extrapolated bool
}

// Trace is the desurveyed path of one hole from the collar (first point) to
// the final depth (last point), depths increasing.
type Trace struct {
	Hole   string
	Points []TracePoint
}

// Structure is one measured structure placed in space.
type Structure struct {
	Hole  string
	Depth float64
	// Pos is the desurveyed position (East, North, Up).
	Pos geom.Vec3
	// Pole is the unit lower-hemisphere normal of the plane (East, North, Up).
	Pole         geom.Vec3
	Dip          float64 // degrees, 0..90
	DipDirection float64 // degrees, [0, 360)
	Type         string  // a code of the project's vocabulary
	Set          string  // the set the structure belongs to; "" when none
	// Uncertainty is the angular uncertainty of the pole in degrees; NaN
	// when not known.
	Uncertainty float64
}

// HasUncertainty reports whether s carries an uncertainty.
func (s Structure) HasUncertainty() bool { return !math.IsNaN(s.Uncertainty) }

// DefaultTraceStep is the largest spacing, in metres along the hole, of the
// points that [TraceFromPath] puts between survey stations.
const DefaultTraceStep = 5.0

// TraceFromPath samples a desurveyed path as a trace: the collar, every
// survey station, points at most step apart between them (on the method's
// path, e.g. the minimum-curvature arc), the last station and the final
// depth. Points below the last station carry the Extrapolated flag of
// [desurvey.Path.At]. A step <= 0 (or NaN) means [DefaultTraceStep].
func TraceFromPath(hole string, p *desurvey.Path, step float64) (Trace, error) {
	if !(step > 0) {
		step = DefaultTraceStep
	}
	depths := []float64{0}
	for _, iv := range p.Intervals() {
		depths = append(depths, iv.From, iv.To)
	}
	depths = append(depths, p.LastStation(), p.Depth())
	sort.Float64s(depths)
	var marks []float64
	for i, d := range depths {
		if d > p.Depth() {
			break
		}
		if len(marks) > 0 && d == marks[len(marks)-1] {
			continue
		}
		if i > 0 && len(marks) > 0 {
			prev := marks[len(marks)-1]
			n := math.Ceil((d - prev) / step)
			for k := 1; k < int(n); k++ {
				marks = append(marks, prev+(d-prev)*float64(k)/n)
			}
		}
		marks = append(marks, d)
	}
	t := Trace{Hole: hole, Points: make([]TracePoint, 0, len(marks))}
	for _, d := range marks {
		pt, err := p.At(d)
		if err != nil {
			return Trace{}, fmt.Errorf("hole %s: %w", hole, err)
		}
		t.Points = append(t.Points, TracePoint{Depth: d, Pos: pt.Pos, Extrapolated: pt.Extrapolated})
	}
	return t, nil
}

// Split returns the surveyed part of the trace (collar to the last point not
// extrapolated) and the extrapolated part (from that point to the end). The
// two share their boundary point so that drawn together they are
// continuous; either may be empty (fewer than two points means nothing to
// draw).
func (t Trace) Split() (surveyed, extrapolated []TracePoint) {
	k := len(t.Points)
	for i, p := range t.Points {
		if p.Extrapolated {
			k = i
			break
		}
	}
	surveyed = t.Points[:k]
	if k < len(t.Points) {
		from := max(k-1, 0)
		extrapolated = t.Points[from:]
	}
	return surveyed, extrapolated
}
