package coreinterval

import (
	"math"
	"strings"
	"testing"
)

func nan() float64 { return math.NaN() }

func near(t *testing.T, what string, got, want, tol float64) {
	t.Helper()
	if math.Abs(got-want) > tol || math.IsNaN(got) != math.IsNaN(want) {
		t.Errorf("%s = %v, want %v (tol %v)", what, got, want, tol)
	}
}

// TestDeereWorkedExample: the RQD example of Deere & Deere (1988, ASTM STP
// 984, fig. 1, values from memory): a core run of 200 cm whose pieces at
// least 10 cm long measure 38, 17, 20 and 43 cm, the rest being pieces under
// 10 cm and a length with no recovery, has RQD = 118/200 = 59%.
func TestDeereWorkedExample(t *testing.T) {
	// Pieces in metres, with short pieces (under 100 mm) mixed in; 0.10 m is
	// exactly at the threshold and counts (">= 100 mm").
	pieces := []float64{0.38, 0.05, 0.17, 0.04, 0.06, 0.03, 0.20, 0.43}
	iv := Interval{From: 10, To: 12, Recovered: 1.36, Solid: nan(), Sound: nan(), Pieces: pieces, NaturalBreaks: 8, InducedBreaks: -1}
	if ps := ValidateOne(0, iv); len(ps) > 0 {
		t.Fatal(ps[0])
	}
	d := Derive(iv, MinPiece)
	near(t, "RQD (Deere & Deere 1988)", d.RQD, 59, 1e-9)
	near(t, "TCR", d.TCR, 68, 1e-9)
	near(t, "FF", d.FF, 4, 1e-12)
	if d.RQDFrom != "pieces" {
		t.Errorf("RQDFrom = %q", d.RQDFrom)
	}
	// The same run logged as a sound length gives the same RQD.
	iv2 := iv
	iv2.Pieces, iv2.Sound = nil, 1.18
	near(t, "RQD from sound length", Derive(iv2, MinPiece).RQD, 59, 1e-9)
}

// TestExactCases: one run with known pieces (common practice: a piece exactly
// 100 mm counts, one just under does not; RQD is over the drilled length).
func TestExactCases(t *testing.T) {
	iv := Interval{From: 0, To: 3, Recovered: 2.4, Solid: 2.0, Sound: nan(),
		Pieces: []float64{1.0, 0.1, 0.0999, 0.5, 0.3001}, NaturalBreaks: 6, InducedBreaks: 2}
	d := Derive(iv, MinPiece)
	near(t, "RQD", d.RQD, 100*(1.0+0.1+0.5+0.3001)/3, 1e-12)
	near(t, "TCR", d.TCR, 80, 1e-12)
	near(t, "SCR", d.SCR, 100*2.0/3, 1e-12)
	near(t, "FF", d.FF, 2, 1e-12)
	// In feet: a 0.33 ft piece (100.6 mm) counts, 0.32 ft (97.5 mm) does not.
	near(t, "sound in feet", SoundLength([]float64{0.33, 0.32, 2}, MinPieceFeet), 2.33, 1e-12)
	// No pieces logged: RQD unknown, not zero.
	d = Derive(Interval{From: 0, To: 1, Recovered: 1, Solid: nan(), Sound: nan(), NaturalBreaks: -1, InducedBreaks: -1}, MinPiece)
	if !math.IsNaN(d.RQD) || !math.IsNaN(d.FF) || !math.IsNaN(d.SCR) {
		t.Errorf("unknown values should be NaN: %+v", d)
	}
	// All core lost: RQD 0 from an empty piece list.
	d = Derive(Interval{From: 0, To: 1, Recovered: 0, Solid: 0, Sound: nan(), Pieces: []float64{}, NaturalBreaks: 0, InducedBreaks: 0}, MinPiece)
	near(t, "RQD with no core", d.RQD, 0, 0)
}

