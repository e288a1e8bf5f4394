package qa

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"

	"corvane/internal/geom"
)

// Circular mean of angles placed symmetrically about 20 deg is 20 deg and the
// mean resultant length is the mean of the cosines about it (definition,
// Fisher 1993 section 2.3); angles either side of 0 average to 0 through
// the wrap.
func TestCircMeanSymmetric(t *testing.T) {
	m := CircMean([]float64{10, 20, 30})
	if math.Abs(m.Mean-20) > 1e-12 {
		t.Errorf("mean = %v, want 20", m.Mean)
	}
	want := (1 + 2*math.Cos(geom.Rad(10))) / 3
	if math.Abs(m.Rbar-want) > 1e-12 {
		t.Errorf("Rbar = %v, want %v", m.Rbar, want)
	}
	m = CircMean([]float64{350, 10, 355, 5})
	if math.Abs(m.Mean) > 1e-9 {
		t.Errorf("mean across 0 = %v, want 0", m.Mean)
	}
	if m := CircMean(nil); m.N != 0 || !math.IsInf(m.SE, 1) || m.HalfWidth95 != 180 {
		t.Errorf("empty sample: %+v", m)
	}
}

// The circular standard error of Fisher (1993, section 4.4) must describe the
// actual sampling spread of the mean, and its 95% interval must cover the
// true mean about 95% of the time: checked by simulation (wrapped normal,
// sigma 12 deg, n = 30, 2000 samples, fixed seed). This is a check of the
// method against its own definition, independent of the formula's algebra.
func TestCircMeanStandardErrorBySimulation(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 2))
	const reps, n, sigma, truth = 2000, 30, 12.0, 40.0
	var means []float64
	seSum, covered := 0.0, 0
	buf := make([]float64, n)
	for k := 0; k < reps; k++ {
		for i := range buf {
			buf[i] = truth + sigma*r.NormFloat64()
		}
		m := CircMean(buf)
		means = append(means, m.Mean)
		seSum += m.SE
		if math.Abs(wrap180(m.Mean-truth)) <= m.HalfWidth95 {
			covered++
		}
	}
	var ss float64
	for _, x := range means {
		d := wrap180(x - truth)
		ss += d * d
	}
	empirical := math.Sqrt(ss / reps)
	meanSE := seSum / reps
	if math.Abs(meanSE/empirical-1) > 0.1 {
		t.Errorf("mean SE %.3f vs empirical spread %.3f: off by more than 10%%", meanSE, empirical)
	}
	cov := float64(covered) / reps
	if cov < 0.92 || cov > 0.975 {
		t.Errorf("95%% interval coverage = %.3f", cov)
	}
}

// Chi-square critical values for 9 degrees of freedom: 16.919 at the 0.05
// level and 27.877 at 0.001 (NIST/SEMATECH e-Handbook of Statistical Methods,
// table 1.3.6.7.4; from memory).
func TestChiSquareTableValues(t *testing.T) {
	for _, c := range []struct{ x, p float64 }{{16.919, 0.05}, {27.877, 0.001}} {
		got := distuv.ChiSquared{K: 9}.Survival(c.x)
		if math.Abs(got-c.p)/c.p > 0.002 {
			t.Errorf("Survival(%v) = %v, want %v", c.x, got, c.p)
		}
	}
}

func digitsFromCounts(counts [10]int) []float64 {
	var v []float64
	for d, c := range counts {
		for i := 0; i < c; i++ {
			v = append(v, float64(10*(i%8)+d)+0.2) // 0.2 rounds away; tens vary
		}
	}
	return v
}

