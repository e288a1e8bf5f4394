package csvio

import (
	"math/rand/v2"
	"testing"
)

// BenchmarkAppendFloat formats the numbers of a converted row: angles with
// 2 decimals and coordinates with 3.
func BenchmarkAppendFloat(b *testing.B) {
	r := rand.New(rand.NewPCG(1, 2))
	angles, coords := make([]float64, 1024), make([]float64, 1024)
	for i := range angles {
		angles[i] = r.Float64() * 360
		coords[i] = 6500000 + r.Float64()*5000
	}
	buf := make([]byte, 0, 64<<10)
	b.Run("angle", func(b *testing.B) {
		for i := 0; b.Loop(); i++ {
			if len(buf) > 60<<10 {
				buf = buf[:0]
			}
			buf = AppendFloat(buf, angles[i&1023], 2)
		}
	})
	b.Run("coordinate", func(b *testing.B) {
		for i := 0; b.Loop(); i++ {
			if len(buf) > 60<<10 {
				buf = buf[:0]
			}
			buf = AppendFloat(buf, coords[i&1023], 3)
		}
	})
}
