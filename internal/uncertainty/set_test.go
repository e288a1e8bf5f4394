package uncertainty

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"corvane/internal/coreangle"
	"corvane/internal/geom"
)

// tangentScatter returns the unit vector v moved by a normal deviation of
// standard deviation sd degrees in each of two perpendicular directions.
func tangentScatter(r *rand.Rand, v geom.Vec3, sd float64) geom.Vec3 {
	t1 := perpendicular(v)
	t2 := v.Cross(t1)
	a, b := geom.Rad(sd*r.NormFloat64()), geom.Rad(sd*r.NormFloat64())
	return v.Add(t1.Scale(math.Tan(a))).Add(t2.Scale(math.Tan(b))).Unit()
}

// simulateRuns logs perRun measurements in each of runs runs in each of
// holes (azimuth, dip): each run's mark error and each hole's survey error
// is drawn once; one(h, mark) returns a member logged with the true hole
// direction h and the run's mark error, its hole then replaced by the
// surveyed one and its keys set.
func simulateRuns(r *rand.Rand, holes [][2]float64, runs, perRun int, sig Sigmas, one func(h geom.Vec3, mark float64) Member) []Member {
	var out []Member
	for hi, hd := range holes {
		h := geom.HoleDirection(hd[0], hd[1])
		mAz, mDip := hd[0]+sig.Azimuth*r.NormFloat64(), hd[1]+sig.Dip*r.NormFloat64()
		for ru := 0; ru < runs; ru++ {
			mark := sig.Mark * r.NormFloat64()
			for j := 0; j < perRun; j++ {
				m := one(h, mark)
				m.Hole, m.Sigma, m.Run, m.Survey = geom.HoleDirection(mAz, mDip), sig, fmt.Sprint(hi, "/", ru), fmt.Sprint(hi)
				out = append(out, m)
			}
		}
	}
	return out
}

// simulateSet draws a set of poles of one fabric (true mean mu, scatter sd)
// logged in runs of perRun measurements in holes (simulateRuns), each
// reading's errors drawn per member.
func simulateSet(r *rand.Rand, mu geom.Vec3, sd float64, holes [][2]float64, runs, perRun int, m Model, conf string, k Instrument) []Member {
	sig := m.Sigmas(k, conf, math.NaN(), 0)
	return simulateRuns(r, holes, runs, perRun, sig, func(h geom.Vec3, mark float64) Member {
		p := tangentScatter(r, mu, sd)
		a, b, _ := coreangle.Angles(h, geom.PlaneOf(p), coreangle.Convention{})
		a += sig.Alpha * r.NormFloat64()
		b += sig.Beta*r.NormFloat64() + mark
		a, b = coreangle.Fold(a, b)
		return Member{Reading: Reading{Alpha: a, Beta: geom.NormAzimuth(b), Gamma: math.NaN()}}
	})
}

// Coverage of the set's combined cone: sets simulated with a known fabric
// mean, Fisher-like scatter and shared mark and survey errors (seeded); the
// combined 95% cone of the measured mean must hold the true mean in 93-97% of
// cases. The Fisher cone alone, which sees the scatter but not the shared
// errors, must hold it less often when the marks are poor.
func TestSetCoverage(t *testing.T) {
	mu := geom.FromTrendPlunge(120, 40)
	holes := [][2]float64{{300, -60}, {20, -55}}
	cases := []struct {
		name      string
		conf      string
		k         Instrument
		sd        float64
		fisherLow bool
	}{
		{"good marks, unknown survey, scatter 8", "good", UnknownSurvey, 8, false},
		{"poor marks, magnetic survey, scatter 4", "poor", Magnetic, 4, true},
	}
	const trials = 600 // standard error of a true 95% share: 0.9%
	for ci, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			r := rand.New(rand.NewPCG(21, uint64(ci)))
			in, fisherIn, dom := 0, 0, map[string]int{}
			for i := 0; i < trials; i++ {
				ms := simulateSet(r, mu, c.sd, holes, 2, 3, Model{}, c.conf, c.k)
				res, err := SetMean(ms, MC{Draws: 150, Seed: uint64(i)})
				if err != nil {
					t.Fatal(err)
				}
				ang := geom.AxialAngle(mu, geom.FromTrendPlunge(res.Trend, res.Plunge))
				if ang <= res.Combined95 {
					in++
				}
				if ang <= res.Fisher95 {
					fisherIn++
				}
				dom[res.Dominant]++
			}
			f, ff := float64(in)/trials, float64(fisherIn)/trials
			t.Logf("combined %.1f%%, Fisher alone %.1f%%, dominant %v", 100*f, 100*ff, dom)
			if f < 0.93 || f > 0.97 {
				t.Errorf("combined cone holds the true mean in %.1f%% of %d sets, want 93-97%%", 100*f, trials)
			}
			if c.fisherLow && ff > 0.9 {
				t.Errorf("Fisher cone alone holds the mean in %.1f%%: the shared errors should show", 100*ff)
			}
		})
	}
}

