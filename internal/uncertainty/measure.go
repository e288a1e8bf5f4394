package uncertainty

import (
	"errors"
	"math"
	"math/rand/v2"
	"sync"

	"corvane/internal/coreangle"
	"corvane/internal/geom"
)

// Sigmas are the standard errors of one measurement's sources, in degrees.
type Sigmas struct {
	Alpha   float64 `json:"alpha"` // reading, rounding included
	Beta    float64 `json:"beta"`  // reading, rounding included; the mark is separate
	Gamma   float64 `json:"gamma"`
	Mark    float64 `json:"mark"` // the run's orientation mark (shared by the run)
	Azimuth float64 `json:"azimuth"`
	Dip     float64 `json:"dip"` // survey (shared by the survey interval)
}

// Sigmas returns the standard errors of a measurement logged in a run rated
// confidence with the logged mismatch (NaN when none), in a hole interval
// surveyed by instrument k, by a logger whose readings carry the extra
// rounding standard deviation rounding (see [RoundingSD]; 0 for none).
func (m Model) Sigmas(k Instrument, confidence string, mismatch, rounding float64) Sigmas {
	f := m.WithDefaults()
	sv := f.survey(k)
	s := Sigmas{Alpha: f.Alpha, Beta: f.Beta, Gamma: f.Gamma, Mark: f.mark(confidence, mismatch), Azimuth: sv.Azimuth, Dip: sv.Dip}
	if rounding == 0 { // math.Hypot(x, 0) is |x|
		s.Alpha, s.Beta, s.Gamma = math.Abs(s.Alpha), math.Abs(s.Beta), math.Abs(s.Gamma)
	} else {
		s.Alpha, s.Beta, s.Gamma = math.Hypot(s.Alpha, rounding), math.Hypot(s.Beta, rounding), math.Hypot(s.Gamma, rounding)
	}
	return s
}

// Reading is one measurement as logged on the core, where it lies, and its
// errors: everything [Measure] needs.
type Reading struct {
	Hole  geom.Vec3 // unit down-hole direction of the hole at the depth
	Alpha float64
	Beta  float64
	Gamma float64 // NaN when the measurement has no lineation
	Conv  coreangle.Convention
	Sigma Sigmas
}

// ErrVertical is returned for a measurement in a vertical hole, which has no
// reference line: its dip direction is unknown, not uncertain.
var ErrVertical = errors.New("uncertainty: vertical hole, the measurement has no dip direction")

// MC sets the Monte Carlo run: Draws per measurement (0 skips Monte Carlo)
// and the seed; with the same seed the results are the same on every run.
// With WhenNeeded, a measurement gets its Monte Carlo run only where
// first-order propagation is known to be unreliable ([NeedsMonteCarlo]);
// otherwise every measurement gets one.
type MC struct {
	Draws      int    `json:"draws"`
	Seed       uint64 `json:"seed"`
	WhenNeeded bool   `json:"when_needed"`
}

// NearAxisFactor is the rule of [NeedsMonteCarlo]: first-order
// propagation is taken as unreliable for a direction lying within
// NearAxisFactor times its first-order long semi-axis of the core axis. There
// the region wraps round the axis or crosses it (an alpha near 90 for a
// pole): the small circle it follows is too tight for a linear
// approximation. Away from the axis the region coordinates follow the core
// axis, so even large mark errors stay linear in them. Tested in
// TestRuleFindsWhereFirstOrderFails: where the rule keeps first order, a
// Monte Carlo run of 4,000 draws agrees with it within [Agreement] over a
// sweep of holes, angles and error models (mark errors up to 60 degrees).
const NearAxisFactor = 1.5

// NeedsMonteCarlo reports whether the first-order region fo of a direction
// lying phi degrees from the core axis (0..90, either end) is known to be
// unreliable (see [NearAxisFactor]).
func NeedsMonteCarlo(phi float64, fo Region) bool {
	return phi < NearAxisFactor*fo.Long95
}

// Region is a 95% region around a measured pole or line.
type Region struct {
	// Cone95 is the half-angle, degrees, of the cone around the measured
	// direction that holds 95%.
	Cone95 float64 `json:"cone_95"`
	// Long95 and Short95 are the semi-axes, degrees of arc, of the 95%
	// elongated region; Area95 its area in square degrees (pi Long Short).
	Long95  float64 `json:"long_95"`
	Short95 float64 `json:"short_95"`
	Area95  float64 `json:"area_95"`
	// Orientation is the angle, degrees, of the long axis from the
	// along-circle direction (0: the region lies along the small circle the
	// direction sweeps about the core axis; 90: across it).
	Orientation float64 `json:"orientation"`

	cuu, cuv, cvv float64 // covariance of the region coordinates, deg^2
	q             float64 // squared Mahalanobis radius holding 95%
}

// Estimate is the uncertainty of one measured direction (a pole or a line).
// Its methods (InCone, InRegion, Boundary) need the estimate as [Measure]
// returned it; one decoded from JSON carries the figures only.
type Estimate struct {
	Trend  float64 `json:"trend"` // the measured direction, lower hemisphere
	Plunge float64 `json:"plunge"`
	// Shape is "curved" (the region follows the small circle about the core
	// axis) or "ellipse" (a direction within 10 degrees of the core axis,
	// where turning the core barely moves it: an ellipse in the tangent
	// plane).
	Shape      string  `json:"shape"`
	FirstOrder Region  `json:"first_order"`
	MonteCarlo *Region `json:"monte_carlo,omitempty"`
	Draws      int     `json:"draws"`
	// Used is "first-order" when no Monte Carlo was run or the two cones and
	// both semi-axes agree within [Agreement]; "monte-carlo" when they do not
	// (the errors are too large for the linear approximation) or when
	// [NeedsMonteCarlo] says first order is unreliable here.
	Used string `json:"used"`

	cs coords
}

// Agreement is the relative difference of the first-order and Monte Carlo
// regions up to which the first-order region is used (see [Agrees]).
const Agreement = 0.10

// Agrees reports whether the first-order region fo agrees with the Monte
// Carlo region mc: cones within Agreement of the Monte Carlo cone, and each
// semi-axis within Agreement of the Monte Carlo long semi-axis (a short
// semi-axis of a degree beside a long one of twenty is not held to 10% of
// itself: its error is a small part of the region's size).
func Agrees(fo, mc Region) bool {
	return math.Abs(fo.Cone95-mc.Cone95) <= Agreement*mc.Cone95 && math.Abs(fo.Long95-mc.Long95) <= Agreement*mc.Long95 &&
		math.Abs(fo.Short95-mc.Short95) <= Agreement*mc.Long95
}

