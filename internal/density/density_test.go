package density

import (
	"math"
	"math/rand/v2"
	"testing"

	"corvane/internal/geom"
)

func near(t *testing.T, what string, got, want, tol float64) {
	t.Helper()
	if math.IsNaN(got) || math.Abs(got-want) > tol {
		t.Errorf("%s = %.6f, want %.6f (tol %g)", what, got, want, tol)
	}
}

// TestKambNumbers checks Kamb (1959) as given in references README section 4:
// N = 100 gives A = 0.082569, theta = 23.447 degrees, E = 8.2569 = 3 sigma,
// sigma = 2.7523.
func TestKambNumbers(t *testing.T) {
	a, theta := KambArea(100)
	near(t, "A", a, 0.082569, 5e-7)
	near(t, "theta", theta, 23.447, 5e-4)
	vs := randomAxes(rand.New(rand.NewPCG(1, 1)), 100)
	e, err := New(Kamb, vs, nil)
	if err != nil {
		t.Fatal(err)
	}
	near(t, "E", e.Expected(), 8.2569, 5e-5)
	near(t, "sigma", e.Sigma(), 2.7523, 5e-5)
	near(t, "E/sigma", e.Expected()/e.Sigma(), 3, 1e-12)
}

// TestExponentialSignalToNoise: Vollmer (1995) chose f = 2(1 + N/9) so that
// the exponential kernel keeps Kamb's 3-sigma expected count for large N
// (references README section 4).
func TestExponentialSignalToNoise(t *testing.T) {
	for _, n := range []int{1000, 100000} {
		e, err := New(Exponential, randomAxes(rand.New(rand.NewPCG(2, 2)), n), nil)
		if err != nil {
			t.Fatal(err)
		}
		near(t, "E/sigma", e.Expected()/e.Sigma(), 3, 0.02)
	}
}

func randomAxes(rng *rand.Rand, n int) []geom.Vec3 {
	out := make([]geom.Vec3, n)
	for i := range out {
		z := 2*rng.Float64() - 1
		phi := 2 * math.Pi * rng.Float64()
		s := math.Sqrt(1 - z*z)
		out[i] = geom.Vec3{X: s * math.Cos(phi), Y: s * math.Sin(phi), Z: z}
	}
	return out
}

func clustered(rng *rand.Rand, n int, mean geom.Vec3, spread float64) []geom.Vec3 {
	out := make([]geom.Vec3, n)
	for i := range out {
		out[i] = mean.Add(geom.Vec3{X: rng.NormFloat64() * spread, Y: rng.NormFloat64() * spread, Z: rng.NormFloat64() * spread}).Unit()
	}
	return out
}

// integrate returns (1/2pi) * integral over the lower hemisphere of Count,
// divided by the mean kernel, by the midpoint rule in (angle from down, azimuth).
func integrate(e *Estimator, nt, np int) float64 {
	var s float64
	dt := math.Pi / 2 / float64(nt)
	dp := 2 * math.Pi / float64(np)
	for i := 0; i < nt; i++ {
		th := (float64(i) + 0.5) * dt
		st, ct := math.Sincos(th)
		for j := 0; j < np; j++ {
			ph := (float64(j) + 0.5) * dp
			sp, cp := math.Sincos(ph)
			s += e.Count(geom.Vec3{X: st * sp, Y: st * cp, Z: -ct}) * st
		}
	}
	return s * dt * dp / (2 * math.Pi) / (e.Expected() / float64(e.N()))
}

// TestIntegratesToCount: the density integrated numerically over the
// hemisphere equals the number of axes (unweighted) and is unchanged by
// weights, which are rescaled to sum to N: the mean density is 1 MUD (a
// property of the definitions).
func TestIntegratesToCount(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	vs := append(clustered(rng, 60, geom.FromTrendPlunge(30, 5), 0.2), clustered(rng, 40, geom.FromTrendPlunge(200, 60), 0.1)...)
	w := make([]float64, len(vs))
	for i := range w {
		w[i] = 1 + 2*rng.Float64()
	}
	for _, m := range []Method{Kamb, Exponential} {
		for _, ww := range [][]float64{nil, w} {
			e, err := New(m, vs, ww)
			if err != nil {
				t.Fatal(err)
			}
			near(t, m.String()+" integral", integrate(e, 180, 360), float64(len(vs)), 0.005*float64(len(vs)))
		}
	}
	// a large N exercises the indexed path
	big := append(clustered(rng, 3000, geom.FromTrendPlunge(100, 10), 0.15), randomAxes(rng, 2000)...)
	for _, m := range []Method{Kamb, Exponential} {
		e, _ := New(m, big, nil)
		if e.brute {
			t.Fatal("expected the indexed path")
		}
		near(t, m.String()+" integral N=5000", integrate(e, 300, 600), 5000, 0.005*5000)
	}
}

