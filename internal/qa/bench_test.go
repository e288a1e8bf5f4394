package qa

import (
	"fmt"
	"math/rand/v2"
	"testing"
)

// programme builds a synthetic programme of holes x 300 m holes with 3 m runs
// and perRun+1 measurements per run (perRun bedding, one joint), two runs per
// hole with mark errors, and reference picks over 60 m of every tenth hole.
func programme(b testing.TB, holes, perRun int) Input {
	r := rand.New(rand.NewPCG(51, 52))
	var in Input
	for i := 0; i < holes; i++ {
		synthHole{id: fmt.Sprintf("H%03d", i), az: float64((i*37 + 10) % 340), dip: -50 - float64(i%25), flatten: 1, depth: 300, runLen: 3, perRun: perRun,
			rotations: map[int]float64{i % 100: 30, (i + 50) % 100: -20}}.build(b, r, &in)
	}
	for _, m := range in.Measurements {
		var hole int
		fmt.Sscanf(m.HoleID, "H%d", &hole)
		if hole%10 == 0 && m.Depth >= 100 && m.Depth < 160 {
			in.Picks = append(in.Picks, Pick{HoleID: m.HoleID, Depth: m.Depth - 0.5, Dip: 50, DipDirection: 40})
		}
	}
	return in
}

// BenchmarkRun: QA of a whole programme. 200 holes x 100 runs x 5
// measurements = 100,000 measurements.
func BenchmarkRun(b *testing.B) {
	for _, c := range []struct{ holes, perRun int }{{20, 4}, {200, 4}} {
		in := programme(b, c.holes, c.perRun)
		b.Run(fmt.Sprintf("holes=%d/measurements=%d", c.holes, len(in.Measurements)), func(b *testing.B) {
			o := Options{PersistentType: "bedding", MinRunCount: 4}
			for b.Loop() {
				rep := Run(in, o)
				if rep.Summary.RunsFlagged == 0 {
					b.Fatal("no runs flagged")
				}
			}
		})
	}
}
