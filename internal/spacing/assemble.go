package spacing

import (
	"fmt"
	"math"
	"sort"

	"corvane/internal/dirstat"
	"corvane/internal/geom"
)

// Measurement is one logged structure for spacing: oriented (with its pole
// and set) or unoriented (alpha only).
type Measurement struct {
	Hole    string
	Depth   float64
	HoleDir geom.Vec3 // down-hole direction at the depth
	// Oriented measurements have a Pole and a Set (index into the sets, or
	// dirstat.Unassigned); unoriented ones have Alpha only.
	Oriented bool
	Pole     geom.Vec3
	Set      int
	Alpha    float64
}

// SetDef is a set for [Assemble]: its mean pole and Fisher concentration
// (from its oriented members), and the angle Fit within which an
// unoriented measurement's cone must pass the mean to be counted in it.
type SetDef struct {
	Name  string
	Mean  geom.Vec3
	Kappa float64
	Fit   float64
}

// Extent is a logged stretch of a hole: the length over which frequencies
// are counted.
type Extent struct {
	Hole     string
	From, To float64
}

// HoleTotal is every structure of a hole together, sets or not.
type HoleTotal struct {
	Hole       string
	Length     float64
	Count      int // all structures, oriented and unoriented
	Unoriented int
	P10        float64 // Count / Length
	// P10Weighted is the sum of each structure's own Terzaghi weight (from
	// its pole, or 1/sin alpha for an unoriented one) over Length.
	P10Weighted float64
	// LengthFrom says where Length came from: "intervals" or "span" (first
	// to last structure of the hole, when no extent was given: an
	// under-estimate of the logged length).
	LengthFrom string
}

// SetReport is one set's spacing with the unoriented measurements counted in it.
type SetReport struct {
	Name       string
	Result     SetResult
	Unoriented int // unoriented measurements counted in the set
}

// Report is the result of [Assemble].
type Report struct {
	Sets  []SetReport
	Holes []HoleTotal
	// Unoriented measurements: Total; Assigned to exactly one set; Ambiguous
	// (their cone fits several sets: counted only in the hole totals);
	// NoFit (fits none).
	UnorientedTotal, UnorientedAssigned, UnorientedAmbiguous, UnorientedNoFit int
	// Outside counts structures outside every extent of their hole (left out).
	Outside int
}

