package qa

import (
	"math"
	"sort"

	"corvane/internal/geom"
)

// coreItem is a core measurement as the pick matching sees it.
type coreItem struct {
	depth float64
	n, h  geom.Vec3 // true pole and down-hole direction
	run   int       // index in the hole's runs, -1 outside any run
	line  int
}

// pickItem is a reference pick.
type pickItem struct {
	depth float64
	n     geom.Vec3
	line  int
}

// pickAngleScale is the angular misfit, degrees, that costs as much as a
// depth difference of one window in the depth-shift search.
const pickAngleScale = 30.0

// shiftCost returns the depth-shift objective for shift s: the sum over
// picks of min(1, (dz/w)^2 + (misfit/30)^2) for the best core item within
// the window w of pick depth + s (1 when there is none). Capping each term
// keeps picks in a badly rotated run, or with no partner, from pulling the
// shift: they cost the same at every shift. core must be sorted by depth.
func shiftCost(picks []pickItem, core []coreItem, s, w float64) float64 {
	total := 0.0
	for _, p := range picks {
		t := p.depth + s
		best := 1.0
		k := sort.Search(len(core), func(i int) bool { return core[i].depth >= t-w })
		for ; k < len(core) && core[k].depth <= t+w; k++ {
			dz := (core[k].depth - t) / w
			a := geom.AxialAngle(p.n, core[k].n) / pickAngleScale
			if c := dz*dz + a*a; c < best {
				best = c
			}
		}
		total += best
	}
	return total
}

// estimateShift finds the constant depth shift (core depth = pick depth +
// shift) by a grid search over [-max, max] in steps of step minimising
// [shiftCost]; ties go to the smaller |shift|.
func estimateShift(picks []pickItem, core []coreItem, max, step, w float64) float64 {
	best, bestS := math.Inf(1), 0.0
	m := int(math.Round(max / step))
	for i := -m; i <= m; i++ {
		s := float64(i) * step
		c := shiftCost(picks, core, s, w)
		if c < best-1e-9 || (math.Abs(c-best) <= 1e-9 && math.Abs(s) < math.Abs(bestS)) {
			best, bestS = c, s
		}
	}
	return bestS
}

// matchPicks pairs picks with core items one to one by nearest depth within
// w after the shift (greedy on |dz|, smallest first). It returns for each
// pick the matched core index or -1.
func matchPicks(picks []pickItem, core []coreItem, s, w float64) []int {
	type pair struct {
		p, c int
		dz   float64
	}
	var pairs []pair
	for i, p := range picks {
		t := p.depth + s
		k := sort.Search(len(core), func(j int) bool { return core[j].depth >= t-w })
		for ; k < len(core) && core[k].depth <= t+w; k++ {
			pairs = append(pairs, pair{i, k, math.Abs(core[k].depth - t)})
		}
	}
	sort.SliceStable(pairs, func(i, j int) bool { return pairs[i].dz < pairs[j].dz })
	match := make([]int, len(picks))
	for i := range match {
		match[i] = -1
	}
	used := make([]bool, len(core))
	for _, pr := range pairs {
		if match[pr.p] >= 0 || used[pr.c] {
			continue
		}
		match[pr.p] = pr.c
		used[pr.c] = true
	}
	return match
}

// misfitStats summarises angles in degrees.
func misfitStats(xs []float64) MisfitStats {
	if len(xs) == 0 {
		return MisfitStats{}
	}
	s := append([]float64(nil), xs...)
	sort.Float64s(s)
	sum := 0.0
	for _, x := range s {
		sum += x
	}
	return MisfitStats{
		N:      len(s),
		Mean:   sum / float64(len(s)),
		Median: median(s),
		P90:    s[int(math.Ceil(0.9*float64(len(s))))-1],
		Max:    s[len(s)-1],
	}
}
