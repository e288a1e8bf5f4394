package fabric

import (
	"errors"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"corvane/internal/netsvg"
	"corvane/internal/projection"

	"corvane/internal/geom"
	"corvane/internal/uncertainty"
)

// uncRows is a set of planes near 120/40 logged in three holes, two runs
// each, five planes per run, every row with its hole direction and errors
// (run_from NaN when shared is false: each mark its own).
func uncRows(shared bool, conf string) []Row {
	r := rand.New(rand.NewPCG(7, 8))
	em := uncertainty.Model{}
	var rows []Row
	for h, hd := range [][2]float64{{300, -60}, {20, -55}, {200, -70}} {
		hole := geom.HoleDirection(hd[0], hd[1])
		for run := 0; run < 2; run++ {
			from := math.NaN()
			if shared {
				from = 10 + 3*float64(run)
			}
			for k := 0; k < 5; k++ {
				p := geom.Plane{Dip: 40 + 8*r.NormFloat64(), DipDirection: 120 + 8*r.NormFloat64()}
				rows = append(rows, Row{Type: "JN", HasPlane: true, Plane: p, HasHole: true, Hole: hole,
					Errors: RowErrors(em, string(rune('A'+h)), "magnetic", conf, math.NaN(), from)})
			}
		}
	}
	return rows
}

// The set statistics carry the measurement errors into each set of planes:
// the Fisher cone is the summary's (the same poles), marks shared by a run
// widen the cone of the mean beyond independent marks (shared errors do not
// average out), a poor mark makes the measurement errors dominate where a
// good one leaves the sampling cone larger, and rows without a hole
// direction are left out and counted.
func TestSetMeasurementUncertainty(t *testing.T) {
	for _, method := range []string{"", SetUncertaintyMonteCarlo} {
		t.Run("method "+method, func(t *testing.T) { testSetMeasurementUncertainty(t, method) })
	}
}

