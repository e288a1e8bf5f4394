package qa

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"corvane/internal/coreangle"
	"corvane/internal/desurvey"
	"corvane/internal/geom"
)

// Adding t to beta turns the plane's normal about the down-hole direction by
// t (right-handed), under every reference-line and apex convention: checked
// against the engine's forward conversion, an independent route.
func TestBetaOffsetIsRotationAboutAxis(t *testing.T) {
	r := rand.New(rand.NewPCG(21, 22))
	for _, conv := range []coreangle.Convention{
		{}, {RefLine: coreangle.Top}, {BetaApex: coreangle.UpHole}, {RefLine: coreangle.Top, BetaApex: coreangle.UpHole},
	} {
		for k := 0; k < 200; k++ {
			h := geom.HoleDirection(360*r.Float64(), -20-60*r.Float64())
			a, b, d := 5+80*r.Float64(), 360*r.Float64(), 360*r.Float64()-180
			p0, _ := coreangle.Plane(h, a, b, conv)
			p1, _ := coreangle.Plane(h, a, geom.NormAzimuth(b+d), conv)
			rot := rotateAbout(p0.Normal(), h, d)
			if ang := geom.AxialAngle(rot, p1.Normal()); ang > 1e-9 {
				t.Fatalf("%v: beta %+v by %v: rotation differs by %v deg", conv, b, d, ang)
			}
		}
	}
}

// synthHole describes a synthetic hole for the end-to-end QA tests.
type synthHole struct {
	id        string
	az, dip   float64 // collar
	flatten   float64 // deg/30 m
	depth     float64
	runLen    float64
	perRun    int             // bedding measurements per run
	rotations map[int]float64 // run index -> mark error added to logged beta
	logger    func(run int) string
	round     func(run int) float64 // rounding step of logged angles
	conv      coreangle.Convention
}

type synthOut struct {
	in        Input
	trueShift float64
}

// noisy returns v turned by a random small angle: an isotropic normal
// perturbation with standard deviation sigma degrees per axis.
func noisy(v geom.Vec3, sigma float64, r *rand.Rand) geom.Vec3 {
	s := geom.Rad(sigma)
	return v.Add(geom.Vec3{X: s * r.NormFloat64(), Y: s * r.NormFloat64(), Z: s * r.NormFloat64()}).Unit()
}

func roundTo(x, step float64) float64 { return math.Round(x/step) * step }

// build makes the hole's collar, clean survey (every 30 m), runs and
// measurements: bedding 040/50 and a joint set 200/75 as true planes, 3 deg
// of noise, turned into alpha/beta by the engine's inverse (coreangle.Angles)
// on the clean path, with the injected mark errors added to beta.
func (s synthHole) build(t testing.TB, r *rand.Rand, in *Input) {
	t.Helper()
	c := Collar{HoleID: s.id, East: 1000, North: 2000, Elevation: 300, Azimuth: s.az, Dip: s.dip, Depth: s.depth}
	in.Collars = append(in.Collars, c)
	var ds []desurvey.Station
	for d := 30.0; d <= s.depth+1e-9; d += 30 {
		st := Station{HoleID: s.id, Depth: d, Azimuth: s.az + 0.5*d/30, Dip: s.dip + s.flatten*d/30}
		in.Surveys = append(in.Surveys, st)
		ds = append(ds, desurvey.Station{Depth: st.Depth, Azimuth: geom.NormAzimuth(st.Azimuth), Dip: st.Dip})
	}
	path, err := desurvey.New(desurvey.Collar{East: c.East, North: c.North, Elevation: c.Elevation, Azimuth: c.Azimuth, Dip: c.Dip, Depth: c.Depth}, ds, desurvey.MinimumCurvature)
	if err != nil {
		t.Fatal(err)
	}
	bedding := geom.Plane{Dip: 50, DipDirection: 40}.Normal()
	joint := geom.Plane{Dip: 75, DipDirection: 200}.Normal()
	nRuns := int(math.Round(s.depth / s.runLen))
	mm := 0.0
	for k := 0; k < nRuns; k++ {
		from, to := float64(k)*s.runLen, float64(k+1)*s.runLen
		run := OrientationRun{HoleID: s.id, From: from, To: to, Confidence: "good", Mismatch: &mm, Line: len(in.Runs) + 2}
		in.Runs = append(in.Runs, run)
		step := 0.0
		if s.round != nil {
			step = s.round(k)
		}
		logger := "ann"
		if s.logger != nil {
			logger = s.logger(k)
		}
		for j := 0; j <= s.perRun; j++ {
			typ, n := "bedding", bedding
			if j == s.perRun {
				typ, n = "joint", joint
			}
			depth := from + (float64(j)+0.2+0.6*r.Float64())*s.runLen/float64(s.perRun+1)
			depth = roundTo(depth, 0.01)
			pt, err := path.At(depth)
			if err != nil {
				t.Fatal(err)
			}
			pl := geom.PlaneOf(noisy(n, 3, r))
			a, b, _ := coreangle.Angles(pt.Dir, pl, s.conv)
			b = geom.NormAzimuth(b + s.rotations[k])
			if step > 0 {
				a, b = math.Min(roundTo(a, step), 90), geom.NormAzimuth(roundTo(b, step))
			} else {
				a, b = roundTo(a, 0.1), geom.NormAzimuth(roundTo(b, 0.1))
			}
			in.Measurements = append(in.Measurements, Measurement{HoleID: s.id, Depth: depth, Alpha: a, Beta: b, Type: typ, Logger: logger, Line: len(in.Measurements) + 2})
		}
	}
}

