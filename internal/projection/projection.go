// Package projection maps directions onto lower-hemisphere nets: the
// equal-area (Lambert azimuthal, Schmidt) and the equal-angle (stereographic,
// Wulff) projections, with a primitive circle of radius 1, x to the east and
// y to the north. It also traces great and small circles as polylines clipped
// to the primitive circle.
//
// For a direction with trend T and plunge P (lower hemisphere, P >= 0) at
// angle t = 90 - P from the vertical:
//
//	equal-area:  r = sqrt(2) sin(t/2)
//	equal-angle: r = tan(t/2)
//	x = r sin T, y = r cos T
//
// projection imports only the standard library, internal/geom and
// internal/words.
package projection

import (
	"fmt"
	"math"

	"corvane/internal/geom"
	"corvane/internal/words"
)

// Kind is a net projection.
type Kind int

// The projections.
const (
	EqualArea  Kind = iota // Lambert azimuthal equal-area (Schmidt net)
	EqualAngle             // stereographic (Wulff net)
)

// String returns the projection's name as used on nets and in flags.
func (k Kind) String() string {
	switch k {
	case EqualArea:
		return "equal-area"
	case EqualAngle:
		return "equal-angle"
	}
	return fmt.Sprintf("Kind(%d)", int(k))
}

// Parse returns the Kind named s ("equal-area" or "equal-angle"; case, and
// "_" for "-", do not matter: see words.Option).
func Parse(s string) (Kind, error) {
	switch words.Option(s) {
	case "equal-area", "":
		return EqualArea, nil
	case "equal-angle":
		return EqualAngle, nil
	}
	return 0, fmt.Errorf("unknown projection %q: want equal-area or equal-angle", s)
}

// Point is a position on the net, primitive radius 1, X east, Y north.
type Point struct{ X, Y float64 }

// Radius returns the net radius of a direction at angle t degrees from the
// downward vertical (t = 90 - plunge) under projection k. t may exceed 90
// (upper hemisphere), which lies outside the primitive circle.
func (k Kind) Radius(t float64) float64 {
	h := geom.Rad(t) / 2
	if k == EqualAngle {
		return math.Tan(h)
	}
	return math.Sqrt2 * math.Sin(h)
}

// Project returns the net position of the axis v (either end; it is folded
// into the lower hemisphere). A zero v maps to the centre.
func (k Kind) Project(v geom.Vec3) Point {
	return k.ProjectDirected(v.Lower())
}

// ProjectDirected returns the position of the direction v without folding it:
// an upper-hemisphere v lands outside the primitive circle (equal-area up to
// radius sqrt 2; equal-angle unbounded). It is the inverse of [Kind.Inverse].
func (k Kind) ProjectDirected(v geom.Vec3) Point {
	v = v.Unit()
	// angle from straight down (0,0,-1)
	t := geom.Deg(math.Atan2(math.Hypot(v.X, v.Y), -v.Z))
	r := k.Radius(t)
	h := math.Hypot(v.X, v.Y)
	if h == 0 {
		return Point{}
	}
	return Point{X: r * v.X / h, Y: r * v.Y / h}
}

// ProjectLine returns the net position of a lower-hemisphere line.
func (k Kind) ProjectLine(l geom.Line) Point { return k.Project(l.Vec()) }

// Inverse returns the unit direction at net position p. Inside the primitive
// circle it is the lower-hemisphere direction; outside it is the upper-
// hemisphere direction that [Kind.ProjectDirected] maps there. ok is false
// where no direction projects (equal-area beyond radius sqrt 2).
func (k Kind) Inverse(p Point) (v geom.Vec3, ok bool) {
	r := math.Hypot(p.X, p.Y)
	var t float64 // angle from straight down, radians
	switch k {
	case EqualAngle:
		t = 2 * math.Atan(r)
	default:
		s := r / math.Sqrt2
		if s > 1 {
			return geom.Vec3{}, false
		}
		t = 2 * math.Asin(s)
	}
	st, ct := math.Sincos(t)
	if r == 0 {
		return geom.Vec3{Z: -1}, true
	}
	return geom.Vec3{X: st * p.X / r, Y: st * p.Y / r, Z: -ct}, true
}

// GreatCircle returns the trace of plane pl on the lower hemisphere as a
// polyline of n+1 points (n >= 2) from one end of its strike to the other,
// through the dip vector. It lies wholly on or inside the primitive circle.
func (k Kind) GreatCircle(pl geom.Plane, n int) []Point {
	if n < 2 {
		n = 2
	}
	s := geom.FromTrendPlunge(pl.Strike(), 0)
	d := pl.DipVector()
	pts := make([]Point, 0, n+1)
	for i := 0; i <= n; i++ {
		a := math.Pi * float64(i) / float64(n)
		sa, ca := math.Sincos(a)
		pts = append(pts, k.ProjectDirected(s.Scale(ca).Add(d.Scale(sa))))
	}
	return pts
}

