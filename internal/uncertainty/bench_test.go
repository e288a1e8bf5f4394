package uncertainty

import (
	"math"
	"math/rand/v2"
	"runtime"
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