func countSev(fs []Finding, hole string, sev ...string) []Finding {
	var out []Finding
	for _, f := range fs {
		if f.HoleID != hole {
			continue
		}
		for _, s := range sev {
			if f.Severity == s {
				out = append(out, f)
			}
		}
	}
	return out
}

func holeReport(t *testing.T, rep Report, id string) *HoleReport {
	t.Helper()
	for i := range rep.Holes {
		if rep.Holes[i].HoleID == id {
			return &rep.Holes[i]
		}
	}
	t.Fatalf("no report for hole %s", id)
	return nil
}

// A clean synthetic hole (true planes through the engine's inverse, 3 deg of
// noise, angles to 0.1 deg) raises no flag and no warning.
func TestRunCleanHoleRaisesNoFlag(t *testing.T) {
	r := rand.New(rand.NewPCG(31, 32))
	var in Input
	synthHole{id: "CLEAN", az: 70, dip: -60, flatten: 1, depth: 300, runLen: 3, perRun: 6}.build(t, r, &in)
	rep := Run(in, Options{PersistentType: "bedding"})
	if bad := countSev(rep.Findings, "CLEAN", SeverityFlag, SeverityWarning); len(bad) > 0 {
		for _, f := range bad {
			t.Errorf("clean hole: %s at %.2f: %s", f.Check, f.Depth, f.Message)
		}
	}
	for _, f := range rep.Findings {
		if f.Severity != SeverityInfo {
			t.Errorf("clean programme: %s %s: %s", f.Check, f.Severity, f.Message)
		}
	}
	hr := holeReport(t, rep, "CLEAN")
	if hr.Coverage.ConfidentShare != 1 || hr.OutsideRuns != 0 {
		t.Errorf("coverage %+v outside %d", hr.Coverage, hr.OutsideRuns)
	}
	// Every run got an estimate near zero.
	for _, run := range hr.Runs {
		if run.Rotation == nil || math.Abs(run.Rotation.Offset) > 10 {
			t.Errorf("run %.0f: rotation %+v", run.From, run.Rotation)
		}
	}
	// The hole-wide fabric is the true bedding pole 220/40 (pole of 040/50).
	if hr.Fabric == nil || geom.AxialAngle(geom.FromTrendPlunge(hr.Fabric.Trend, hr.Fabric.Plunge), geom.FromTrendPlunge(220, 40)) > 1.5 {
		t.Errorf("fabric %+v, want near 220/40", hr.Fabric)
	}
}