// Terminal-digit preference test (Pearson 1900 chi-square on last digits):
// the statistic for hand-counted digits, and the decision against the table
// values above.
func TestDigitTest(t *testing.T) {
	// Uniform digits: chi-square 0, not flagged.
	u := digitTest("ann", "alpha", digitsFromCounts([10]int{10, 10, 10, 10, 10, 10, 10, 10, 10, 10}), 50, 0.001, 0.3)
	if !u.Tested || u.Chi2 != 0 || u.P != 1 || u.Flagged {
		t.Errorf("uniform: %+v", u)
	}
	// 20,8,8,8,8,20,7,7,7,7 of 100: chi2 = (100+4*4+100+4*9)/10 = 25.2 by
	// hand, between the 0.05 and 0.001 critical values: not flagged.
	m := digitTest("ann", "beta", digitsFromCounts([10]int{20, 8, 8, 8, 8, 20, 7, 7, 7, 7}), 50, 0.001, 0.3)
	if math.Abs(m.Chi2-25.2) > 1e-9 || !(m.P > 0.001 && m.P < 0.05) || m.Flagged {
		t.Errorf("moderate: chi2 %v p %v flagged %v", m.Chi2, m.P, m.Flagged)
	}
	if math.Abs(m.Share05-0.4) > 1e-12 {
		t.Errorf("share 0/5 = %v, want 0.4", m.Share05)
	}
	// Strong preference: flagged.
	s := digitTest("bo", "alpha", digitsFromCounts([10]int{40, 5, 5, 5, 5, 30, 5, 5, 5, 5}), 50, 0.001, 0.3)
	if !s.Flagged || s.P >= 0.001 {
		t.Errorf("strong: %+v", s)
	}
	// Too few values: not tested.
	f := digitTest("cy", "alpha", []float64{10, 20, 30}, 50, 0.001, 0.3)
	if f.Tested || f.Flagged || f.N != 3 {
		t.Errorf("few: %+v", f)
	}
	// An excess of 7s is a preference but not for round numbers: not flagged.
	sevens := digitTest("di", "alpha", digitsFromCounts([10]int{5, 5, 5, 5, 5, 5, 5, 60, 5, 5}), 50, 0.001, 0.3)
	if sevens.P >= 0.001 || sevens.Flagged {
		t.Errorf("sevens: %+v", sevens)
	}
}

// Beta 0/360 in bulk: exact binomial test with p = 1/360. One zero in 360
// gives P(X >= 1) = 1 - (359/360)^360 (closed form).
func TestBetaZeroTest(t *testing.T) {
	b := make([]float64, 360)
	for i := range b {
		b[i] = float64(i) + 0.5
	}
	b[0] = 0
	r := betaZeroTest("ann", b, 0.001, 0.01)
	want := 1 - math.Pow(359.0/360, 360)
	if math.Abs(r.P-want) > 1e-9 || r.Flagged || r.Zeros != 1 {
		t.Errorf("one zero: %+v, want p %v", r, want)
	}
	for i := 0; i < 20; i++ {
		b[10*i+1] = 360
	}
	r = betaZeroTest("ann", b, 0.001, 0.01)
	if !r.Flagged || r.Zeros != 21 {
		t.Errorf("21 zeros of 360: %+v", r)
	}
}

// Rotating a normal about the hole axis by a known angle is recovered
// exactly, with no residual; a pole along the axis is refused.
func TestBetaOffsetRecoversRotation(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 4))
	for k := 0; k < 500; k++ {
		h := geom.FromTrendPlunge(360*r.Float64(), 20+60*r.Float64())
		n := geom.FromTrendPlunge(360*r.Float64(), 90*r.Float64())
		if a := geom.AxialAngle(n, h); a < 15 || a > 75 {
			continue
		}
		want := wrap180(360 * r.Float64())
		p := rotateAbout(n, h, want)
		if k%2 == 1 {
			p = p.Neg() // axial: the sense of the reference does not matter
		}
		got, res, ok := betaOffset(h, n, p)
		if !ok || math.Abs(wrap180(got-want)) > 1e-9 || res > 1e-9 {
			t.Fatalf("h %v n %v: offset %v (want %v) residual %v ok %v", h, n, got, want, res, ok)
		}
	}
	h := geom.HoleDirection(0, -60)
	if _, _, ok := betaOffset(h, h, geom.FromTrendPlunge(10, 10)); ok {
		t.Error("pole along the core axis should give no offset")
	}
	// A reference plane nearly containing the core axis (alpha 3) is
	// ambiguous by a half turn.
	nearAxisPlane := rotateAbout(h, geom.Vec3{X: 1}, 87)
	if _, _, ok := betaOffset(h, geom.FromTrendPlunge(90, 30), nearAxisPlane); ok {
		t.Error("reference at alpha 3 should give no offset")
	}
}

// Rodrigues' rotation agrees with the rotation matrix about the vertical
// axis (a right-handed turn about +z by 90 deg takes east to north).
func TestRotateAbout(t *testing.T) {
	got := rotateAbout(geom.Vec3{X: 1}, geom.Vec3{Z: 1}, 90)
	if geom.Angle(got, geom.Vec3{Y: 1}) > 1e-12 {
		t.Errorf("got %v", got)
	}
}

// The principal axis of the orientation tensor of a tight cluster is its
// mean axis, whatever the sense of each vector (Scheidegger 1965).
func TestTensorPrincipal(t *testing.T) {
	var tt tensor
	axis := geom.FromTrendPlunge(123, 40)
	r := rand.New(rand.NewPCG(5, 6))
	for i := 0; i < 200; i++ {
		v := geom.FromTrendPlunge(123+r.NormFloat64()*3, 40+r.NormFloat64()*2)
		if i%2 == 0 {
			v = v.Neg()
		}
		tt.add(v)
	}
	v, s1, ok := tt.principal()
	if !ok || geom.AxialAngle(v, axis) > 1 || s1 < 0.99 || v.Z > 0 {
		t.Errorf("axis %v s1 %v ok %v", v, s1, ok)
	}
}

