// Package qa checks a drilling programme's oriented core and surveys for bad
// orientation marks, bad survey shots and suspect measurements. It is pure:
// [Run] reads an [Input] and returns a [Report] of findings; it changes
// nothing, and the corrections it suggests are never applied.
//
// The checks and the published methods behind them:
//
//   - Runs and marks: oriented length and share per hole and overall; mark
//     mismatch across run breaks beyond a tolerance.
//   - Mark rotation: for a persistent fabric, the rotation of each run about
//     the core axis (a constant beta offset) that best brings its poles onto
//     the fabric of the neighbouring runs, from however many measurements the
//     run has: the variance-weighted circular mean of the per-measurement
//     offsets, its 95% interval from the error model of package uncertainty
//     (readings, fabric scatter, the reference and its runs' marks), flagged
//     when the interval excludes zero by more than a tolerance; the reference
//     is the principal axis of the orientation tensor (Scheidegger 1965).
//     Reference picks' implied offsets use the circular mean and circular
//     standard error (Fisher 1993, Mardia & Jupp 2000).
//   - Reference picks: a constant depth shift by grid search, nearest-depth
//     matching, angular misfit statistics and implied beta offsets per run.
//   - Surveys: dogleg severity; leave-one-out residuals against the
//     minimum-curvature arc of each station's neighbours, judged against the
//     hole's own robust scatter (median absolute deviation); gaps; surveys
//     short of the final depth; first station against the collar; magnetic
//     shots in magnetic zones.
//   - Measurements: alpha >= 85, near-vertical holes, depths past the final
//     depth, duplicates, beta 0/360 in bulk (exact binomial test) and the
//     terminal-digit preference test per logger (Pearson 1900 chi-square).
//
// qa imports the standard library, gonum and corvane's math packages only.
package qa

import (
	"context"
	"fmt"
	"math"
	"sort"
	"strings"

	"corvane/internal/coreangle"
	"corvane/internal/desurvey"
	"corvane/internal/geom"
	"corvane/internal/uncertainty"
)

// meas is a measurement prepared for the checks.
type meas struct {
	m     *Measurement
	h     geom.Vec3 // down-hole direction at the depth
	n     geom.Vec3 // lower-hemisphere pole; zero when not oriented
	plane geom.Plane
	ok    bool // oriented: valid, inside the hole, not vertical
	run   int  // index in the hole's runs, -1 outside
}

type holeData struct {
	ctx     context.Context // the run stops when it is done
	c       Collar
	st      []Station
	runs    []OrientationRun
	ms      []meas
	picks   []Pick
	zones   []MagneticZone
	sets    []SurveySet
	path    *desurvey.Path
	report  *HoleReport
	pending []Finding
}

// Run checks in with the options opt (zero fields take their defaults, see
// [Options]; opt.Convention is the project's core-angle convention) and
// returns the report. Run does not modify in. It is safe to call
// concurrently.
func Run(in Input, opt Options) Report {
	rep, _ := RunContext(context.Background(), in, opt)
	return rep
}

