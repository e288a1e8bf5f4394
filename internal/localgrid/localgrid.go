// Package localgrid relates a local (mine) grid to a projected grid by a
// two-dimensional similarity transformation, and converts coordinates and
// azimuths between the local grid, the projected grid and true north.
//
// # The transformation
//
// The formula is EPSG method 9621, "Similarity transformation", as defined
// in IOGP Geomatics Guidance Note 7-2 (Coordinate Conversions and
// Transformations including Formulas), with local easting x and northing y
// (metres) as the source and projected easting E and northing N as the
// target:
//
//	E = E0 + M (x cos(theta) + y sin(theta))
//	N = N0 + M (-x sin(theta) + y cos(theta))
//
// E0, N0 are the projected coordinates of the local grid's origin (0, 0), M
// the scale (projected distance over local distance) and theta the rotation
// in degrees, positive clockwise: local grid north points to projected grid
// azimuth theta. The same formula is PROJ's two-dimensional Helmert
// (+proj=helmert with +theta in arc-seconds and +s the scale factor).
//
// # Azimuths
//
//	grid azimuth  = local azimuth + theta
//	true azimuth  = grid azimuth + C   (C the projected grid's convergence)
//
// so local = true - C - theta. Elevations are not touched: the local grid
// is assumed to share the projected grid's heights.
//
// A transformation is given either by its parameters (rotation, scale and
// one point known in both grids) or fitted by least squares to two or more
// control points; the fit reports each point's residual.
//
// Caution: a local grid's definition comes from the site's survey control;
// the corrections computed here feed design only when checked against it.
//
// The package is pure and safe for concurrent use.
package localgrid

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"strings"

	"corvane/internal/geom"
	"corvane/internal/northref"
)

// Transform is a similarity transformation from a local grid to a projected
// grid (EPSG method 9621).
type Transform struct {
	E0, N0   float64 // projected coordinates of the local origin, m
	Scale    float64 // M: projected distance / local distance
	Rotation float64 // theta, degrees clockwise: the grid azimuth of local north
}

// Validate reports a transformation that cannot be used: non-finite values
// or a scale that is not positive.
func (t Transform) Validate() error {
	for _, v := range []struct {
		name string
		x    float64
	}{{"origin easting", t.E0}, {"origin northing", t.N0}, {"scale", t.Scale}, {"rotation", t.Rotation}} {
		if math.IsNaN(v.x) || math.IsInf(v.x, 0) {
			return fmt.Errorf("local grid %s %v is not a finite number", v.name, v.x)
		}
	}
	if t.Scale <= 0 {
		return fmt.Errorf("local grid scale %v must be greater than 0", t.Scale)
	}
	if t.Scale < 0.9 || t.Scale > 1.1 {
		return fmt.Errorf("local grid scale %v is far from 1 (expected 0.9 to 1.1): are the local units metres?", t.Scale)
	}
	return nil
}

// FromOrigin builds the transformation in which the local point (x, y) sits
// at projected (e, n), with rotation theta (degrees, clockwise) and scale m.
func FromOrigin(x, y, e, n, theta, m float64) Transform {
	s, c := math.Sincos(theta * math.Pi / 180)
	return Transform{E0: e - m*(x*c+y*s), N0: n - m*(-x*s+y*c), Scale: m, Rotation: theta}
}

// ToGrid converts local coordinates to projected grid coordinates.
func (t Transform) ToGrid(x, y float64) (e, n float64) {
	s, c := math.Sincos(t.Rotation * math.Pi / 180)
	return t.E0 + t.Scale*(x*c+y*s), t.N0 + t.Scale*(-x*s+y*c)
}

// ToLocal converts projected grid coordinates to local coordinates (the
// exact inverse of ToGrid).
func (t Transform) ToLocal(e, n float64) (x, y float64) {
	s, c := math.Sincos(t.Rotation * math.Pi / 180)
	de, dn := (e-t.E0)/t.Scale, (n-t.N0)/t.Scale
	return de*c - dn*s, de*s + dn*c
}

// LocalToGridAzimuth turns a local-grid azimuth into a projected-grid
// azimuth, normalised to [0, 360).
func (t Transform) LocalToGridAzimuth(az float64) float64 { return geom.NormAzimuth(az + t.Rotation) }

// GridToLocalAzimuth is the inverse of LocalToGridAzimuth.
func (t Transform) GridToLocalAzimuth(az float64) float64 { return geom.NormAzimuth(az - t.Rotation) }