// TestIndexMatchesDirectSum: the cell index gives the same counts as a direct
// sum over all axes of the kernel definitions (Kamb 1959, Vollmer 1995).
func TestIndexMatchesDirectSum(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 9))
	vs := append(clustered(rng, 1500, geom.FromTrendPlunge(80, 2), 0.1), randomAxes(rng, 500)...)
	w := make([]float64, len(vs))
	var sw float64
	for i := range w {
		w[i] = 0.5 + rng.Float64()
		sw += w[i]
	}
	n := float64(len(vs))
	a, _ := KambArea(len(vs))
	f := 2 * (1 + n/9)
	for _, m := range []Method{Kamb, Exponential} {
		e, _ := New(m, vs, w)
		for q := 0; q < 300; q++ {
			v := randomAxes(rng, 1)[0]
			var direct float64
			for i, p := range vs {
				c := math.Abs(p.Dot(v))
				k := 0.0
				if m == Kamb && 1-c <= a {
					k = 1
				}
				if m == Exponential {
					k = math.Exp(f * (c - 1))
				}
				direct += w[i] * n / sw * k
			}
			tol := 1e-9
			if m == Exponential {
				tol = 1e-6 * n // truncation at 1e-6 relative
			}
			if got := e.Count(v); math.Abs(got-direct) > tol {
				t.Fatalf("%v at %v: indexed %v, direct %v", m, v, got, direct)
			}
			if got := e.Count(v.Neg()); math.Abs(got-direct) > tol {
				t.Fatalf("%v at -v: %v, direct %v", m, got, direct)
			}
		}
	}
}

func TestErrors(t *testing.T) {
	if _, err := New(Kamb, nil, nil); err == nil {
		t.Error("no axes: want error")
	}
	if _, err := New(Kamb, []geom.Vec3{{Z: -1}}, []float64{-1}); err == nil {
		t.Error("negative weight: want error")
	}
	if _, err := Parse("gauss"); err == nil {
		t.Error("unknown method: want error")
	}
}

func benchDirs(n int) []geom.Vec3 {
	// an n x n grid on the equal-area net, nodes inside the primitive
	var dirs []geom.Vec3
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			x := -1 + 2*(float64(i)+0.5)/float64(n)
			y := -1 + 2*(float64(j)+0.5)/float64(n)
			r := math.Hypot(x, y)
			if r > 1 {
				continue
			}
			t := 2 * math.Asin(r/math.Sqrt2)
			st, ct := math.Sincos(t)
			if r == 0 {
				dirs = append(dirs, geom.Vec3{Z: -1})
				continue
			}
			dirs = append(dirs, geom.Vec3{X: st * x / r, Y: st * y / r, Z: -ct})
		}
	}
	return dirs
}

func benchDensity(b *testing.B, m Method, n, grid int) {
	rng := rand.New(rand.NewPCG(1, 2))
	vs := append(clustered(rng, n/2, geom.FromTrendPlunge(40, 30), 0.15), randomAxes(rng, n-n/2)...)
	dirs := benchDirs(grid)
	out := make([]float64, len(dirs))
	b.ResetTimer()
	for b.Loop() {
		e, err := New(m, vs, nil)
		if err != nil {
			b.Fatal(err)
		}
		e.Counts(dirs, out)
	}
	b.ReportMetric(float64(len(dirs)), "nodes")
}

// Benchmarks: building the estimator and evaluating a 200 x 200 net grid
// (31,416 nodes inside the primitive), single goroutine.
func BenchmarkKamb100k(b *testing.B)        { benchDensity(b, Kamb, 100_000, 200) }
func BenchmarkExponential100k(b *testing.B) { benchDensity(b, Exponential, 100_000, 200) }
func BenchmarkExponential10k(b *testing.B)  { benchDensity(b, Exponential, 10_000, 200) }
func BenchmarkExponential1k(b *testing.B)   { benchDensity(b, Exponential, 1_000, 200) }
