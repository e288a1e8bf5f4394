//go:build qmcstudy

// A study, not part of the tests: how accurate are cheaper estimators than
// the 1,000-draw Monte Carlo run for directions near the core axis (those
// NeedsMonteCarlo sends to it), against a 100,000-draw run? Run with
//
//	go test -tags qmcstudy -run QMCStudy -v ./internal/uncertainty
//
// It prints the RMS and 95th-percentile relative error of the cone and of
// the semi-axes for plain Monte Carlo, Owen-scrambled Halton points, Latin
// hypercube points, and each with the first-order model on the same points
// as a control variate; and fails if 1,000 Halton points are not at least
// as accurate as 1,000 plain draws.

package uncertainty

import (
	"math"
	"math/rand/v2"
	"slices"
	"strconv"
	"testing"

	"corvane/internal/geom"
)

// haltonNormals returns n rows of five standard normals from the
// Owen-scrambled Halton sequence (bases 2, 3, 5, 7, 11; each digit of each
// base permuted at random, as in Owen 2017, "A randomized Halton
// algorithm", arXiv:1706.02808), through the normal quantile.
func haltonNormals(n int, seed uint64) normals {
	r := rand.New(rand.NewPCG(seed, 7))
	z := make(normals, n)
	for k, b := range []int{2, 3, 5, 7, 11} {
		u := make([]float64, n)
		div, scale := 1, 1/float64(b)
		for 1-scale < 1 {
			p := r.Perm(b)
			for i := range u {
				u[i] += float64(p[(i/div)%b]) * scale
			}
			div *= b
			scale /= float64(b)
		}
		for i := range z {
			z[i][k] = normalQuantile(u[i])
		}
	}
	return z
}

// lhsNormals returns n rows of five standard normals from a Latin
// hypercube: in each coordinate one point in each of n equal slices of
// probability, the slices in random order.
func lhsNormals(n int, seed uint64) normals {
	r := rand.New(rand.NewPCG(seed, 9))
	z := make(normals, n)
	for k := 0; k < 5; k++ {
		for i, s := range r.Perm(n) {
			z[i][k] = normalQuantile((float64(s) + r.Float64()) / float64(n))
		}
	}
	return z
}

// normalQuantile is the standard normal quantile of p in (0, 1).
func normalQuantile(p float64) float64 { return math.Sqrt2 * math.Erfinv(2*p-1) }

