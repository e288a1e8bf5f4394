package qa

import (
	"fmt"
	"math"
	"strconv"
	"sync"

	"corvane/internal/coreangle"
	"corvane/internal/geom"
	"corvane/internal/words"

	"gonum.org/v1/gonum/stat/distuv"
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

// offsetSample is one persistent-fabric measurement in the mark-rotation
// check.
type offsetSample struct {
	h, n geom.Vec3 // down-hole direction and plane normal at the measurement
	// sdAlpha and sdBeta are the reading standard errors in degrees, the
	// logger's rounding included.
	sdAlpha, sdBeta float64
}

// refRun is one run of a reference: its samples and its mark's standard
// error in degrees.
type refRun struct {
	samples []offsetSample
	markSD  float64
}

// minFabricSD is the smallest fabric scatter, degrees, the check assumes.
const minFabricSD = 0.5

// runRotation estimates the rotation of one run's mark about the core axis
// from its persistent-fabric samples against the reference axis ref taken
// from the runs refs (the run itself left out), and decides with the error
// model whether the run is off (see [Options.RotationTolerance]).
//
// Method. Each sample gives the offset about its core axis that brings its
// pole nearest ref ([betaOffset], closed form) and a misfit no rotation can
// remove (the difference of the two angles from the core axis). A sample
// whose plane lies so near the core axis that half a turn more fits almost
// as well is left out ([halfTurnAmbiguous]). The misfits measure the
// fabric's natural scatter, free of any mark error; the fabric variance sf2
// is estimated once per hole from the misfits of every run's samples to that
// run's own reference ([fabricVariance], nPool misfits). A sample's offset
// then has the variance
//
//	v_i = sdBeta_i^2 + sf^2 / sin^2(p_i)
//
// where p_i is the angle of ref from the sample's core axis (scatter of the
// pole along the small circle it sweeps, converted to rotation). The run's
// estimate is the weighted circular mean (weights 1/v_i), with variance
// 1/sum(1/v_i), inflated by chi2/(n-1) when the offsets disagree beyond the
// 99% point of chi-square. The reference adds the variance of its own axis
// in the same units (its samples' along-circle scatter over their number)
// and the shared mark errors of its runs, each run weighted by its share of
// the reference's samples: sum (n_k/n)^2 markSD_k^2, since one mark error
// moves all of a run's samples. The 95% half-width uses Student's t with
// the Welch-Satterthwaite degrees of freedom of the parts of the variance
// that rest on estimates (the fabric variance; the run's own scatter when it
// was widened). Survey errors are common to the run and its neighbours in
// the same hole and cancel to first order.
//
// A run without usable samples, or whose reference has none, gets an
// estimate with N = 0 that is never flagged.
func runRotation(samples []offsetSample, refs []refRun, ref geom.Vec3, sf2 float64, nPool int, o Options, sc *rotScratch) *RotationEstimate {
	e := &RotationEstimate{HalfWidth95: 180, SE: -1, Tolerance: o.RotationTolerance, FabricSD: math.Sqrt(sf2)}
	// The reference's along-circle variance and its runs' mark errors.
	var sumAlong, sumC, marks float64
	var nref int
	for _, rr := range refs {
		k := 0
		for _, s := range rr.samples {
			_, res, ok := betaOffset(s.h, s.n, ref)
			if !ok || res > o.FabricMisfit {
				continue
			}
			sp := math.Sin(geom.Rad(geom.AxialAngle(ref, s.h)))
			sumAlong += s.sdBeta*s.sdBeta + sf2/(sp*sp)
			sumC += 1 / (sp * sp)
			k++
		}
		nref += k
		marks += float64(k*k) * rr.markSD * rr.markSD
	}
	if nref == 0 { // no usable reference: no estimate, every sample left out
		e.Excluded = len(samples)
		return e
	}
	varRef := sumAlong/float64(nref)/float64(nref) + marks/float64(nref*nref)
	dRef := sumC / float64(nref*nref) // d varRef / d sf2
	e.ReferenceSE = math.Sqrt(varRef)

	// The run's offsets and their variances.
	buf, vars, cs := sc.off[:0], sc.vars[:0], sc.cs[:0]
	defer func() { sc.off, sc.vars, sc.cs = buf, vars, cs }()
	for _, s := range samples {
		off, res, ok := betaOffset(s.h, s.n, ref)
		if !ok || res > o.FabricMisfit || halfTurnAmbiguous(s, ref, res, sf2) {
			e.Excluded++
			continue
		}
		sp := math.Sin(geom.Rad(geom.AxialAngle(ref, s.h)))
		buf = append(buf, off)
		vars = append(vars, s.sdBeta*s.sdBeta+sf2/(sp*sp))
		cs = append(cs, 1/(sp*sp))
	}
	mean := func(keep func(int) bool) (m, sumW, rbar float64, n int) {
		var c, sn float64
		for i, off := range buf {
			if !keep(i) {
				continue
			}
			w := 1 / vars[i]
			s, co := math.Sincos(geom.Rad(off))
			c += w * co
			sn += w * s
			sumW += w
			n++
		}
		if n == 0 {
			return 0, 0, 0, 0
		}
		return geom.Deg(math.Atan2(sn, c)), sumW, math.Hypot(c, sn) / sumW, n
	}
	all := func(int) bool { return true }
	m, sumW, rbar, n := mean(all)
	// Trim: an offset more than 90 degrees from the mean is a plane whose
	// apex flipped to the other end (low alpha) or a stray measurement.
	if n > 2 {
		keep := func(i int) bool { return math.Abs(wrap180(buf[i]-m)) <= 90 }
		if m2, w2, r2, n2 := mean(keep); n2 < n && n2 > 0 {
			e.Excluded += n - n2
			j := 0
			for i := range buf {
				if keep(i) {
					buf[j], vars[j], cs[j] = buf[i], vars[i], cs[i]
					j++
				}
			}
			buf, vars, cs = buf[:j], vars[:j], cs[:j]
			m, sumW, rbar, n = m2, w2, r2, n2
		}
	}
	e.N = n
	if n == 0 {
		return e
	}
	e.Offset, e.Rbar = m, rbar
	varMean := 1 / sumW
	if n > 1 {
		var chi2 float64
		for i, off := range buf {
			d := wrap180(off - m)
			chi2 += d * d / vars[i]
		}
		if chi2 > chi2q99(n-1) {
			varMean *= chi2 / float64(n-1)
			e.Inconsistent = true
		}
	}
	// Degrees of freedom (Welch-Satterthwaite): the part of the variance
	// that scales with the fabric variance rests on the nPool squared
	// misfits it was estimated from; a variance widened to the run's own
	// scatter rests on n - 1.
	var dMean float64 // d varMean / d sf2
	for i, v := range vars {
		dMean += cs[i] / (v * v)
	}
	dMean *= varMean * varMean
	own := 0.0
	if e.Inconsistent {
		own, dMean = varMean, 0
	}
	total := varMean + varRef
	fab := sf2 * (dMean + dRef)
	den := fab * fab / float64(nPool)
	if own > 0 {
		den += own * own / float64(n-1)
	}
	df := 1e6
	if den > 0 {
		df = math.Max(1, math.Min(df, total*total/den))
	}
	se := math.Sqrt(total)
	e.SE = se
	e.HalfWidth95 = math.Min(180, t975(df)*se)
	e.Flagged = math.Abs(e.Offset)-e.HalfWidth95 > o.RotationTolerance
	return e
}

// rotScratch holds runRotation's buffers, reused from run to run.
type rotScratch struct{ off, vars, cs []float64 }

// Quantiles used per run, computed once (gonum's inverses take tens of
// microseconds each, and a programme has tens of thousands of runs).
var (
	quantOnce sync.Once
	tTable    [30]float64 // t975 at 1..29 degrees of freedom
	chiTable  [50]float64 // chi-square 0.99 quantile at 1..49
)

func quantiles() {
	quantOnce.Do(func() {
		for k := 1; k < len(tTable); k++ {
			tTable[k] = distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(k)}.Quantile(0.975)
		}
		for k := 1; k < len(chiTable); k++ {
			chiTable[k] = distuv.ChiSquared{K: float64(k)}.Quantile(0.99)
		}
	})
}

