package spacing

import (
	"math"
	"testing"

	"corvane/internal/dirstat"
	"corvane/internal/geom"
)

// TestAssemble: an exact case. A vertical hole logged 0-10 m in two
// contiguous intervals and 20-30 m; horizontal planes of set 0 at 1, 2, 4 m
// and 22 m; an unoriented measurement at alpha 90 (square to the core) at
// 6 m fits set 0 only; one at alpha 30 fits set 1 (planes dipping 60) only,
// and one at 15 m lies in the gap.
func TestAssemble(t *testing.T) {
	down := geom.Vec3{Z: -1}
	flat := geom.Plane{Dip: 0, DipDirection: 0}.Normal()
	steep := geom.Plane{Dip: 60, DipDirection: 90}.Normal()
	or := func(d float64, set int, pole geom.Vec3) Measurement {
		return Measurement{Hole: "A", Depth: d, HoleDir: down, Oriented: true, Pole: pole, Set: set}
	}
	un := func(d, alpha float64) Measurement {
		return Measurement{Hole: "A", Depth: d, HoleDir: down, Alpha: alpha}
	}
	ms := []Measurement{or(1, 0, flat), or(2, 0, flat), or(4, 0, flat), or(22, 0, flat), un(6, 90), un(7, 30), un(15, 90),
		or(8, 1, steep), or(9, dirstat.Unassigned, steep)}
	sets := []SetDef{{Name: "flat", Mean: flat, Kappa: math.Inf(1), Fit: 5}, {Name: "steep", Mean: steep, Kappa: math.Inf(1), Fit: 5}}
	ext := []Extent{{"A", 0, 5}, {"A", 5, 10}, {"A", 20, 30}}
	rep, err := Assemble(ms, sets, ext, 3)
	if err != nil {
		t.Fatal(err)
	}
	if rep.Outside != 1 || rep.UnorientedTotal != 2 || rep.UnorientedAssigned != 2 || rep.UnorientedNoFit != 0 {
		t.Errorf("counts %+v", rep)
	}
	f := rep.Sets[0]
	if f.Unoriented != 1 || f.Result.Count != 5 || f.Result.Length != 20 || len(f.Result.Holes) != 2 {
		t.Fatalf("flat set %+v", f)
	}
	// spacings within runs only: 1, 2, 2 in the first run; none across the gap
	near(t, "median spacing", f.Result.True.Median, 2, 1e-12)
	if f.Result.True.N != 3 {
		t.Errorf("spacings %v", f.Result.True.Values)
	}
	s := rep.Sets[1]
	// set 1 at 60 degrees to the hole: weight 2 each
	near(t, "steep P10 along the normal", s.Result.P10Normal, 2*2/20.0, 1e-12)
	h := rep.Holes[0]
	if h.Count != 8 || h.Unoriented != 2 || h.Length != 20 || h.LengthFrom != "intervals" {
		t.Errorf("hole %+v", h)
	}
	// weights: 4 flat (1), alpha 90 (1), alpha 30 (2), two steep (2 each)
	near(t, "weighted P10", h.P10Weighted, (4+1+2+2+2)/20.0, 1e-12)
	if _, err := Assemble([]Measurement{{Hole: "A", Depth: math.NaN(), HoleDir: down}}, sets, nil, 3); err == nil {
		t.Error("no depth accepted")
	}
	if _, err := Assemble(ms, sets, []Extent{{"A", 0, 5}, {"A", 4, 6}}, 3); err == nil {
		t.Error("overlapping extents accepted")
	}
	// Without extents the span of the structures is the length.
	rep, _ = Assemble(ms, sets, nil, 3)
	if rep.Holes[0].Length != 21 || rep.Holes[0].LengthFrom != "span" {
		t.Errorf("span: %+v", rep.Holes[0])
	}
}
