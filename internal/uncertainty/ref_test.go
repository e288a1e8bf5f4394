package uncertainty

import (
	"math"
	"slices"

	"corvane/internal/geom"
)

// The straightforward computations the fast paths replace, kept as
// references for TestFastPathsMatchReference: first-order propagation by
// central differences of the exact transform (m.eval) read in the region
// coordinates, cones by the exact integral (coneOf), and the set's
// first-order cones from the same central differences. They are slow and
// plain on purpose.

// refStep is the step, radians, of the central differences.
const refStep = 1e-5

// refPartial returns the direction picked by which (0 pole, 1 line), frame
// coordinates, with the error source k moved by +refStep and -refStep.
func (m *model) refPartial(k, which int) (plus, minus geom.Vec3) {
	var dp, dm [5]float64
	dp[k], dm[k] = refStep, -refStep
	return pick(m.eval(dp[0], dp[1], dp[2], dp[3], dp[4]))(which), pick(m.eval(dm[0], dm[1], dm[2], dm[3], dm[4]))(which)
}

// refFirstOrder is firstOrder by central differences of cs.of and the
// exact cone.
func (m *model) refFirstOrder(cs *coords, which int) Region {
	var r Region
	for k := 0; k < 5; k++ {
		if m.sig[k] == 0 {
			continue
		}
		plus, minus := m.refPartial(k, which)
		u1, w1 := cs.of(plus)
		u0, w0 := cs.of(minus)
		ju, jw := (u1-u0)/(2*refStep)*m.sig[k], (w1-w0)/(2*refStep)*m.sig[k]
		r.cuu += ju * ju
		r.cuv += ju * jw
		r.cvv += jw * jw
	}
	r.q = chi2q95
	r.Cone95 = coneOf(r.cuu, r.cuv, r.cvv, 0.95)
	r.finish()
	return r
}

// refSetFirstOrder is setFirstOrder with every member's derivatives by
// central differences and the exact cones.
func refSetFirstOrder(ms []Member, lines bool) (SetResult, error) {
	d, err := prepareSet(ms, lines)
	if err != nil {
		return SetResult{}, err
	}
	which := 0
	if lines {
		which = 1
	}
	mean := d.f.Mean
	t1 := perpendicular(mean)
	t2 := mean.Cross(t1)
	type cov struct{ a, b, c float64 }
	add := func(c *cov, j [2]float64, s float64) {
		c.a += j[0] * j[0] * s * s
		c.b += j[0] * j[1] * s * s
		c.c += j[1] * j[1] * s * s
	}
	marks := make([][2]float64, len(d.markSig))
	survs := make([][2][2]float64, len(d.survSig))
	var reading, indep cov
	for i := range ms {
		var md model
		if err := md.init(ms[i].Reading); err != nil {
			return SetResult{}, err
		}
		var js [5][2]float64
		for k := 0; k < 5; k++ {
			if k == 2 && !lines {
				continue
			}
			plus, minus := md.refPartial(k, which)
			g := md.world(plus.Sub(minus)).Scale(d.sign[i] / (2 * refStep * d.f.R))
			js[k] = [2]float64{g.Dot(t1), g.Dot(t2)}
		}
		sig := ms[i].Sigma
		add(&reading, js[0], geom.Rad(sig.Alpha))
		add(&reading, js[1], geom.Rad(sig.Beta))
		if lines {
			add(&reading, js[2], geom.Rad(sig.Gamma))
		}
		add(&indep, js[1], geom.Rad(sig.Mark))
		add(&indep, js[3], geom.Rad(sig.Azimuth))
		add(&indep, js[4], geom.Rad(sig.Dip))
		r, s := d.runOf[i], d.survOf[i]
		for x := 0; x < 2; x++ {
			marks[r][x] += js[1][x]
			survs[s][0][x] += js[3][x]
			survs[s][1][x] += js[4][x]
		}
	}
	var shared cov
	for r, j := range marks {
		add(&shared, j, d.markSig[r])
	}
	for s, j := range survs {
		add(&shared, j[0], d.survSig[s][0])
		add(&shared, j[1], d.survSig[s][1])
	}
	deg2 := geom.Deg(1) * geom.Deg(1)
	cone := func(c cov) float64 { return coneOf(c.a*deg2, c.b*deg2, c.c*deg2, 0.95) }
	res := d.res
	res.Method = SetFirstOrder
	res.Measurement95 = cone(cov{shared.a + reading.a, shared.b + reading.b, shared.c + reading.c})
	res.Shared95 = cone(shared)
	res.SharedIndependent95 = cone(indep)
	res.Combined95 = res.Shared95
	if d.f.N >= 2 && res.Fisher95 > 0 {
		v := (1 - math.Pow(res.SharedIndependent95/res.Fisher95, 2)) * res.Fisher95 * res.Fisher95 / chi2q95
		v = math.Max(0, v) / deg2
		res.Combined95 = cone(cov{shared.a + v, shared.b, shared.c + v})
	}
	res.dominant()
	return res, nil
}