// t975 returns the 0.975 quantile of Student's t with df degrees of
// freedom. Below 30 it uses the whole degrees of freedom at or below df (a
// slightly wider interval); from 30 the Cornish-Fisher expansion in 1/df
// about the normal quantile z (Abramowitz & Stegun 26.7.5), accurate to
// 1e-4 there.
func t975(df float64) float64 {
	if df < 30 {
		quantiles()
		return tTable[max(1, int(df))]
	}
	z := z975
	z3, z5 := z*z*z, z*z*z*z*z
	return z + (z3+z)/(4*df) + (5*z5+16*z3+3*z)/(96*df*df)
}

// chi2q99 returns the 0.99 quantile of chi-square with k degrees of freedom.
func chi2q99(k int) float64 {
	if k < len(chiTable) {
		quantiles()
		return chiTable[k]
	}
	return distuv.ChiSquared{K: float64(k)}.Quantile(0.99)
}

// acrossVariance returns the variance of across-circle misfits from the sum
// of squares of the n misfits kept (those at most limit degrees). Two biases
// are removed: the reference axes carry errors of their own fitted from
// nearby poles, allowed for as one degree of freedom (divide by n - 1), and
// misfits beyond limit were left out, which shortens the tails: for a normal
// misfit of standard deviation s cut at c = limit/s, the mean square kept is
// s^2 g(c), g(c) = 1 - 2 c phi(c) / (2 Phi(c) - 1) (the variance of a
// normal truncated to [-c, c]); s^2 is found by fixed-point iteration.
func acrossVariance(sumSq float64, n int, limit float64) float64 {
	if n < 2 {
		return sumSq
	}
	m2 := sumSq / float64(n-1)
	v := m2
	std := distuv.UnitNormal
	for i := 0; i < 50; i++ {
		c := limit / math.Sqrt(v)
		if c < 1.5 { // the cut is inside the spread: no stable correction
			break
		}
		g := 1 - 2*c*std.Prob(c)/(2*std.CDF(c)-1)
		next := m2 / g
		if math.Abs(next-v) < 1e-9*v {
			v = next
			break
		}
		v = next
	}
	return v
}

