package qa

import (
	"context"
	"fmt"
	"math"
	"sort"

	"corvane/internal/geom"
	"corvane/internal/words"
)

// coreItem is a core measurement as the pick matching sees it.
type coreItem struct {
	depth float64
	n, h  geom.Vec3 // true pole and down-hole direction
	run   int       // index in the hole's runs, -1 outside any run
	line  int
	id    int64
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
// [shiftCost]; ties go to the smaller |shift|. It gives up, returning 0,
// when ctx is done.
func estimateShift(ctx context.Context, picks []pickItem, core []coreItem, max, step, w float64) float64 {
	best, bestS := math.Inf(1), 0.0
	m := int(math.Round(max / step))
	for i := -m; i <= m; i++ {
		if i%64 == 0 && ctx.Err() != nil {
			return 0
		}
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

// pickChecks compares the hole's core measurements (all types) with its
// reference picks: depth shift, matching, misfit per hole and per run, the
// beta offset each run's matches imply, and the items left unmatched.
func pickChecks(h *holeData, o Options) []Finding {
	var out []Finding
	id := h.c.HoleID
	hr := h.report
	var picks []pickItem
	for _, p := range h.picks {
		if math.IsNaN(p.Depth) || p.Depth < 0 || !(p.Dip >= 0 && p.Dip <= 90) || !(p.DipDirection >= 0 && p.DipDirection <= 360) {
			out = append(out, Finding{Check: CheckMeasurementInvalid, Severity: SeverityWarning, HoleID: id, Depth: p.Depth, Source: "picks", Line: p.Line,
				Message: fmt.Sprintf("pick left out: depth %g, dip %g (0..90), dip direction %g (0..360)", p.Depth, p.Dip, p.DipDirection)})
			continue
		}
		picks = append(picks, pickItem{depth: p.Depth, n: geom.Plane{Dip: p.Dip, DipDirection: p.DipDirection}.Normal(), line: p.Line})
	}
	var core []coreItem
	for _, x := range h.ms {
		if x.ok {
			core = append(core, coreItem{depth: x.m.Depth, n: x.n, h: x.h, run: x.run, line: x.m.Line, id: x.m.ID})
		}
	}
	if len(picks) == 0 {
		return out
	}
	w := o.PickWindow
	s := estimateShift(h.ctx, picks, core, o.MaxDepthShift, o.ShiftStep, w)
	match := matchPicks(picks, core, s, w)
	var dz []float64
	for i, c := range match {
		if c >= 0 {
			dz = append(dz, core[c].depth-(picks[i].depth+s))
		}
	}
	if len(dz) > 0 {
		s += median(dz)
		match = matchPicks(picks, core, s, w)
	}

	hp := &HolePicks{Shift: s, Picks: len(picks)}
	nr := len(h.runs)
	runMis := make([][]float64, nr)
	runOff := make([][]float64, nr)
	runExcl := make([]int, nr)
	var all []float64
	used := make([]bool, len(core))
	for i, c := range match {
		p := picks[i]
		if c < 0 {
			hp.UnmatchedPicks = append(hp.UnmatchedPicks, Unmatched{Line: p.line, Depth: p.depth})
			continue
		}
		used[c] = true
		ci := core[c]
		mis := geom.AxialAngle(p.n, ci.n)
		all = append(all, mis)
		hp.Matches = append(hp.Matches, PickMatch{PickLine: p.line, MeasurementLine: ci.line, MeasurementID: ci.id, PickDepth: p.depth, CoreDepth: ci.depth, Misfit: mis})
		if ci.run < 0 {
			continue
		}
		runMis[ci.run] = append(runMis[ci.run], mis)
		if off, res, ok := betaOffset(ci.h, ci.n, p.n); ok && res <= o.FabricMisfit {
			runOff[ci.run] = append(runOff[ci.run], off)
		} else {
			runExcl[ci.run]++
		}
	}
	hp.Matched = len(all)
	hp.Misfit = misfitStats(all)
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, p := range picks {
		lo, hi = math.Min(lo, p.depth+s-w), math.Max(hi, p.depth+s+w)
	}
	for i, c := range core {
		if !used[i] && c.depth >= lo && c.depth <= hi {
			hp.UnmatchedCore++
			hp.UnmatchedCoreItems = append(hp.UnmatchedCoreItems, Unmatched{Line: c.line, Depth: c.depth})
		}
	}
	hr.Picks = hp

	if math.Abs(s) >= o.ShiftStep {
		out = append(out, Finding{Check: CheckPickShift, Severity: SeverityInfo, HoleID: id, Depth: 0, Size: s, Source: "picks",
			Message: fmt.Sprintf("the picks' depth scale differs from the core's by a constant %+.2f (core depth = pick depth %+.2f), estimated from %d matches", s, s, hp.Matched)})
	}
	if len(hp.UnmatchedPicks) > 0 {
		out = append(out, Finding{Check: CheckPickUnmatched, Severity: SeverityInfo, HoleID: id, Depth: hp.UnmatchedPicks[0].Depth,
			Size: float64(len(hp.UnmatchedPicks)), Source: "picks",
			Message: fmt.Sprintf("%d of %s found no core measurement within %.2f after the depth shift; %s in the picked interval found no pick",
				len(hp.UnmatchedPicks), words.Plural(len(picks), "pick"), w, words.Plural(hp.UnmatchedCore, "core measurement"))})
	}
	for r := 0; r < nr; r++ {
		if len(runMis[r]) == 0 {
			continue
		}
		rp := &RunPicks{Misfit: misfitStats(runMis[r])}
		if len(runOff[r]) > 0 {
			cm := CircMean(runOff[r])
			e := &RotationEstimate{Offset: cm.Mean, SE: finiteOr(cm.SE, -1), HalfWidth95: cm.HalfWidth95, Rbar: cm.Rbar, N: cm.N, Excluded: runExcl[r],
				ReferenceN: cm.N, RefSource: "picks"}
			e.Flagged = cm.N >= o.MinRunCount && math.Abs(cm.Mean) > o.RotationThreshold && cm.Excludes0()
			rp.Offset = e
			if e.Flagged {
				run := h.runs[r]
				out = append(out, Finding{Check: CheckPickOffset, Severity: SeverityFlag, HoleID: id, Depth: run.From, DepthTo: run.To,
					Size: math.Abs(e.Offset), Unit: "deg", Source: "runs", Line: run.Line, ID: run.ID,
					Message: fmt.Sprintf("run %.2f-%.2f: %d matched reference picks imply a beta offset of %+.1f deg +- %.1f (95%%); median misfit %.1f deg",
						run.From, run.To, cm.N, e.Offset, e.HalfWidth95, rp.Misfit.Median)})
			}
		}
		hr.Runs[r].Picks = rp
	}
	return out
}
