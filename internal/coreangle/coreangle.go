// Package coreangle turns the angles measured on oriented drill core (alpha,
// beta, and gamma for a lineation) into true planes and lines, and back.
//
// The definitions are corvane's conventions (x = East, y = North, z = Up;
// angles in degrees):
//
//   - h is the unit down-hole direction of the hole at the measurement depth.
//   - The bottom-of-hole reference line b is the component of straight down
//     (0,0,-1) perpendicular to h, normalised; a top-of-hole line is -b.
//   - alpha (0..90) is the acute angle between the core axis and the plane.
//   - beta (0..360) is measured clockwise looking down-hole from the reference
//     line r to the down-hole apex of the ellipse:
//     d = cos(beta) r + sin(beta) (h x r); to the up-hole apex d is reversed.
//   - The plane normal is n = sin(alpha) h - cos(alpha) d.
//   - gamma is measured on the plane from e = unit(h - (h.n) n) (toward the
//     down-hole apex), clockwise looking along n:
//     l = cos(gamma) e + sin(gamma) (n x e); anticlockwise reverses the sign.
//     When alpha = 90 the ellipse is a circle and e is taken as d.
//
// In a vertical hole b is undefined and the core cannot be oriented by
// gravity: the plane's dip is 90 - alpha (common practice) and it has no dip
// direction, a lineation has a plunge but no trend; such results carry NaN
// for the missing angle and the [Vertical] warning.
//
// All functions are pure and safe for concurrent use.
package coreangle

import (
	"errors"
	"fmt"
	"math"
	"strings"

	"corvane/internal/geom"
)

// RefLine is the line on the core that beta is measured from.
type RefLine int

const (
	Bottom RefLine = iota // bottom-of-hole line (default)
	Top                   // top-of-hole line
)

// Apex is the end of the ellipse's long axis that beta is measured to.
type Apex int

const (
	DownHole Apex = iota // the apex farthest from the collar (default)
	UpHole               // the apex nearest the collar
)

// Sense is the direction gamma is measured in, looking along the down-hole
// plane normal.
type Sense int

const (
	Clockwise     Sense = iota // default
	Anticlockwise              //
)

// Convention is how a project measures its core angles. The zero value is
// bottom-of-hole line, beta to the down-hole apex, gamma clockwise.
type Convention struct {
	RefLine    RefLine
	BetaApex   Apex
	GammaSense Sense
}

// String returns the convention in the command-line words, e.g.
// "bottom/downhole/clockwise".
func (c Convention) String() string {
	return c.RefLine.String() + "/" + c.BetaApex.String() + "/" + c.GammaSense.String()
}

func (r RefLine) String() string {
	if r == Top {
		return "top"
	}
	return "bottom"
}

func (a Apex) String() string {
	if a == UpHole {
		return "uphole"
	}
	return "downhole"
}

func (s Sense) String() string {
	if s == Anticlockwise {
		return "anticlockwise"
	}
	return "clockwise"
}

// ParseRefLine parses "bottom" or "top" (any case).
func ParseRefLine(s string) (RefLine, error) {
	switch strings.ToLower(s) {
	case "bottom":
		return Bottom, nil
	case "top":
		return Top, nil
	}
	return 0, fmt.Errorf("reference line %q: want bottom or top", s)
}

// ParseApex parses "downhole" or "uphole" (any case).
func ParseApex(s string) (Apex, error) {
	switch strings.ToLower(s) {
	case "downhole":
		return DownHole, nil
	case "uphole":
		return UpHole, nil
	}
	return 0, fmt.Errorf("beta apex %q: want downhole or uphole", s)
}

// ParseSense parses "clockwise" or "anticlockwise" (any case).
func ParseSense(s string) (Sense, error) {
	switch strings.ToLower(s) {
	case "clockwise":
		return Clockwise, nil
	case "anticlockwise":
		return Anticlockwise, nil
	}
	return 0, fmt.Errorf("gamma sense %q: want clockwise or anticlockwise", s)
}

// Warn is a set of warnings about one conversion. The zero value is no
// warning.
type Warn uint8

const (
	// NearVertical: the hole is within NearVerticalLimit degrees of vertical,
	// where gravity-based orientation marks are unreliable.
	NearVertical Warn = 1 << iota
	// Vertical: the hole is vertical; dip = 90 - alpha, no dip direction, no
	// lineation trend, no beta.
	Vertical
	// AlphaHigh: alpha >= AlphaHighLimit; the ellipse is nearly a circle and
	// beta (so the dip direction) is poorly defined.
	AlphaHigh
	// Extrapolated: the depth is below the last survey station; the hole
	// direction is extrapolated straight on.
	Extrapolated
	// Unoriented: the measurement has no beta (unoriented core): the angle
	// to the core axis and the hole direction are known, the dip and dip
	// direction are not (except the dip in a vertical hole).
	Unoriented

	warnCount = 5
)