// RunContext is [Run] that gives up when ctx is done (a caller gone, a
// deadline passed), between holes and inside the depth-shift search, and
// then returns ctx's error and no report.
func RunContext(ctx context.Context, in Input, opt Options) (Report, error) {
	o := opt.withDefaults()
	conv := o.Convention
	rep := Report{Caution: Caution, Options: o, Convention: conv.String()}
	var findings []Finding
	add := func(f ...Finding) { findings = append(findings, f...) }
	add(in.Problems...)

	holes := map[string]*holeData{}
	skip := map[string]bool{} // holes with an unusable collar, already reported
	var order []*holeData
	for _, c := range in.Collars {
		if bad := collarProblem(c); bad != "" {
			add(Finding{Check: CheckSurveyInvalid, Severity: SeverityFlag, HoleID: c.HoleID, Source: "collars", Line: c.Line,
				Message: fmt.Sprintf("hole %s is not checked: its collar has %s", c.HoleID, bad)})
			skip[c.HoleID] = true
			continue
		}
		if _, dup := holes[c.HoleID]; dup {
			add(Finding{Check: CheckUnknownHole, Severity: SeverityFlag, HoleID: c.HoleID, Source: "collars", Line: c.Line,
				Message: fmt.Sprintf("hole %s has a second collar row; the first is used", c.HoleID)})
			continue
		}
		h := &holeData{ctx: ctx, c: c}
		holes[c.HoleID] = h
		order = append(order, h)
	}
	unknown := map[string]map[string]int{} // hole -> source -> rows
	noHole := func(id, src string) {
		if skip[id] {
			return
		}
		if unknown[id] == nil {
			unknown[id] = map[string]int{}
		}
		unknown[id][src]++
	}
	for _, s := range in.Surveys {
		if h := holes[s.HoleID]; h != nil {
			h.st = append(h.st, s)
		} else {
			noHole(s.HoleID, "surveys")
		}
	}
	for _, r := range in.Runs {
		if h := holes[r.HoleID]; h != nil {
			h.runs = append(h.runs, r)
		} else {
			noHole(r.HoleID, "runs")
		}
	}
	for i := range in.Measurements {
		m := &in.Measurements[i]
		if h := holes[m.HoleID]; h != nil {
			h.ms = append(h.ms, meas{m: m, run: -1})
		} else {
			noHole(m.HoleID, "structures")
		}
	}
	for _, p := range in.Picks {
		if h := holes[p.HoleID]; h != nil {
			h.picks = append(h.picks, p)
		} else {
			noHole(p.HoleID, "picks")
		}
	}
	for _, z := range in.MagneticZones {
		if h := holes[z.HoleID]; h != nil {
			h.zones = append(h.zones, z)
		} else {
			noHole(z.HoleID, "magnetic zones")
		}
	}
	for _, ss := range in.SurveySets {
		if h := holes[ss.HoleID]; h != nil {
			h.sets = append(h.sets, ss)
		} else {
			noHole(ss.HoleID, "survey sets")
		}
	}
	ids := make([]string, 0, len(unknown))
	for id := range unknown {
		ids = append(ids, id)
	}
	sort.Strings(ids)
	for _, id := range ids {
		var parts []string
		srcs := make([]string, 0, len(unknown[id]))
		for s := range unknown[id] {
			srcs = append(srcs, s)
		}
		sort.Strings(srcs)
		for _, s := range srcs {
			parts = append(parts, fmt.Sprintf("%d %s rows", unknown[id][s], s))
		}
		add(Finding{Check: CheckUnknownHole, Severity: SeverityFlag, HoleID: id,
			Message: fmt.Sprintf("hole %q has no collar: %s not checked", id, strings.Join(parts, ", "))})
	}

	loggers := map[string]*loggerData{}
	for _, h := range order {
		if err := ctx.Err(); err != nil {
			return Report{}, err
		}
		h.report = &HoleReport{HoleID: h.c.HoleID, DeclinationSource: h.c.DeclinationSource, Depth: h.c.Depth, Azimuth: geom.NormAzimuth(h.c.Azimuth), Dip: h.c.Dip}
		add(checkHole(h, conv, o, loggers)...)
		add(setFindings(h.c.HoleID, h.sets, o)...)
	}
	// The logger tests come before the fabric check: a logger who rounds
	// has a wider reading error there.
	rep.Digits, rep.BetaZero = loggerChecks(loggers, o)
	readSD := readingErrors(rep.Digits, o)
	for _, h := range order {
		if err := ctx.Err(); err != nil {
			return Report{}, err
		}
		if h.path != nil {
			add(fabricAndPicks(h, conv, o, readSD)...)
		}
		rep.Holes = append(rep.Holes, *h.report)
	}
	for _, d := range rep.Digits {
		if d.Flagged {
			add(Finding{Check: CheckDigitPreference, Severity: SeverityWarning, Logger: d.Logger, Size: d.Chi2, Source: "structures",
				Message: fmt.Sprintf("logger %s: %s values end in 0 or 5 in %.0f%% of %d (20%% expected); terminal-digit chi-square %.1f, p = %.2g: angles look estimated rather than measured",
					d.Logger, d.Angle, 100*d.Share05, d.N, d.Chi2, d.P)})
		}
	}
	for _, b := range rep.BetaZero {
		if b.Flagged {
			add(Finding{Check: CheckBetaZero, Severity: SeverityWarning, Logger: b.Logger, Size: b.Share, Source: "structures",
				Message: fmt.Sprintf("logger %s: beta is exactly 0 or 360 in %d of %d measurements (%.1f%%; 0.3%% expected), binomial p = %.2g",
					b.Logger, b.Zeros, b.N, 100*b.Share, b.P)})
		}
	}

	// Order: by hole in collar order, then depth, then check.
	pos := map[string]int{}
	for i, h := range order {
		pos[h.c.HoleID] = i + 1
	}
	sort.SliceStable(findings, func(i, j int) bool {
		a, b := findings[i], findings[j]
		if pos[a.HoleID] != pos[b.HoleID] {
			return pos[a.HoleID] < pos[b.HoleID]
		}
		if a.Depth != b.Depth {
			return a.Depth < b.Depth
		}
		return a.Check < b.Check
	})
	for i := range findings { // JSON has no NaN or infinities
		f := &findings[i]
		f.Depth, f.DepthTo, f.Size = finiteOr(f.Depth, 0), finiteOr(f.DepthTo, 0), finiteOr(f.Size, 0)
	}
	if findings == nil {
		findings = []Finding{}
	}
	rep.Findings = findings
	rep.Summary = summarise(&rep, in)
	return rep, ctx.Err()
}