// Result is the uncertainty of a measurement's pole and, when it has one, of
// its lineation.
type Result struct {
	Pole Estimate  `json:"pole"`
	Line *Estimate `json:"line,omitempty"`
}

// Region returns the region in use (see [Estimate.Used]).
func (e *Estimate) Region() Region {
	if e.Used == "monte-carlo" && e.MonteCarlo != nil {
		return *e.MonteCarlo
	}
	return e.FirstOrder
}

// InCone reports whether the axis v (world frame, either end) lies inside the
// cone of the region in use.
func (e *Estimate) InCone(v geom.Vec3) bool {
	return geom.AxialAngle(v, e.cs.world(e.cs.v0)) <= e.Region().Cone95
}

// InRegion reports whether the axis v (world frame, either end) lies inside
// the elongated region in use.
func (e *Estimate) InRegion(v geom.Vec3) bool {
	r := e.Region()
	u, w := e.cs.of(e.cs.frameOf(v))
	return r.mahal(u, w) <= r.q
}

// Boundary returns n points around the elongated region in use, lower
// hemisphere, for drawing on a net.
func (e *Estimate) Boundary(n int) []geom.Line {
	out := make([]geom.Line, n)
	for i, v := range e.Outline(n) {
		out[i] = geom.LineOf(v)
	}
	return out
}

// Outline returns n unit vectors (world frame) around the elongated region
// in use, continuous around it: a region that crosses the horizontal keeps
// its points on one side of the measured direction's end instead of
// folding them to the lower hemisphere (see [Estimate.Boundary]).
func (e *Estimate) Outline(n int) []geom.Vec3 {
	r := e.Region()
	a, b, th := r.axes()
	out := make([]geom.Vec3, n)
	st, ct := math.Sincos(th)
	for i := range out {
		s, c := math.Sincos(2 * math.Pi * float64(i) / float64(n))
		x, y := a*c, b*s
		out[i] = e.cs.world(e.cs.inv(x*ct-y*st, x*st+y*ct))
	}
	return out
}

func (r Region) mahal(u, v float64) float64 {
	det := r.cuu*r.cvv - r.cuv*r.cuv
	if !(det > 0) {
		return math.Inf(1)
	}
	return (r.cvv*u*u - 2*r.cuv*u*v + r.cuu*v*v) / det
}

// axes returns the semi-axes of the 95% ellipse and the angle (radians) of
// the long one from the u axis.
func (r Region) axes() (long, short, theta float64) {
	l1, l2 := eigen(r.cuu, r.cuv, r.cvv)
	return r.axesOf(l1, l2)
}

// axesOf is axes given the eigenvalues l1 >= l2 of r's covariance.
func (r Region) axesOf(l1, l2 float64) (long, short, theta float64) {
	theta = 0.5 * math.Atan2(2*r.cuv, r.cuu-r.cvv)
	return math.Sqrt(r.q * l1), math.Sqrt(r.q * l2), theta
}

// eigen returns the eigenvalues l1 >= l2 >= 0 of the covariance (a, b; b,
// c).
func eigen(a, b, c float64) (l1, l2 float64) {
	tr, det := a+c, a*c-b*b
	d := math.Sqrt(math.Max(0, tr*tr/4-det))
	return tr/2 + d, math.Max(0, tr/2-d)
}

// finish sets the elongated region's figures from its covariance and q.
func (r *Region) finish() {
	l1, l2 := eigen(r.cuu, r.cuv, r.cvv)
	r.finishOf(l1, l2)
}

// finishCone sets Cone95 to cone95 of r's covariance and finishes r, with
// one eigen decomposition for both.
func (r *Region) finishCone() {
	l1, l2 := eigen(r.cuu, r.cuv, r.cvv)
	r.Cone95 = coneOfEigen(l1, l2)
	r.finishOf(l1, l2)
}

// finishOf is finish given the eigenvalues of r's covariance.
func (r *Region) finishOf(l1, l2 float64) {
	a, b, th := r.axesOf(l1, l2)
	r.Long95, r.Short95, r.Area95 = a, b, math.Pi*a*b
	o := math.Abs(geom.Deg(th))
	if o > 90 {
		o = 180 - o
	}
	r.Orientation = o
}

// chi2q95 is the 0.95 quantile of the chi-square distribution with 2
// degrees of freedom, -2 ln 0.05.
var chi2q95 = -2 * math.Log(0.05)

// coneOf returns the radius, degrees, of the circle about the centre that
// holds probability p of a centred bivariate normal with covariance (a, b; b,
// c) in deg^2. With the eigenvalues l1 >= l2 and the direction at eccentric
// angle t written (sqrt(l1) cos t, sqrt(l2) sin t)/rho(t) in the eigenbasis,
// rho^2 = l1 cos^2 t + l2 sin^2 t, the probability inside radius r is
// (1/2pi) * integral over t of (1 - exp(-r^2 / (2 rho^2))) dt (polar
// integration of the density, then the change of variable). The integrand
// is smooth and periodic whatever the elongation, so the trapezoid rule on
// 64 points is accurate to rounding; r is found by Newton's method inside a
// bisection bracket. It is the exact computation behind cone95's table.
func coneOf(a, b, c, p float64) float64 {
	l1, l2 := eigen(a, b, c)
	if !(l1 > 0) {
		return 0
	}
	const m = 64
	var inv [m]float64 // 1/(2 rho^2)
	for i := range inv {
		s, co := math.Sincos(2 * math.Pi * float64(i) / m)
		inv[i] = 1 / (2 * (l1*co*co + l2*s*s))
	}
	// Newton's method on P(r) - p, P increasing and concave for r above
	// its inflection; kept inside a bisection bracket.
	lo, hi := 0.0, math.Sqrt(l1*40)
	r := math.Sqrt(l1+l2) * 1.96
	for i := 0; i < 100; i++ {
		var pr, dp float64
		for _, q := range inv {
			e := math.Exp(-r * r * q)
			pr += 1 - e
			dp += 2 * r * q * e
		}
		pr, dp = pr/m-p, dp/m
		if pr < 0 {
			lo = r
		} else {
			hi = r
		}
		next := r - pr/dp
		if !(next > lo && next < hi) {
			next = (lo + hi) / 2
		}
		if math.Abs(next-r) < 1e-10*r {
			return next
		}
		r = next
	}
	return r
}