// NearVerticalLimit is the angle from vertical, in degrees, inside which a
// hole is flagged [NearVertical]: holes steeper than 85 degrees. Gravity-based
// orientation tools lose their reference as the hole approaches vertical;
// 5 degrees from vertical is the limit we adopt (common practice, value from
// memory; projects with a tighter tool specification should read the
// warning with that in mind).
const NearVerticalLimit = 5.0

// AlphaHighLimit is the alpha, in degrees, from which beta is flagged as
// poorly defined ([AlphaHigh]).
const AlphaHighLimit = 85.0

// verticalTol is the horizontal component of a unit hole direction below which
// the hole is treated as exactly vertical (about 6e-8 degrees).
const verticalTol = 1e-9

var sinNearVertical = math.Sin(geom.Rad(NearVerticalLimit))

var warnNames = [warnCount]string{
	"near-vertical hole",
	"vertical hole: dip = 90 - alpha, no dip direction",
	"alpha >= 85: beta poorly defined",
	"extrapolated below last survey station",
	"unoriented (no beta): angle to the core axis only, no dip or dip direction",
}

var warnStrings = func() (s [1 << warnCount]string) {
	for w := range s {
		var parts []string
		for i := 0; i < warnCount; i++ {
			if w&(1<<i) != 0 {
				parts = append(parts, warnNames[i])
			}
		}
		s[w] = strings.Join(parts, "; ")
	}
	return s
}()

// String returns the warnings as short phrases joined by "; ", or "" for
// none. It does not allocate.
func (w Warn) String() string {
	if int(w) < len(warnStrings) {
		return warnStrings[w]
	}
	return warnStrings[w&(1<<warnCount-1)]
}

// Has reports whether w contains all the warnings in x.
func (w Warn) Has(x Warn) bool { return w&x == x }

// CheckAngles reports whether alpha (0..90), beta (0..360) and gamma
// (0..360, or NaN for no lineation when hasGamma is false) are usable. The
// error names the field.
func CheckAngles(alpha, beta, gamma float64, hasGamma bool) error {
	if !(alpha >= 0 && alpha <= 90) {
		return &AngleError{Field: "alpha", Value: alpha, Range: "0..90"}
	}
	if !(beta >= 0 && beta <= 360) {
		return &AngleError{Field: "beta", Value: beta, Range: "0..360"}
	}
	if hasGamma && !(gamma >= 0 && gamma <= 360) {
		return &AngleError{Field: "gamma", Value: gamma, Range: "0..360"}
	}
	return nil
}

// AngleError is a core angle outside its range.
type AngleError struct {
	Field string
	Value float64
	Range string
}

func (e *AngleError) Error() string {
	return fmt.Sprintf("%s %g is outside %s", e.Field, e.Value, e.Range)
}

// frame returns the reference line r for the hole h, and the hole warnings.
// For a vertical hole r is an arbitrary unit vector perpendicular to h.
func frame(h geom.Vec3, c Convention) (r geom.Vec3, w Warn) {
	hz := math.Sqrt(h.X*h.X + h.Y*h.Y) // = |horizontal part| = sin(angle from vertical)
	if hz < verticalTol {
		return geom.Vec3{X: 1}, Vertical | NearVertical
	}
	if hz < sinNearVertical {
		w = NearVertical
	}
	// b = down - (down.h) h, down = (0,0,-1); |b| = hz.
	inv := 1 / hz
	b := geom.Vec3{X: h.Z * h.X * inv, Y: h.Z * h.Y * inv, Z: (h.Z*h.Z - 1) * inv}
	if c.RefLine == Top {
		b = b.Neg()
	}
	return b, w
}

// Reference returns the unit reference line r that beta is measured from in
// a hole with unit down-hole direction h under convention c, and the hole
// warnings. In a vertical hole r is an arbitrary unit vector perpendicular to
// h and the warnings hold [Vertical].
func Reference(h geom.Vec3, c Convention) (geom.Vec3, Warn) { return frame(h, c) }

