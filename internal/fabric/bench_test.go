package fabric

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strconv"
	"testing"

	"corvane/internal/geom"
	"corvane/internal/uncertainty"
)

// benchRows returns n planes of four types (two fabrics) logged in holes of
// 500 rows, runs of 5, every row with its hole direction and errors.
func benchRows(n int) []Row {
	r := rand.New(rand.NewPCG(3, 4))
	em := uncertainty.Model{}
	types := []string{"JN", "BD", "FT", "VN"}
	rows := make([]Row, 0, n)
	for i := 0; i < n; i++ {
		h := i / 500
		hole := geom.HoleDirection(float64(37*h%360), -50-float64(h%30))
		ty := types[i%4]
		dd, dip := 120.0, 40.0
		if i%2 == 1 {
			dd, dip = 250, 70
		}
		p := geom.Plane{Dip: dip + 8*r.NormFloat64(), DipDirection: math.Mod(dd+8*r.NormFloat64()+360, 360)}
		rows = append(rows, Row{Type: ty, HasPlane: true, Plane: p, HasHole: true, Hole: hole,
			Errors: RowErrors(em, strconv.Itoa(h), "magnetic", "fair", math.NaN(), float64(i%500/5)*3)})
	}
	return rows
}

// The statistics report of 1e5 planes (and of 5,000, the most the Monte
// Carlo method carries per report) with sets by type, as `corvane stats
// --sets type` and the statistics route make it, by each set_uncertainty
// method: first-order (the default), monte-carlo (the default before it)
// and off.
func BenchmarkStats(b *testing.B) {
	for _, n := range []int{5_000, 100_000} {
		rows := benchRows(n)
		for _, m := range []string{SetUncertaintyFirstOrder, SetUncertaintyMonteCarlo, SetUncertaintyOff} {
			b.Run(fmt.Sprintf("rows=%d/set_uncertainty=%s", n, m), func(b *testing.B) {
				o := Options{Sets: Sets{ByType: true}, Uncertainty: m != SetUncertaintyOff, UncertaintyMethod: m}
				for b.Loop() {
					rep, err := Stats(Input{Rows: rows}, o)
					if err != nil || rep.Planes.All.Uncertainty == nil && m != SetUncertaintyOff {
						b.Fatal(err)
					}
				}
			})
		}
	}
}