// SmallCircle returns the lower-hemisphere trace of the cone of half-angle
// `half` degrees about the axis a (both ends of the axis, as suits axial data
// such as a cone of confidence around a mean pole), sampled at n points
// (n >= 8). The circle is cut where it crosses the primitive circle: each
// returned polyline lies on or inside it, and a part that would fall in the
// upper hemisphere is drawn through its antipode (the cone about -a). closed
// is true when the whole circle lies below the horizontal and the single
// polyline should be closed.
func (k Kind) SmallCircle(a geom.Vec3, half float64, n int) (parts [][]Point, closed bool) {
	if n < 8 {
		n = 8
	}
	a = a.Unit().Lower()
	// frame around a
	ref := geom.Vec3{X: 1}
	if math.Abs(a.X) > 0.9 {
		ref = geom.Vec3{Y: 1}
	}
	u := a.Cross(ref).Unit()
	w := a.Cross(u)
	sh, ch := math.Sincos(geom.Rad(half))
	at := func(phi float64) geom.Vec3 {
		sp, cp := math.Sincos(phi)
		return a.Scale(ch).Add(u.Scale(sh * cp)).Add(w.Scale(sh * sp))
	}
	step := 2 * math.Pi / float64(n)
	pts := make([]geom.Vec3, n)
	for i := range pts {
		pts[i] = at(step * float64(i))
	}
	// A crossing of the horizontal between samples i and i+1: bisect on
	// the circle.
	cross := func(i int) geom.Vec3 {
		lo := step * float64(i)
		hi := lo + step
		loUp := at(lo).Z > 0
		for it := 0; it < 60; it++ {
			mid := (lo + hi) / 2
			if (at(mid).Z > 0) == loUp {
				lo = mid
			} else {
				hi = mid
			}
		}
		return at((lo + hi) / 2)
	}
	return k.loop(pts, cross)
}

// Loop returns the projection of a closed loop of directions pts (the
// outline of a region, e.g. the 95% region of a measured pole), as
// SmallCircle does for a circle: one closed polygon when the loop lies in
// the lower hemisphere, else its parts in each hemisphere (those above
// folded to the lower) split where it crosses the horizontal.
func (k Kind) Loop(pts []geom.Vec3) (parts [][]Point, closed bool) {
	cross := func(i int) geom.Vec3 {
		a, b := pts[i%len(pts)], pts[(i+1)%len(pts)]
		lo, hi := 0.0, 1.0
		loUp := a.Z > 0
		for it := 0; it < 60; it++ {
			mid := (lo + hi) / 2
			if (a.Scale(1-mid).Add(b.Scale(mid)).Z > 0) == loUp {
				lo = mid
			} else {
				hi = mid
			}
		}
		t := (lo + hi) / 2
		return a.Scale(1 - t).Add(b.Scale(t)).Unit()
	}
	return k.loop(pts, cross)
}

// loop splits the closed loop pts at the horizontal; cross(i) is the
// crossing between pts[i] and pts[i+1] (indices modulo len(pts)).
func (k Kind) loop(pts []geom.Vec3, cross func(i int) geom.Vec3) (parts [][]Point, closed bool) {
	n := len(pts)
	allLow := true
	for _, p := range pts {
		if p.Z > 0 {
			allLow = false
			break
		}
	}
	if allLow {
		out := make([]Point, n+1)
		for i, p := range pts {
			out[i] = k.ProjectDirected(p)
		}
		out[n] = out[0]
		return [][]Point{out}, true
	}
	// Start at a point where the sign of z changes so runs are not split at index 0.
	start := 0
	for i := range pts {
		j := (i + 1) % n
		if (pts[i].Z > 0) != (pts[j].Z > 0) {
			start = j
			break
		}
	}
	var cur []geom.Vec3
	curUp := pts[start].Z > 0
	flush := func() {
		if len(cur) >= 2 {
			poly := make([]Point, len(cur))
			for i, p := range cur {
				if curUp {
					p = p.Neg()
				}
				poly[i] = k.ProjectDirected(p)
			}
			parts = append(parts, poly)
		}
		cur = nil
	}
	for m := 0; m <= n; m++ {
		p := pts[(start+m)%n]
		up := p.Z > 0
		if m > 0 && up != curUp {
			// crossing between the previous sample and p
			x := cross(start + m - 1)
			x.Z = 0
			cur = append(cur, x)
			flush()
			curUp = up
			cur = append(cur, x)
		}
		cur = append(cur, p)
	}
	// The loop ends back at pts[start], where the first part began: the last
	// run is only [crossing, pts[start]]; put its crossing at the head of the
	// first part instead of leaving a separate stub.
	if len(parts) > 0 && len(cur) == 2 {
		x := cur[0]
		if curUp {
			x = x.Neg()
		}
		parts[0] = append([]Point{k.ProjectDirected(x)}, parts[0]...)
	} else {
		flush()
	}
	return parts, false
}