// apex returns the unit direction d from the core axis to the apex beta
// points at, reversed for the up-hole apex so that d always points to the
// down-hole apex.
func apex(h, r geom.Vec3, beta float64, c Convention) geom.Vec3 {
	sb, cb := math.Sincos(geom.Rad(beta))
	d := r.Scale(cb).Add(h.Cross(r).Scale(sb))
	if c.BetaApex == UpHole {
		d = d.Neg()
	}
	return d
}

// normal returns the plane normal pointing down-hole, and d.
func normal(h geom.Vec3, alpha, beta float64, c Convention) (n, d geom.Vec3, w Warn) {
	r, w := frame(h, c)
	d = apex(h, r, beta, c)
	sa, ca := math.Sincos(geom.Rad(alpha))
	n = h.Scale(sa).Sub(d.Scale(ca))
	if alpha >= AlphaHighLimit {
		w |= AlphaHigh
	}
	return n, d, w
}

// Plane returns the true plane measured as alpha and beta on core from a hole
// with unit down-hole direction h, and warnings.
//
// The normal is n = sin(alpha) h - cos(alpha) d (see the package doc). In a
// vertical hole the plane has Dip = 90 - alpha and DipDirection NaN, with the
// [Vertical] warning. Angles are not checked (see [CheckAngles]): values out of
// range give meaningless planes. Plane does not allocate.
func Plane(h geom.Vec3, alpha, beta float64, c Convention) (geom.Plane, Warn) {
	n, _, w := normal(h, alpha, beta, c)
	return planeAt(n, w), w
}

// planeAt is the plane of normal n with warnings w (see [Plane]).
func planeAt(n geom.Vec3, w Warn) geom.Plane {
	p := planeOf(n)
	if w.Has(Vertical) {
		p.DipDirection = math.NaN()
	}
	return p
}

// PlaneAndLine returns what [Plane] (alpha, beta) and [Line] (alpha, beta,
// gamma) return, with their one normal and warnings computed once.
func PlaneAndLine(h geom.Vec3, alpha, beta, gamma float64, c Convention) (geom.Plane, geom.Line, Warn) {
	n, d, w := normal(h, alpha, beta, c)
	return planeAt(n, w), lineAt(h, n, d, gamma, c, w), w
}

// planeOf is geom.PlaneOf for a unit normal, without its normalisation steps
// (math.Mod): dip = atan2(|horizontal|, |z|); dip direction = azimuth of the
// horizontal part of the upward normal; a horizontal plane has dip direction 0.
func planeOf(n geom.Vec3) geom.Plane {
	if n.Z <= 0 { // as geom: a vertical plane's dip direction is opposite the given normal
		n = n.Neg()
	}
	hz := math.Sqrt(n.X*n.X + n.Y*n.Y)
	p := geom.Plane{Dip: geom.Deg(math.Atan2(hz, n.Z))}
	if hz == 0 {
		return p
	}
	dd := geom.Deg(math.Atan2(n.X, n.Y))
	if dd < 0 {
		dd += 360
		if dd >= 360 {
			dd = 0
		}
	}
	p.DipDirection = dd
	return p
}

// lineOf is geom.LineOf without its math.Mod normalisation.
func lineOf(v geom.Vec3) geom.Line {
	if v.Z > 0 {
		v = v.Neg()
	}
	h := math.Sqrt(v.X*v.X + v.Y*v.Y)
	l := geom.Line{Plunge: geom.Deg(math.Atan2(-v.Z, h))}
	if l.Plunge < 0 {
		l.Plunge = 0
	}
	if h == 0 {
		return l
	}
	t := geom.Deg(math.Atan2(v.X, v.Y))
	if t < 0 {
		t += 360
		if t >= 360 {
			t = 0
		}
	}
	l.Trend = t
	return l
}

// Line returns the lineation measured by gamma on the plane (alpha, beta) in
// a hole with unit down-hole direction h, and warnings. See the package doc for
// the definition of gamma. In a vertical hole the line has its plunge but
// Trend NaN.
func Line(h geom.Vec3, alpha, beta, gamma float64, c Convention) (geom.Line, Warn) {
	n, d, w := normal(h, alpha, beta, c)
	return lineAt(h, n, d, gamma, c, w), w
}