// Assemble groups the measurements by set and hole into runs over the
// extents (contiguous extents of a hole are joined into one run; a gap
// breaks it) and measures each set with [Analyse]. Unoriented measurements
// are counted in a set when their cone fits that set alone (see
// [Cone.Fits]); they never enter set means. Holes without extents are
// sampled over the span of their structures. Extents of one hole must not
// overlap.
func Assemble(ms []Measurement, sets []SetDef, extents []Extent, maxW float64) (Report, error) {
	var rep Report
	// runs per hole
	byHole := map[string][]Extent{}
	for _, e := range extents {
		if !(e.To > e.From) {
			return Report{}, fmt.Errorf("spacing: extent of hole %q: to %v is not greater than from %v", e.Hole, e.To, e.From)
		}
		byHole[e.Hole] = append(byHole[e.Hole], e)
	}
	var holes []string
	seen := map[string]bool{}
	span := map[string][2]float64{}
	for _, m := range ms {
		if math.IsNaN(m.Depth) || m.HoleDir.Norm() == 0 {
			return Report{}, fmt.Errorf("spacing: a structure of hole %q lacks a depth or a hole direction", m.Hole)
		}
		if !seen[m.Hole] {
			seen[m.Hole] = true
			holes = append(holes, m.Hole)
			span[m.Hole] = [2]float64{m.Depth, m.Depth}
		}
		s := span[m.Hole]
		span[m.Hole] = [2]float64{math.Min(s[0], m.Depth), math.Max(s[1], m.Depth)}
	}
	sort.Strings(holes)
	runsOf := map[string][]Extent{}
	lengthFrom := map[string]string{}
	for _, h := range holes {
		es := byHole[h]
		if len(es) == 0 {
			s := span[h]
			if s[1] > s[0] {
				runsOf[h] = []Extent{{Hole: h, From: s[0], To: s[1]}}
			}
			lengthFrom[h] = "span"
			continue
		}
		lengthFrom[h] = "intervals"
		sort.Slice(es, func(a, b int) bool { return es[a].From < es[b].From })
		var runs []Extent
		for _, e := range es {
			if n := len(runs); n > 0 && e.From < runs[n-1].To-1e-9 {
				return Report{}, fmt.Errorf("spacing: extents of hole %q overlap at %v", h, e.From)
			}
			if n := len(runs); n > 0 && math.Abs(e.From-runs[n-1].To) <= 1e-9 {
				runs[n-1].To = e.To
				continue
			}
			runs = append(runs, e)
		}
		runsOf[h] = runs
	}
	runIndex := func(m Measurement) int {
		for i, r := range runsOf[m.Hole] {
			if m.Depth >= r.From && m.Depth <= r.To {
				return i
			}
		}
		return -1
	}
	// hits[set][hole][run]
	hits := make([]map[string][][]Hit, len(sets))
	unor := make([]int, len(sets))
	for j := range hits {
		hits[j] = map[string][][]Hit{}
	}
	totals := map[string]*HoleTotal{}
	dirs := map[string][]geom.Vec3{} // summed hole direction per run
	for _, m := range ms {
		ri := runIndex(m)
		if ri < 0 {
			rep.Outside++
			continue
		}
		if dirs[m.Hole] == nil {
			dirs[m.Hole] = make([]geom.Vec3, len(runsOf[m.Hole]))
		}
		dirs[m.Hole][ri] = dirs[m.Hole][ri].Add(m.HoleDir.Unit())
		t := totals[m.Hole]
		if t == nil {
			t = &HoleTotal{Hole: m.Hole}
			totals[m.Hole] = t
		}
		t.Count++
		set := dirstat.Unassigned
		if m.Oriented {
			t.P10Weighted += dirstat.TerzaghiWeight(m.Pole, m.HoleDir.Unit(), maxW)
			set = m.Set
		} else {
			rep.UnorientedTotal++
			t.Unoriented++
			c, err := UnorientedCone(m.HoleDir, m.Alpha)
			if err != nil {
				return Report{}, fmt.Errorf("spacing: hole %q at %v: %w", m.Hole, m.Depth, err)
			}
			t.P10Weighted += c.Weight(maxW)
			fits := 0
			for j, s := range sets {
				if c.Fits(s.Mean, s.Fit) {
					fits++
					set = j
				}
			}
			switch fits {
			case 0:
				rep.UnorientedNoFit++
			case 1:
				rep.UnorientedAssigned++
				unor[set]++
			default:
				rep.UnorientedAmbiguous++
				set = dirstat.Unassigned
			}
		}
		if set < 0 || set >= len(sets) {
			continue
		}
		rs := hits[set][m.Hole]
		if rs == nil {
			rs = make([][]Hit, len(runsOf[m.Hole]))
			hits[set][m.Hole] = rs
		}
		rs[ri] = append(rs[ri], Hit{Depth: m.Depth, Hole: m.HoleDir})
	}
	for _, h := range holes {
		t := totals[h]
		if t == nil {
			t = &HoleTotal{Hole: h}
		}
		for _, r := range runsOf[h] {
			t.Length += r.To - r.From
		}
		t.LengthFrom = lengthFrom[h]
		if t.Length > 0 {
			t.P10 = float64(t.Count) / t.Length
			t.P10Weighted /= t.Length
		} else {
			t.P10, t.P10Weighted = math.NaN(), math.NaN()
		}
		rep.Holes = append(rep.Holes, *t)
	}
	for j, s := range sets {
		var runs []Run
		for _, h := range holes {
			for ri, r := range runsOf[h] {
				var hs []Hit
				if rs := hits[j][h]; rs != nil {
					hs = rs[ri]
				}
				run := Run{Hole: h, From: r.From, To: r.To, Hits: hs}
				if d := dirs[h]; d != nil {
					run.Dir = d[ri].Unit()
				}
				runs = append(runs, run)
			}
		}
		res, err := Analyse(s.Mean, s.Kappa, runs, maxW)
		if err != nil {
			return Report{}, fmt.Errorf("set %s: %w", s.Name, err)
		}
		rep.Sets = append(rep.Sets, SetReport{Name: s.Name, Result: res, Unoriented: unor[j]})
	}
	return rep, nil
}