// cone95 is coneOf(a, b, c, 0.95), read from a table instead of solved:
// the radius scales with the square root of the long eigenvalue l1 and
// otherwise depends on the ratio k = l2/l1 in [0, 1] alone, so it is
// sqrt(l1) g(k) with g tabulated once (coneOf at 257 evenly spaced k) and
// read by cubic interpolation through the four nearest entries; off the
// exact integral by less than 2e-10 relative (TestCone95Table).
func cone95(a, b, c float64) float64 {
	return coneOfEigen(eigen(a, b, c))
}

// coneOfEigen is cone95 given the eigenvalues l1 >= l2 of the covariance.
func coneOfEigen(l1, l2 float64) float64 {
	if !(l1 > 0) {
		return 0
	}
	return math.Sqrt(l1) * coneShape(math.Min(1, l2/l1))
}

// coneTableN is the number of intervals of the table of coneShape.
const coneTableN = 256

var coneTable struct {
	once sync.Once
	g    [coneTableN + 1]float64
}

// coneShape returns the 95% radius of the bivariate normal with
// eigenvalues 1 and k (0 <= k <= 1) by cubic (four-point Lagrange)
// interpolation in the table.
func coneShape(k float64) float64 {
	t := &coneTable
	t.once.Do(func() {
		for i := range t.g {
			t.g[i] = coneOf(1, 0, float64(i)/coneTableN, 0.95)
		}
	})
	x := k * coneTableN
	i := max(0, min(int(x)-1, coneTableN-3))
	f := x - float64(i) - 1 // position from the second of the four points
	p0, p1, p2, p3 := t.g[i], t.g[i+1], t.g[i+2], t.g[i+3]
	return -f*(f-1)*(f-2)/6*p0 + (f+1)*(f-1)*(f-2)/2*p1 - (f+1)*f*(f-2)/2*p2 + (f+1)*f*(f-1)/6*p3
}

// frame is the frame (e1, e2, e3) = (r, h x r, h) of a measured hole: r
// the reference line, h the down-hole direction.
type frame [3]geom.Vec3

// of returns the world vector v in frame coordinates.
func (f *frame) of(v geom.Vec3) geom.Vec3 {
	return geom.Vec3{X: v.Dot(f[0]), Y: v.Dot(f[1]), Z: v.Dot(f[2])}
}

// world returns the frame vector v in world coordinates.
func (f *frame) world(v geom.Vec3) geom.Vec3 {
	return geom.Vec3{X: f[0].X*v.X + f[1].X*v.Y + f[2].X*v.Z, Y: f[0].Y*v.X + f[1].Y*v.Y + f[2].Y*v.Z,
		Z: f[0].Z*v.X + f[1].Z*v.Y + f[2].Z*v.Z}
}

// model holds a measurement's exact transform from its errors to its pole
// and line, in the frame of the measured hole.
type model struct {
	frame          frame
	sa, ca, sb, cb float64 // nominal alpha and beta
	apex           float64 // +1: beta to the down-hole apex; -1 up-hole
	sg, cg         float64 // nominal gamma, sign of the sense applied
	hasGamma       bool
	// The survey rotation axes in frame coordinates: kD = (0, dY, 0) and
	// kA = (aX, 0, aZ) (see init).
	dY, aX, aZ float64
	sig        [5]float64
}

// kD and kA return the survey rotation axes in frame coordinates.
func (m *model) kD() geom.Vec3 { return geom.Vec3{Y: m.dY} }
func (m *model) kA() geom.Vec3 { return geom.Vec3{X: m.aX, Z: m.aZ} }

func newModel(r Reading) (*model, error) {
	m := new(model)
	if err := m.init(r); err != nil {
		return nil, err
	}
	return m, nil
}

// init sets m to the model of r (a set's members share one slice of them).
func (m *model) init(r Reading) error {
	if err := m.initFrame(r); err != nil {
		return err
	}
	m.sig = r.Sigma.radians()
	return nil
}

// initFrame is init but for the standard errors.
func (m *model) initFrame(r Reading) error {
	h := r.Hole.Unit()
	ref, w := coreangle.Reference(h, r.Conv)
	if w.Has(coreangle.Vertical) {
		return ErrVertical
	}
	*m = model{frame: frame{ref, h.Cross(ref), h}, apex: 1, hasGamma: !math.IsNaN(r.Gamma)}
	if r.Conv.BetaApex == coreangle.UpHole {
		m.apex = -1
	}
	m.sa, m.ca = math.Sincos(geom.Rad(r.Alpha))
	m.sb, m.cb = math.Sincos(geom.Rad(r.Beta))
	if m.hasGamma {
		g := r.Gamma
		if r.Conv.GammaSense == coreangle.Anticlockwise {
			g = -g
		}
		m.sg, m.cg = math.Sincos(geom.Rad(g))
	}
	// Dip error: the hole turns in its vertical plane, about the horizontal
	// axis h x up (a positive turn lifts h: the dip grows). Azimuth error: the
	// hole turns about the vertical, clockwise seen from above, which is a
	// negative right-handed turn about up. Both turn the whole frame, since
	// the reference line is fixed by gravity and h. The reference line
	// lies in the vertical plane through h, so h x up is along e2 and up
	// has no e2 component: the axes are kD = (0, +-1, 0) and kA = (aX, 0,
	// aZ) in frame coordinates, which evalSC's turns use (they are exactly
	// so up to rounding, 2e-16).
	// kD is h x up = (h.Y, -h.X, 0) scaled to unit length, of which only
	// the sign of the e2 component is kept; kA = -up has the components
	// -r.Z, -(h x r).Z and -h.Z.
	m.dY = math.Copysign(1, h.Y*m.frame[1].X-h.X*m.frame[1].Y)
	m.aX, m.aZ = -ref.Z, -h.Z
	return nil
}

// init sets sc.m to the model of r, reusing the standard errors in
// radians of the reading before when r has the same (a run's, an
// interval's: most rows of a file).
func (sc *scratch) init(r Reading) error {
	if err := sc.m.initFrame(r); err != nil {
		return err
	}
	if !sc.sigOK || r.Sigma != sc.sigOf {
		sc.sig, sc.sigOf, sc.sigOK = r.Sigma.radians(), r.Sigma, true
	}
	sc.m.sig = sc.sig
	return nil
}

// radians returns the standard errors in radians in the order of the
// model's sources (the beta reading's and the mark's together).
func (s Sigmas) radians() [5]float64 {
	return [5]float64{geom.Rad(s.Alpha), geom.Rad(math.Hypot(s.Beta, s.Mark)), geom.Rad(s.Gamma), geom.Rad(s.Azimuth), geom.Rad(s.Dip)}
}