// lineAt is the line of gamma on the plane of normal n, d the direction to
// the down-hole apex, w the warnings (see [Line]).
func lineAt(h, n, d geom.Vec3, gamma float64, c Convention, w Warn) geom.Line {
	e := h.Sub(n.Scale(h.Dot(n)))
	if en := e.Norm(); en < 1e-12 {
		e = d
	} else {
		e = e.Scale(1 / en)
	}
	if c.GammaSense == Anticlockwise {
		gamma = -gamma
	}
	sg, cg := math.Sincos(geom.Rad(gamma))
	l := lineOf(e.Scale(cg).Add(n.Cross(e).Scale(sg)))
	if w.Has(Vertical) {
		l.Trend = math.NaN()
	}
	return l
}

// ErrVertical is returned when an inverse is asked for in a vertical hole,
// where beta and gamma have no reference.
var ErrVertical = errors.New("vertical hole: no reference line for beta or gamma")

// Angles returns the alpha and beta that plane p shows on core from a hole
// with unit down-hole direction h: the inverse of [Plane]. alpha is in
// [0, 90], beta in [0, 360). When alpha is 90 beta is undefined and returned
// as 0 (with [AlphaHigh]); in a vertical hole beta is NaN (with [Vertical]).
func Angles(h geom.Vec3, p geom.Plane, c Convention) (alpha, beta float64, w Warn) {
	n := p.Normal()
	if n.Dot(h) < 0 {
		n = n.Neg()
	}
	sa := n.Dot(h)
	perp := n.Sub(h.Scale(sa)) // = -cos(alpha) d
	alpha = geom.Deg(math.Atan2(sa, perp.Norm()))
	r, w := frame(h, c)
	if alpha >= AlphaHighLimit {
		w |= AlphaHigh
	}
	if w.Has(Vertical) {
		return alpha, math.NaN(), w
	}
	if perp.Norm() < 1e-15 {
		return alpha, 0, w
	}
	d := perp.Neg()
	if c.BetaApex == UpHole {
		d = d.Neg()
	}
	beta = geom.NormAzimuth(geom.Deg(math.Atan2(d.Dot(h.Cross(r)), d.Dot(r))))
	return alpha, beta, w
}

// Gamma returns the gamma that line l, lying on plane p, shows on core from a
// hole with unit down-hole direction h: the inverse of [Line]. A line is an
// axis, so gamma and gamma+180 give the same line; Gamma returns the value in
// [0, 180). A line within 1 degree of the plane is projected onto it; farther
// off, or perpendicular to the plane, or in a vertical hole, it is an error.
func Gamma(h geom.Vec3, p geom.Plane, l geom.Line, c Convention) (float64, error) {
	alpha, beta, w := Angles(h, p, c)
	if w.Has(Vertical) {
		return math.NaN(), ErrVertical
	}
	n, d, _ := normal(h, alpha, beta, c)
	lv := l.Vec()
	if off := math.Abs(geom.Deg(math.Asin(math.Min(1, math.Abs(lv.Dot(n)))))); off > 1 {
		return math.NaN(), fmt.Errorf("line %.1f/%.1f is %.2f degrees off plane %.1f/%.1f", l.Plunge, l.Trend, off, p.Dip, p.DipDirection)
	}
	lv = lv.Sub(n.Scale(lv.Dot(n)))
	if lv.Norm() < 1e-12 {
		return math.NaN(), fmt.Errorf("line %.1f/%.1f is normal to plane %.1f/%.1f", l.Plunge, l.Trend, p.Dip, p.DipDirection)
	}
	e := h.Sub(n.Scale(h.Dot(n)))
	if en := e.Norm(); en < 1e-12 {
		e = d
	} else {
		e = e.Scale(1 / en)
	}
	g := geom.Deg(math.Atan2(lv.Dot(n.Cross(e)), lv.Dot(e)))
	if c.GammaSense == Anticlockwise {
		g = -g
	}
	g = geom.NormAzimuth(g)
	if g >= 180 {
		g -= 180
	}
	return g, nil
}

// Fold returns the in-range reading of a plane whose alpha was pushed out of
// 0..90 (by an error added to a reading, say): past 90 the same plane shows
// 180 - alpha at the other apex, below 0 it shows -alpha at the other apex;
// the other apex is beta + 180 (not normalised). In range, the reading is
// returned unchanged.
func Fold(alpha, beta float64) (float64, float64) {
	switch {
	case alpha > 90:
		return 180 - alpha, beta + 180
	case alpha < 0:
		return -alpha, beta + 180
	}
	return alpha, beta
}

// TrueThickness returns the true thickness of a planar body from its apparent
// thickness along the core axis and its alpha in degrees:
// apparent * sin(alpha) (common practice).
func TrueThickness(apparent, alpha float64) float64 {
	return apparent * math.Sin(geom.Rad(alpha))
}