func testSetMeasurementUncertainty(t *testing.T, method string) {
	stats := func(rows []Row, unc bool) Set {
		rep, err := Stats(Input{Rows: rows}, Options{Uncertainty: unc, UncertaintyMethod: method})
		if err != nil {
			t.Fatal(err)
		}
		if unc != (rep.Uncertainty != nil) {
			t.Fatalf("report note %v with uncertainty %v", rep.Uncertainty, unc)
		}
		if want := map[string]string{"": SetUncertaintyFirstOrder}[method]; unc && rep.Uncertainty.Used != max(want, method) {
			t.Fatalf("report says %q was used, asked for %q", rep.Uncertainty.Used, method)
		}
		return rep.Planes.All
	}
	if s := stats(uncRows(true, "good"), false); s.Uncertainty != nil {
		t.Errorf("uncertainty off: %+v", s.Uncertainty)
	}
	good := stats(uncRows(true, "good"), true)
	u := good.Uncertainty
	if u == nil || u.N != 30 || u.Left != 0 {
		t.Fatalf("good marks: %+v", u)
	}
	if math.Abs(float64(u.Fisher95-good.Unweighted.Cone95)) > 1e-6 {
		t.Errorf("Fisher cone %v, summary %v", u.Fisher95, good.Unweighted.Cone95)
	}
	if u.Dominant != "sampling" {
		t.Errorf("good marks: %+v, want the sampling cone to dominate", u)
	}
	poorShared := stats(uncRows(true, "poor"), true).Uncertainty
	poorOwn := stats(uncRows(false, "poor"), true).Uncertainty
	if poorShared.Dominant != "measurement" || !(poorShared.Measurement95 > 1.3*poorOwn.Measurement95) || !(poorShared.Shared95 > poorOwn.Shared95) {
		t.Errorf("poor marks shared by runs %+v, each its own %+v", poorShared, poorOwn)
	}
	rows := uncRows(true, "good")
	rows[0].HasHole, rows[1].Errors = false, nil
	if u := stats(rows, true).Uncertainty; u.N != 28 || u.Left != 2 || u.Note == "" {
		t.Errorf("two rows without errors: %+v", u)
	}
	// A report carries at most MaxUncertaintyPoles poles through the
	// Monte Carlo in all: a set past that says so (here with a budget
	// spent by the sets before it). First order spends none.
	budget := 25
	idx1, idx2 := []int{0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 13, 14, 15, 16, 17, 18, 19, 20}, []int{20, 21, 22, 23, 24, 25}
	if method == SetUncertaintyMonteCarlo {
		first, second := setUncertainty(newMembers(rows, false, len(rows)), rows, idx1, method, &budget), setUncertainty(newMembers(rows, false, len(rows)), rows, idx2, method, &budget)
		if first.N != 18 || first.Left != 2 || budget != 5 || second.N != 0 || !strings.Contains(second.Note, "not computed") || !math.IsNaN(float64(second.Measurement95)) {
			t.Errorf("budget: first %+v, second %+v, left %d", first, second, budget)
		}
	} else {
		first, second := setUncertainty(newMembers(rows, false, len(rows)), rows, idx1, SetUncertaintyFirstOrder, &budget), setUncertainty(newMembers(rows, false, len(rows)), rows, idx2, SetUncertaintyFirstOrder, &budget)
		if first.N != 18 || first.Left != 2 || budget != 25 || second.N != 6 || math.IsNaN(float64(second.Measurement95)) {
			t.Errorf("first order: first %+v, second %+v, budget %d", first, second, budget)
		}
	}
	// The same figures as uncertainty.SetMean (SetMeanFirstOrder by
	// default) of the members read off the hole: the pipeline adds no rule
	// of its own to the engine.
	var ms []uncertainty.Member
	for _, r := range uncRows(true, "poor") {
		m, ok := member(r, false)
		if !ok {
			t.Fatal("member")
		}
		ms = append(ms, m)
	}
	res, err := uncertainty.SetMeanFirstOrder(ms)
	if method == SetUncertaintyMonteCarlo {
		res, err = uncertainty.SetMean(ms, uncertainty.MC{Draws: SetDraws, Seed: SetSeed})
	}
	if err != nil || Num(res.Measurement95) != poorShared.Measurement95 || Num(res.Combined95) != poorShared.Combined95 {
		t.Errorf("SetMean %+v %v, pipeline %+v", res, err, poorShared)
	}
	// The members reproduce the planes (the core angles under the fixed
	// convention, back through the error-free conversion).
	for i, r := range uncRows(true, "poor") {
		res, err := uncertainty.Measure(ms[i].Reading, uncertainty.MC{})
		if err != nil {
			t.Fatal(err)
		}
		if d := geom.AxialAngle(geom.FromTrendPlunge(res.Pole.Trend, res.Pole.Plunge), r.Plane.Normal()); d > 1e-9 {
			t.Fatalf("row %d: pole off by %g deg", i, d)
		}
	}
}

func TestParseRegions(t *testing.T) {
	for s, want := range map[string]Regions{"": {}, "none": {}, "all": {All: true}, "type:JN": {Type: "JN"}, "cone:12.5": {Cone: 12.5}} {
		if got, err := ParseRegions(s); err != nil || got != want {
			t.Errorf("%q: %+v %v", s, got, err)
		}
	}
	for _, s := range []string{"some", "type:", "cone:0", "cone:95", "cone:x"} {
		var oe *OptionError
		if _, err := ParseRegions(s); !errors.As(err, &oe) || oe.Option != "regions" {
			t.Errorf("%q: %v", s, err)
		}
	}
}