// nominal returns the pole and line of no errors (eval(0, 0, 0, 0, 0)).
func (m *model) nominal() (n, l geom.Vec3) {
	t := [10]float64{1: 1, 3: 1, 5: 1, 7: 1, 9: 1} // the sines and cosines of 0
	return m.evalSC(&t)
}

func (m *model) frameOf(v geom.Vec3) geom.Vec3 { return m.frame.of(v) }
func (m *model) world(v geom.Vec3) geom.Vec3   { return m.frame.world(v) }

// eval returns the pole (the normal with a down-hole component for the
// nominal angles) and the line, in frame coordinates, for the errors in
// radians: alpha, beta (reading and mark), gamma, survey azimuth, survey dip.
func (m *model) eval(da, db, dg, dA, dD float64) (n, l geom.Vec3) {
	var t [10]float64
	for k, d := range [5]float64{da, db, dg, dA, dD} {
		t[2*k], t[2*k+1] = sincos(d)
	}
	return m.evalSC(&t)
}

// evalSC is eval from the sines and cosines of the errors, in the order
// alpha, beta, gamma, azimuth, dip.
func (m *model) evalSC(t *[10]float64) (n, l geom.Vec3) {
	n, l = m.evalCore(t)
	if s, c := t[8], t[9]; s != 0 {
		n = m.turnD(n, s, c)
		if m.hasGamma {
			l = m.turnD(l, s, c)
		}
	}
	if s, c := t[6], t[7]; s != 0 {
		n = m.turnA(n, s, c)
		if m.hasGamma {
			l = m.turnA(l, s, c)
		}
	}
	return n, l
}

// evalCore is evalSC without the survey turns: the pole and line in the
// frame of the hole as surveyed.
func (m *model) evalCore(t *[10]float64) (n, l geom.Vec3) {
	s, c := t[0], t[1]
	sa, ca := m.sa*c+m.ca*s, m.ca*c-m.sa*s
	s, c = t[2], t[3]
	sb, cb := m.sb*c+m.cb*s, m.cb*c-m.sb*s
	// d = apex (cos b, sin b, 0); n = sin a h - cos a d.
	d := geom.Vec3{X: m.apex * cb, Y: m.apex * sb}
	n = geom.Vec3{X: -ca * d.X, Y: -ca * d.Y, Z: sa}
	if m.hasGamma {
		e := geom.Vec3{X: -sa * n.X, Y: -sa * n.Y, Z: 1 - sa*n.Z} // h - (h.n) n
		if en := e.Norm(); en < 1e-12 {
			e = d
		} else {
			e = e.Scale(1 / en)
		}
		s, c = t[4], t[5]
		sg, cg := m.sg*c+m.cg*s, m.cg*c-m.sg*s
		l = e.Scale(cg).Add(n.Cross(e).Scale(sg))
	}
	return n, l
}

// turnD turns v about kD = (0, dY, 0) by the angle of sine s and cosine c:
// Rodrigues' formula with the zero components left out.
func (m *model) turnD(v geom.Vec3, s, c float64) geom.Vec3 {
	s *= m.dY
	return geom.Vec3{X: v.X*c + v.Z*s, Y: v.Y, Z: v.Z*c - v.X*s}
}

// turnA turns v about kA = (aX, 0, aZ), as turnD.
func (m *model) turnA(v geom.Vec3, s, c float64) geom.Vec3 {
	kv := (m.aX*v.X + m.aZ*v.Z) * (1 - c)
	return geom.Vec3{X: v.X*c - m.aZ*v.Y*s + m.aX*kv, Y: v.Y*c + (m.aZ*v.X-m.aX*v.Z)*s, Z: v.Z*c + m.aX*v.Y*s + m.aZ*kv}
}

// coords are the region coordinates around a nominal direction v0 (frame
// coordinates, down-hole): in the curved shape u = (rotation about the core
// axis) x sin(angle from the axis at v0) and v = change of the angle from the
// axis, both degrees of arc at v0; in the ellipse shape the tangent-plane
// angles along two perpendicular directions.
type coords struct {
	frame    frame // of the measured hole
	v0       geom.Vec3
	phiDeg   float64 // angle of v0 from the core axis, degrees (0..90)
	curved   bool
	c0, s0   float64 // cos, sin of the angle of v0 from the axis
	cp, sp   float64 // cos, sin of v0's rotation about the axis
	t1, t2   geom.Vec3
	sinPhiDg float64 // sin(phi0) in degrees of arc per radian
}

// minCurvedAngle is the angle from the core axis, degrees, below which a
// region is an ellipse in the tangent plane.
const minCurvedAngle = 10.0

func newCoords(m *model, v0 geom.Vec3) coords {
	if v0.Z < 0 {
		v0 = v0.Neg()
	}
	c := coords{frame: m.frame, v0: v0}
	// Tangent basis, kept for the ellipse shape: t1 along increasing
	// rotation about the axis where it is defined, any perpendicular
	// otherwise.
	a := geom.Vec3{X: -v0.Y, Y: v0.X}
	if a.Norm() < 1e-6 {
		a = geom.Vec3{Y: 1}
	}
	c.t1 = a.Sub(v0.Scale(a.Dot(v0))).Unit()
	c.t2 = v0.Cross(c.t1)
	rho := math.Hypot(v0.X, v0.Y)
	c.phiDeg = geom.Deg(math.Atan2(rho, v0.Z))
	if c.phiDeg >= minCurvedAngle {
		// The sine and cosine of phi are rho and v0.Z: v0 is a unit
		// vector (to rounding).
		c.curved = true
		c.s0, c.c0 = rho, v0.Z
		c.cp, c.sp = v0.X/rho, v0.Y/rho
		c.sinPhiDg = geom.Deg(c.s0)
	}
	return c
}

func (c *coords) frameOf(v geom.Vec3) geom.Vec3 { return c.frame.of(v) }

// phi returns the angle, degrees (0..90), of the nominal direction from the
// core axis.
func (c *coords) phi() float64                { return c.phiDeg }
func (c *coords) world(v geom.Vec3) geom.Vec3 { return c.frame.world(v) }

// of returns the region coordinates, degrees, of the axis v (frame
// coordinates, either end).
func (c *coords) of(v geom.Vec3) (u, w float64) {
	d := v.Dot(c.v0)
	if d < 0 {
		v, d = v.Neg(), -d
	}
	return c.ofNear(v, d)
}