// The power-iteration principal axis agrees with gonum's symmetric
// eigendecomposition (an independent general-purpose library) on random
// clusters and girdles.
func TestTensorPrincipalAgreesWithGonum(t *testing.T) {
	r := rand.New(rand.NewPCG(7, 7))
	for k := 0; k < 200; k++ {
		var tt tensor
		mean := geom.FromTrendPlunge(360*r.Float64(), 90*r.Float64())
		spread := 2 + 40*r.Float64()
		for i := 0; i < 5+r.IntN(50); i++ {
			tt.add(noisy(mean, spread, r))
		}
		got, s1, ok := tt.principal()
		m := mat.NewSymDense(3, []float64{tt.a[0], tt.a[1], tt.a[2], tt.a[1], tt.a[3], tt.a[4], tt.a[2], tt.a[4], tt.a[5]})
		var es mat.EigenSym
		if !ok || !es.Factorize(m, true) {
			t.Fatal("no decomposition")
		}
		vals := es.Values(nil)
		var vecs mat.Dense
		es.VectorsTo(&vecs)
		want := geom.Vec3{X: vecs.At(0, 2), Y: vecs.At(1, 2), Z: vecs.At(2, 2)}
		if vals[2]-vals[1] < 1e-3*vals[2] {
			continue // no unique principal axis
		}
		if a := geom.AxialAngle(got, want); a > 1e-6 || math.Abs(s1-vals[2]/float64(tt.n)) > 1e-9 {
			t.Fatalf("case %d: axis off by %v deg, s1 %v vs %v", k, a, s1, vals[2]/float64(tt.n))
		}
	}
}

func TestUnionLength(t *testing.T) {
	got := unionLength([][2]float64{{5, 8}, {0, 3}, {2, 4}, {7, 12}}, 10)
	if got != 4+5 {
		t.Errorf("union = %v, want 9", got)
	}
}

func TestRobustScale(t *testing.T) {
	s, m := robustScale([]float64{1, 2, 3, 4, 100})
	if m != 3 || math.Abs(s-1.4826) > 1e-12 {
		t.Errorf("scale %v median %v", s, m)
	}
}

// Student's t quantiles against gonum's exact inverse (an independent
// library) and the printed tables (t(0.975; 30) = 2.042, t(0.975; 120) =
// 1.980, common statistical tables).
func TestT975(t *testing.T) {
	for _, df := range []float64{1, 4, 12, 29, 30, 45, 120, 1e4} {
		exact := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: math.Floor(df)}.Quantile(0.975)
		if df >= 30 {
			exact = distuv.StudentsT{Mu: 0, Sigma: 1, Nu: df}.Quantile(0.975)
		}
		if got := t975(df); math.Abs(got-exact) > 2e-4 {
			t.Errorf("t975(%g) = %.5f, want %.5f", df, got, exact)
		}
	}
	if math.Abs(t975(30)-2.042) > 5e-4 || math.Abs(t975(120)-1.980) > 5e-4 {
		t.Errorf("tables: %.4f %.4f", t975(30), t975(120))
	}
	if math.Abs(chi2q99(3)-11.345) > 1e-3 { // chi-square table, 3 df, 0.99
		t.Errorf("chi2q99(3) = %.4f", chi2q99(3))
	}
}

// TestCoverageRounded: lengths summed from depths logged to 0.01 read as
// logged (no 72.64999999999995 in the report).
func TestCoverageRounded(t *testing.T) {
	c := Coverage{Length: 0.1 + 0.2, Unusable: 241.74 - 169.09}
	c.shares()
	if c.Length != 0.3 || c.Unusable != 72.65 {
		t.Errorf("coverage %v, %v; want 0.3, 72.65", c.Length, c.Unusable)
	}
}

// TestReportJSONRounded: the report's numbers are rounded to 1e-6 at every
// door (Report.MarshalJSON, jsonnum.RoundAll).
func TestReportJSONRounded(t *testing.T) {
	r := Report{Summary: Summary{Coverage: Coverage{Length: 0.9999999999999999, Unusable: -1e-9}}}
	b, err := json.Marshal(r)
	if err != nil {
		t.Fatal(err)
	}
	if s := string(b); !strings.Contains(s, `"length":1,`) || !strings.Contains(s, `"unusable":0`) || strings.Contains(s, "99999") {
		t.Errorf("report JSON not rounded: %s", s)
	}
}
