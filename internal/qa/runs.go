package qa

import (
	"fmt"
	"math"
	"sort"
	"strings"
)

// Run classes.
const (
	ClassConfident = "confident"
	ClassOther     = "other"
	ClassUnusable  = "unusable"
)

func classify(conf string, o Options) string {
	for _, r := range o.UnusableRatings {
		if strings.EqualFold(strings.TrimSpace(conf), r) {
			return ClassUnusable
		}
	}
	for _, r := range o.ConfidentRatings {
		if strings.EqualFold(strings.TrimSpace(conf), r) {
			return ClassConfident
		}
	}
	return ClassOther
}

// unionLength returns the total length of the union of the intervals
// [from, to], each clipped to [0, limit].
func unionLength(iv [][2]float64, limit float64) float64 {
	s := make([][2]float64, 0, len(iv))
	for _, v := range iv {
		a, b := math.Max(v[0], 0), math.Min(v[1], limit)
		if b > a {
			s = append(s, [2]float64{a, b})
		}
	}
	sort.Slice(s, func(i, j int) bool { return s[i][0] < s[j][0] })
	total, end := 0.0, math.Inf(-1)
	for _, v := range s {
		if v[0] > end {
			total += v[1] - v[0]
			end = v[1]
		} else if v[1] > end {
			total += v[1] - end
			end = v[1]
		}
	}
	return total
}

func (c *Coverage) shares() {
	// Lengths are sums and differences of depths logged to a few decimals:
	// rounded to 1e-6 they read as logged (72.65, not 72.64999999999995).
	for _, v := range []*float64{&c.Length, &c.Oriented, &c.Confident, &c.Unusable} {
		*v = math.Round(*v*1e6) / 1e6
	}
	if c.Length > 0 {
		c.OrientedShare = c.Oriented / c.Length
		c.ConfidentShare = c.Confident / c.Length
	}
}

// runChecks fills the hole's run reports and coverage from runs sorted by
// From, and returns findings on overlaps, runs past the final depth and mark
// mismatches.
func runChecks(c Collar, runs []OrientationRun, o Options, hr *HoleReport) []Finding {
	var out []Finding
	var all, conf, unus [][2]float64
	hr.Runs = make([]RunReport, len(runs))
	for i, r := range runs {
		cl := classify(r.Confidence, o)
		hr.Runs[i] = RunReport{From: r.From, To: r.To, Confidence: r.Confidence, Class: cl, Mismatch: r.Mismatch, Line: r.Line, ID: r.ID}
		iv := [2]float64{r.From, r.To}
		all = append(all, iv)
		switch cl {
		case ClassConfident:
			conf = append(conf, iv)
		case ClassUnusable:
			unus = append(unus, iv)
		}
		if i > 0 && r.From < runs[i-1].To {
			out = append(out, Finding{Check: CheckRunOverlap, Severity: SeverityWarning, HoleID: c.HoleID,
				Depth: r.From, DepthTo: math.Min(r.To, runs[i-1].To), Size: math.Min(r.To, runs[i-1].To) - r.From, Source: "runs", Line: r.Line, ID: r.ID,
				Message: fmt.Sprintf("run %.2f-%.2f overlaps the run %.2f-%.2f", r.From, r.To, runs[i-1].From, runs[i-1].To)})
		}
		if r.To > c.Depth {
			out = append(out, Finding{Check: CheckRunPastDepth, Severity: SeverityWarning, HoleID: c.HoleID,
				Depth: r.From, DepthTo: r.To, Size: r.To - c.Depth, Source: "runs", Line: r.Line, ID: r.ID,
				Message: fmt.Sprintf("run %.2f-%.2f ends %.2f past the final depth %.2f", r.From, r.To, r.To-c.Depth, c.Depth)})
		}
		if r.Mismatch != nil && math.Abs(*r.Mismatch) > o.MismatchTolerance {
			// A mismatch the logger has already answered with a low rating
			// is a warning; on a run still rated confident it is a flag.
			sev, tail := SeverityWarning, fmt.Sprintf("; the run is rated %q, consistent with that", r.Confidence)
			if cl == ClassConfident {
				sev, tail = SeverityFlag, fmt.Sprintf(", yet the run is rated %q: one of the two marks is suspect", r.Confidence)
			}
			out = append(out, Finding{Check: CheckMismatch, Severity: sev, HoleID: c.HoleID,
				Depth: r.From, Size: math.Abs(*r.Mismatch), Unit: "deg", Source: "runs", Line: r.Line, ID: r.ID,
				Message: fmt.Sprintf("orientation marks disagree by %.1f deg across the run break at %.2f (tolerance %.1f deg)%s",
					math.Abs(*r.Mismatch), r.From, o.MismatchTolerance, tail)})
		}
	}
	hr.Coverage = Coverage{
		Length:    c.Depth,
		Oriented:  unionLength(all, c.Depth),
		Confident: unionLength(conf, c.Depth),
		Unusable:  unionLength(unus, c.Depth),
	}
	hr.Coverage.shares()
	return out
}

// runAt returns the index of the run containing depth (From <= depth <= To)
// in runs sorted by From, preferring the later run at a shared boundary;
// -1 when none.
func runAt(runs []OrientationRun, depth float64) int {
	// First run with From > depth; candidates are before it.
	k := sort.Search(len(runs), func(i int) bool { return runs[i].From > depth })
	for i := k - 1; i >= 0 && i >= k-3; i-- {
		if depth <= runs[i].To {
			return i
		}
	}
	// Overlapping runs further back (rare): a short linear scan.
	for i := k - 4; i >= 0; i-- {
		if depth >= runs[i].From && depth <= runs[i].To {
			return i
		}
	}
	return -1
}