// ofNear is of for a unit vector v on v0's side, d = v . v0 >= 0.
func (c *coords) ofNear(v geom.Vec3, d float64) (u, w float64) {
	if c.curved {
		// With rho = sin(phi) and z = cos(phi): X = rho cos dpsi, Y = rho
		// sin dpsi, and sin dphi, cos dphi by the difference formulas.
		rho := math.Sqrt(v.X*v.X + v.Y*v.Y)
		x, y := v.X*c.cp+v.Y*c.sp, v.Y*c.cp-v.X*c.sp
		sd, cd := rho*c.c0-v.Z*c.s0, v.Z*c.c0+rho*c.s0
		if x > 0 && cd > 0 {
			if sp := y / rho; sp*sp < small2 && sd*sd < small2 {
				return asinSeries(sp) * c.sinPhiDg, geom.Deg(asinSeries(sd))
			}
			return asin(y/rho) * c.sinPhiDg, geom.Deg(asin(sd))
		}
		return math.Atan2(y, x) * c.sinPhiDg, geom.Deg(math.Atan2(sd, cd))
	}
	// atan2(y, d) = atan(y/d) for d > 0 (d = 0, a draw at right angles to
	// v0, gives +-90 degrees by either).
	id := 1 / d
	a, b := v.Dot(c.t1)*id, v.Dot(c.t2)*id
	if a*a < small2 && b*b < small2 {
		return geom.Deg(atanSeries(a)), geom.Deg(atanSeries(b))
	}
	return geom.Deg(atan(a)), geom.Deg(atan(b))
}

// inv is the inverse of of: the unit vector (frame coordinates) at region
// coordinates u, w.
func (c *coords) inv(u, w float64) geom.Vec3 {
	if c.curved {
		psi := math.Atan2(c.sp, c.cp) + geom.Rad(u)/c.s0
		phi := math.Atan2(c.s0, c.c0) + geom.Rad(w)
		sf, cf := math.Sincos(phi)
		sp, cp := math.Sincos(psi)
		return geom.Vec3{X: sf * cp, Y: sf * sp, Z: cf}
	}
	return c.v0.Add(c.t1.Scale(math.Tan(geom.Rad(u)))).Add(c.t2.Scale(math.Tan(geom.Rad(w)))).Unit()
}

// gradients returns the gradients, degrees of the region coordinates per
// unit change of a vector at v0 (frame coordinates), of the two region
// coordinates: the derivatives of of at v0.
func (c *coords) gradients() (du, dw geom.Vec3) {
	if c.curved {
		d := geom.Deg(1)
		return geom.Vec3{X: -c.sp * d, Y: c.cp * d}, geom.Vec3{X: c.c0 * c.cp * d, Y: c.c0 * c.sp * d, Z: -c.s0 * d}
	}
	return c.t1.Scale(geom.Deg(1)), c.t2.Scale(geom.Deg(1))
}

// firstOrder returns the first-order region of the direction picked by
// which (0 pole, 1 line) of the nominal pole n and line l: the derivatives
// of the direction (partials) read in the region coordinates through their
// gradients at the direction.
func (m *model) firstOrder(n, l geom.Vec3, cs *coords, which int) Region {
	v, g := m.partials(n, l, which)
	du, dw := cs.gradients()
	if v.Dot(cs.v0) < 0 { // the region coordinates read the other end
		du, dw = du.Neg(), dw.Neg()
	}
	var r Region
	for k := 0; k < 5; k++ {
		ju, jw := g[k].Dot(du)*m.sig[k], g[k].Dot(dw)*m.sig[k]
		r.cuu += ju * ju
		r.cuv += ju * jw
		r.cvv += jw * jw
	}
	r.q = chi2q95
	r.finishCone()
	return r
}

// partials returns the direction picked by which (0 pole, 1 line) of the
// nominal pole n and line l (frame coordinates, m.eval of no errors) and its
// derivatives with respect to each error source in radians (0 alpha, 1 beta
// and mark, 2 gamma, 3 survey azimuth, 4 survey dip): the exact Jacobian
// behind every first-order figure, of a measurement (firstOrder) and of a
// set's mean (FirstOrderTerms). Each source turns the direction about an axis, so each
// derivative is that axis crossed with the direction: alpha turns the plane
// (and the line on it) about the line w of the plane perpendicular to the
// core axis, beta and the mark turn both about the core axis h, gamma turns
// the line about the pole, the survey errors turn the whole hole frame
// about kA and kD (see init).
func (m *model) partials(n, l geom.Vec3, which int) (v geom.Vec3, g [5]geom.Vec3) {
	v = n
	if which == 1 {
		v = l
	}
	w := geom.Vec3{X: -m.apex * m.sb, Y: m.apex * m.cb} // n x e, e the down-dip line of the plane in evalSC
	h := geom.Vec3{Z: 1}
	g[0] = w.Cross(v)
	g[1] = h.Cross(v)
	if which == 1 {
		g[2] = n.Cross(v)
	}
	g[3] = m.kA().Cross(v)
	g[4] = m.kD().Cross(v)
	return v, g
}

func pick(n, l geom.Vec3) func(int) geom.Vec3 {
	return func(i int) geom.Vec3 {
		if i == 1 {
			return l
		}
		return n
	}
}

// Normals are the standard normal draws of a Monte Carlo run, one row of
// five (alpha, beta, gamma, azimuth, dip) per draw. Every measurement of a
// run uses the same rows (common random numbers): each measurement's result
// is an ordinary Monte Carlo estimate, reproducible from the seed, and the
// sines and cosines of the scaled errors can be shared by all measurements
// with the same standard errors.
type normals [][5]float64

func newNormals(mc MC) normals {
	r := rand.New(rand.NewPCG(mc.Seed, 0x636f7276616e65)) // stream: "corvane"
	z := make(normals, mc.Draws)
	for j := range z {
		for k := range z[j] {
			z[j][k] = r.NormFloat64()
		}
	}
	return z
}

// table is the sines and cosines of the errors sig (radians) times the
// normals, per draw.
type table [][10]float64

func (z normals) table(sig [5]float64, t table) table {
	if cap(t) < len(z) {
		t = make(table, len(z))
	}
	t = t[:len(z)]
	for j := range z {
		for k := 0; k < 5; k++ {
			t[j][2*k], t[j][2*k+1] = sincos(sig[k] * z[j][k])
		}
	}
	return t
}

