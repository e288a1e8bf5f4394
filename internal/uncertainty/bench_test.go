package uncertainty

import (
	"math"
	"math/rand/v2"
	"runtime"
	"strconv"
	"syscall"
	"testing"

	"corvane/internal/geom"
)

// BenchmarkMeasureAll: the uncertainty of 1e5 measurements by Monte Carlo
// with 1,000 draws each (pole only), on all cores.
func BenchmarkMeasureAll(b *testing.B) {
	r := rand.New(rand.NewPCG(1, 1))
	rs := make([]Reading, 100_000)
	m := DefaultModel()
	for i := range rs {
		rs[i] = Reading{Hole: geom.HoleDirection(360*r.Float64(), -40-40*r.Float64()), Alpha: 10 + 75*r.Float64(),
			Beta: 360 * r.Float64(), Gamma: math.NaN(), Sigma: m.Sigmas(Magnetic, "good", math.NaN(), 0)}
	}
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		_, errs := MeasureAll(rs, MC{Draws: 1000, Seed: 1}, runtime.GOMAXPROCS(0))
		if errs[0] != nil {
			b.Fatal(errs[0])
		}
	}
}

// BenchmarkMeasure: one measurement through a Measurer with the
// per-measurement run every door uses (PerMeasurement: first order, Monte
// Carlo of 1,000 draws only where NeedsMonteCarlo says so), per
// measurement: first-order (poles 20-70 degrees from the core axis, no
// Monte Carlo), fallback (poles within 3 degrees of the axis, every one
// sent to Monte Carlo) and mix (the rows of the convert benchmark: alpha a
// whole degree 0-90, a lineation on one in four, unrated marks, magnetic
// surveys; about one in ten sent to Monte Carlo) and convert (the same
// rows with the survey instrument unknown, as in the convert benchmark,
// whose files name none).
func BenchmarkMeasure(b *testing.B) {
	m := DefaultModel()
	lineOnOneInFour := func(i int, r *rand.Rand) float64 {
		if i%4 == 0 {
			return float64(r.IntN(360))
		}
		return math.NaN()
	}
	kinds := []struct {
		name  string
		alpha func(r *rand.Rand) float64
		gamma func(i int, r *rand.Rand) float64
		conf  string
		inst  Instrument
	}{
		{"first-order", func(r *rand.Rand) float64 { return 20 + 50*r.Float64() }, func(int, *rand.Rand) float64 { return math.NaN() }, "fair", Magnetic},
		{"fallback", func(r *rand.Rand) float64 { return 87 + 3*r.Float64() }, func(int, *rand.Rand) float64 { return math.NaN() }, "fair", Magnetic},
		{"mix", func(r *rand.Rand) float64 { return float64(r.IntN(91)) }, lineOnOneInFour, "", Magnetic},
		{"convert", func(r *rand.Rand) float64 { return float64(r.IntN(91)) }, lineOnOneInFour, "", UnknownSurvey},
	}
	for _, k := range kinds {
		r := rand.New(rand.NewPCG(5, 6))
		rs := make([]Reading, 4096)
		for i := range rs {
			rs[i] = Reading{Hole: geom.HoleDirection(360*r.Float64(), -50-30*r.Float64()), Alpha: k.alpha(r),
				Beta: float64(r.IntN(360)), Gamma: k.gamma(i, r), Sigma: m.Sigmas(k.inst, k.conf, math.NaN(), 0)}
		}
		b.Run(k.name, func(b *testing.B) {
			ms := NewMeasurer(PerMeasurement)
			b.ReportAllocs()
			i := 0
			cpu0 := cpuTime(b)
			for b.Loop() {
				if _, err := ms.Measure(rs[i%len(rs)]); err != nil {
					b.Fatal(err)
				}
				i++
			}
			b.ReportMetric(float64(cpuTime(b)-cpu0)/float64(b.N), "cpu-ns/op")
		})
	}
}

// BenchmarkSetFirstOrder: the first-order uncertainty of the mean pole of
// a set of 1e5 members in 200 holes (one survey key each) and runs of 5
// (one mark key each).
func BenchmarkSetFirstOrder(b *testing.B) {
	r := rand.New(rand.NewPCG(7, 8))
	m := DefaultModel()
	ms := make([]Member, 100_000)
	runs, holes := make([]string, len(ms)/5), make([]string, 200)
	for i := range runs {
		runs[i] = "r" + strconv.Itoa(i)
	}
	for i := range holes {
		holes[i] = "h" + strconv.Itoa(i)
	}
	for i := range ms {
		h := i / 500
		ms[i] = Member{Reading: Reading{Hole: geom.HoleDirection(float64(37*h%360), -50-float64(h%30)), Alpha: 30 + 20*r.Float64(),
			Beta: 100 + 30*r.Float64(), Gamma: math.NaN(), Sigma: m.Sigmas(Magnetic, "fair", math.NaN(), 0)},
			Run: runs[i/5], Survey: holes[h]}
	}
	b.ReportAllocs()
	for b.Loop() {
		if _, err := SetMeanFirstOrder(ms); err != nil {
			b.Fatal(err)
		}
	}
}

// cpuTime returns the process's user plus system CPU time in nanoseconds:
// on a shared machine the wall time per measurement depends on the other
// load, the CPU time much less.
func cpuTime(b *testing.B) int64 {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		b.Fatal(err)
	}
	return ru.Utime.Nano() + ru.Stime.Nano()
}
