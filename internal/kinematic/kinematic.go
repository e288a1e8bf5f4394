// Package kinematic checks whether planes and their intersections can move
// out of a slope or excavation face, given the face's dip and dip direction,
// a friction angle and lateral limits: planar sliding, wedge sliding, flexural
// toppling and direct toppling. It answers per plane, per intersection line,
// per set, and as counts and percentages over all measurements, and gives
// the critical zones as outlines on the sphere for drawing on a net.
//
// The tests follow the published stereographic methods: Markland (1972) for
// wedges; Hoek & Bray (1981, Rock Slope Engineering, 3rd ed.) for planar
// sliding with its daylight envelope and lateral limits; Goodman (1980,
// Introduction to Rock Mechanics) and Goodman & Bray (1976) for flexural
// toppling; Hudson & Harrison (1997, Engineering Rock Mechanics) for direct
// toppling; Wyllie & Mah (2004, Rock Slope Engineering, 4th ed.) restate all
// of them. The exact rules, including what happens on a boundary, are in the
// doc comment of each method.
//
// Kinematically possible is not unstable: see [Caution].
//
// kinematic imports only the standard library and corvane's math packages.
package kinematic

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"

	"corvane/internal/geom"
)

// Caution goes with every result of this package.
const Caution = "Kinematically possible is not unstable: these checks use only the orientations of the " +
	"face, the planes and a friction angle. Whether a block moves also depends on the strength of the " +
	"discontinuities, their persistence and spacing, water pressure and loading (including seismic); " +
	"any design needs those, the local codes, and the judgement of a licensed practitioner."

// DefaultLateral is the default lateral limit in degrees: a plane (or, for
// toppling, the reverse of its dip direction) must lie within 20 degrees of
// the face's dip direction (Hoek & Bray 1981; Wyllie & Mah 2004; Goodman
// 1980 uses 30 for toppling, and limits are a matter of judgement, so the
// value is editable).
const DefaultLateral = 20.0

// Params are the face and the friction angle of a check.
type Params struct {
	Face     geom.Plane // the slope or excavation face, dip 0..90
	Friction float64    // friction angle of the discontinuities, degrees, 0 < phi < 90
	Lateral  float64    // lateral limit, degrees, 0 < L <= 90
}

// Validate checks the parameters.
func (p Params) Validate() error {
	switch {
	case !(p.Face.Dip > 0 && p.Face.Dip <= 90):
		return fmt.Errorf("face dip %v, want more than 0 and at most 90 degrees", p.Face.Dip)
	case !(p.Face.DipDirection >= 0 && p.Face.DipDirection <= 360):
		return fmt.Errorf("face dip direction %v, want 0..360 degrees", p.Face.DipDirection)
	case !(p.Friction > 0 && p.Friction < 90):
		return fmt.Errorf("friction angle %v, want more than 0 and less than 90 degrees", p.Friction)
	case !(p.Lateral > 0 && p.Lateral <= 90):
		return fmt.Errorf("lateral limit %v, want more than 0 and at most 90 degrees", p.Lateral)
	}
	return nil
}

// angDiff returns the angle between two azimuths, 0..180.
func angDiff(a, b float64) float64 {
	d := math.Mod(math.Abs(a-b), 360)
	if d > 180 {
		d = 360 - d
	}
	return d
}

// eps absorbs rounding in angles that are meant to be equal (a plane given
// exactly at the friction angle or at the lateral limit).
const eps = 1e-9

// apparentDip returns the face's apparent dip in degrees in the direction
// az: atan(tan(face dip) cos(az - face dip direction)), negative when az
// points into the slope. A vertical face has apparent dip 90 in every
// direction out of it.
func (p Params) apparentDip(az float64) float64 {
	c := math.Cos(geom.Rad(az - p.Face.DipDirection))
	if p.Face.Dip >= 90 {
		switch {
		case c > eps:
			return 90
		case c < -eps:
			return -90
		}
		return 0
	}
	return geom.Deg(math.Atan(math.Tan(geom.Rad(p.Face.Dip)) * c))
}