// scratch holds one worker's Monte Carlo buffers and a cache of tables by
// standard errors.
type scratch struct {
	m model // the measurement's
	// sig is sigOf in radians (sigOK: set), as the model holds them.
	sig   [5]float64
	sigOf Sigmas
	sigOK bool
	z     normals
	// whenNeeded: run the Monte Carlo only where NeedsMonteCarlo says so.
	whenNeeded bool
	u, w       [2][]float64   // the draws' region coordinates, radians
	dirs       [2][]geom.Vec3 // the draws' poles and lines, survey frame
	c          [2][]float64   // 1 - |cos| of the angle from the measured direction
	sel        []float64
	// tables are the tables of the draws' sines and cosines by standard
	// errors, shared by every scratch of one run (the forks of a Measurer,
	// the workers of MeasureAll); spare is this scratch's own for standard
	// errors past maxTables.
	tables *tables
	spare  table
}

// maxTables bounds the tables a run keeps (80 kB each at 1,000 draws).
const maxTables = 64

// tables are tables by standard errors, safe for concurrent use; a table
// is never written once stored.
type tables struct {
	mu sync.Mutex
	m  map[[5]float64]table
}

// tableFor returns the table of the standard errors sig: the stored one,
// else a new one, stored while there is room (else made in sc.spare).
func (sc *scratch) tableFor(sig [5]float64) table {
	if sc.tables == nil {
		sc.tables = new(tables)
	}
	ts := sc.tables
	ts.mu.Lock()
	t, ok := ts.m[sig]
	full := len(ts.m) >= maxTables
	ts.mu.Unlock()
	if ok {
		return t
	}
	if full {
		sc.spare = sc.z.table(sig, sc.spare)
		return sc.spare
	}
	t = sc.z.table(sig, nil) // outside the lock: 5,000 sines and cosines
	ts.mu.Lock()
	defer ts.mu.Unlock()
	if old, ok := ts.m[sig]; ok { // made meanwhile by another scratch
		return old
	}
	if ts.m == nil {
		ts.m = map[[5]float64]table{}
	}
	if len(ts.m) < maxTables {
		ts.m[sig] = t
	}
	return t
}

// Measure returns the uncertainty of the pole and (when r.Gamma is not NaN)
// the lineation of one measurement, first order and, when mc.Draws > 0, by
// Monte Carlo. It returns [ErrVertical] in a vertical hole. Measure gives the
// same result as [MeasureAll] with the same mc.
func Measure(r Reading, mc MC) (Result, error) {
	sc := scratch{whenNeeded: mc.WhenNeeded}
	if mc.Draws > 0 {
		sc.z = newNormals(mc)
	}
	return measure(r, &sc)
}

func measure(r Reading, sc *scratch) (Result, error) {
	m := &sc.m
	if err := sc.init(r); err != nil {
		return Result{}, err
	}
	n0, l0 := m.nominal()
	var res Result
	var cs [2]coords
	cs[0] = newCoords(m, n0)
	nd := 1
	if m.hasGamma {
		cs[1] = newCoords(m, l0)
		nd = 2
	}
	est := [2]Estimate{}
	var need [2]bool
	for i := 0; i < nd; i++ {
		e := &est[i]
		e.cs = cs[i]
		e.Shape = "ellipse"
		if cs[i].curved {
			e.Shape = "curved"
		}
		ln := geom.LineOf(m.world(cs[i].v0))
		e.Trend, e.Plunge = ln.Trend, ln.Plunge
		e.FirstOrder = m.firstOrder(n0, l0, &cs[i], i)
		e.Used = "first-order"
		need[i] = NeedsMonteCarlo(cs[i].phi(), e.FirstOrder)
	}
	if len(sc.z) > 0 && (!sc.whenNeeded || need[0] || need[1]) {
		mcRegions(m, cs[:nd], sc.tableFor(m.sig), sc, est[:nd])
		for i := 0; i < nd; i++ {
			if need[i] {
				est[i].Used = "monte-carlo"
			}
		}
	}
	res.Pole = est[0]
	if nd == 2 {
		l := est[1]
		res.Line = &l
	}
	return res, nil
}

// mcRegions gives est (the estimates of the directions with region
// coordinates cs) their Monte Carlo regions from the draws of tab.
//
// It works in the survey frame F = (f1, f2, f3) of the hole: f3 up and f2
// along kD, the horizontal axis of the dip error, both in the hole frame
// (f1 = f2 x f3). There the survey turns of every draw are turns about
// the y axis (dip) and the -z axis (azimuth): four products each, where
// the turn about the sloping kA takes fifteen in the hole frame. Each
// draw's pole (and line) is taken to F once; whatever is read of it
// afterwards is a dot product, whose vector is taken to F instead
// (mcDir). The region coordinates are kept in radians: the Mahalanobis
// radius does not depend on the unit and the covariance is scaled to
// degrees at the end.
func mcRegions(m *model, cs []coords, tab table, sc *scratch, est []Estimate) {
	nd, draws := len(cs), len(tab)
	for i := 0; i < nd; i++ {
		if cap(sc.u[i]) < draws {
			sc.u[i], sc.w[i], sc.c[i], sc.dirs[i] = make([]float64, draws), make([]float64, draws), make([]float64, draws), make([]geom.Vec3, draws)
		}
	}
	if cap(sc.sel) < draws {
		sc.sel = make([]float64, draws)
	}
	k := quantileRank(draws, 0.95)
	g := m.survey()
	if nd == 1 {
		g.poles(m, tab, sc.dirs[0][:draws])
	} else {
		g.polesLines(m, tab, sc.dirs[0][:draws], sc.dirs[1][:draws])
	}
	deg2 := geom.Deg(1) * geom.Deg(1)
	for i := 0; i < nd; i++ {
		e := &est[i]
		dir := g.dir(&cs[i])
		dir.coneGuess = 1 - math.Cos(geom.Rad(0.9*e.FirstOrder.Cone95))
		us, ws, cc := sc.u[i][:draws], sc.w[i][:draws], sc.c[i][:draws]
		var suu, suv, svv float64
		var ci float64 // the (1-based) k-th largest of cc
		if cs[i].curved {
			suu, suv, svv, ci = dir.curved(sc.dirs[i][:draws], us, ws, cc, sc.sel, k)
		} else {
			suu, suv, svv, ci = dir.ellipse(sc.dirs[i][:draws], us, ws, cc, sc.sel, k)
		}
		// The covariance in rad^2 (cr) for the Mahalanobis radius, and in
		// deg^2 for the region.
		cr := [3]float64{suu / float64(draws), suv / float64(draws), svv / float64(draws)}
		r := &Region{cuu: cr[0] * deg2, cuv: cr[1] * deg2, cvv: cr[2] * deg2}
		r.Cone95 = geom.Deg(math.Acos(math.Max(-1, math.Min(1, 1-ci))))
		r.q = chi2q95
		if det := cr[0]*cr[2] - cr[1]*cr[1]; det > 0 { // else every draw sits on a line or a point: no spread to scale
			r.q = mahalQuantile(us, ws, cr[2]/det, -2*cr[1]/det, cr[0]/det, k, 0.9*chi2q95, sc.sel, cc)
		}
		r.finish()
		e.MonteCarlo, e.Draws = r, draws
		if !Agrees(e.FirstOrder, *r) {
			e.Used = "monte-carlo"
		}
	}
}