// fabricVariance returns the fabric variance of a hole (degrees squared, at
// least minFabricSD^2) and the number of misfits it rests on: the
// across-circle misfit of every usable sample of every run to that run's
// reference axis (which leaves the run out), less the alpha reading
// variance ([acrossVariance]). The misfit does not change when a mark is
// off, so spun runs count too.
func fabricVariance(samples [][]offsetSample, axes []geom.Vec3, has []bool, o Options) (float64, int) {
	var sumRes2, sumA2 float64
	n := 0
	for r, ss := range samples {
		if !has[r] {
			continue
		}
		for _, s := range ss {
			_, res, ok := betaOffset(s.h, s.n, axes[r])
			if !ok || res > o.FabricMisfit {
				continue
			}
			sumRes2 += res * res
			sumA2 += s.sdAlpha * s.sdAlpha
			n++
		}
	}
	if n == 0 {
		return minFabricSD * minFabricSD, 0
	}
	return math.Max(minFabricSD*minFabricSD, acrossVariance(sumRes2, n, o.FabricMisfit)-sumA2/float64(n)), n
}

// ambiguityLR is the likelihood ratio above which a sample's half-turn
// alternative is taken as plausible.
const ambiguityLR = 0.001

// halfTurnAmbiguous reports whether a sample's plane lies so near the core
// axis that a half turn of the core fits the reference almost as well. The
// offset brings the sample's down-hole pole onto the reference (misfit res);
// the other end of the pole, turned half a turn more, has the misfit
// |180 - an - ap| (an, ap: angles of the pole and the reference from the
// core axis). With the across-circle scatter sd^2 = sf2 + sdAlpha^2, the
// alternative is plausible when its likelihood ratio
// exp(-(alt^2 - res^2) / (2 sd^2)) exceeds ambiguityLR: the sample could be
// half a turn off and is left out.
func halfTurnAmbiguous(s offsetSample, ref geom.Vec3, res, sf2 float64) bool {
	an := geom.Angle(downHole(s.n, s.h), s.h)
	ap := geom.Angle(downHole(ref, s.h), s.h)
	alt := math.Abs(180 - an - ap)
	return (alt*alt-res*res)/(2*(sf2+s.sdAlpha*s.sdAlpha)) < -math.Log(ambiguityLR)
}