// simulateLineSet draws a set of lineations of one fabric (true mean mu,
// scatter sd), each on a plane through it at a random angle, logged as
// alpha, beta and gamma in runs of perRun measurements in holes, with the
// shared and per-member errors of simulateSet and a gamma reading error. A
// member whose plane lies within 10 degrees of square to the core or of
// the core axis is drawn again (so that no reading folds past 0 or 90).
func simulateLineSet(r *rand.Rand, mu geom.Vec3, sd float64, holes [][2]float64, runs, perRun int, m Model, conf string, k Instrument) []Member {
	sig := m.Sigmas(k, conf, math.NaN(), 0)
	return simulateRuns(r, holes, runs, perRun, sig, func(h geom.Vec3, mark float64) Member {
		for {
			l := tangentScatter(r, mu, sd)
			t1 := perpendicular(l)
			t2 := l.Cross(t1)
			s, c := math.Sincos(2 * math.Pi * r.Float64())
			pl := geom.PlaneOf(t1.Scale(c).Add(t2.Scale(s)))
			a, b, _ := coreangle.Angles(h, pl, coreangle.Convention{})
			g, err := coreangle.Gamma(h, pl, geom.LineOf(l), coreangle.Convention{})
			if err != nil || a < 10 || a > 80 {
				continue
			}
			a += sig.Alpha * r.NormFloat64()
			b += sig.Beta*r.NormFloat64() + mark
			g += sig.Gamma * r.NormFloat64()
			return Member{Reading: Reading{Alpha: a, Beta: geom.NormAzimuth(b), Gamma: geom.NormAzimuth(g)}}
		}
	})
}

// Coverage of a set of lineations' combined cone (SetMeanLines), as for
// poles: 93-97% of simulated sets hold the true mean line.
func TestLineSetCoverage(t *testing.T) {
	mu := geom.FromTrendPlunge(200, 35)
	holes := [][2]float64{{300, -60}, {20, -55}}
	cases := []struct {
		conf string
		k    Instrument
		sd   float64
	}{{"good", UnknownSurvey, 8}, {"poor", Magnetic, 4}}
	const trials = 600
	for ci, c := range cases {
		t.Run(c.conf, func(t *testing.T) {
			t.Parallel()
			r := rand.New(rand.NewPCG(31, uint64(ci)))
			in := 0
			for i := 0; i < trials; i++ {
				ms := simulateLineSet(r, mu, c.sd, holes, 2, 3, Model{}, c.conf, c.k)
				res, err := SetMeanLines(ms, MC{Draws: 150, Seed: uint64(i)})
				if err != nil {
					t.Fatal(err)
				}
				if geom.AxialAngle(mu, geom.FromTrendPlunge(res.Trend, res.Plunge)) <= res.Combined95 {
					in++
				}
			}
			f := float64(in) / trials
			t.Logf("%s marks: combined cone holds the true mean line in %.1f%%", c.conf, 100*f)
			if f < 0.93 || f > 0.97 {
				t.Errorf("combined cone holds the true mean line in %.1f%% of %d sets, want 93-97%%", 100*f, trials)
			}
		})
	}
	if _, err := SetMeanLines([]Member{{Reading: Reading{Hole: geom.HoleDirection(0, -60), Alpha: 40, Beta: 10, Gamma: math.NaN()}}}, MC{Draws: 100}); err == nil {
		t.Error("a member without gamma accepted in a set of lines")
	}
}