// LocalToTrueAzimuth turns a local azimuth into a true azimuth, given the
// projected grid's convergence c at the point (positive when grid north is
// east of true north): true = local + theta + c.
func (t Transform) LocalToTrueAzimuth(az, c float64) float64 {
	return geom.NormAzimuth(az + t.Rotation + c)
}

// TrueToLocalAzimuth is the inverse of LocalToTrueAzimuth.
func (t Transform) TrueToLocalAzimuth(az, c float64) float64 {
	return geom.NormAzimuth(az - t.Rotation - c)
}

// ControlPoint is a point known in both grids.
type ControlPoint struct {
	ID       string  `json:"id"`
	X        float64 `json:"local_easting"`
	Y        float64 `json:"local_northing"`
	Easting  float64 `json:"easting"`
	Northing float64 `json:"northing"`
}

// Residual is a control point's misfit: observed minus computed projected
// coordinates, and its length, in metres.
type Residual struct {
	ID       string  `json:"id"`
	DE       float64 `json:"de"`
	DN       float64 `json:"dn"`
	Distance float64 `json:"distance"`
}

// Fit is a transformation fitted to control points.
type Fit struct {
	Transform Transform  `json:"transform"`
	Residuals []Residual `json:"residuals"`
	// RMS is the root mean square of the residual distances, m.
	RMS float64 `json:"rms"`
}

// FitControl fits the similarity transformation to two or more control
// points by least squares (minimising the sum of squared residuals in E and
// N). The problem is linear in E0, N0, a = M cos(theta), b = M sin(theta);
// with coordinates reduced to their centroids (dx, dy, dE, dN) the normal
// equations give
//
//	a = sum(dE dx + dN dy) / S,  b = sum(dE dy - dN dx) / S,  S = sum(dx^2 + dy^2)
//
// With two points the fit is exact. Errors name the point at fault: fewer
// than two points, non-finite coordinates, repeated ids, or local points
// that all coincide.
func FitControl(pts []ControlPoint) (Fit, error) {
	if len(pts) < 2 {
		return Fit{}, fmt.Errorf("a local grid needs at least two control points, got %d", len(pts))
	}
	seen := map[string]bool{}
	var mx, my, me, mn float64
	for i, p := range pts {
		name := p.ID
		if name == "" {
			name = fmt.Sprintf("#%d", i+1)
		}
		if p.ID != "" && seen[p.ID] {
			return Fit{}, fmt.Errorf("control point %q appears twice", p.ID)
		}
		seen[p.ID] = true
		for _, v := range []float64{p.X, p.Y, p.Easting, p.Northing} {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return Fit{}, fmt.Errorf("control point %s: coordinates must be finite numbers", name)
			}
		}
		mx, my, me, mn = mx+p.X, my+p.Y, me+p.Easting, mn+p.Northing
	}
	k := float64(len(pts))
	mx, my, me, mn = mx/k, my/k, me/k, mn/k
	var s, sa, sb float64
	for _, p := range pts {
		dx, dy, de, dn := p.X-mx, p.Y-my, p.Easting-me, p.Northing-mn
		s += dx*dx + dy*dy
		sa += de*dx + dn*dy
		sb += de*dy - dn*dx
	}
	if s < 1e-6 {
		return Fit{}, errors.New("the control points coincide in the local grid: a rotation and scale cannot be fitted")
	}
	a, b := sa/s, sb/s
	t := Transform{E0: me - a*mx - b*my, N0: mn + b*mx - a*my, Scale: math.Hypot(a, b), Rotation: math.Atan2(b, a) * 180 / math.Pi}
	f := Fit{Transform: t, Residuals: make([]Residual, len(pts))}
	var ss float64
	for i, p := range pts {
		e, n := t.ToGrid(p.X, p.Y)
		r := Residual{ID: p.ID, DE: p.Easting - e, DN: p.Northing - n}
		r.Distance = math.Hypot(r.DE, r.DN)
		ss += r.Distance * r.Distance
		f.Residuals[i] = r
	}
	f.RMS = math.Sqrt(ss / k)
	return f, nil
}