func TestQMCStudy(t *testing.T) {
	r := rand.New(rand.NewPCG(101, 102))
	ref := newNormals(MC{Draws: 100_000, Seed: 777})
	type method struct {
		name string
		z    normals
		cv   bool
	}
	methods := []method{{"mc1000", newNormals(PerMeasurement), false}, {"mc4000", newNormals(MC{Draws: 4000, Seed: 12}), false}}
	for _, n := range []int{128, 256, 512, 1000} {
		methods = append(methods, method{"halton" + itoa(n), haltonNormals(n, 3), false})
	}
	for _, n := range []int{256, 1000} {
		methods = append(methods, method{"lhs" + itoa(n), lhsNormals(n, 3), false})
	}
	for _, n := range []int{250, 500, 1000} {
		methods = append(methods, method{"mc" + itoa(n) + "+cv", newNormals(MC{Draws: n, Seed: 12}), true})
	}
	for _, n := range []int{256, 512} {
		methods = append(methods, method{"halton" + itoa(n) + "+cv", haltonNormals(n, 3), true})
	}
	m := DefaultModel()
	confs := []string{"", "", "fair", "poor", "good"}
	errs := make([][3][]float64, len(methods))
	nd := 0
	for nd < 400 {
		alpha := float64(82 + r.IntN(9))
		if r.IntN(2) == 0 {
			alpha = 80 + 10*r.Float64()
		}
		g := math.NaN()
		if r.IntN(4) == 0 {
			g = float64(r.IntN(360))
		}
		rd := Reading{Hole: geom.HoleDirection(360*r.Float64(), -50-30*r.Float64()), Alpha: alpha, Beta: float64(r.IntN(360)), Gamma: g,
			Sigma: m.Sigmas([]Instrument{UnknownSurvey, Magnetic}[r.IntN(2)], confs[r.IntN(len(confs))], math.NaN(), 0)}
		sc := scratch{whenNeeded: true, z: newNormals(PerMeasurement)}
		first, err := measure(rd, &sc)
		if err != nil || first.Pole.MonteCarlo == nil {
			continue
		}
		need := []bool{first.Pole.Used == "monte-carlo" && NeedsMonteCarlo(first.Pole.cs.phi(), first.Pole.FirstOrder)}
		if first.Line != nil {
			need = append(need, NeedsMonteCarlo(first.Line.cs.phi(), first.Line.FirstOrder))
		}
		rsc := scratch{z: ref}
		want, _ := measure(rd, &rsc)
		for k, mt := range methods {
			msc := scratch{z: mt.z}
			got, _ := measure(rd, &msc)
			for i, ok := range need {
				if !ok {
					continue
				}
				e, w := &got.Pole, want.Pole.MonteCarlo
				if i == 1 {
					e, w = got.Line, want.Line.MonteCarlo
				}
				g := *e.MonteCarlo
				if mt.cv {
					lc, ll, ls := linearMC(rd, i, mt.z)
					fo := e.FirstOrder
					g.Cone95 -= lc - fo.Cone95
					g.Long95 -= ll - fo.Long95
					g.Short95 -= ls - fo.Short95
				}
				errs[k][0] = append(errs[k][0], (g.Cone95-w.Cone95)/w.Cone95)
				errs[k][1] = append(errs[k][1], (g.Long95-w.Long95)/w.Long95)
				errs[k][2] = append(errs[k][2], (g.Short95-w.Short95)/w.Long95)
			}
		}
		for _, ok := range need {
			if ok {
				nd++
			}
		}
	}
	t.Logf("%d near-axis directions; relative error vs 100,000 draws: RMS / 95th percentile of |error| (cone, long, short/long)", nd)
	for k, mt := range methods {
		line := mt.name + ":"
		for f := 0; f < 3; f++ {
			e := errs[k][f]
			var s float64
			a := make([]float64, len(e))
			for i, x := range e {
				s += x * x
				a[i] = math.Abs(x)
			}
			slices.Sort(a)
			line += " " + ftoa(100*math.Sqrt(s/float64(len(e)))) + "% / " + ftoa(100*a[int(0.95*float64(len(a)))]) + "%"
		}
		t.Log(line)
	}
	rms := func(k, f int) float64 {
		var s float64
		for _, x := range errs[k][f] {
			s += x * x
		}
		return math.Sqrt(s / float64(len(errs[k][f])))
	}
	for f := 0; f < 3; f++ {
		if rms(5, f) > rms(0, f) { // halton1000, mc1000
			t.Errorf("figure %d: 1,000 Halton points off by %.2f%% RMS, 1,000 draws by %.2f%%", f, 100*rms(5, f), 100*rms(0, f))
		}
	}
}

func itoa(n int) string     { return strconv.Itoa(n) }
func ftoa(x float64) string { return strconv.FormatFloat(x, 'f', 2, 64) }

// linearMC returns the Monte Carlo cone, long and short semi-axes of the
// first-order (linear) model of direction which on the normals z, by the
// same estimators: the control variate, whose exact values are the
// first-order region's.
func linearMC(rd Reading, which int, z normals) (cone, long, short float64) {
	m, _ := newModel(rd)
	n0, l0 := m.nominal()
	cs := newCoords(m, pick(n0, l0)(which))
	v, g := m.partials(n0, l0, which)
	du, dw := cs.gradients()
	if v.Dot(cs.v0) < 0 {
		du, dw = du.Neg(), dw.Neg()
	}
	var ju, jw [5]float64
	for k := 0; k < 5; k++ {
		ju[k], jw[k] = g[k].Dot(du)*m.sig[k], g[k].Dot(dw)*m.sig[k]
	}
	n := len(z)
	us, ws, rs := make([]float64, n), make([]float64, n), make([]float64, n)
	var r Region
	for j, row := range z {
		var u, w float64
		for k := 0; k < 5; k++ {
			u += ju[k] * row[k]
			w += jw[k] * row[k]
		}
		us[j], ws[j], rs[j] = u, w, math.Hypot(u, w)
		r.cuu += u * u / float64(n)
		r.cuv += u * w / float64(n)
		r.cvv += w * w / float64(n)
	}
	k := quantileRank(n, 0.95)
	slices.Sort(rs)
	cone = rs[n-k]
	d2 := make([]float64, n)
	for j := range d2 {
		d2[j] = r.mahal(us[j], ws[j])
	}
	slices.Sort(d2)
	r.q = d2[n-k]
	r.finish()
	return cone, r.Long95, r.Short95
}