// refEvalSC is evalSC with the survey turns by Rodrigues' formula about
// the axes as computed, whatever their direction.
func (m *model) refEvalSC(t *[10]float64) (n, l geom.Vec3) {
	up := geom.Vec3{Z: 1}
	kD, kA := m.frameOf(m.frame[2].Cross(up).Unit()), m.frameOf(up.Neg())
	core := *t // the readings' errors alone: evalSC skips the turns of zero sines
	core[6], core[7], core[8], core[9] = 0, 1, 0, 1
	n, l = m.evalSC(&core)
	if s, c := t[8], t[9]; s != 0 {
		n, l = rotate(n, kD, s, c), rotate(l, kD, s, c)
	}
	if s, c := t[6], t[7]; s != 0 {
		n, l = rotate(n, kA, s, c), rotate(l, kA, s, c)
	}
	return n, l
}

// refMcRegions is mcRegions draw by draw through refEvalSC and coords.of,
// each quantile by a full sort.
func refMcRegions(m *model, cs []coords, tab table, est []Estimate) {
	plainMcRegions(len(cs), len(tab), func(j int) (n, l geom.Vec3) { return m.refEvalSC(&tab[j]) },
		func(i int, v geom.Vec3) (u, w, c float64) {
			u, w = cs[i].of(v)
			return u, w, 1 - math.Abs(v.Dot(cs[i].v0))
		}, (*Region).finish, est)
}

// plainMcRegions gives est (nd directions: the pole, and the line when 2)
// their Monte Carlo regions the plain way: draw by draw the directions
// (dirs), their region coordinates and 1 - |cos| of their angle from the
// measured direction (read), each quantile by a full sort, each region
// finished by finish.
func plainMcRegions(nd, draws int, dirs func(j int) (n, l geom.Vec3), read func(i int, v geom.Vec3) (u, w, c float64), finish func(*Region), est []Estimate) {
	var us, ws, cc [2][]float64
	for i := 0; i < nd; i++ {
		us[i], ws[i], cc[i] = make([]float64, draws), make([]float64, draws), make([]float64, draws)
	}
	k := quantileRank(draws, 0.95)
	kth := func(x []float64) float64 {
		y := slices.Clone(x)
		slices.Sort(y)
		return y[len(y)-k]
	}
	var sums [2][3]float64
	for j := 0; j < draws; j++ {
		n, l := dirs(j)
		for i := 0; i < nd; i++ {
			u, w, c := read(i, pick(n, l)(i))
			us[i][j], ws[i][j], cc[i][j] = u, w, c
			sums[i][0] += u * u
			sums[i][1] += u * w
			sums[i][2] += w * w
		}
	}
	for i := 0; i < nd; i++ {
		r := &Region{cuu: sums[i][0] / float64(draws), cuv: sums[i][1] / float64(draws), cvv: sums[i][2] / float64(draws)}
		det := r.cuu*r.cvv - r.cuv*r.cuv
		e := &est[i]
		r.Cone95 = geom.Deg(math.Acos(math.Max(-1, math.Min(1, 1-kth(cc[i])))))
		r.q = chi2q95
		if det > 0 {
			a, b, c := r.cvv/det, -2*r.cuv/det, r.cuu/det
			d2 := make([]float64, draws)
			for j := range d2 {
				u, w := us[i][j], ws[i][j]
				d2[j] = a*u*u + b*u*w + c*w*w
			}
			r.q = kth(d2)
		}
		finish(r)
		e.MonteCarlo, e.Draws = r, draws
		if !Agrees(e.FirstOrder, *r) {
			e.Used = "monte-carlo"
		}
	}
}

// rotate turns v about a fixed unit axis k by an angle given by its
// sine and cosine (Rodrigues' formula).
func rotate(v, k geom.Vec3, s, c float64) geom.Vec3 {
	kv := k.Dot(v) * (1 - c)
	return geom.Vec3{
		X: v.X*c + (k.Y*v.Z-k.Z*v.Y)*s + k.X*kv,
		Y: v.Y*c + (k.Z*v.X-k.X*v.Z)*s + k.Y*kv,
		Z: v.Z*c + (k.X*v.Y-k.Y*v.X)*s + k.Z*kv,
	}
}