// Spec declares a local grid as stored with a project or hole: the
// projected grid it relates to (a coordinate system label such as
// EPSG:28350) and either the parameters (Rotation, Scale and one point known
// in both grids, Origin) or control points.
type Spec struct {
	// Name of the local grid, free text, e.g. "Zelvorra Reach mine grid".
	Name string `json:"name"`
	// GridCRS is the label of the projected grid, e.g. "EPSG:28350".
	GridCRS string `json:"grid_crs"`
	// Rotation (degrees, clockwise: the grid azimuth of local north) and
	// Scale (default 1), with Origin, when given by parameters.
	Rotation *float64 `json:"rotation,omitempty"`
	Scale    *float64 `json:"scale,omitempty"`
	Origin   *Origin  `json:"origin,omitempty"`
	// Control points, when fitted.
	Control []ControlPoint `json:"control_points,omitempty"`
}

// Origin is one point known in both grids.
type Origin struct {
	X        float64 `json:"local_easting"`
	Y        float64 `json:"local_northing"`
	Easting  float64 `json:"easting"`
	Northing float64 `json:"northing"`
}

// Resolve checks the declaration and returns its transformation, with the
// fit when it came from control points (nil otherwise). Errors name the
// field at fault.
func (s Spec) Resolve() (Transform, *Fit, error) {
	if strings.TrimSpace(s.GridCRS) == "" {
		return Transform{}, nil, errors.New("local grid: grid_crs is required (the projected grid it relates to, e.g. EPSG:28350)")
	}
	byParams := s.Rotation != nil || s.Scale != nil || s.Origin != nil
	switch {
	case byParams && len(s.Control) > 0:
		return Transform{}, nil, errors.New("local grid: give either rotation, scale and origin or control_points, not both")
	case len(s.Control) > 0:
		f, err := FitControl(s.Control)
		if err != nil {
			return Transform{}, nil, fmt.Errorf("local grid: control_points: %w", err)
		}
		if err := f.Transform.Validate(); err != nil {
			return Transform{}, nil, fmt.Errorf("local grid: control_points: fitted %w", err)
		}
		return f.Transform, &f, nil
	case s.Rotation == nil || s.Origin == nil:
		return Transform{}, nil, errors.New("local grid: give rotation and origin (and scale, default 1), or two or more control_points")
	}
	m := 1.0
	if s.Scale != nil {
		m = *s.Scale
	}
	o := s.Origin
	for _, v := range []float64{*s.Rotation, o.X, o.Y, o.Easting, o.Northing} {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return Transform{}, nil, errors.New("local grid: rotation and origin must be finite numbers")
		}
	}
	t := FromOrigin(o.X, o.Y, o.Easting, o.Northing, *s.Rotation, m)
	if err := t.Validate(); err != nil {
		return Transform{}, nil, fmt.Errorf("local grid: %w", err)
	}
	return t, nil, nil
}

// Grid is a declared local grid with its resolved transformation: what a
// project or a hole carries once its declaration has been checked.
type Grid struct {
	Spec Spec
	T    Transform
}

// NewGrid resolves a declaration into a Grid, with the fit when it came
// from control points (nil otherwise).
func NewGrid(s Spec) (*Grid, *Fit, error) {
	t, fit, err := s.Resolve()
	if err != nil {
		return nil, nil, err
	}
	return &Grid{Spec: s, T: t}, fit, nil
}

// LocalCRS is the crs label of a collar given in a local grid.
const LocalCRS = "local"

// IsLocal reports whether a collar's crs label says it is in its local grid
// ("local" in any case).
func IsLocal(crs string) bool { return strings.EqualFold(strings.TrimSpace(crs), LocalCRS) }

// Parse reads and checks a local grid declaration (JSON, the form of
// [Spec]): unknown fields are errors, the transformation must resolve
// (parameters or at least two control points) and grid_crs must be a
// projected grid corvane can place collars in, so that azimuths can be
// carried on to true north. A project's setting, a hole's, a collars
// file's local_grid cell and the CLI's --local-grid file all obey it.
func Parse(doc []byte) (*Grid, *Fit, error) {
	var spec Spec
	dec := json.NewDecoder(bytes.NewReader(doc))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&spec); err != nil {
		return nil, nil, fmt.Errorf("local grid: not a local grid declaration: %v", err)
	}
	if dec.More() {
		return nil, nil, errors.New("local grid: more than one declaration")
	}
	g, fit, err := NewGrid(spec)
	if err != nil {
		return nil, nil, err
	}
	if _, err := northref.ParseCRS(spec.GridCRS); err != nil {
		return nil, nil, fmt.Errorf("local grid: grid_crs: %v", err)
	}
	return g, fit, nil
}

// JSON returns the declaration in canonical form (as stored and exported).
func (g *Grid) JSON() []byte {
	b, _ := json.Marshal(g.Spec) // plain fields: cannot fail
	return b
}