// surveyFrame is the survey frame F of a hole (see mcRegions): the rows
// of the turn from hole-frame to F coordinates, f1 = (x1, 0, z1), f2 =
// (0, y2, 0), f3 = (x3, 0, z3).
type surveyFrame struct{ x1, z1, y2, x3, z3 float64 }

// survey returns the survey frame of m's hole. Its y axis is kD = (0, dY,
// 0) and its -z axis kA = (aX, 0, aZ) (see init), so the survey turns of
// evalSC are, in F, turns about (0, 1, 0) and (0, 0, -1).
func (m *model) survey() surveyFrame {
	return surveyFrame{x1: -m.dY * m.aZ, z1: m.dY * m.aX, y2: m.dY, x3: -m.aX, z3: -m.aZ}
}

// of returns the hole-frame vector v in F coordinates.
func (g *surveyFrame) of(v geom.Vec3) geom.Vec3 {
	return geom.Vec3{X: g.x1*v.X + g.z1*v.Z, Y: g.y2 * v.Y, Z: g.x3*v.X + g.z3*v.Z}
}

// turn applies a draw's survey turns (the dip error's, then the
// azimuth's, as evalSC) to v in F coordinates.
func turn(v geom.Vec3, t *[10]float64) geom.Vec3 {
	s, c := t[8], t[9]
	x, z := v.X*c+v.Z*s, v.Z*c-v.X*s
	s, c = t[6], t[7]
	return geom.Vec3{X: x*c + v.Y*s, Y: v.Y*c - x*s, Z: z}
}

// poles writes the pole of each draw of tab, in F coordinates, to ns: the
// pole of evalSC, (-cos a apex cos b, -cos a apex sin b, sin a) in the
// hole frame, taken to F with the apex and F's rows folded into the
// angle sums.
func (g *surveyFrame) poles(m *model, tab table, ns []geom.Vec3) {
	// P = -apex cos b, Q = -apex sin b y2 from the angle sums with the
	// nominal beta.
	pc, ps := -m.apex*m.cb, m.apex*m.sb
	qc, qs := -m.apex*m.sb*g.y2, -m.apex*m.cb*g.y2
	msa, mca := m.sa, m.ca
	for j := range tab {
		t := &tab[j]
		sa, ca := msa*t[1]+mca*t[0], mca*t[1]-msa*t[0]
		cp := ca * (pc*t[3] + ps*t[2])
		ns[j] = turn(geom.Vec3{X: g.x1*cp + g.z1*sa, Y: ca * (qc*t[3] + qs*t[2]), Z: g.x3*cp + g.z3*sa}, t)
	}
}

// polesLines writes the pole and the line of each draw of tab, in F
// coordinates, to ns and ls.
func (g *surveyFrame) polesLines(m *model, tab table, ns, ls []geom.Vec3) {
	for j := range tab {
		t := &tab[j]
		n, l := m.evalCore(t)
		ns[j], ls[j] = turn(g.of(n), t), turn(g.of(l), t)
	}
}

// mcDir reads a direction's draws (F coordinates): its region
// coordinates through three vectors taken to F.
type mcDir struct {
	// ellipse: a, b, c are v0, t1, t2; curved: the directions (cp, sp,
	// 0), (-sp, cp, 0) and the core axis.
	a, b, c   geom.Vec3
	c0, s0    float64 // curved: cos, sin of the angle of v0 from the axis
	coneGuess float64 // a value a little below the cone's 1 - cos
}

func (g *surveyFrame) dir(cs *coords) mcDir {
	if cs.curved {
		return mcDir{a: g.of(geom.Vec3{X: cs.cp, Y: cs.sp}), b: g.of(geom.Vec3{X: -cs.sp, Y: cs.cp}), c: g.of(geom.Vec3{Z: 1}), c0: cs.c0, s0: cs.s0}
	}
	return mcDir{a: g.of(cs.v0), b: g.of(cs.t1), c: g.of(cs.t2)}
}

// ellipse writes the region coordinates (radians) of the draws vs of an
// ellipse-shaped direction to us, ws and their 1 - |cos| of the angle from
// v0 to cc, and returns the sums of their squares and product and the
// k-th largest of cc (overwriting cc: it is scratch afterwards, as sel
// is).
func (d *mcDir) ellipse(vs []geom.Vec3, us, ws, cc, sel []float64, k int) (suu, suv, svv, ck float64) {
	a, b, c, guess := d.a, d.b, d.c, d.coneGuess
	us, ws, cc, sel = us[:len(vs)], ws[:len(vs)], cc[:len(vs)], sel[:len(vs)]
	n := 0
	for j, v := range vs {
		dd := v.X*a.X + v.Y*a.Y + v.Z*a.Z
		id := 1 / dd // either end: the signs cancel
		p, q := (v.X*b.X+v.Y*b.Y+v.Z*b.Z)*id, (v.X*c.X+v.Y*c.Y+v.Z*c.Z)*id
		var u, w float64
		if p*p < small2 && q*q < small2 {
			u, w = atanSeries(p), atanSeries(q)
		} else {
			u, w = atan(p), atan(q)
		}
		us[j], ws[j] = u, w
		suu += u * u
		suv += u * w
		svv += w * w
		x := 1 - math.Abs(dd)
		cc[j], sel[n] = x, x
		if x > guess {
			n++
		}
	}
	return suu, suv, svv, kthOf(cc, sel, n, k)
}

