package csvio

import (
	"bytes"
	"fmt"
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

// BenchmarkReadSurveys reads a surveys file of 2,000 holes with a station
// every 30 m (26,000 rows), as the convert benchmark's programme.
func BenchmarkReadSurveys(b *testing.B) {
	r := rand.New(rand.NewPCG(1, 2))
	var buf bytes.Buffer
	buf.WriteString("hole_id,depth,azimuth,dip\n")
	for i := 0; i < 2000; i++ {
		for d := 0; d < 390; d += 30 {
			fmt.Fprintf(&buf, "B%04d,%d,%.1f,%.1f\n", i, d, r.Float64()*360, -50-r.Float64()*30)
		}
	}
	b.ReportAllocs()
	for b.Loop() {
		rows, err := ReadSurveys(bytes.NewReader(buf.Bytes()), "s.csv")
		if err != nil || len(rows) != 26000 {
			b.Fatal(err, len(rows))
		}
	}
}