// A faulty hole: two runs with mark errors of +35 and -25 deg, a shifted
// survey shot, reference picks on a depth scale 0.8 shorter, a bad mismatch
// on a run rated good (flag) and on one rated poor (warning), an unusable run, a logger who rounds to 5 deg, a duplicate row and a depth
// past the end. QA finds each fault, and only those.
func TestRunFindsInjectedFaults(t *testing.T) {
	r := rand.New(rand.NewPCG(41, 42))
	var in Input
	rot := map[int]float64{10: 35, 40: -25}
	synthHole{id: "F1", az: 70, dip: -60, flatten: 1, depth: 300, runLen: 3, perRun: 6, rotations: rot,
		logger: func(k int) string {
			if k >= 60 {
				return "bo"
			}
			return "ann"
		},
		round: func(k int) float64 {
			if k >= 60 {
				return 5
			}
			return 0
		}}.build(t, r, &in)

	// Reference picks: every bedding and joint in runs 30-49 from an
	// independent source (true orientation plus 2 deg noise, no mark error),
	// on a depth scale 0.8 shorter than the core's, plus 3 picks of
	// structures the core logging missed.
	const shift = 0.8
	for _, m := range in.Measurements {
		if m.Depth < 90 || m.Depth >= 150 {
			continue
		}
		n := geom.Plane{Dip: 50, DipDirection: 40}.Normal()
		if m.Type == "joint" {
			n = geom.Plane{Dip: 75, DipDirection: 200}.Normal()
		}
		pl := geom.PlaneOf(noisy(n, 2, r))
		in.Picks = append(in.Picks, Pick{HoleID: "F1", Depth: roundTo(m.Depth-shift+0.02*r.NormFloat64(), 0.01), Dip: pl.Dip, DipDirection: pl.DipDirection, Line: len(in.Picks) + 2})
	}
	for _, d := range []float64{100.5, 120.5, 140.5} { // between measurements
		in.Picks = append(in.Picks, Pick{HoleID: "F1", Depth: d - shift + 0.003, Dip: 30, DipDirection: 100, Line: len(in.Picks) + 2})
	}

	// Survey: shot at 150 m off by 3 deg of azimuth; shot at 240 m magnetic
	// in a marked magnetic zone.
	for i := range in.Surveys {
		switch in.Surveys[i].Depth {
		case 150:
			in.Surveys[i].Azimuth += 3
		case 240:
			in.Surveys[i].Magnetic = true
		}
	}
	in.MagneticZones = []MagneticZone{{HoleID: "F1", From: 230, To: 250}}
	// Runs: mismatch 25 deg at run 70; run 90 unusable.
	big := 25.0
	in.Runs[70].Mismatch = &big
	in.Runs[71].Mismatch = &big // rated poor: a warning, not a flag
	in.Runs[71].Confidence = "poor"
	in.Runs[90].Confidence = "none"
	// A duplicated row and a depth past the end.
	dup := in.Measurements[5]
	dup.Line = 9999
	in.Measurements = append(in.Measurements, dup,
		Measurement{HoleID: "F1", Depth: 305, Alpha: 40, Beta: 100, Type: "joint", Logger: "ann", Line: 10000})

	rep := Run(in, Options{PersistentType: "bedding"})
	hr := holeReport(t, rep, "F1")

	// Mark rotations recovered within 3 deg; the correction is minus the
	// injected error.
	for k, e := range rot {
		est := hr.Runs[k].Rotation
		if est == nil || !est.Flagged {
			t.Errorf("run %d (mark error %+v): not flagged: %+v", k, e, est)
			continue
		}
		if d := math.Abs(wrap180(est.Offset + e)); d > 3 {
			t.Errorf("run %d: offset %.2f, want %.2f (within 3)", k, est.Offset, -e)
		}
		if est.MisfitAfter >= est.MisfitBefore || len(hr.Runs[k].Suggestions) != 7 {
			t.Errorf("run %d: misfit %.1f -> %.1f, %d suggestions", k, est.MisfitBefore, est.MisfitAfter, len(hr.Runs[k].Suggestions))
		}
	}
	// The suggestion for the rotated run restores the true bedding within the noise.
	for _, sg := range hr.Runs[10].Suggestions {
		if sg.Type != "bedding" {
			continue
		}
		got := geom.Plane{Dip: sg.SuggestedDip, DipDirection: sg.SuggestedDipDirection}.Normal()
		if a := geom.AxialAngle(got, geom.Plane{Dip: 50, DipDirection: 40}.Normal()); a > 12 {
			t.Errorf("suggested %v/%v is %.1f deg from 040/50", sg.SuggestedDipDirection, sg.SuggestedDip, a)
		}
	}

	want := map[string][]float64{ // check -> depths expected (exactly these)
		CheckMarkRotation:    {30, 120},
		CheckPickOffset:      {120},
		CheckSurveyOutlier:   {150},
		CheckMagneticZone:    {240},
		CheckMismatch:        {210, 213},
		CheckUnusableRun:     {270},
		CheckDuplicate:       {in.Measurements[5].Depth},
		CheckPastFinalDepth:  {305},
		CheckDigitPreference: {0, 0}, // bo: alpha and beta
	}
	got := map[string][]float64{}
	for _, f := range rep.Findings {
		if f.Severity == SeverityInfo {
			continue
		}
		got[f.Check] = append(got[f.Check], f.Depth)
	}
	for c, ds := range want {
		if len(got[c]) != len(ds) {
			t.Errorf("%s: found at %v, want %v", c, got[c], ds)
			continue
		}
		for i := range ds {
			if math.Abs(got[c][i]-ds[i]) > 1e-9 {
				t.Errorf("%s: found at %v, want %v", c, got[c], ds)
			}
		}
	}
	for c, ds := range got {
		if _, ok := want[c]; !ok {
			for _, f := range rep.Findings {
				if f.Check == c && f.Severity != SeverityInfo {
					t.Errorf("unexpected %s at %v: %s", c, ds, f.Message)
				}
			}
		}
	}
	for _, f := range rep.Findings {
		if f.Check == CheckMismatch && (f.Depth == 213) != (f.Severity == SeverityWarning) {
			t.Errorf("mismatch at %v: severity %s", f.Depth, f.Severity)
		}
	}
	for _, d := range rep.Digits {
		if d.Flagged != (d.Logger == "bo") {
			t.Errorf("digit test %s %s flagged=%v (chi2 %.1f p %.2g)", d.Logger, d.Angle, d.Flagged, d.Chi2, d.P)
		}
	}

	// Picks: the depth shift is recovered, the run with a -25 deg error
	// implies +25, other runs in the picked stretch imply about 0.
	hp := hr.Picks
	if hp == nil {
		t.Fatal("no pick report")
	}
	if math.Abs(hp.Shift-shift) > 0.02 {
		t.Errorf("depth shift %.3f, want %.3f", hp.Shift, shift)
	}
	if len(hp.UnmatchedPicks) != 3 || hp.Matched != len(in.Picks)-3 {
		t.Errorf("matched %d, unmatched picks %v", hp.Matched, hp.UnmatchedPicks)
	}
	if o := hr.Runs[40].Picks; o == nil || o.Offset == nil || math.Abs(o.Offset.Offset-25) > 4 {
		t.Errorf("run 40 implied offset %+v, want about +25", o)
	}
	for k := 30; k < 50; k++ {
		if k == 40 {
			continue
		}
		if o := hr.Runs[k].Picks; o == nil || o.Misfit.Median > 10 {
			t.Errorf("run %d picks %+v", k, o)
		}
	}
	if !strings.Contains(rep.Caution, "judgement") {
		t.Error("caution missing")
	}
}