// curved is ellipse for a curved direction.
func (d *mcDir) curved(vs []geom.Vec3, us, ws, cc, sel []float64, k int) (suu, suv, svv, ck float64) {
	a, b, c, c0, s0, guess := d.a, d.b, d.c, d.c0, d.s0, d.coneGuess
	us, ws, cc, sel = us[:len(vs)], ws[:len(vs)], cc[:len(vs)], sel[:len(vs)]
	n := 0
	for j, v := range vs {
		// x, y: the direction in the plane across the core axis, along
		// and across v0's; z along the axis.
		x, y, z := v.X*a.X+v.Y*a.Y+v.Z*a.Z, v.X*b.X+v.Y*b.Y+v.Z*b.Z, v.X*c.X+v.Y*c.Y+v.Z*c.Z
		dd := s0*x + c0*z // v . v0
		if dd < 0 {
			x, y, z, dd = -x, -y, -z, -dd
		}
		// With rho = sin(phi) and z = cos(phi): x = rho cos dpsi, y = rho
		// sin dpsi, and sin dphi, cos dphi by the difference formulas.
		rho := math.Sqrt(x*x + y*y)
		sd, cd := rho*c0-z*s0, z*c0+rho*s0
		var u, w float64
		if x > 0 && cd > 0 {
			if sp := y / rho; sp*sp < small2 && sd*sd < small2 {
				u, w = asinSeries(sp), asinSeries(sd)
			} else {
				u, w = asinAt(sp, y, x), asin(sd)
			}
		} else {
			u, w = math.Atan2(y, x), math.Atan2(sd, cd)
		}
		u *= s0
		us[j], ws[j] = u, w
		suu += u * u
		suv += u * w
		svv += w * w
		x = 1 - dd
		cc[j], sel[n] = x, x
		if x > guess {
			n++
		}
	}
	return suu, suv, svv, kthOf(cc, sel, n, k)
}

// asinAt returns asin(s) as asin does, s = y/sqrt(x^2 + y^2) with x > 0:
// from 0.15 to 0.9 as atan(y/x), the same angle for a division where
// math.Asin takes a square root and two. Close to +-1 math.Asin's figure
// is kept: there it is off the angle by up to 1e-11 rad (rounding of s,
// magnified), which atan(y/x) is not, and the answers stay those of
// before. (The draws are unit vectors only to 1e-10, the precision of
// sincos: asin(sd) of sd = sin(dphi) |v| is not atan(sd/cd).)
func asinAt(s, y, x float64) float64 {
	switch s2 := s * s; {
	case s2 < small2:
		return asinSeries(s)
	case s2 < 0.81:
		return math.Atan(y / x)
	}
	return math.Asin(s)
}

// kthOf returns the k-th largest (1-based) of x given the first n values
// of sel, those of x above a guess (all of x's values of rank k or above
// when n >= k). x and sel are overwritten.
func kthOf(x, sel []float64, n, k int) float64 {
	if n >= k {
		return selectSplit(sel[:n], x, n-k)
	}
	sel = sel[:len(x)]
	copy(sel, x)
	return selectSplit(sel, x, len(x)-k)
}

// mahalQuantile returns the k-th largest (1-based) of the squared
// Mahalanobis radii a u^2 + b u w + c w^2 of the points (us, ws), first
// keeping those above guess in sel; all is scratch for when fewer than k
// are.
func mahalQuantile(us, ws []float64, a, b, c float64, k int, guess float64, sel, all []float64) float64 {
	ws, sel, all = ws[:len(us)], sel[:len(us)], all[:len(us)]
	n := 0
	for j, u := range us {
		w := ws[j]
		d2 := a*u*u + b*u*w + c*w*w
		sel[n] = d2
		if d2 > guess {
			n++
		}
	}
	if n >= k {
		return selectSplit(sel[:n], all, n-k)
	}
	for j, u := range us {
		w := ws[j]
		all[j] = a*u*u + b*u*w + c*w*w
	}
	return selectSplit(all, sel, len(us)-k)
}

// MeasureAll returns [Measure] for every reading, on at most workers
// goroutines (< 1 means one); the results do not depend on the number of
// workers. errs[i] is nil or reading i's error.
func MeasureAll(rs []Reading, mc MC, workers int) (out []Result, errs []error) {
	out = make([]Result, len(rs))
	errs = make([]error, len(rs))
	var z normals
	if mc.Draws > 0 {
		z = newNormals(mc)
	}
	workers = max(1, min(workers, len(rs)))
	done := make(chan struct{})
	chunk := (len(rs) + workers - 1) / workers
	ts := new(tables) // shared by the workers
	for w := 0; w < workers; w++ {
		lo, hi := w*chunk, min((w+1)*chunk, len(rs))
		go func() {
			defer func() { done <- struct{}{} }()
			sc := scratch{z: z, whenNeeded: mc.WhenNeeded, tables: ts}
			for i := lo; i < hi; i++ {
				out[i], errs[i] = measure(rs[i], &sc)
			}
		}()
	}
	for w := 0; w < workers; w++ {
		<-done
	}
	return out, errs
}

// PerMeasurement is the Monte Carlo run every door uses for per-measurement
// regions (convert output, API, export, preview, net): 1,000 draws and a
// fixed seed, so every door gives the same figures for the same
// measurement, run only where first order is known to be unreliable
// ([NeedsMonteCarlo]). [Always] gives the run for every measurement, when
// asked.
var PerMeasurement = MC{Draws: 1000, Seed: 12, WhenNeeded: true}

// Always returns mc with a Monte Carlo run for every measurement.
func Always(mc MC) MC {
	mc.WhenNeeded = false
	return mc
}

// Measurer measures one reading at a time with the normals of one Monte
// Carlo run, for callers that convert row by row (a CSV stream, a page of
// stored measurements). A Measurer is not safe for concurrent use; [Measurer.Fork]
// gives another that shares the normals. Its results equal [Measure]'s with
// the same MC.
type Measurer struct{ sc scratch }

// NewMeasurer draws the normals of mc once.
func NewMeasurer(mc MC) *Measurer {
	m := &Measurer{sc: scratch{whenNeeded: mc.WhenNeeded, tables: new(tables)}}
	if mc.Draws > 0 {
		m.sc.z = newNormals(mc)
	}
	return m
}

// Fork returns a Measurer with the same normals, buffers of its own, and
// the tables of the draws' sines and cosines shared with m and its other
// forks (safe for concurrent use).
func (m *Measurer) Fork() *Measurer {
	return &Measurer{sc: scratch{z: m.sc.z, whenNeeded: m.sc.whenNeeded, tables: m.sc.tables}}
}

// Measure is [Measure] for one reading.
func (m *Measurer) Measure(r Reading) (Result, error) { return measure(r, &m.sc) }
