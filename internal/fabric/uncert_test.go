package fabric

import (
	"math"
	"math/rand/v2"
	"testing"

	"corvane/internal/geom"
	"corvane/internal/uncertainty"
)

// uncRows is a set of planes near 120/40 logged in three holes, two runs
// each, five planes per run, every row with its hole direction and errors
// (run_from NaN when shared is false: each mark its own).
func uncRows(shared bool, conf string) []Row {
	r := rand.New(rand.NewPCG(7, 8))
	em := uncertainty.Model{}
	var rows []Row
	for h, hd := range [][2]float64{{300, -60}, {20, -55}, {200, -70}} {
		hole := geom.HoleDirection(hd[0], hd[1])
		for run := 0; run < 2; run++ {
			from := math.NaN()
			if shared {
				from = 10 + 3*float64(run)
			}
			for k := 0; k < 5; k++ {
				p := geom.Plane{Dip: 40 + 8*r.NormFloat64(), DipDirection: 120 + 8*r.NormFloat64()}
				rows = append(rows, Row{Type: "JN", HasPlane: true, Plane: p, HasHole: true, Hole: hole,
					Errors: RowErrors(em, string(rune('A'+h)), "magnetic", conf, math.NaN(), from)})
			}
		}
	}
	return rows
}

// The set statistics carry the measurement errors into each set of planes:
// the Fisher cone is the summary's (the same poles), marks shared by a run
// widen the cone of the mean beyond independent marks (shared errors do not
// average out), a poor mark makes the measurement errors dominate where a
// good one leaves the sampling cone larger, and rows without a hole
// direction are left out and counted.
func TestSetMeasurementUncertainty(t *testing.T) {
	stats := func(rows []Row, unc bool) Set {
		rep, err := Stats(Input{Rows: rows}, Options{Uncertainty: unc})
		if err != nil {
			t.Fatal(err)
		}
		if unc != (rep.Uncertainty != nil) {
			t.Fatalf("report note %v with uncertainty %v", rep.Uncertainty, unc)
		}
		return rep.Planes.All
	}
	if s := stats(uncRows(true, "good"), false); s.Uncertainty != nil {
		t.Errorf("uncertainty off: %+v", s.Uncertainty)
	}
	good := stats(uncRows(true, "good"), true)
	u := good.Uncertainty
	if u == nil || u.N != 30 || u.Left != 0 {
		t.Fatalf("good marks: %+v", u)
	}
	if math.Abs(float64(u.Fisher95-good.Unweighted.Cone95)) > 1e-6 {
		t.Errorf("Fisher cone %v, summary %v", u.Fisher95, good.Unweighted.Cone95)
	}
	if u.Dominant != "sampling" {
		t.Errorf("good marks: %+v, want the sampling cone to dominate", u)
	}
	poorShared := stats(uncRows(true, "poor"), true).Uncertainty
	poorOwn := stats(uncRows(false, "poor"), true).Uncertainty
	if poorShared.Dominant != "measurement" || !(poorShared.Measurement95 > 1.3*poorOwn.Measurement95) || !(poorShared.Shared95 > poorOwn.Shared95) {
		t.Errorf("poor marks shared by runs %+v, each its own %+v", poorShared, poorOwn)
	}
	rows := uncRows(true, "good")
	rows[0].HasHole, rows[1].Errors = false, nil
	if u := stats(rows, true).Uncertainty; u.N != 28 || u.Left != 2 || u.Note == "" {
		t.Errorf("two rows without errors: %+v", u)
	}
	// The same figures as uncertainty.SetMean of the members read off the
	// hole: the pipeline adds no rule of its own to the engine.
	var ms []uncertainty.Member
	for _, r := range uncRows(true, "poor") {
		m, ok := member(r)
		if !ok {
			t.Fatal("member")
		}
		ms = append(ms, m)
	}
	res, err := uncertainty.SetMean(ms, uncertainty.MC{Draws: SetDraws, Seed: SetSeed})
	if err != nil || Num(res.Measurement95) != poorShared.Measurement95 || Num(res.Combined95) != poorShared.Combined95 {
		t.Errorf("SetMean %+v %v, pipeline %+v", res, err, poorShared)
	}
	// The members reproduce the planes (the core angles under the fixed
	// convention, back through the error-free conversion).
	for i, r := range uncRows(true, "poor") {
		res, err := uncertainty.Measure(ms[i].Reading, uncertainty.MC{})
		if err != nil {
			t.Fatal(err)
		}
		if d := geom.AxialAngle(geom.FromTrendPlunge(res.Pole.Trend, res.Pole.Plunge), r.Plane.Normal()); d > 1e-9 {
			t.Fatalf("row %d: pole off by %g deg", i, d)
		}
	}
}
