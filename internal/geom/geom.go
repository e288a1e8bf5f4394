// Package geom provides the directions, planes, lines and poles that every other
// corvane computation is built on, in the frame fixed by the project's conventions:
// right-handed, x = East, y = North, z = Up; angles in degrees, azimuths clockwise
// from north in [0, 360), plunges positive downward.
//
// geom imports only the standard library.
package geom

import "math"

const (
	deg = math.Pi / 180
	rad = 180 / math.Pi
)

// Rad converts degrees to radians.
func Rad(d float64) float64 { return d * deg }

// Deg converts radians to degrees.
func Deg(r float64) float64 { return r * rad }

// Vec3 is a vector in the East-North-Up frame. It is a small value type.
type Vec3 struct{ X, Y, Z float64 }

// Add returns a+b.
func (a Vec3) Add(b Vec3) Vec3 { return Vec3{a.X + b.X, a.Y + b.Y, a.Z + b.Z} }

// Sub returns a-b.
func (a Vec3) Sub(b Vec3) Vec3 { return Vec3{a.X - b.X, a.Y - b.Y, a.Z - b.Z} }

// Scale returns s*a.
func (a Vec3) Scale(s float64) Vec3 { return Vec3{s * a.X, s * a.Y, s * a.Z} }

// Neg returns -a.
func (a Vec3) Neg() Vec3 { return Vec3{-a.X, -a.Y, -a.Z} }

// Dot returns the scalar product a.b.
func (a Vec3) Dot(b Vec3) float64 { return a.X*b.X + a.Y*b.Y + a.Z*b.Z }

// Cross returns the vector product a x b (right-handed).
func (a Vec3) Cross(b Vec3) Vec3 {
	return Vec3{a.Y*b.Z - a.Z*b.Y, a.Z*b.X - a.X*b.Z, a.X*b.Y - a.Y*b.X}
}

// Norm returns the Euclidean length of a.
func (a Vec3) Norm() float64 { return math.Sqrt(a.X*a.X + a.Y*a.Y + a.Z*a.Z) }

// Unit returns a scaled to length 1. The zero vector is returned unchanged.
func (a Vec3) Unit() Vec3 {
	n := a.Norm()
	if n == 0 {
		return a
	}
	return Vec3{a.X / n, a.Y / n, a.Z / n}
}

// Angle returns the angle between a and b in degrees, in [0, 180]. It uses
// atan2(|a x b|, a.b), which stays accurate for nearly parallel vectors where
// acos of the dot product loses half its digits.
func Angle(a, b Vec3) float64 {
	return Deg(math.Atan2(a.Cross(b).Norm(), a.Dot(b)))
}

// AxialAngle returns the angle between the axes through a and b in degrees, in
// [0, 90]: the direction of each axis does not matter.
func AxialAngle(a, b Vec3) float64 {
	t := Angle(a, b)
	if t > 90 {
		t = 180 - t
	}
	return t
}

// NormAzimuth folds an azimuth in degrees into [0, 360). NaN stays NaN.
func NormAzimuth(a float64) float64 {
	a = math.Mod(a, 360)
	if a < 0 {
		a += 360
	}
	if a >= 360 { // -tiny + 360 rounds to 360
		a = 0
	}
	return a
}

// FromTrendPlunge returns the unit vector with the given trend and plunge in
// degrees (plunge positive downward): (cos P sin T, cos P cos T, -sin P).
func FromTrendPlunge(trend, plunge float64) Vec3 {
	st, ct := math.Sincos(Rad(trend))
	sp, cp := math.Sincos(Rad(plunge))
	return Vec3{cp * st, cp * ct, -sp}
}

// TrendPlunge returns the trend in [0, 360) and the plunge in [-90, 90] of v
// (positive plunge downward). v need not be a unit vector. A vertical v has
// trend 0.
func (a Vec3) TrendPlunge() (trend, plunge float64) {
	h := math.Hypot(a.X, a.Y)
	plunge = Deg(math.Atan2(-a.Z, h))
	if h == 0 {
		return 0, plunge
	}
	return NormAzimuth(Deg(math.Atan2(a.X, a.Y))), plunge
}

// Lower returns v or -v, whichever points into the lower hemisphere (z <= 0).
// A horizontal vector is returned unchanged.
func (a Vec3) Lower() Vec3 {
	if a.Z > 0 {
		return a.Neg()
	}
	return a
}

// HoleDirection returns the down-hole unit vector of a hole with the given
// azimuth and dip in degrees (dip negative below horizontal): the direction with
// trend = azimuth and plunge = -dip.
func HoleDirection(azimuth, dip float64) Vec3 { return FromTrendPlunge(azimuth, -dip) }

// AzimuthDip returns the azimuth and dip (negative downward) of a hole direction.
func (a Vec3) AzimuthDip() (azimuth, dip float64) {
	t, p := a.TrendPlunge()
	return t, -p
}

// Line is a lower-hemisphere line: Plunge in [0, 90], Trend in [0, 360).
type Line struct {
	Trend, Plunge float64
}

// Vec returns the unit vector of l.
func (l Line) Vec() Vec3 { return FromTrendPlunge(l.Trend, l.Plunge) }

// LineOf returns the lower-hemisphere line along v (v or -v). A horizontal v
// keeps its own trend; a vertical v has trend 0 and plunge 90.
func LineOf(v Vec3) Line {
	t, p := v.Lower().TrendPlunge()
	if p < 0 { // only when z == 0 exactly and rounding made -0
		p = 0
	}
	return Line{Trend: t, Plunge: p}
}

// Plane is a plane by dip in [0, 90] and dip direction in [0, 360).
type Plane struct {
	Dip, DipDirection float64
}

// Strike returns the right-hand-rule strike, dip direction - 90, in [0, 360).
func (p Plane) Strike() float64 { return NormAzimuth(p.DipDirection - 90) }

// Pole returns the lower-hemisphere pole: trend = dip direction + 180,
// plunge = 90 - dip.
func (p Plane) Pole() Line {
	return Line{Trend: NormAzimuth(p.DipDirection + 180), Plunge: 90 - p.Dip}
}

// Normal returns the unit vector of the lower-hemisphere pole.
func (p Plane) Normal() Vec3 { return p.Pole().Vec() }

// DipVector returns the unit vector down the line of steepest descent
// (trend = dip direction, plunge = dip).
func (p Plane) DipVector() Vec3 { return FromTrendPlunge(p.DipDirection, p.Dip) }

// PlaneOf returns the plane whose normal is n (either sense; n need not be
// unit). A horizontal plane (vertical n) has dip 0 and dip direction 0.
func PlaneOf(n Vec3) Plane {
	pole := LineOf(n)
	dd := NormAzimuth(pole.Trend + 180)
	dip := 90 - pole.Plunge
	if dip == 0 {
		dd = 0
	}
	return Plane{Dip: dip, DipDirection: dd}
}

// Intersection returns the line common to planes a and b. ok is false when the
// planes are parallel (their normals within 1e-12 radians).
func Intersection(a, b Plane) (l Line, ok bool) {
	c := a.Normal().Cross(b.Normal())
	if c.Norm() < 1e-12 {
		return Line{}, false
	}
	return LineOf(c), true
}