// rotationChecks estimates each run's mark rotation from the persistent
// fabric (see [runRotation]) and flags the runs whose 95% interval lies
// beyond the tolerance. readSD gives the reading standard errors (alpha,
// beta) of a logger, rounding included.
//
// Reference: the persistent poles of the nearest o.Neighbours runs on each
// side that have any (the run itself left out), or of the whole hole without
// the run when o.Reference is "hole" or the neighbours hold fewer than
// o.MinReference poles. Two passes: runs flagged in the first are left out
// of every reference in the second, so one bad mark does not drag its
// neighbours' references with it.
func rotationChecks(h *holeData, conv coreangle.Convention, o Options, readSD func(logger string) (float64, float64)) []Finding {
	hr := h.report
	nr := len(h.runs)
	if nr == 0 {
		return nil
	}
	samples := make([][]offsetSample, nr)
	tens := make([]tensor, nr)
	markSD := make([]float64, nr)
	for r, run := range h.runs {
		mm := math.NaN()
		if run.Mismatch != nil {
			mm = *run.Mismatch
		}
		markSD[r] = o.Errors.Mark(run.Confidence, mm)
	}
	var holeT tensor
	for _, x := range h.ms {
		if !x.ok || x.run < 0 || hr.Runs[x.run].Class == ClassUnusable || !words.SameCode(x.m.Type, o.PersistentType) {
			continue
		}
		sa, sb := readSD(x.m.Logger)
		samples[x.run] = append(samples[x.run], offsetSample{h: x.h, n: x.n, sdAlpha: sa, sdBeta: sb})
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
	axes := make([]geom.Vec3, nr)
	has := make([]bool, nr)
	refs := make([][]refRun, nr)
	refN := make([]int, nr)
	srcs := make([]string, nr)
	var sc rotScratch
	for pass := 0; pass < 2; pass++ {
		for r := 0; r < nr; r++ {
			has[r] = false
			if len(samples[r]) == 0 {
				continue
			}
			var ref tensor
			refs[r] = refs[r][:0]
			srcs[r] = "hole"
			if o.Reference != "hole" {
				srcs[r] = "neighbours"
				for dir := -1; dir <= 1; dir += 2 {
					taken := 0
					for k := r + dir; k >= 0 && k < nr && taken < o.Neighbours; k += dir {
						if tens[k].n == 0 || excluded[k] {
							continue
						}
						ref.addTensor(tens[k])
						refs[r] = append(refs[r], refRun{samples: samples[k], markSD: markSD[k]})
						taken++
					}
				}
			}
			if ref.n < o.MinReference {
				srcs[r] = "hole"
				ref = tensor{}
				refs[r] = refs[r][:0]
				for k := range samples {
					if k != r && !excluded[k] && tens[k].n > 0 {
						ref.addTensor(tens[k])
						refs[r] = append(refs[r], refRun{samples: samples[k], markSD: markSD[k]})
					}
				}
			}
			axis, _, ok := ref.principal()
			if !ok || ref.n == 0 {
				continue
			}
			axes[r], has[r], refN[r] = axis, true, ref.n
		}
		sf2, nPool := fabricVariance(samples, axes, has, o)
		for r := 0; r < nr; r++ {
			est[r] = nil
			if !has[r] {
				continue
			}
			e := runRotation(samples[r], refs[r], axes[r], sf2, max(nPool, 1), o, &sc)
			e.Reference, e.ReferenceN, e.RefSource = poleOf(axes[r]), refN[r], srcs[r]
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
		var maxTurn, maxDD, maxDip float64
		for _, x := range h.ms {
			if x.run != r || !x.ok {
				continue
			}
			nb := geom.NormAzimuth(x.m.Beta + e.Offset)
			pl, _ := coreangle.Plane(x.h, x.m.Alpha, nb, conv)
			rr.Suggestions = append(rr.Suggestions, Suggestion{Line: x.m.Line, ID: x.m.ID, Depth: x.m.Depth, Type: x.m.Type,
				Alpha: x.m.Alpha, Beta: x.m.Beta, SuggestedBeta: nb,
				Dip: x.plane.Dip, DipDirection: x.plane.DipDirection, SuggestedDip: pl.Dip, SuggestedDipDirection: pl.DipDirection})
			maxTurn = math.Max(maxTurn, geom.AxialAngle(x.n, pl.Normal()))
			maxDD = math.Max(maxDD, math.Abs(wrap180(pl.DipDirection-x.plane.DipDirection)))
			maxDip = math.Max(maxDip, math.Abs(pl.Dip-x.plane.Dip))
		}
		lo, hi := e.Offset-e.HalfWidth95, e.Offset+e.HalfWidth95
		out = append(out, Finding{Check: CheckMarkRotation, Severity: SeverityFlag, HoleID: h.c.HoleID, Depth: run.From, DepthTo: run.To,
			Size: math.Abs(e.Offset), Unit: "deg", Source: "runs", Line: run.Line, ID: run.ID,
			Message: fmt.Sprintf("run %.2f-%.2f: its %s fits the %s fabric (mean pole %03.0f/%02.0f from %s) after turning the core %+.1f deg about its axis "+
				"(95%% interval %+.1f to %+.1f, from n = %d %s of the run), beyond the %.0f deg tolerance: the mark is likely off. "+
				"Correcting it (logged beta %+.1f, not applied) would move the run's %s by up to %.1f deg, "+
				"dip directions by up to %.1f deg and dips by up to %.1f deg; median misfit %.1f -> %.1f deg",
				run.From, run.To, o.PersistentType, map[string]string{"neighbours": "neighbouring runs'", "hole": "hole-wide"}[e.RefSource],
				e.Reference.Trend, e.Reference.Plunge, words.Plural(e.ReferenceN, "pole"), e.Offset, lo, hi, e.N, words.Noun(e.N, "measurement"), o.RotationTolerance,
				e.Offset, polesOf(len(rr.Suggestions)), maxTurn, maxDD, maxDip, e.MisfitBefore, e.MisfitAfter)})
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

// polesOf is "1 measurement's pole" or "3 measurements' poles".
func polesOf(n int) string {
	if n == 1 {
		return "1 measurement's pole"
	}
	return strconv.Itoa(n) + " measurements' poles"
}
