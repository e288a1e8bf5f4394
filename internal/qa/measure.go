package qa

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"corvane/internal/coreangle"
	"corvane/internal/geom"
	"corvane/internal/words"
)

// NoLogger names the logger of measurements that do not say who logged them.
const NoLogger = "(not given)"

type loggerData struct {
	alpha, beta []float64
}

// measurementChecks prepares the hole's measurements (direction, pole, run)
// and checks each: angles in range, depth inside the hole, alpha >= 85,
// near-vertical hole, inside a usable run, duplicates.
func measurementChecks(h *holeData, conv coreangle.Convention, o Options, loggers map[string]*loggerData) []Finding {
	var out []Finding
	id := h.c.HoleID
	hr := h.report
	sort.SliceStable(h.ms, func(i, j int) bool { return h.ms[i].m.Depth < h.ms[j].m.Depth })
	hr.Measurements = len(h.ms)
	cosNV := math.Cos(geom.Rad(o.NearVertical))
	nv, nvFrom, nvTo := 0, 0.0, 0.0
	for i := range h.ms {
		x := &h.ms[i]
		m := x.m
		beta := m.Beta
		if math.IsNaN(beta) {
			beta = 0 // unoriented: see below
		}
		if err := coreangle.CheckAngles(m.Alpha, beta, 0, false); err != nil || math.IsNaN(m.Depth) || m.Depth < 0 {
			msg := "depth is not a usable number"
			if err != nil {
				msg = err.Error()
			}
			out = append(out, Finding{Check: CheckMeasurementInvalid, Severity: SeverityFlag, HoleID: id, Depth: m.Depth,
				Source: "structures", Line: m.Line, ID: m.ID, Logger: m.Logger, Message: "measurement not checked: " + msg})
			continue
		}
		name := strings.TrimSpace(m.Logger)
		if name == "" {
			name = NoLogger
		}
		ld := loggers[name]
		if ld == nil {
			ld = &loggerData{}
			loggers[name] = ld
		}
		if !math.IsNaN(m.Beta) {
			ld.alpha = append(ld.alpha, m.Alpha)
			ld.beta = append(ld.beta, m.Beta)
		}
		if m.Depth > h.c.Depth {
			out = append(out, Finding{Check: CheckPastFinalDepth, Severity: SeverityFlag, HoleID: id, Depth: m.Depth,
				Size: m.Depth - h.c.Depth, Source: "structures", Line: m.Line, ID: m.ID, Logger: m.Logger,
				Message: fmt.Sprintf("measurement at %.2f lies %.2f past the final depth %.2f", m.Depth, m.Depth-h.c.Depth, h.c.Depth)})
			continue
		}
		if math.IsNaN(m.Beta) {
			continue // unoriented: no beta to check, no plane
		}
		pt, err := h.path.At(m.Depth)
		if err != nil {
			out = append(out, Finding{Check: CheckMeasurementInvalid, Severity: SeverityFlag, HoleID: id, Depth: m.Depth,
				Source: "structures", Line: m.Line, ID: m.ID, Logger: m.Logger, Message: "measurement not checked: " + err.Error()})
			continue
		}
		x.h = pt.Dir
		x.run = runAt(h.runs, m.Depth)
		if -pt.Dir.Z >= cosNV {
			if nv == 0 {
				nvFrom = m.Depth
			}
			nv++
			nvTo = m.Depth
		}
		pl, w := coreangle.Plane(pt.Dir, m.Alpha, m.Beta, conv)
		if !w.Has(coreangle.Vertical) {
			x.plane = pl
			x.n = pl.Normal()
			x.ok = true
		}
		if m.Alpha >= o.HighAlpha {
			out = append(out, Finding{Check: CheckHighAlpha, Severity: SeverityInfo, HoleID: id, Depth: m.Depth, Size: m.Alpha, Unit: "deg",
				Source: "structures", Line: m.Line, ID: m.ID, Logger: m.Logger,
				Message: fmt.Sprintf("alpha %.1f >= %.0f: the trace is nearly a circle and beta, hence the dip direction, is poorly defined", m.Alpha, o.HighAlpha)})
		}
	}
	if nv > 0 {
		out = append(out, Finding{Check: CheckNearVertical, Severity: SeverityWarning, HoleID: id, Depth: nvFrom, DepthTo: nvTo, Size: float64(nv),
			Source: "structures",
			Message: fmt.Sprintf("%s between %.1f and %.1f %s where the hole is within %.0f deg of vertical: gravity-based orientation marks are unreliable there",
				words.Plural(nv, "measurement"), nvFrom, nvTo, map[bool]string{true: "lies", false: "lie"}[nv == 1], o.NearVertical)})
	}

	// Outside any run (grouped into stretches between runs) and in unusable runs.
	inUnusable := make([]int, len(h.runs))
	for i := 0; i < len(h.ms); i++ {
		x := h.ms[i]
		if x.h == (geom.Vec3{}) { // not placed in the hole
			continue
		}
		if x.run >= 0 {
			if hr.Runs[x.run].Class == ClassUnusable {
				inUnusable[x.run]++
				hr.InUnusable++
			}
			hr.Runs[x.run].Measurements++
			continue
		}
		j := i
		for j+1 < len(h.ms) && h.ms[j+1].run < 0 && h.ms[j+1].h != (geom.Vec3{}) {
			j++
		}
		cnt := j - i + 1
		hr.OutsideRuns += cnt
		out = append(out, Finding{Check: CheckOutsideRun, Severity: SeverityWarning, HoleID: id, Depth: x.m.Depth, DepthTo: h.ms[j].m.Depth,
			Size: float64(cnt), Source: "structures", Line: x.m.Line, ID: x.m.ID,
			Message: outsideRunMessage(cnt, x.m.Depth, h.ms[j].m.Depth)})
		i = j
	}
	for r, n := range inUnusable {
		if n > 0 {
			run := h.runs[r]
			out = append(out, Finding{Check: CheckUnusableRun, Severity: SeverityWarning, HoleID: id, Depth: run.From, DepthTo: run.To,
				Size: float64(n), Source: "runs", Line: run.Line, ID: run.ID,
				Message: fmt.Sprintf("%s in the run %.2f-%.2f rated %q (unusable): %s cannot be trusted",
					map[bool]string{true: "1 measurement lies", false: fmt.Sprintf("%d measurements lie", n)}[n == 1], run.From, run.To, run.Confidence,
					map[bool]string{true: "its orientation", false: "their orientations"}[n == 1])})
		}
	}

	// Duplicates: same depth; identical angles and type is a duplicate row.
	for i := 0; i < len(h.ms); i++ {
		j := i
		for j+1 < len(h.ms) && h.ms[j+1].m.Depth == h.ms[i].m.Depth {
			j++
		}
		for a := i; a < j; a++ {
			for b := a + 1; b <= j; b++ {
				ma, mb := h.ms[a].m, h.ms[b].m
				if ma.Alpha == mb.Alpha && ma.Beta == mb.Beta && words.SameCode(ma.Type, mb.Type) {
					out = append(out, Finding{Check: CheckDuplicate, Severity: SeverityFlag, HoleID: id, Depth: mb.Depth,
						Source: "structures", Line: mb.Line, ID: mb.ID, Logger: mb.Logger,
						Message: fmt.Sprintf("measurement at %.2f (alpha %g, beta %g) repeats the one on line %d", mb.Depth, mb.Alpha, mb.Beta, ma.Line)})
				} else if a == i && b == i+1 {
					out = append(out, Finding{Check: CheckDuplicateDepth, Severity: SeverityInfo, HoleID: id, Depth: mb.Depth,
						Size: float64(j - i + 1), Source: "structures", Line: mb.Line, ID: mb.ID,
						Message: fmt.Sprintf("%d measurements share the depth %.2f: check that they are distinct structures", j-i+1, mb.Depth)})
				}
			}
		}
		i = j
	}
	return out
}

