package uncertainty

import (
	"math"

	"corvane/internal/coreangle"
	"corvane/internal/geom"
)

// The per-measurement path (Measure, Measurer.Measure) as it was before its
// fast paths, kept whole as the reference of TestMeasureMatchesReference:
// the hole frame and the survey turns about the axes as computed, each
// draw's direction then its region coordinates, every quantile by a full
// sort. It shares with the package only the small helpers it has always
// used and that have not changed (sincos, the arcsine series, cone95,
// quantileRank, Agrees, NeedsMonteCarlo): the answers must not move.

type oldModel struct {
	frame          frame
	sa, ca, sb, cb float64
	apex           float64
	sg, cg         float64
	hasGamma       bool
	dY, aX, aZ     float64
	sig            [5]float64
}

func (m *oldModel) init(r Reading) error {
	h := r.Hole.Unit()
	ref, w := coreangle.Reference(h, r.Conv)
	if w.Has(coreangle.Vertical) {
		return ErrVertical
	}
	*m = oldModel{frame: frame{ref, h.Cross(ref), h}, apex: 1, hasGamma: !math.IsNaN(r.Gamma)}
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
	up := geom.Vec3{Z: 1}
	kD := m.frame.of(h.Cross(up).Unit())
	kA := m.frame.of(up.Neg())
	m.dY, m.aX, m.aZ = math.Copysign(1, kD.Y), kA.X, kA.Z
	s := r.Sigma
	m.sig = [5]float64{geom.Rad(s.Alpha), geom.Rad(math.Hypot(s.Beta, s.Mark)), geom.Rad(s.Gamma), geom.Rad(s.Azimuth), geom.Rad(s.Dip)}
	return nil
}

func (m *oldModel) eval(da, db, dg, dA, dD float64) (n, l geom.Vec3) {
	var t [10]float64
	for k, d := range [5]float64{da, db, dg, dA, dD} {
		t[2*k], t[2*k+1] = sincos(d)
	}
	return m.evalSC(&t)
}

func (m *oldModel) evalSC(t *[10]float64) (n, l geom.Vec3) {
	s, c := t[0], t[1]
	sa, ca := m.sa*c+m.ca*s, m.ca*c-m.sa*s
	s, c = t[2], t[3]
	sb, cb := m.sb*c+m.cb*s, m.cb*c-m.sb*s
	d := geom.Vec3{X: m.apex * cb, Y: m.apex * sb}
	n = geom.Vec3{X: -ca * d.X, Y: -ca * d.Y, Z: sa}
	if m.hasGamma {
		e := geom.Vec3{X: -sa * n.X, Y: -sa * n.Y, Z: 1 - sa*n.Z}
		if en := e.Norm(); en < 1e-12 {
			e = d
		} else {
			e = e.Scale(1 / en)
		}
		s, c = t[4], t[5]
		sg, cg := m.sg*c+m.cg*s, m.cg*c-m.sg*s
		l = e.Scale(cg).Add(n.Cross(e).Scale(sg))
	}
	if s, c = t[8], t[9]; s != 0 {
		n = m.turnD(n, s, c)
		if m.hasGamma {
			l = m.turnD(l, s, c)
		}
	}
	if s, c = t[6], t[7]; s != 0 {
		n = m.turnA(n, s, c)
		if m.hasGamma {
			l = m.turnA(l, s, c)
		}
	}
	return n, l
}

func (m *oldModel) turnD(v geom.Vec3, s, c float64) geom.Vec3 {
	s *= m.dY
	return geom.Vec3{X: v.X*c + v.Z*s, Y: v.Y, Z: v.Z*c - v.X*s}
}

func (m *oldModel) turnA(v geom.Vec3, s, c float64) geom.Vec3 {
	kv := (m.aX*v.X + m.aZ*v.Z) * (1 - c)
	return geom.Vec3{X: v.X*c - m.aZ*v.Y*s + m.aX*kv, Y: v.Y*c + (m.aZ*v.X-m.aX*v.Z)*s, Z: v.Z*c + m.aX*v.Y*s + m.aZ*kv}
}