// Planar reports whether plane pl can slide out of the face (Hoek & Bray
// 1981; Wyllie & Mah 2004, ch. 2 and 6): its dip direction lies within the
// lateral limit of the face's dip direction (inclusive: a plane exactly at
// the limit counts), it dips more steeply than the friction angle (strictly:
// a plane exactly at the friction angle is at limiting friction and does not
// count) and it daylights: it dips less steeply than the face's apparent dip
// in the plane's dip direction (the daylight envelope; for a plane striking
// with the face, dip < face dip).
func (p Params) Planar(pl geom.Plane) bool {
	if angDiff(pl.DipDirection, p.Face.DipDirection) > p.Lateral+eps {
		return false
	}
	return pl.Dip > p.Friction+eps && pl.Dip < p.apparentDip(pl.DipDirection)-eps
}

// Wedge reports whether a wedge can slide along the intersection line l of
// two planes (Markland 1972; Hoek & Bray 1981; Wyllie & Mah 2004, ch. 7):
// l plunges more steeply than the friction angle (strictly) and daylights,
// plunging less steeply than the face's apparent dip in the trend of l. No
// lateral limit applies: the daylight condition already bounds the trends.
// Sliding on one of the two planes alone (Hocking 1976) is not separated.
func (p Params) Wedge(l geom.Line) bool {
	return l.Plunge > p.Friction+eps && l.Plunge < p.apparentDip(l.Trend)-eps
}

// Flexural reports whether plane pl can take part in flexural toppling
// (Goodman 1980; Goodman & Bray 1976; Wyllie & Mah 2004, ch. 9): it dips
// into the face, its dip direction within the lateral limit of the reverse
// of the face's dip direction (inclusive), and steeply enough for slip
// between the layers, dip > (90 - face dip) + friction angle (strictly); in
// pole terms the pole plunges less than face dip - friction.
func (p Params) Flexural(pl geom.Plane) bool {
	if angDiff(pl.DipDirection, p.Face.DipDirection+180) > p.Lateral+eps {
		return false
	}
	return pl.Dip > 90-p.Face.Dip+p.Friction+eps
}

// Toppling classes of an intersection line for direct toppling.
const (
	NotToppling = iota
	DirectPrimary
	DirectOblique
)

// Direct classifies the intersection line l of two planes for direct
// toppling, after Hudson & Harrison (1997, ch. 18; the rules recalled from
// memory and stated here as implemented): blocks whose edges run along l
// lean out of the face when l plunges into the slope. l is a primary case
// when its trend lies within the lateral limit of the reverse of the face's
// dip direction (inclusive), an oblique case when it plunges into the slope
// outside the lateral limit (trend within 90 degrees of that reverse), and
// not a case otherwise. A horizontal l pointing along the face's strike is
// not a case. The block also needs a base plane: see [Params.Base].
func (p Params) Direct(l geom.Line) int {
	// A horizontal line is an axis: either end may point into the slope.
	d := angDiff(l.Trend, p.Face.DipDirection+180)
	if l.Plunge <= eps && d > 90 {
		d = 180 - d
	}
	switch {
	case d <= p.Lateral+eps:
		return DirectPrimary
	case d < 90-eps:
		return DirectOblique
	}
	return NotToppling
}

// Base reports whether plane pl can form the base of toppling blocks
// (Hudson & Harrison 1997, as read here): it dips out of the face (dip
// direction within 90 degrees of the face's, dip > 0) at less than the
// friction angle (strictly), so that the blocks on it topple rather than
// slide.
func (p Params) Base(pl geom.Plane) bool {
	return pl.Dip > eps && pl.Dip < p.Friction-eps && angDiff(pl.DipDirection, p.Face.DipDirection) < 90-eps
}