// Clean holes in other directions and under the other conventions raise
// no flag and no warning either.
func TestRunCleanHolesOtherGeometries(t *testing.T) {
	r := rand.New(rand.NewPCG(61, 62))
	for _, c := range []struct {
		az, dip float64
		conv    coreangle.Convention
	}{
		{200, -75, coreangle.Convention{}},
		{330, -45, coreangle.Convention{RefLine: coreangle.Top}},
		{110, -65, coreangle.Convention{BetaApex: coreangle.UpHole}},
		{15, -50, coreangle.Convention{RefLine: coreangle.Top, BetaApex: coreangle.UpHole}},
		{85, -70, coreangle.Convention{}},
	} {
		var in Input
		synthHole{id: "G", az: c.az, dip: c.dip, flatten: 1, depth: 240, runLen: 3, perRun: 6, conv: c.conv}.build(t, r, &in)
		rep := Run(in, Options{PersistentType: "bedding", Convention: c.conv})
		if _, err := json.Marshal(rep); err != nil {
			t.Errorf("%v/%v: report does not marshal: %v", c.az, c.dip, err)
		}
		note := false
		for _, f := range rep.Findings {
			if f.Severity != SeverityInfo {
				t.Errorf("%v/%v %v: %s: %s", c.az, c.dip, c.conv, f.Check, f.Message)
			}
			note = note || f.Check == CheckMarkRotation
		}
		// Hole 015/-50 meets the bedding (pole 220/40) at alpha of about 3
		// deg: a half turn of the core would look the same, so no rotation
		// can be estimated, and the report says so.
		if want := c.az == 15; note != want {
			t.Errorf("%v/%v: note on unusable fabric = %v, want %v", c.az, c.dip, note, want)
		}
	}
}