// loggerChecks runs the digit-preference and beta-zero tests per logger,
// in logger-name order.
func loggerChecks(loggers map[string]*loggerData, o Options) ([]DigitTest, []BetaZeroTest) {
	names := make([]string, 0, len(loggers))
	for n := range loggers {
		names = append(names, n)
	}
	sort.Strings(names)
	digits := []DigitTest{}
	zeros := []BetaZeroTest{}
	for _, n := range names {
		l := loggers[n]
		digits = append(digits,
			digitTest(n, "alpha", l.alpha, o.DigitMinCount, o.DigitP, o.DigitShare05),
			digitTest(n, "beta", l.beta, o.DigitMinCount, o.DigitP, o.DigitShare05))
		zeros = append(zeros, betaZeroTest(n, l.beta, o.BetaZeroP, o.BetaZeroShare))
	}
	return digits, zeros
}

// outsideRunMessage says that n measurements from depth a to b lie outside
// any orientation run.
func outsideRunMessage(n int, a, b float64) string {
	if n == 1 {
		return fmt.Sprintf("1 measurement at %.2f lies outside any orientation run: its beta has no mark to refer to", a)
	}
	return fmt.Sprintf("%d measurements between %.2f and %.2f lie outside any orientation run: their beta has no mark to refer to", n, a, b)
}