// The net draws the selected measurements' 95% regions: one outline per
// pole, in its set's colour, enclosing the pole, reaching out to the
// region's long semi-axis and in to its short one (the figures of the
// convert output's pole_long95 and pole_short95); a type or cone selection
// draws only those, and rows without a hole direction are counted.
func TestNetRegions(t *testing.T) {
	rows := uncRows(true, "poor")
	for i := range rows[:10] {
		rows[i].Type = "BD"
	}
	rows[12].HasHole = false
	net := func(sel string) ([]netsvg.RegionMark, string) {
		r, err := ParseRegions(sel)
		if err != nil {
			t.Fatal(err)
		}
		n, err := Net(Input{Rows: rows}, NetOptions{Show: Show{Poles: true, Sets: true}, Sets: Sets{ByType: true}, Regions: r})
		if err != nil {
			t.Fatal(err)
		}
		return n.Regions, n.RegionsNote
	}
	all, note := net("all")
	if len(all) != 29 || !strings.Contains(note, "29 measurements") || !strings.Contains(note, "1 without a hole direction") {
		t.Fatalf("all: %d regions, note %q", len(all), note)
	}
	ms := uncertainty.NewMeasurer(uncertainty.PerMeasurement)
	k, closedN := 0, 0
	for i, r := range rows {
		if !r.HasHole {
			continue
		}
		reg := all[k]
		k++
		if want := map[bool]int{true: 0, false: 1}[i < 10]; reg.Set != want {
			t.Errorf("row %d: region in set %d, want %d", i, reg.Set, want)
		}
		rd, _ := reading(r, false)
		res, _ := ms.Measure(rd)
		g := res.Pole.Region()
		pole := r.Plane.Normal()
		lo, hi := 180.0, 0.0
		for _, v := range reg.Outline {
			d := geom.AxialAngle(v, pole)
			lo, hi = math.Min(lo, d), math.Max(hi, d)
		}
		if math.Abs(hi-g.Long95) > 0.03*g.Long95 || math.Abs(lo-g.Short95) > 0.03*g.Long95 {
			t.Errorf("row %d: outline from %.2f to %.2f deg of the pole, region %.2f x %.2f", i, lo, hi, g.Long95, g.Short95)
		}
		// The pole inside the drawn polygon (even-odd rule on the net),
		// for a region below the horizontal.
		parts, closed := projection.EqualArea.Loop(reg.Outline)
		if !closed {
			continue
		}
		p := projection.EqualArea.Project(pole)
		in := false
		poly := parts[0]
		for a := range poly {
			b := (a + 1) % len(poly)
			if (poly[a].Y > p.Y) != (poly[b].Y > p.Y) && p.X < poly[a].X+(p.Y-poly[a].Y)*(poly[b].X-poly[a].X)/(poly[b].Y-poly[a].Y) {
				in = !in
			}
		}
		if !in {
			t.Errorf("row %d: the pole lies outside its drawn region", i)
		}
		closedN++
	}
	if closedN < 20 {
		t.Errorf("only %d regions below the horizontal", closedN)
	}
	if bd, _ := net("type:bd"); len(bd) != 10 {
		t.Errorf("type:bd: %d regions", len(bd))
	}
	if none, note := net("cone:89"); len(none) != 0 || !strings.Contains(note, "0 measurements") {
		t.Errorf("cone:89: %d regions, %q", len(none), note)
	}
	if some, _ := net("cone:1"); len(some) != 29 {
		t.Errorf("cone:1: %d regions, want every one", len(some))
	}
	var b strings.Builder
	n, _ := Net(Input{Rows: rows}, NetOptions{Show: Show{Poles: true}, Regions: Regions{All: true}})
	if err := netsvg.WriteNet(&b, n); err != nil {
		t.Fatal(err)
	}
	if g := b.String(); !strings.Contains(g, `<g id="regions"`) || strings.Count(g, "<title>pole ") != 29 {
		t.Errorf("SVG: %d region paths", strings.Count(g, "<title>pole "))
	}
}