func TestCombine(t *testing.T) {
	a := Derive(Interval{From: 0, To: 1, Recovered: 1, Solid: 0.8, Sound: 0.5, NaturalBreaks: 3, InducedBreaks: 1}, MinPiece)
	b := Derive(Interval{From: 1, To: 4, Recovered: 2.5, Solid: 2, Sound: 1.9, NaturalBreaks: 5, InducedBreaks: -1}, MinPiece)
	c := Combine([]Derived{a, b})
	near(t, "length", c.Length, 4, 0)
	near(t, "TCR", c.TCR, 100*3.5/4, 1e-12)
	near(t, "SCR", c.SCR, 100*2.8/4, 1e-12)
	near(t, "RQD", c.RQD, 100*2.4/4, 1e-12)
	near(t, "FF", c.FF, 2, 1e-12)
	if c.Induced != -1 {
		t.Errorf("induced with a missing count = %d, want -1", c.Induced)
	}
	d := Derive(Interval{From: 4, To: 5, Recovered: nan(), Solid: nan(), Sound: nan(), NaturalBreaks: 1, InducedBreaks: 0}, MinPiece)
	if c := Combine([]Derived{a, d}); !math.IsNaN(c.TCR) || !math.IsNaN(c.RQD) {
		t.Errorf("a total over an interval without recovery should be NaN: %+v", c)
	}
}

func TestValidate(t *testing.T) {
	good := func(from, to float64) Interval {
		return Interval{From: from, To: to, Recovered: nan(), Solid: nan(), Sound: nan(), NaturalBreaks: -1, InducedBreaks: -1}
	}
	ivs := []Interval{good(0, 1.5), good(3, 4.5), good(1.5, 3)} // any order, touching ends
	if ps := Validate(ivs, 4.5); len(ps) != 0 {
		t.Fatalf("good intervals: %v", ps)
	}
	cases := []struct {
		name  string
		ivs   []Interval
		depth float64
		index int
		field string
		msg   string
	}{
		{"from after to", []Interval{good(2, 1)}, nan(), 0, "to", "not greater than from"},
		{"from equals to", []Interval{good(2, 2)}, nan(), 0, "to", "not greater than from"},
		{"negative from", []Interval{good(-1, 1)}, nan(), 0, "from", ">= 0"},
		{"overlap", []Interval{good(0, 2), good(5, 6), good(1.9, 3)}, nan(), 2, "from", "overlaps the interval 0 to 2"},
		{"inside another", []Interval{good(0, 10), good(2, 3)}, nan(), 1, "from", "overlaps the interval 0 to 10"},
		{"beyond the hole", []Interval{good(0, 2), good(2, 10.5)}, 10, 1, "to", "beyond the end of the hole"},
		{"recovered > length", []Interval{{From: 0, To: 1, Recovered: 1.2, Solid: nan(), Sound: nan()}}, nan(), 0, "recovered", "more than the interval length"},
		{"solid > recovered", []Interval{{From: 0, To: 1, Recovered: 0.8, Solid: 0.9, Sound: nan()}}, nan(), 0, "solid", "more than recovered"},
		{"sound > solid", []Interval{{From: 0, To: 1, Recovered: 1, Solid: 0.5, Sound: 0.6}}, nan(), 0, "sound", "more than solid"},
		{"pieces > recovered", []Interval{{From: 0, To: 1, Recovered: 0.5, Solid: nan(), Sound: nan(), Pieces: []float64{0.3, 0.3}}}, nan(), 0, "pieces", "sum to 0.6"},
		{"zero piece", []Interval{{From: 0, To: 1, Recovered: nan(), Solid: nan(), Sound: nan(), Pieces: []float64{0.3, 0}}}, nan(), 0, "pieces", "piece 2"},
		{"sound and pieces", []Interval{{From: 0, To: 1, Recovered: nan(), Solid: nan(), Sound: 0.2, Pieces: []float64{0.3}}}, nan(), 0, "pieces", "not both"},
		{"negative count", []Interval{{From: 0, To: 1, Recovered: nan(), Solid: nan(), Sound: nan(), NaturalBreaks: -3}}, nan(), 0, "natural_breaks", "negative"},
	}
	for _, c := range cases {
		ps := Validate(c.ivs, c.depth)
		if len(ps) != 1 {
			t.Errorf("%s: %d problems %v, want 1", c.name, len(ps), ps)
			continue
		}
		p := ps[0]
		if strings.Contains(c.msg, "overlaps") != (p.Other == 0) {
			t.Errorf("%s: Other = %d", c.name, p.Other)
		}
		if p.Index != c.index || p.Field != c.field || !strings.Contains(p.Msg, c.msg) {
			t.Errorf("%s: got %v (index %d field %s), want index %d field %s containing %q", c.name, p, p.Index, p.Field, c.index, c.field, c.msg)
		}
	}
}