// Counts are the results of the checks over a group of planes.
type Counts struct {
	Poles         int // planes checked
	Planar        int
	Flexural      int
	Base          int
	Intersections int // pairs of planes with a defined intersection
	Wedge         int
	DirectPrimary int
	DirectOblique int
	// PairsSkipped is true when the planes were too many for every pair to
	// be intersected (see [MaxPairPlanes]); the intersection counts are then
	// zero.
	PairsSkipped bool
}

// MaxPairPlanes bounds the planes whose every pair is intersected (an
// O(n^2) count: 4000 planes give 8 million pairs).
const MaxPairPlanes = 4000

// Percent returns 100 * n / of, or NaN when of is 0.
func Percent(n, of int) float64 {
	if of == 0 {
		return math.NaN()
	}
	return 100 * float64(n) / float64(of)
}

// Count checks every plane and every pair's intersection. Parallel pairs
// (normals within 1e-12 rad) have no intersection and are not counted.
func (p Params) Count(planes []geom.Plane) Counts {
	c := Counts{Poles: len(planes)}
	for _, pl := range planes {
		if p.Planar(pl) {
			c.Planar++
		}
		if p.Flexural(pl) {
			c.Flexural++
		}
		if p.Base(pl) {
			c.Base++
		}
	}
	if len(planes) > MaxPairPlanes {
		c.PairsSkipped = true
		return c
	}
	normals := make([]geom.Vec3, len(planes))
	for i, pl := range planes {
		normals[i] = pl.Normal()
	}
	for i := range normals {
		for j := i + 1; j < len(normals); j++ {
			x := normals[i].Cross(normals[j])
			if x.Norm() < 1e-12 {
				continue
			}
			l := geom.LineOf(x)
			c.Intersections++
			if p.Wedge(l) {
				c.Wedge++
			}
			switch p.Direct(l) {
			case DirectPrimary:
				c.DirectPrimary++
			case DirectOblique:
				c.DirectOblique++
			}
		}
	}
	return c
}

// PlaneResult is the check of one plane (a set's mean plane).
type PlaneResult struct {
	Planar, Flexural, Base bool
}

// CheckPlane checks one plane.
func (p Params) CheckPlane(pl geom.Plane) PlaneResult {
	return PlaneResult{Planar: p.Planar(pl), Flexural: p.Flexural(pl), Base: p.Base(pl)}
}

// PairResult is the check of the intersection of two planes (two sets'
// mean planes).
type PairResult struct {
	Line   geom.Line
	Wedge  bool
	Direct int // NotToppling, DirectPrimary or DirectOblique
}

// ErrParallel is returned for two parallel planes.
var ErrParallel = errors.New("kinematic: the planes are parallel, no intersection")

// CheckPair checks the intersection of planes a and b.
func (p Params) CheckPair(a, b geom.Plane) (PairResult, error) {
	l, ok := geom.Intersection(a, b)
	if !ok {
		return PairResult{}, ErrParallel
	}
	return PairResult{Line: l, Wedge: p.Wedge(l), Direct: p.Direct(l)}, nil
}

// ParseFace reads a face as DIP/DIP_DIRECTION (0 < dip <= 90, dip direction
// 0..360, 360 read as 0): the command line's --face and the service's face
// query parameter.
func ParseFace(s string) (geom.Plane, error) {
	a, b, ok := strings.Cut(s, "/")
	dip, e1 := strconv.ParseFloat(strings.TrimSpace(a), 64)
	dd, e2 := strconv.ParseFloat(strings.TrimSpace(b), 64)
	if !ok || e1 != nil || e2 != nil || !(dip > 0 && dip <= 90) || !(dd >= 0 && dd <= 360) {
		return geom.Plane{}, fmt.Errorf("%q: want DIP/DIP_DIRECTION with 0 < dip <= 90 and dip direction 0..360", s)
	}
	return geom.Plane{Dip: dip, DipDirection: geom.NormAzimuth(dd)}, nil
}
