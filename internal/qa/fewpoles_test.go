package qa

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"corvane/internal/coreangle"
	"corvane/internal/desurvey"
	"corvane/internal/geom"
	"corvane/internal/uncertainty"
)

// The synthetic programme of the few-poles check: three persistent-fabric
// measurements per 3 m run. Hole SPUN has runs whose marks are off by +35,
// -60, +120 and -45 deg; hole ROUND is logged by a logger who rounds alpha
// and beta to 5 deg; hole CLEAN has nothing wrong. At default settings every
// spun run is flagged, with the true correction inside its 95% interval, and
// no other run of any hole is. The bedding (040/50) meets the holes at
// alpha 30-50 deg, where no measurement is ambiguous by a half turn.
func TestFewPolesFindsSpunRuns(t *testing.T) {
	spins := map[int]float64{8: 35, 20: -60, 31: 120, 42: -45}
	for _, conv := range []coreangle.Convention{{}, {RefLine: coreangle.Top, BetaApex: coreangle.UpHole}} {
		r := rand.New(rand.NewPCG(81, 82))
		var in Input
		synthHole{id: "SPUN", az: 120, dip: -60, flatten: 1, depth: 150, runLen: 3, perRun: 3, rotations: spins, conv: conv}.build(t, r, &in)
		synthHole{id: "ROUND", az: 160, dip: -55, flatten: 1, depth: 150, runLen: 3, perRun: 3, conv: conv,
			logger: func(int) string { return "bo" }, round: func(int) float64 { return 5 }}.build(t, r, &in)
		synthHole{id: "CLEAN", az: 300, dip: -65, flatten: 1, depth: 150, runLen: 3, perRun: 3, conv: conv}.build(t, r, &in)
		rep := Run(in, Options{PersistentType: "bedding", Convention: conv})

		rounded := false
		for _, d := range rep.Digits {
			rounded = rounded || (d.Logger == "bo" && d.Flagged)
		}
		if !rounded {
			t.Errorf("%v: the rounding logger's digit test did not flag", conv)
		}
		for _, id := range []string{"SPUN", "ROUND", "CLEAN"} {
			hr := holeReport(t, rep, id)
			for k, run := range hr.Runs {
				e := run.Rotation
				spin, spun := spins[k]
				spun = spun && id == "SPUN"
				if e == nil {
					t.Errorf("%v %s run %d: no estimate", conv, id, k)
					continue
				}
				if e.N != 3 && spun {
					t.Errorf("%v %s run %d: n = %d, want 3", conv, id, k, e.N)
				}
				if e.Flagged != spun {
					t.Errorf("%v %s run %d (spin %+v): flagged %v: offset %+.1f +- %.1f", conv, id, k, spin, e.Flagged, e.Offset, e.HalfWidth95)
				}
				if spun {
					if d := math.Abs(wrap180(e.Offset + spin)); d > e.HalfWidth95 {
						t.Errorf("%v run %d: correction %+.1f +- %.1f misses the truth %+.1f", conv, k, e.Offset, e.HalfWidth95, -spin)
					}
					t.Logf("%v run %d spin %+.0f: correction %+.1f +- %.1f (n %d, fabric sd %.1f)", conv, k, spin, e.Offset, e.HalfWidth95, e.N, e.FabricSD)
				}
			}
		}
		if rep.Summary.RunsFlagged != len(spins) {
			t.Errorf("%v: %d runs flagged, want %d", conv, rep.Summary.RunsFlagged, len(spins))
		}
		// Each flag says the estimate, its interval, n and what a correction
		// would change.
		for _, f := range rep.Findings {
			if f.Check == CheckMarkRotation && f.Severity == SeverityFlag {
				for _, want := range []string{"95% interval", "n = 3", "would move", "dip directions by up to"} {
					if !contains(f.Message, want) {
						t.Errorf("flag message lacks %q: %s", want, f.Message)
					}
				}
			}
		}
	}
}

func contains(s, sub string) bool {
	return len(sub) == 0 || (len(s) >= len(sub) && indexOf(s, sub) >= 0)
}

func indexOf(s, sub string) int {
	for i := 0; i+len(sub) <= len(s); i++ {
		if s[i:i+len(sub)] == sub {
			return i
		}
	}
	return -1
}

