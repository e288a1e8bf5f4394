package dirstat

import (
	"math"
	"math/rand/v2"
	"testing"

	"corvane/internal/geom"
)

// TestCommonMeanWessel: the two sites of Wessel (DA1 ch. 9; references README
// section 3) have R_A = 5.86274569, R_B = 5.87584492 and R = 10.5001 for the
// twelve together, so the statistic of Watson (1956) / Fisher, Lewis &
// Embleton (1987, section 7.2) is F = 10 (11.73859061 - 10.5001) / 0.26140939
// = 47.378 on (2, 20) degrees of freedom: the sites' means differ (their
// means lie 53 degrees apart).
func TestCommonMeanWessel(t *testing.T) {
	s := wesselSites(t)
	res, err := CommonMeanTest([][]geom.Vec3{s["A"], s["B"]}, false)
	if err != nil {
		t.Fatal(err)
	}
	near(t, "sum R", res.SumR, 5.86274569+5.87584492, 1e-7)
	near(t, "pooled R", res.R, 10.5001, 5e-5)
	near(t, "F", res.F, 10*(5.86274569+5.87584492-10.5001)/(12-5.86274569-5.87584492), 0.02)
	if res.DF1 != 2 || res.DF2 != 20 {
		t.Errorf("df %d, %d", res.DF1, res.DF2)
	}
	// F(2, 20) survival in closed form: (1 + 2F/20)^(-10) for D1 = 2.
	near(t, "p", res.P, math.Pow(1+2*res.F/20, -10), 1e-12)
	if res.P > 1e-6 {
		t.Errorf("p = %v, want a clear rejection", res.P)
	}
}

// TestCommonMeanSize: under the null (two samples of 20 from one Fisher
// distribution, k = 20) the test rejects at the 5% level in about 5% of
// trials; 600 seeded trials give a binomial standard error of 0.9%, so the
// rate must fall within 0.05 +- 0.027. With means 15 degrees apart it
// rejects most of the time (power).
func TestCommonMeanSize(t *testing.T) {
	rng := rand.New(rand.NewPCG(1987, 72))
	m := geom.FromTrendPlunge(40, 30)
	m2 := geom.FromTrendPlunge(40, 45)
	const trials = 600
	reject, rejectAlt := 0, 0
	for i := 0; i < trials; i++ {
		a := fisherSample(rng, m, 20, 20)
		b := fisherSample(rng, m, 20, 20)
		res, err := CommonMeanTest([][]geom.Vec3{a, b}, false)
		if err != nil {
			t.Fatal(err)
		}
		if res.P < 0.05 {
			reject++
		}
		if i < 200 {
			c := fisherSample(rng, m2, 20, 20)
			alt, err := CommonMeanTest([][]geom.Vec3{a, c}, true)
			if err != nil {
				t.Fatal(err)
			}
			if alt.P < 0.05 {
				rejectAlt++
			}
		}
	}
	rate := float64(reject) / trials
	if math.Abs(rate-0.05) > 0.027 {
		t.Errorf("size under the null: %.3f, want about 0.05", rate)
	}
	if rejectAlt < 150 {
		t.Errorf("power at 15 degrees: %d of 200", rejectAlt)
	}
}

// TestCommonMeanAxial: axes given with either sense give the same answer.
func TestCommonMeanAxial(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	a := fisherSample(rng, geom.FromTrendPlunge(100, 10), 30, 15)
	b := fisherSample(rng, geom.FromTrendPlunge(105, 5), 30, 12)
	r1, err := CommonMeanTest([][]geom.Vec3{a, b}, true)
	if err != nil {
		t.Fatal(err)
	}
	flipped := make([]geom.Vec3, len(b))
	for i, v := range b {
		if i%2 == 0 {
			v = v.Neg()
		}
		flipped[i] = v
	}
	r2, err := CommonMeanTest([][]geom.Vec3{a, flipped}, true)
	if err != nil {
		t.Fatal(err)
	}
	near(t, "F axial", r2.F, r1.F, 1e-9)
	if _, err := CommonMeanTest([][]geom.Vec3{a}, true); err == nil {
		t.Error("one sample accepted")
	}
}

// TestFisherRandom: the mean of cos theta of a Fisher distribution is
// coth k - 1/k (Fisher 1953; exact), here for k = 10 from 20000 seeded draws
// (standard error about 0.0008).
func TestFisherRandom(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	m := geom.FromTrendPlunge(200, 35)
	sum := 0.0
	const n = 20000
	for i := 0; i < n; i++ {
		sum += FisherRandom(rng, m, 10).Dot(m)
	}
	near(t, "mean cos theta", sum/n, 1/math.Tanh(10)-0.1, 0.003)
}

// TestCommonMeanSizeThreeAxial: the size of the test under the null for
// three samples of axes (poles given with either sense at random, as logged
// planes' poles are), sizes 12, 15 and 25 from one Fisher distribution with
// k = 15: over 500 seeded trials the 5% test rejects at a rate within three
// binomial standard errors (0.0097 each) of 0.05, and the p-values are
// spread evenly: about a tenth fall below 0.1 and half below 0.5 (the
// p-value of a test of the right size is uniform under the null, Fisher,
// Lewis & Embleton 1987, section 7.2; a simulation, not a published value).
func TestCommonMeanSizeThreeAxial(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 2))
	m := geom.FromTrendPlunge(250, 40)
	const trials = 500
	var below05, below10, below50 int
	for i := 0; i < trials; i++ {
		var samples [][]geom.Vec3
		for _, n := range []int{12, 15, 25} {
			s := fisherSample(rng, m, 15, n)
			for j := range s {
				if rng.IntN(2) == 0 {
					s[j] = s[j].Neg()
				}
			}
			samples = append(samples, s)
		}
		res, err := CommonMeanTest(samples, true)
		if err != nil {
			t.Fatal(err)
		}
		if res.DF1 != 4 || res.DF2 != 2*(52-3) {
			t.Fatalf("df %d, %d, want 4 and 98", res.DF1, res.DF2)
		}
		if res.P < 0.05 {
			below05++
		}
		if res.P < 0.1 {
			below10++
		}
		if res.P < 0.5 {
			below50++
		}
	}
	check := func(what string, n int, want float64) {
		rate := float64(n) / trials
		se := math.Sqrt(want * (1 - want) / trials)
		if math.Abs(rate-want) > 3*se {
			t.Errorf("%s: rate %.3f under the null, want %.2f +- %.3f", what, rate, want, 3*se)
		}
	}
	check("p < 0.05", below05, 0.05)
	check("p < 0.1", below10, 0.1)
	check("p < 0.5", below50, 0.5)
}