func (m *oldModel) partials(n, l geom.Vec3, which int) (v geom.Vec3, g [5]geom.Vec3) {
	v = n
	if which == 1 {
		v = l
	}
	w := geom.Vec3{X: -m.apex * m.sb, Y: m.apex * m.cb}
	h := geom.Vec3{Z: 1}
	g[0] = w.Cross(v)
	g[1] = h.Cross(v)
	if which == 1 {
		g[2] = n.Cross(v)
	}
	g[3] = geom.Vec3{X: m.aX, Z: m.aZ}.Cross(v)
	g[4] = geom.Vec3{Y: m.dY}.Cross(v)
	return v, g
}

type oldCoords struct {
	v0       geom.Vec3
	phiDeg   float64
	curved   bool
	c0, s0   float64
	cp, sp   float64
	t1, t2   geom.Vec3
	sinPhiDg float64
}

func newOldCoords(v0 geom.Vec3) oldCoords {
	if v0.Z < 0 {
		v0 = v0.Neg()
	}
	c := oldCoords{v0: v0}
	a := geom.Vec3{X: -v0.Y, Y: v0.X}
	if a.Norm() < 1e-6 {
		a = geom.Vec3{Y: 1}
	}
	c.t1 = a.Sub(v0.Scale(a.Dot(v0))).Unit()
	c.t2 = v0.Cross(c.t1)
	rho := math.Hypot(v0.X, v0.Y)
	phi := math.Atan2(rho, v0.Z)
	c.phiDeg = geom.Deg(phi)
	if c.phiDeg >= minCurvedAngle {
		c.curved = true
		c.s0, c.c0 = math.Sincos(phi)
		c.cp, c.sp = v0.X/rho, v0.Y/rho
		c.sinPhiDg = geom.Deg(c.s0)
	}
	return c
}