// simProgramme builds holes whose data follow the error model exactly:
// bedding poles scattered about one fabric pole (normal, sd degrees per
// tangent direction), alpha and beta readings with the model's reading
// errors, and one mark error per run drawn from the model for its rating
// (good or fair, alternating at random). Runs hold 1 to 3 bedding
// measurements. It returns the input and each run's mark error (hole, run
// index) in degrees.
func simProgramme(t *testing.T, r *rand.Rand, holes int, sd float64, m uncertainty.Model) (Input, map[string][]float64) {
	var in Input
	marks := map[string][]float64{}
	fabric := geom.Plane{Dip: 50, DipDirection: 40}.Normal()
	for hi := 0; hi < holes; hi++ {
		id := fmt.Sprintf("H%02d", hi)
		az, dip := 60+60*r.Float64(), -50-20*r.Float64()
		c := Collar{HoleID: id, East: 1000, North: 2000, Elevation: 300, Azimuth: az, Dip: dip, Depth: 150}
		in.Collars = append(in.Collars, c)
		path, err := desurvey.New(desurvey.Collar{East: c.East, North: c.North, Elevation: c.Elevation, Azimuth: az, Dip: dip, Depth: c.Depth}, nil, desurvey.MinimumCurvature)
		if err != nil {
			t.Fatal(err)
		}
		for k := 0; k < 50; k++ {
			conf := "good"
			if r.IntN(3) == 0 {
				conf = "fair"
			}
			mark := m.Mark(conf, math.NaN()) * r.NormFloat64()
			marks[id] = append(marks[id], mark)
			from := 3 * float64(k)
			in.Runs = append(in.Runs, OrientationRun{HoleID: id, From: from, To: from + 3, Confidence: conf})
			n := 1 + r.IntN(3)
			for j := 0; j < n; j++ {
				depth := roundTo(from+0.2+2.6*(float64(j)+r.Float64())/float64(n), 0.01)
				pt, err := path.At(depth)
				if err != nil {
					t.Fatal(err)
				}
				t1 := fabric.Cross(geom.Vec3{Z: 1}).Unit()
				t2 := fabric.Cross(t1)
				p := fabric.Add(t1.Scale(math.Tan(geom.Rad(sd * r.NormFloat64())))).Add(t2.Scale(math.Tan(geom.Rad(sd * r.NormFloat64())))).Unit()
				a, b, _ := coreangle.Angles(pt.Dir, geom.PlaneOf(p), coreangle.Convention{})
				a += m.Alpha * r.NormFloat64()
				b += m.Beta*r.NormFloat64() + mark
				a, b = coreangle.Fold(a, b)
				in.Measurements = append(in.Measurements, Measurement{HoleID: id, Depth: depth, Alpha: a, Beta: geom.NormAzimuth(b), Type: "bedding", Logger: "cy"})
			}
		}
	}
	return in, marks
}

// Coverage of the run-rotation intervals: on programmes that follow the
// error model (seeded), the stated 95% interval of each run's correction
// holds the truth (minus the run's mark error) in 93-97% of runs, whether a
// run has one, two or three measurements; runs whose mark is within the
// tolerance are rarely flagged.
func TestRunRotationCoverage(t *testing.T) {
	m := uncertainty.DefaultModel()
	for _, sd := range []float64{3, 8} {
		r := rand.New(rand.NewPCG(91, uint64(sd)))
		in, marks := simProgramme(t, r, 28, sd, m)
		rep := Run(in, Options{PersistentType: "bedding"})
		var inside, total, flagged, falseFlags int
		byN := map[int][2]int{}
		for _, hr := range rep.Holes {
			for k, run := range hr.Runs {
				e := run.Rotation
				if e == nil || e.N == 0 {
					continue
				}
				total++
				ok := math.Abs(wrap180(e.Offset+marks[hr.HoleID][k])) <= e.HalfWidth95
				if ok {
					inside++
				}
				c := byN[e.N]
				c[1]++
				if ok {
					c[0]++
				}
				byN[e.N] = c
				if e.Flagged {
					flagged++
					if math.Abs(marks[hr.HoleID][k]) <= rep.Options.RotationTolerance {
						falseFlags++
					}
				}
			}
		}
		f := float64(inside) / float64(total)
		t.Logf("fabric sd %v: %d of %d intervals hold the truth (%.1f%%); by n %v; %d flagged, %d of them with a mark within the tolerance",
			sd, inside, total, 100*f, byN, flagged, falseFlags)
		// A flag on a mark within the tolerance needs an interval that misses
		// the truth on one side: at most about 2.5% of runs.
		if float64(falseFlags) > 0.025*float64(total) {
			t.Errorf("fabric sd %v: %d false flags in %d runs", sd, falseFlags, total)
		}
		if total < 1000 || f < 0.93 || f > 0.97 {
			t.Errorf("fabric sd %v: %.1f%% of %d run intervals hold the truth, want 93-97%% of at least 1000", sd, 100*f, total)
		}
	}
}

// A logger whose beta fails the digit test gets the rounding added to the
// beta reading error, the others keep the model's.
func TestReadingErrorsWidenRounding(t *testing.T) {
	o := DefaultOptions()
	sd := readingErrors([]DigitTest{{Logger: "bo", Angle: "beta", Share05: 1, Flagged: true}, {Logger: "ann", Angle: "beta", Share05: 0.9}}, o)
	a, b := sd("bo")
	if a != o.Errors.Alpha || math.Abs(b-math.Hypot(o.Errors.Beta, 5/math.Sqrt(12))) > 1e-12 {
		t.Errorf("bo: %v %v", a, b)
	}
	if a, b := sd("ann"); a != o.Errors.Alpha || b != o.Errors.Beta {
		t.Errorf("ann (not flagged): %v %v", a, b)
	}
	if _, b := sd(" "); b != o.Errors.Beta {
		t.Errorf("no logger: %v", b)
	}
}