func summarise(rep *Report, in Input) Summary {
	s := Summary{Holes: len(rep.Holes), Measurements: len(in.Measurements), Runs: len(in.Runs), Picks: len(in.Picks),
		BySeverity: map[string]int{}, ByCheck: map[string]int{}}
	idx := map[string]int{}
	for i := range rep.Holes {
		h := &rep.Holes[i]
		idx[h.HoleID] = i
		s.Coverage.Length += h.Coverage.Length
		s.Coverage.Oriented += h.Coverage.Oriented
		s.Coverage.Confident += h.Coverage.Confident
		s.Coverage.Unusable += h.Coverage.Unusable
		s.OutsideRuns += h.OutsideRuns
		s.InUnusable += h.InUnusable
		for _, r := range h.Runs {
			if r.Rotation != nil && r.Rotation.Flagged {
				s.RunsFlagged++
			}
		}
	}
	s.Coverage.shares()
	for _, f := range rep.Findings {
		s.BySeverity[f.Severity]++
		s.ByCheck[f.Check]++
		if i, ok := idx[f.HoleID]; ok {
			switch f.Severity {
			case SeverityFlag:
				rep.Holes[i].Flags++
			case SeverityWarning:
				rep.Holes[i].Warnings++
			}
		}
	}
	return s
}

// checkHole runs every per-hole check and fills h.report.
func checkHole(h *holeData, conv coreangle.Convention, o Options, loggers map[string]*loggerData) []Finding {
	var out []Finding
	hr := h.report
	id := h.c.HoleID

	if h.c.Problem != "" {
		out = append(out, Finding{Check: CheckSurveyInvalid, Severity: SeverityFlag, HoleID: id, Source: h.c.ProblemSource, Line: h.c.ProblemLine,
			Message: fmt.Sprintf("hole %s cannot be oriented (%s): its measurements are not checked", id, h.c.Problem)})
		hr.Runs = []RunReport{}
		hr.Stations = []StationReport{}
		return out
	}

	// Surveys: keep the stations a path can be built from.
	sort.SliceStable(h.st, func(i, j int) bool { return h.st[i].Depth < h.st[j].Depth })
	var good []Station
	for i, s := range h.st {
		bad := ""
		switch {
		case math.IsNaN(s.Depth) || math.IsNaN(s.Azimuth) || math.IsNaN(s.Dip) || s.Depth < 0:
			bad = "not a usable station"
		case s.Dip < -90 || s.Dip > 90:
			bad = fmt.Sprintf("dip %g outside -90..90", s.Dip)
		case s.Depth > h.c.Depth:
			bad = fmt.Sprintf("depth %g past the final depth %g", s.Depth, h.c.Depth)
		case i > 0 && s.Depth == h.st[i-1].Depth:
			bad = fmt.Sprintf("second station at depth %g", s.Depth)
		}
		if bad != "" {
			out = append(out, Finding{Check: CheckSurveyInvalid, Severity: SeverityFlag, HoleID: id, Depth: s.Depth, Source: "surveys", Line: s.Line,
				Message: "survey station left out: " + bad})
			continue
		}
		s.Azimuth = geom.NormAzimuth(s.Azimuth)
		good = append(good, s)
	}
	// The hole model's path when the caller gives it (every front end of
	// corvane does), else one built here from the stations kept.
	path, err := h.c.Path, error(nil)
	if path == nil {
		path, err = holePath(h.c, good, o.Feet)
	}
	if err != nil {
		out = append(out, Finding{Check: CheckSurveyInvalid, Severity: SeverityFlag, HoleID: id, Source: "collars", Line: h.c.Line,
			Message: fmt.Sprintf("hole %s cannot be desurveyed (%v): its measurements are not checked", id, err)})
		hr.Runs = []RunReport{}
		hr.Stations = []StationReport{}
		return out
	}
	h.path = path
	out = append(out, surveyChecks(h.c, good, path, h.zones, o, hr)...)

	// Runs: leave out the ones without a usable interval.
	okRuns := h.runs[:0]
	for _, r := range h.runs {
		if math.IsNaN(r.From) || math.IsNaN(r.To) || math.IsInf(r.From, 0) || math.IsInf(r.To, 0) || r.From < 0 || r.To <= r.From ||
			(r.Mismatch != nil && (math.IsNaN(*r.Mismatch) || math.IsInf(*r.Mismatch, 0))) {
			out = append(out, Finding{Check: CheckRunInvalid, Severity: SeverityFlag, HoleID: id, Depth: r.From, Source: "runs", Line: r.Line, ID: r.ID,
				Message: fmt.Sprintf("run left out: from %g, to %g (want 0 <= from < to, finite mismatch)", r.From, r.To)})
			continue
		}
		okRuns = append(okRuns, r)
	}
	h.runs = okRuns
	sort.SliceStable(h.runs, func(i, j int) bool { return h.runs[i].From < h.runs[j].From })
	out = append(out, runChecks(h.c, h.runs, o, hr)...)

	// Measurements.
	out = append(out, measurementChecks(h, conv, o, loggers)...)

	return out
}

