package uncertainty

import (
	"math"
	"strings"
	"testing"

	"corvane/internal/geom"
)

func TestModel(t *testing.T) {
	m := DefaultModel()
	if m.Mark("Good", math.NaN()) != m.MarkGood || m.Mark("poor", math.NaN()) != m.MarkPoor || m.Mark("", math.NaN()) != m.MarkUnrated {
		t.Error("mark by rating")
	}
	// A logged mismatch of 30 between two marks suggests 30/sqrt(2) each;
	// a small one never narrows the rating's figure.
	if got := m.Mark("good", -30); math.Abs(got-30/math.Sqrt2) > 1e-12 {
		t.Errorf("mark from mismatch: %g", got)
	}
	if m.Mark("fair", 1) != m.MarkFair {
		t.Error("small mismatch narrowed the mark error")
	}
	// Rounding to 5 deg: a uniform error over 5 deg has sd 5/sqrt(12) = 1.443
	// (common practice); an excess of 0s and 5s of 0.6 means half the
	// readings are rounded.
	if got := RoundingSD(5, 1); math.Abs(got-1.4433756729740645) > 1e-12 {
		t.Errorf("rounding sd %g", got)
	}
	if math.Abs(RoundedShare(0.6)-0.5) > 1e-12 || RoundedShare(0.1) != 0 || RoundedShare(1) != 1 {
		t.Error("rounded share")
	}
	s := m.Sigmas(Gyro, "good", math.NaN(), RoundingSD(5, 1))
	if s.Azimuth != m.Gyro.Azimuth || math.Abs(s.Beta-math.Hypot(m.Beta, 1.4433756729740645)) > 1e-12 || s.Mark != m.MarkGood {
		t.Errorf("sigmas %+v", s)
	}
	for _, src := range m.Sources() {
		if !strings.Contains(src.Basis, "common practice") {
			t.Errorf("%s: basis %q", src.Name, src.Basis)
		}
	}
	if src := (Model{Beta: 4}).Sources()[1]; src.Value != 4 || src.Basis != "project setting" {
		t.Errorf("edited beta: %+v", src)
	}
	if _, err := ReadModel(strings.NewReader(`{"gyro": {"azimuth": 0.3}}`)); err != nil {
		t.Error(err)
	}
	if _, err := ReadModel(strings.NewReader(`{"alpha": -1}`)); err == nil || !strings.Contains(err.Error(), "alpha") {
		t.Errorf("negative alpha: %v", err)
	}
	if k, err := ParseInstrument(" Gyro "); err != nil || k != Gyro {
		t.Errorf("parse: %v %v", k, err)
	}
	if _, err := ParseInstrument("laser"); err == nil {
		t.Error("unknown instrument accepted")
	}
}

// Errors too large for the linear approximation: an alpha reading near 90
// with a 10 deg error carries the pole across the core axis, and the Monte
// Carlo region is used.
func TestMonteCarloUsedForLargeErrors(t *testing.T) {
	rd := Reading{Hole: geom.HoleDirection(30, -60), Alpha: 84, Beta: 40, Gamma: math.NaN(),
		Sigma: Sigmas{Alpha: 10, Beta: 3, Mark: 15, Azimuth: 2, Dip: 0.5}}
	res, err := Measure(rd, MC{Draws: 2000, Seed: 4})
	if err != nil {
		t.Fatal(err)
	}
	if res.Pole.Used != "monte-carlo" || res.Pole.Shape != "ellipse" {
		t.Errorf("used %s, shape %s: first order %+v, Monte Carlo %+v", res.Pole.Used, res.Pole.Shape, res.Pole.FirstOrder, res.Pole.MonteCarlo)
	}
}