func (c *oldCoords) of(v geom.Vec3) (u, w float64) {
	d := v.Dot(c.v0)
	if d < 0 {
		v, d = v.Neg(), -d
	}
	if c.curved {
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
	id := 1 / d
	a, b := v.Dot(c.t1)*id, v.Dot(c.t2)*id
	if a*a < small2 && b*b < small2 {
		return geom.Deg(oldAtanSeries(a)), geom.Deg(oldAtanSeries(b))
	}
	return geom.Deg(oldAtan(a)), geom.Deg(oldAtan(b))
}

func (c *oldCoords) gradients() (du, dw geom.Vec3) {
	if c.curved {
		d := geom.Deg(1)
		return geom.Vec3{X: -c.sp * d, Y: c.cp * d}, geom.Vec3{X: c.c0 * c.cp * d, Y: c.c0 * c.sp * d, Z: -c.s0 * d}
	}
	return c.t1.Scale(geom.Deg(1)), c.t2.Scale(geom.Deg(1))
}

// oldFinish is Region.finish as it was.
func oldFinish(r *Region) {
	tr, det := r.cuu+r.cvv, r.cuu*r.cvv-r.cuv*r.cuv
	d := math.Sqrt(math.Max(0, tr*tr/4-det))
	l1, l2 := tr/2+d, math.Max(0, tr/2-d)
	th := 0.5 * math.Atan2(2*r.cuv, r.cuu-r.cvv)
	a, b := math.Sqrt(r.q*l1), math.Sqrt(r.q*l2)
	r.Long95, r.Short95, r.Area95 = a, b, math.Pi*a*b
	o := math.Abs(geom.Deg(th))
	if o > 90 {
		o = 180 - o
	}
	r.Orientation = o
}

func (m *oldModel) firstOrder(n, l geom.Vec3, cs *oldCoords, which int) Region {
	v, g := m.partials(n, l, which)
	du, dw := cs.gradients()
	if v.Dot(cs.v0) < 0 {
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
	r.Cone95 = cone95(r.cuu, r.cuv, r.cvv)
	oldFinish(&r)
	return r
}

// oldMeasure is measure as it was, with the normals z (none: no Monte
// Carlo) and the rule whenNeeded.
func oldMeasure(r Reading, z normals, whenNeeded bool) (Result, error) {
	var m oldModel
	if err := m.init(r); err != nil {
		return Result{}, err
	}
	n0, l0 := m.eval(0, 0, 0, 0, 0)
	var cs [2]oldCoords
	cs[0] = newOldCoords(n0)
	nd := 1
	if m.hasGamma {
		cs[1] = newOldCoords(l0)
		nd = 2
	}
	var est [2]Estimate
	var need [2]bool
	for i := 0; i < nd; i++ {
		e := &est[i]
		e.Shape = "ellipse"
		if cs[i].curved {
			e.Shape = "curved"
		}
		ln := geom.LineOf(m.frame.world(cs[i].v0))
		e.Trend, e.Plunge = ln.Trend, ln.Plunge
		e.FirstOrder = m.firstOrder(n0, l0, &cs[i], i)
		e.Used = "first-order"
		need[i] = NeedsMonteCarlo(cs[i].phiDeg, e.FirstOrder)
	}
	if len(z) > 0 && (!whenNeeded || need[0] || need[1]) {
		oldMcRegions(&m, cs[:nd], z.table(m.sig, nil), est[:nd])
		for i := 0; i < nd; i++ {
			if need[i] {
				est[i].Used = "monte-carlo"
			}
		}
	}
	res := Result{Pole: est[0]}
	if nd == 2 {
		l := est[1]
		res.Line = &l
	}
	return res, nil
}

func oldMcRegions(m *oldModel, cs []oldCoords, tab table, est []Estimate) {
	plainMcRegions(len(cs), len(tab), func(j int) (n, l geom.Vec3) { return m.evalSC(&tab[j]) },
		func(i int, v geom.Vec3) (u, w, c float64) {
			u, w = cs[i].of(v)
			return u, w, 1 - math.Abs(v.Dot(cs[i].v0))
		}, oldFinish, est)
}

func (c *oldCoords) inv(u, w float64) geom.Vec3 {
	if c.curved {
		psi := math.Atan2(c.sp, c.cp) + geom.Rad(u)/c.s0
		phi := math.Atan2(c.s0, c.c0) + geom.Rad(w)
		sf, cf := math.Sincos(phi)
		sp, cp := math.Sincos(psi)
		return geom.Vec3{X: sf * cp, Y: sf * sp, Z: cf}
	}
	return c.v0.Add(c.t1.Scale(math.Tan(geom.Rad(u)))).Add(c.t2.Scale(math.Tan(geom.Rad(w)))).Unit()
}

// oldOutline is Estimate.Outline as it was, for the reading r and the
// region g in use of its direction which (0 pole, 1 line).
func oldOutline(r Reading, which int, g Region, n int) []geom.Vec3 {
	var m oldModel
	if err := m.init(r); err != nil {
		return nil
	}
	n0, l0 := m.eval(0, 0, 0, 0, 0)
	cs := newOldCoords(pick(n0, l0)(which))
	tr, det := g.cuu+g.cvv, g.cuu*g.cvv-g.cuv*g.cuv
	d := math.Sqrt(math.Max(0, tr*tr/4-det))
	l1, l2 := tr/2+d, math.Max(0, tr/2-d)
	th := 0.5 * math.Atan2(2*g.cuv, g.cuu-g.cvv)
	a, b := math.Sqrt(g.q*l1), math.Sqrt(g.q*l2)
	out := make([]geom.Vec3, n)
	st, ct := math.Sincos(th)
	for i := range out {
		s, c := math.Sincos(2 * math.Pi * float64(i) / float64(n))
		x, y := a*c, b*s
		out[i] = m.frame.world(cs.inv(x*ct-y*st, x*st+y*ct))
	}
	return out
}

// oldAtanSeries and oldAtan are atanSeries and atan as they were.
func oldAtanSeries(t float64) float64 {
	t2 := t * t
	return t * (1 - t2*(1.0/3-t2*(1.0/5-t2*(1.0/7-t2/9))))
}

func oldAtan(t float64) float64 {
	if t*t < small2 {
		return oldAtanSeries(t)
	}
	return math.Atan(t)
}

// oldSigmas is Model.Sigmas as it was.
func oldSigmas(m Model, k Instrument, confidence string, mismatch, rounding float64) Sigmas {
	f := m.WithDefaults()
	sv := f.Survey(k)
	add := func(s float64) float64 { return math.Hypot(s, rounding) }
	return Sigmas{Alpha: add(f.Alpha), Beta: add(f.Beta), Gamma: add(f.Gamma),
		Mark: f.Mark(confidence, mismatch), Azimuth: sv.Azimuth, Dip: sv.Dip}
}