// Coverage of the first-order set cones (SetMeanFirstOrder,
// SetMeanLinesFirstOrder), as for the Monte Carlo ones: in 93-97% of
// simulated sets the combined cone holds the true mean (sets with scatter),
// and the measurement cone holds it when the fabric has no scatter (the
// measured mean then moves by the measurement errors alone).
func TestSetFirstOrderCoverage(t *testing.T) {
	holes := [][2]float64{{300, -60}, {20, -55}}
	cases := []struct {
		name  string
		lines bool
		conf  string
		k     Instrument
		sd    float64
	}{
		{"poles, good marks, unknown survey, scatter 8", false, "good", UnknownSurvey, 8},
		{"poles, poor marks, magnetic survey, scatter 4", false, "poor", Magnetic, 4},
		{"poles, fair marks, unknown survey, no scatter", false, "fair", UnknownSurvey, 0},
		{"lines, good marks, unknown survey, scatter 8", true, "good", UnknownSurvey, 8},
		{"lines, poor marks, magnetic survey, no scatter", true, "poor", Magnetic, 0},
	}
	const trials = 600 // standard error of a true 95% share: 0.9%
	for ci, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			r := rand.New(rand.NewPCG(41, uint64(ci)))
			mu := geom.FromTrendPlunge(120, 40)
			if c.lines {
				mu = geom.FromTrendPlunge(200, 35)
			}
			in := 0
			for i := 0; i < trials; i++ {
				var res SetResult
				var err error
				if c.lines {
					res, err = SetMeanLinesFirstOrder(simulateLineSet(r, mu, c.sd, holes, 2, 3, Model{}, c.conf, c.k))
				} else {
					res, err = SetMeanFirstOrder(simulateSet(r, mu, c.sd, holes, 2, 3, Model{}, c.conf, c.k))
				}
				if err != nil {
					t.Fatal(err)
				}
				if res.Method != SetFirstOrder || res.Draws != 0 {
					t.Fatalf("method %q, draws %d", res.Method, res.Draws)
				}
				cone := res.Combined95
				if c.sd == 0 {
					cone = res.Measurement95
				}
				if geom.AxialAngle(mu, geom.FromTrendPlunge(res.Trend, res.Plunge)) <= cone {
					in++
				}
			}
			f := float64(in) / trials
			t.Logf("%s: the first-order cone holds the true mean in %.1f%%", c.name, 100*f)
			if f < 0.93 || f > 0.97 {
				t.Errorf("first-order cone holds the true mean in %.1f%% of %d sets, want 93-97%%", 100*f, trials)
			}
		})
	}
}

// First order and Monte Carlo agree where the errors are small: on seeded
// sets with shared run and hole errors (several runs per hole, several
// holes), every cone of the first-order method lies within 10% of the
// Monte Carlo one (4,000 draws, whose own 95% quantile is good to about 2%).
func TestSetFirstOrderAgreesWithMonteCarlo(t *testing.T) {
	small := Model{}.WithDefaults()
	small.Alpha, small.Beta, small.Gamma = 1, 1.5, 1.5
	cases := []struct {
		name   string
		lines  bool
		conf   string
		k      Instrument
		holes  [][2]float64
		runs   int
		perRun int
		sd     float64
	}{
		{"poles, good marks, gyro, 3 holes", false, "good", Gyro, [][2]float64{{300, -60}, {20, -55}, {150, -70}}, 3, 4, 5},
		{"poles, fair marks, magnetic, 2 holes", false, "fair", Magnetic, [][2]float64{{300, -60}, {20, -55}}, 4, 3, 3},
		{"poles, good marks, unknown survey, 1 hole", false, "good", UnknownSurvey, [][2]float64{{80, -50}}, 5, 5, 6},
		{"lines, good marks, gyro, 2 holes", true, "good", Gyro, [][2]float64{{300, -60}, {20, -55}}, 3, 4, 5},
	}
	for ci, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			r := rand.New(rand.NewPCG(51, uint64(ci)))
			var fo, mc SetResult
			var err1, err2 error
			if c.lines {
				ms := simulateLineSet(r, geom.FromTrendPlunge(200, 35), c.sd, c.holes, c.runs, c.perRun, small, c.conf, c.k)
				fo, err1 = SetMeanLinesFirstOrder(ms)
				mc, err2 = SetMeanLines(ms, MC{Draws: 4000, Seed: 7})
			} else {
				ms := simulateSet(r, geom.FromTrendPlunge(120, 40), c.sd, c.holes, c.runs, c.perRun, small, c.conf, c.k)
				fo, err1 = SetMeanFirstOrder(ms)
				mc, err2 = SetMean(ms, MC{Draws: 4000, Seed: 7})
			}
			if err1 != nil || err2 != nil {
				t.Fatal(err1, err2)
			}
			if fo.Trend != mc.Trend || fo.Plunge != mc.Plunge || fo.Fisher95 != mc.Fisher95 {
				t.Errorf("the two methods' means or Fisher cones differ: %+v, %+v", fo, mc)
			}
			for _, q := range []struct {
				what   string
				fo, mc float64
			}{
				{"measurement", fo.Measurement95, mc.Measurement95},
				{"shared", fo.Shared95, mc.Shared95},
				{"shared, drawn per member", fo.SharedIndependent95, mc.SharedIndependent95},
				{"combined", fo.Combined95, mc.Combined95},
			} {
				t.Logf("%s: first order %.3f, Monte Carlo %.3f", q.what, q.fo, q.mc)
				if !(math.Abs(q.fo-q.mc) <= 0.10*q.mc) {
					t.Errorf("%s cone: first order %.3f, Monte Carlo %.3f: more than 10%% apart", q.what, q.fo, q.mc)
				}
			}
		})
	}
}