// fabricAndPicks runs the checks that need every logger's digit test first:
// the mark rotation from the persistent fabric, then the reference picks.
func fabricAndPicks(h *holeData, conv coreangle.Convention, o Options, readSD func(string) (float64, float64)) []Finding {
	var out []Finding
	if o.PersistentType != "" {
		out = append(out, rotationChecks(h, conv, o, readSD)...)
	}
	if len(h.picks) > 0 {
		out = append(out, pickChecks(h, o)...)
	}
	return out
}

// readingErrors returns, per logger, the alpha and beta reading standard
// errors of the error model, each widened by the rounding of a logger whose
// values of that angle fail the terminal-digit test (see [DigitTest]): the
// share of readings rounded to 5 degrees is estimated from the excess of 0s
// and 5s (uncertainty.RoundedShare) and adds uncertainty.RoundingSD.
func readingErrors(digits []DigitTest, o Options) func(string) (float64, float64) {
	extra := map[string][2]float64{}
	for _, d := range digits {
		if !d.Flagged {
			continue
		}
		x := extra[d.Logger]
		sd := uncertainty.RoundingSD(uncertainty.DefaultRoundingStep, uncertainty.RoundedShare(d.Share05))
		if d.Angle == "alpha" {
			x[0] = sd
		} else {
			x[1] = sd
		}
		extra[d.Logger] = x
	}
	return func(logger string) (float64, float64) {
		name := strings.TrimSpace(logger)
		if name == "" {
			name = NoLogger
		}
		x := extra[name]
		return math.Hypot(o.Errors.Alpha, x[0]), math.Hypot(o.Errors.Beta, x[1])
	}
}

// collarProblem says what makes a collar unusable, or "".
func collarProblem(c Collar) string {
	for _, v := range []struct {
		name string
		v    float64
	}{{"easting", c.East}, {"northing", c.North}, {"elevation", c.Elevation}, {"azimuth", c.Azimuth}, {"dip", c.Dip}, {"depth", c.Depth}} {
		if math.IsNaN(v.v) || math.IsInf(v.v, 0) {
			return "no usable " + v.name
		}
	}
	switch {
	case c.Depth <= 0:
		return fmt.Sprintf("a final depth of %g", c.Depth)
	case c.Dip < -90 || c.Dip > 90:
		return fmt.Sprintf("a dip of %g, outside -90..90", c.Dip)
	}
	return ""
}

// holePath desurveys a hole by minimum curvature from its collar and its
// usable stations (sorted, strictly increasing depths, azimuths folded), in
// feet or metres.
func holePath(c Collar, stations []Station, feet bool) (*desurvey.Path, error) {
	unit := desurvey.Metres
	if feet {
		unit = desurvey.Feet
	}
	dc := desurvey.Collar{East: c.East, North: c.North, Elevation: c.Elevation,
		Azimuth: geom.NormAzimuth(c.Azimuth), Dip: c.Dip, Depth: c.Depth}
	ds := make([]desurvey.Station, len(stations))
	for i, s := range stations {
		ds[i] = desurvey.Station{Depth: s.Depth, Azimuth: s.Azimuth, Dip: s.Dip}
	}
	return desurvey.NewWith(dc, ds, desurvey.Options{Unit: unit})
}
