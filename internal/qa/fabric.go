package qa

import (
	"fmt"
	"math"
	"strings"

	"corvane/internal/coreangle"
	"corvane/internal/geom"
)

func (t *tensor) subTensor(u tensor) {
	for i := range t.a {
		t.a[i] -= u.a[i]
	}
	t.n -= u.n
}

func poleOf(v geom.Vec3) Pole {
	l := geom.LineOf(v)
	return Pole{Trend: l.Trend, Plunge: l.Plunge}
}

// rotationChecks estimates each run's mark rotation from the persistent
// fabric (see [estimateRotation]) and flags runs whose offset is large and
// well supported.
//
// Reference: the principal axis of the persistent poles in the nearest
// o.Neighbours runs on each side that have any (the run itself left out), or
// of the whole hole without the run when o.Reference is "hole" or the
// neighbours hold fewer than o.MinRunCount poles. Two passes: runs flagged in
// the first are left out of every reference in the second, so one bad mark
// does not drag its neighbours' references with it.
func rotationChecks(h *holeData, conv coreangle.Convention, o Options) []Finding {
	hr := h.report
	nr := len(h.runs)
	if nr == 0 {
		return nil
	}
	samples := make([][]offsetSample, nr)
	tens := make([]tensor, nr)
	var holeT tensor
	for _, x := range h.ms {
		if !x.ok || x.run < 0 || hr.Runs[x.run].Class == ClassUnusable || !strings.EqualFold(strings.TrimSpace(x.m.Type), o.PersistentType) {
			continue
		}
		samples[x.run] = append(samples[x.run], offsetSample{h: x.h, n: x.n})
		tens[x.run].add(x.n)
		holeT.add(x.n)
		hr.Runs[x.run].Persistent++
	}
	if ax, _, ok := holeT.principal(); ok {
		p := poleOf(ax)
		hr.Fabric = &p
		hr.FabricN = holeT.n
	}

	excluded := make([]bool, nr)
	est := make([]*RotationEstimate, nr)
	var buf []float64
	for pass := 0; pass < 2; pass++ {
		for r := 0; r < nr; r++ {
			est[r] = nil
			if len(samples[r]) == 0 {
				continue
			}
			var ref tensor
			src := "hole"
			if o.Reference != "hole" {
				src = "neighbours"
				for dir := -1; dir <= 1; dir += 2 {
					taken := 0
					for k := r + dir; k >= 0 && k < nr && taken < o.Neighbours; k += dir {
						if tens[k].n == 0 || excluded[k] {
							continue
						}
						ref.addTensor(tens[k])
						taken++
					}
				}
			}
			if ref.n < o.MinRunCount {
				src = "hole"
				ref = holeT
				ref.subTensor(tens[r])
				for k := range excluded {
					if excluded[k] && k != r {
						ref.subTensor(tens[k])
					}
				}
			}
			axis, _, ok := ref.principal()
			if !ok || ref.n == 0 {
				continue
			}
			var cm CircularMean
			var excl int
			cm, excl, buf = estimateRotation(samples[r], axis, o.FabricMisfit, buf)
			e := &RotationEstimate{Offset: cm.Mean, SE: finiteOr(cm.SE, -1), HalfWidth95: cm.HalfWidth95, Rbar: cm.Rbar, N: cm.N, Excluded: excl,
				Reference: poleOf(axis), ReferenceN: ref.n, RefSource: src}
			e.Flagged = cm.N >= o.MinRunCount && math.Abs(cm.Mean) > o.RotationThreshold && cm.Excludes0()
			est[r] = e
		}
		if pass == 0 {
			for r := range est {
				excluded[r] = est[r] != nil && est[r].Flagged
			}
		}
	}

	var out []Finding
	used, total := 0, 0
	for r, e := range est {
		if e == nil {
			continue
		}
		used += e.N
		total += len(samples[r])
		axis := geom.FromTrendPlunge(e.Reference.Trend, e.Reference.Plunge)
		var before, after []float64
		for _, s := range samples[r] {
			rot := rotateAbout(s.n, s.h, e.Offset)
			if e.Flagged {
				e.Before = append(e.Before, poleOf(s.n))
				e.After = append(e.After, poleOf(rot))
			}
			if _, res, ok := betaOffset(s.h, s.n, axis); ok && res <= o.FabricMisfit {
				before = append(before, geom.AxialAngle(s.n, axis))
				after = append(after, geom.AxialAngle(rot, axis))
			}
		}
		if len(before) > 0 {
			e.MisfitBefore, e.MisfitAfter = median(before), median(after)
		}
		rr := &hr.Runs[r]
		rr.Rotation = e
		if !e.Flagged {
			continue
		}
		run := h.runs[r]
		for _, x := range h.ms {
			if x.run != r || !x.ok {
				continue
			}
			nb := geom.NormAzimuth(x.m.Beta + e.Offset)
			pl, _ := coreangle.Plane(x.h, x.m.Alpha, nb, conv)
			rr.Suggestions = append(rr.Suggestions, Suggestion{Line: x.m.Line, ID: x.m.ID, Depth: x.m.Depth, Type: x.m.Type,
				Alpha: x.m.Alpha, Beta: x.m.Beta, SuggestedBeta: nb,
				Dip: x.plane.Dip, DipDirection: x.plane.DipDirection, SuggestedDip: pl.Dip, SuggestedDipDirection: pl.DipDirection})
		}
		out = append(out, Finding{Check: CheckMarkRotation, Severity: SeverityFlag, HoleID: h.c.HoleID, Depth: run.From, DepthTo: run.To,
			Size: math.Abs(e.Offset), Unit: "deg", Source: "runs", Line: run.Line, ID: run.ID,
			Message: fmt.Sprintf("run %.2f-%.2f: its %s fits the %s fabric (%03.0f/%02.0f, %d poles) only after turning the core %+.1f deg +- %.1f (95%%) about its axis, from %d measurements; median misfit %.1f -> %.1f deg. The mark is likely off: suggested betas = logged beta %+.1f (not applied)",
				run.From, run.To, o.PersistentType, map[string]string{"neighbours": "neighbouring runs'", "hole": "hole-wide"}[e.RefSource],
				e.Reference.Trend, e.Reference.Plunge, e.ReferenceN, e.Offset, e.HalfWidth95, e.N, e.MisfitBefore, e.MisfitAfter, e.Offset)})
	}
	if total > 0 && 2*used < total {
		out = append(out, Finding{Check: CheckMarkRotation, Severity: SeverityInfo, HoleID: h.c.HoleID, Size: float64(total - used), Source: "structures",
			Message: fmt.Sprintf("only %d of %d %s measurements could be used for the mark-rotation check: the others lie within %.0f deg of the core axis, show the fabric at an alpha below %.0f deg (ambiguous by a half turn), or do not fit the fabric",
				used, total, o.PersistentType, minAxisAngle, minRefAlpha)})
	}
	return out
}

// finiteOr returns v, or def when v is not finite (JSON has no infinities).
func finiteOr(v, def float64) float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return def
	}
	return v
}