// Two neighbouring runs with the same mark error, under the top-line and
// up-hole-apex convention, with either reference: both are found and both
// estimates are within 5 deg (the second pass keeps each out of the other's
// reference). Here the bedding pole lies 25 deg from the core axis, which
// magnifies 3 deg of pole noise to about 7 deg per offset (1/sin 25), hence
// the wider tolerance than in TestRunFindsInjectedFaults.
func TestRunAdjacentRotatedRuns(t *testing.T) {
	conv := coreangle.Convention{RefLine: coreangle.Top, BetaApex: coreangle.UpHole}
	for _, ref := range []string{"neighbours", "hole"} {
		r := rand.New(rand.NewPCG(71, 72))
		var in Input
		synthHole{id: "A2", az: 250, dip: -55, flatten: 1, depth: 150, runLen: 3, perRun: 6, conv: conv,
			rotations: map[int]float64{20: 30, 21: 30, 35: -60}}.build(t, r, &in)
		rep := Run(in, Options{PersistentType: "bedding", Convention: conv, Reference: ref})
		hr := holeReport(t, rep, "A2")
		for k, e := range map[int]float64{20: 30, 21: 30, 35: -60} {
			est := hr.Runs[k].Rotation
			if est == nil || !est.Flagged || math.Abs(wrap180(est.Offset+e)) > 5 {
				t.Errorf("%s: run %d (error %+v): %+v", ref, k, e, est)
			}
		}
		if rep.Summary.RunsFlagged != 3 {
			t.Errorf("%s: %d runs flagged, want 3", ref, rep.Summary.RunsFlagged)
		}
	}
}

// Coverage and the per-measurement checks on a hand-built near-vertical
// hole: lengths by hand, one finding per stretch outside the runs.
func TestRunCoverageAndMeasurementChecks(t *testing.T) {
	in := Input{
		Collars: []Collar{{HoleID: "V1", Azimuth: 90, Dip: -88, Depth: 100}},
		Surveys: []Station{{HoleID: "V1", Depth: 50, Azimuth: 90, Dip: -88}, {HoleID: "V1", Depth: 100, Azimuth: 90, Dip: -88}},
		Runs: []OrientationRun{
			{HoleID: "V1", From: 0, To: 30, Confidence: "good"},
			{HoleID: "V1", From: 30, To: 40, Confidence: "none"},
			{HoleID: "V1", From: 50, To: 100, Confidence: "poor"},
			{HoleID: "V1", From: 90, To: 95, Confidence: "Fair"}, // overlaps
		},
		Measurements: []Measurement{
			{HoleID: "V1", Depth: 10, Alpha: 40, Beta: 100, Line: 2},
			{HoleID: "V1", Depth: 35, Alpha: 40, Beta: 100, Line: 3},
			{HoleID: "V1", Depth: 45, Alpha: 40, Beta: 100, Line: 4},
			{HoleID: "V1", Depth: 46, Alpha: 86, Beta: 100, Line: 5},
			{HoleID: "V1", Depth: 60, Alpha: 40, Beta: 100, Line: 6},
			{HoleID: "V1", Depth: 60, Alpha: 40, Beta: 100, Line: 7},
			{HoleID: "V1", Depth: 105, Alpha: 40, Beta: 100, Line: 8},
			{HoleID: "V1", Depth: 20, Alpha: 95, Beta: 100, Line: 9},
			{HoleID: "NOPE", Depth: 20, Alpha: 45, Beta: 100, Line: 10},
		},
	}
	rep := Run(in, Options{})
	hr := holeReport(t, rep, "V1")
	want := Coverage{Length: 100, Oriented: 90, Confident: 35, Unusable: 10, OrientedShare: 0.9, ConfidentShare: 0.35}
	if hr.Coverage != want {
		t.Errorf("coverage %+v, want %+v", hr.Coverage, want)
	}
	got := map[string][]Finding{}
	for _, f := range rep.Findings {
		got[f.Check] = append(got[f.Check], f)
	}
	one := func(check string, depth, size float64) {
		t.Helper()
		fs := got[check]
		if len(fs) != 1 || fs[0].Depth != depth || fs[0].Size != size {
			t.Errorf("%s: %+v, want one at %v of size %v", check, fs, depth, size)
		}
	}
	one(CheckOutsideRun, 45, 2)
	one(CheckUnusableRun, 30, 1)
	one(CheckNearVertical, 10, 6) // at 10, 35, 45, 46, 60 and 60: the hole is 2 deg off vertical
	one(CheckHighAlpha, 46, 86)
	one(CheckPastFinalDepth, 105, 5)
	one(CheckDuplicate, 60, 0)
	one(CheckRunOverlap, 90, 5)
	if fs := got[CheckMeasurementInvalid]; len(fs) != 1 || fs[0].Line != 9 || !strings.Contains(fs[0].Message, "alpha") {
		t.Errorf("invalid: %+v", fs)
	}
	if fs := got[CheckUnknownHole]; len(fs) != 1 || fs[0].HoleID != "NOPE" || !strings.Contains(fs[0].Message, "1 structures rows") {
		t.Errorf("unknown hole: %+v", fs)
	}
}
