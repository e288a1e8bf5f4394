package qa

import (
	"math"
	"math/rand/v2"
	"testing"
)

// arcSurvey returns stations every step m to depth on a hole that flattens
// at a constant rate (deg/30 m) in a vertical plane: a circular arc, on which
// minimum curvature is exact (references README, section 1, exact geometry),
// with normal noise of noise degrees on azimuth and dip.
func arcSurvey(hole string, az, dip0, rate, step, depth, noise float64, r *rand.Rand) []Station {
	var st []Station
	for d := step; d <= depth+1e-9; d += step {
		st = append(st, Station{HoleID: hole, Depth: d,
			Azimuth: az + noise*r.NormFloat64(), Dip: dip0 + rate*d/30 + noise*r.NormFloat64()})
	}
	return st
}

// surveyOf runs the survey checks with the default options on a hole
// desurveyed from c and st as Run does.
func surveyOf(t *testing.T, c Collar, st []Station, zones []MagneticZone, hr *HoleReport) []Finding {
	t.Helper()
	p, err := holePath(c, st, false)
	if err != nil {
		t.Fatal(err)
	}
	return surveyChecks(c, st, p, zones, DefaultOptions(), hr)
}

func checks(fs []Finding, check string) []Finding {
	var out []Finding
	for _, f := range fs {
		if f.Check == check {
			out = append(out, f)
		}
	}
	return out
}

func TestSurveyCleanArcRaisesNothing(t *testing.T) {
	r := rand.New(rand.NewPCG(7, 8))
	c := Collar{HoleID: "A", Azimuth: 45, Dip: -60, Depth: 310}
	st := arcSurvey("A", 45, -60, 2.5, 30, 300, 0.1, r)
	var hr HoleReport
	fs := surveyOf(t, c, st, nil, &hr)
	if len(fs) != 0 {
		t.Errorf("clean arc raised %d findings: %+v", len(fs), fs)
	}
	// Without noise every interior residual is ~0: minimum curvature
	// reproduces a circular arc exactly.
	st = arcSurvey("A", 45, -60, 2.5, 30, 300, 0, r)
	surveyOf(t, c, st, nil, &hr)
	for _, s := range hr.Stations[1 : len(hr.Stations)-1] {
		if s.Residual > 1e-9 {
			t.Errorf("residual at %v = %v on an exact arc", s.Depth, s.Residual)
		}
	}
}

// A shot shifted by 2.5 deg of azimuth is found by the leave-one-out test,
// and only that one.
func TestSurveyShiftedShot(t *testing.T) {
	r := rand.New(rand.NewPCG(9, 10))
	c := Collar{HoleID: "B", Azimuth: 120, Dip: -55, Depth: 400}
	st := arcSurvey("B", 120, -55, 1.5, 30, 390, 0.1, r)
	st[6].Azimuth += 2.5 // 210 m
	var hr HoleReport
	fs := surveyOf(t, c, st, nil, &hr)
	out := checks(fs, CheckSurveyOutlier)
	if len(out) != 1 || out[0].Depth != 210 || out[0].Station != 7 {
		t.Fatalf("outliers %+v, want one at 210, station 7", out)
	}
	if out[0].Size < 1.5 || out[0].Size > 2.5 {
		t.Errorf("size %v deg, want about 2.5 cos(dip)", out[0].Size)
	}
}

func TestSurveyOtherChecks(t *testing.T) {
	r := rand.New(rand.NewPCG(11, 12))
	c := Collar{HoleID: "C", Azimuth: 200, Dip: -70, Depth: 500}
	st := arcSurvey("C", 200, -70, 4, 30, 300, 0, r) // 4 deg/30 m
	st[0].Azimuth = 240                              // first shot about 15 deg off the collar
	st = append(st[:4], st[6:]...)                   // gap 120 -> 210
	st[len(st)-3].Magnetic = true                    // 240 m
	zones := []MagneticZone{{HoleID: "C", From: 230, To: 250}}
	var hr HoleReport
	fs := surveyOf(t, c, st, zones, &hr)
	// Constant azimuth and dip changing 4 deg per 30 m: every interval from
	// the second station on, the gap included, is an arc of 4 deg/30 m
	// (exact geometry); the two intervals at the first station also turn 40
	// deg of azimuth. All exceed the default 3.
	if n := len(checks(fs, CheckDogleg)); n != len(st) {
		t.Errorf("dogleg findings %d, want one per interval, %d", n, len(st))
	}
	for _, s := range hr.Stations[2:] {
		if math.Abs(s.DLS-4) > 1e-9 {
			t.Errorf("dogleg severity at %v = %v deg/30 m, want 4", s.Depth, s.DLS)
		}
	}
	if g := checks(fs, CheckSurveyGap); len(g) != 1 || g[0].Depth != 120 || g[0].DepthTo != 210 {
		t.Errorf("gaps %+v", g)
	}
	if s := checks(fs, CheckSurveyShort); len(s) != 1 || s[0].Size != 200 {
		t.Errorf("short %+v", s)
	}
	if c := checks(fs, CheckCollarDisagree); len(c) != 1 {
		t.Errorf("collar %+v", c)
	}
	if m := checks(fs, CheckMagneticZone); len(m) != 1 || m[0].Depth != 240 {
		t.Errorf("magnetic %+v", m)
	}
}

// Over many random clean surveys with 0.2 deg of shot noise the
// leave-one-out test raises no flag, and it finds a shot 5 deg off in
// azimuth in nearly every hole, short or long (fixed seeds).
func TestSurveyOutlierRates(t *testing.T) {
	for _, depth := range []float64{150, 300, 600} {
		falseFlags, found := 0, 0
		const holes = 150
		for seed := uint64(0); seed < holes; seed++ {
			r := rand.New(rand.NewPCG(seed, 5))
			c := Collar{HoleID: "A", Azimuth: 45, Dip: -60, Depth: depth}
			st := arcSurvey("A", 45, -60, 1.5, 30, depth, 0.2, r)
			var hr HoleReport
			falseFlags += len(checks(surveyOf(t, c, st, nil, &hr), CheckSurveyOutlier))
			st[2].Azimuth += 5
			for _, f := range checks(surveyOf(t, c, st, nil, &hr), CheckSurveyOutlier) {
				if f.Depth == 90 {
					found++
				}
			}
		}
		if falseFlags > 0 || found < holes-3 {
			t.Errorf("depth %v: %d false flags, found %d of %d", depth, falseFlags, found, holes)
		}
	}
}
