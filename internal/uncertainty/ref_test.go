package uncertainty

import (
	"math"

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
	d, err := prepareSet(ms, lines, false)
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