// Sets of lines carry the measurement errors too (gamma an error besides
// alpha and beta): the figures of uncertainty.SetMeanLinesFirstOrder (the
// default; SetMeanLines asked for monte-carlo) of the members read
// off the hole, plane and line; a line logged without its plane is left out
// and counted.
func TestLineSetMeasurementUncertainty(t *testing.T) {
	rows := uncRows(true, "fair")
	for i := range rows {
		rows[i].HasLine, rows[i].Line = true, geom.Line{Trend: rows[i].Plane.DipDirection, Plunge: rows[i].Plane.Dip}
	}
	rows[3].HasPlane = false // a line alone
	rep, err := Stats(Input{Rows: rows}, Options{Uncertainty: true})
	if err != nil {
		t.Fatal(err)
	}
	u := rep.Lines.All.Uncertainty
	if u == nil || u.N != 29 || u.Left != 1 || !strings.Contains(u.Note, "without a plane") {
		t.Fatalf("lines: %+v", u)
	}
	var ms []uncertainty.Member
	for i, r := range rows {
		if i == 3 {
			continue
		}
		m, ok := member(r, true)
		if !ok {
			t.Fatalf("row %d: no member", i)
		}
		if res, _ := uncertainty.Measure(m.Reading, uncertainty.MC{}); geom.AxialAngle(geom.FromTrendPlunge(res.Line.Trend, res.Line.Plunge), r.Line.Vec()) > 1e-9 {
			t.Fatalf("row %d: the member's line is not the row's", i)
		}
		ms = append(ms, m)
	}
	res, err := uncertainty.SetMeanLinesFirstOrder(ms)
	if err != nil || Num(res.Combined95) != u.Combined95 || Num(res.Fisher95) != u.Fisher95 || res.Dominant != u.Dominant {
		t.Errorf("SetMeanLinesFirstOrder %+v %v, pipeline %+v", res, err, u)
	}
	rep, err = Stats(Input{Rows: rows}, Options{Uncertainty: true, UncertaintyMethod: SetUncertaintyMonteCarlo})
	if err != nil {
		t.Fatal(err)
	}
	u = rep.Lines.All.Uncertainty
	res, err = uncertainty.SetMeanLines(ms, uncertainty.MC{Draws: SetDraws, Seed: SetSeed})
	if err != nil || Num(res.Combined95) != u.Combined95 || Num(res.Fisher95) != u.Fisher95 || res.Dominant != u.Dominant {
		t.Errorf("SetMeanLines %+v %v, pipeline %+v", res, err, u)
	}
}

// The set_uncertainty option with the older uncertainty one: first order
// by default, uncertainty=false is off, and the two must not contradict.
func TestParseSetUncertainty(t *testing.T) {
	for in, want := range map[[2]string]string{
		{"", ""}: SetUncertaintyFirstOrder, {"", "true"}: SetUncertaintyFirstOrder, {"", "1"}: SetUncertaintyFirstOrder,
		{"", "false"}: SetUncertaintyOff, {"", "0"}: SetUncertaintyOff, {"off", ""}: SetUncertaintyOff, {"off", "false"}: SetUncertaintyOff,
		{"first-order", ""}: SetUncertaintyFirstOrder, {"monte-carlo", ""}: SetUncertaintyMonteCarlo, {"monte-carlo", "true"}: SetUncertaintyMonteCarlo,
	} {
		if got, err := ParseSetUncertainty(in[0], in[1]); err != nil || got != want {
			t.Errorf("%q: %v %v, want %v", in, got, err, want)
		}
	}
	for in, opt := range map[[2]string]string{{"", "off"}: "uncertainty", {"mc", ""}: "set_uncertainty", {"monte-carlo", "false"}: "set_uncertainty", {"first-order", "false"}: "set_uncertainty"} {
		var oe *OptionError
		if _, err := ParseSetUncertainty(in[0], in[1]); !errors.As(err, &oe) || oe.Option != opt {
			t.Errorf("%q: %v, want an error of %s", in, err, opt)
		}
	}
	if _, err := Stats(Input{Rows: uncRows(true, "good")}, Options{Uncertainty: true, UncertaintyMethod: "exact"}); err == nil {
		t.Error("Stats took set_uncertainty=exact")
	}
	rep, err := Stats(Input{Rows: uncRows(true, "good")}, Options{Uncertainty: true, UncertaintyMethod: SetUncertaintyOff})
	if err != nil || rep.Uncertainty != nil || rep.Planes.All.Uncertainty != nil {
		t.Errorf("off: %v %+v", err, rep.Uncertainty)
	}
}
