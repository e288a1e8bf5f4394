package fabric

import (
	"encoding/json"
	"errors"
	"math"
	"strings"
	"testing"

	"corvane/internal/dirstat"
	"corvane/internal/geom"
)

func TestNumJSON(t *testing.T) {
	for _, c := range []struct {
		v    float64
		want string
	}{
		{math.Copysign(0, -1), "0"}, {-1e-9, "0"}, {1.23456789, "1.234568"}, {-2.5, "-2.5"},
		{math.NaN(), "null"}, {math.Inf(1), "null"}, {math.Inf(-1), "null"},
	} {
		b, err := json.Marshal(Num(c.v))
		if err != nil || string(b) != c.want {
			t.Errorf("Num(%v) = %s (%v), want %s", c.v, b, err, c.want)
		}
	}
}

// TestSkipRule: rows without a dip direction and rows not oriented are left
// out and counted by reason; a row with a plane is used even when its line
// has no trend.
func TestSkipRule(t *testing.T) {
	plane := geom.Plane{Dip: 40, DipDirection: 120}
	rows := []Row{
		{Type: "BD", HasPlane: true, Plane: plane},
		{Type: "BD", NoAzimuth: true},
		{Type: "BD", NoAzimuth: true},
		{Type: "BD", Error: "depth 300 is past the final depth 250"},
		{Type: "BD", HasPlane: true, Plane: plane, NoAzimuth: true},
		{Type: "BD"},
		{Type: "BD", Unoriented: true, HasHole: true, Hole: geom.Vec3{Z: -1}},
		{Type: "BD", Unoriented: true, NoAzimuth: true}, // vertical hole: the CSV cannot tell it from one with beta
	}
	rep, err := Stats(Input{Rows: rows, Rejected: 4}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	want := []SkipCount{{SkipNoDipDirection, 3}, {SkipUnoriented, 1}, {SkipNotOriented, 2}}
	if rep.Rows != 8 || rep.RowsUsed != 2 || rep.RowsRejected != 4 || len(rep.RowsSkipped) != 3 ||
		rep.RowsSkipped[0] != want[0] || rep.RowsSkipped[1] != want[1] || rep.RowsSkipped[2] != want[2] {
		t.Errorf("rows %d, used %d, rejected %d, skipped %+v; want 8, 2, 4, %+v", rep.Rows, rep.RowsUsed, rep.RowsRejected, rep.RowsSkipped, want)
	}
	if rep.Planes == nil || rep.Planes.Count != 2 || rep.Lines != nil {
		t.Errorf("planes %+v, lines %+v", rep.Planes, rep.Lines)
	}
	// Nothing usable is a report, not a failure.
	rep, err = Stats(Input{Rows: rows[1:4]}, Options{})
	if err != nil || rep.RowsUsed != 0 || rep.Planes != nil || rep.Lines != nil {
		t.Errorf("no usable rows: %+v, %v", rep, err)
	}
	if _, err := Net(Input{Rows: rows[1:4]}, NetOptions{Show: Show{Poles: true, Density: true, Sets: true}}); err != nil {
		t.Errorf("net of no usable rows: %v", err)
	}
	if r, err := Rose(Input{Rows: rows[1:4]}, RoseOptions{Of: RoseDipDirection, Bin: 10}); err != nil || len(r.Azimuths) != 0 ||
		!strings.Contains(strings.Join(r.Notes, "\n"), "2 rows left out: "+SkipNoDipDirection) {
		t.Errorf("rose of no usable rows: %+v, %v", r, err)
	}
	// Counts of one read as English: "1 row left out", "1 row: 1 plane".
	one := []Row{rows[0], rows[1]}
	r, err := Rose(Input{Rows: one}, RoseOptions{Of: RoseDipDirection, Bin: 10})
	if err != nil {
		t.Fatal(err)
	}
	if notes := strings.Join(r.Notes, "\n"); notes != "2 rows: 1 plane\n1 row left out: "+SkipNoDipDirection {
		t.Errorf("rose notes for one plane and one skipped row: %q", notes)
	}
	n, err := Net(Input{Rows: one}, NetOptions{Show: Show{Poles: true}})
	if err != nil {
		t.Fatal(err)
	}
	if notes := strings.Join(n.Notes, "\n"); !strings.Contains(notes, "1 row left out: ") || strings.Contains(notes, "1 rows") {
		t.Errorf("net notes for one skipped row: %q", notes)
	}
}

// TestStatsExactGeometry: three poles 10 degrees apart in one vertical plane
// have the middle one as their mean, R = 1 + 2 cos 10 and Fisher's (1953)
// k = (N - 1)/(N - R) (hand-computed from the definitions).
func TestStatsExactGeometry(t *testing.T) {
	var rows []Row
	for _, dip := range []float64{30, 40, 50} {
		rows = append(rows, Row{Type: "BD", HasPlane: true, Plane: geom.Plane{Dip: dip, DipDirection: 200}})
	}
	rows = append(rows, Row{Type: "JN", HasPlane: true, Plane: geom.Plane{Dip: 80, DipDirection: 10}})
	rep, err := Stats(Input{Rows: rows}, Options{Sets: Sets{ByType: true}})
	if err != nil {
		t.Fatal(err)
	}
	if rep.Planes == nil || len(rep.Planes.Sets) != 2 || rep.Planes.Sets[0].Name != "BD" || rep.Planes.Sets[1].Name != "JN" ||
		rep.Planes.SetMethod != TypeMethod || *rep.Planes.Unassigned != 0 {
		t.Fatalf("sets by type: %+v", rep.Planes)
	}
	u := rep.Planes.Sets[0].Unweighted
	wantR := 1 + 2*math.Cos(10*math.Pi/180)
	for _, c := range []struct {
		what      string
		got, want float64
	}{
		{"mean dip", float64(*u.Mean.Dip), 40}, {"mean dip direction", float64(*u.Mean.DipDirection), 200},
		{"R", float64(u.R), wantR}, {"k", float64(u.K), 2 / (3 - wantR)},
	} {
		if math.Abs(c.got-c.want) > 1e-5 {
			t.Errorf("%s = %v, want %v", c.what, c.got, c.want)
		}
	}
	if _, err := Stats(Input{Rows: rows}, Options{Sets: Sets{Auto: 5}}); !isOption(err, "sets") {
		t.Errorf("5 sets of 4 planes: %v, want an error about sets", err)
	}
}

// TestAutoSetNames: automatic sets are lettered A, B, C (not S1, S2, which
// the trade reads as bedding and foliations).
func TestAutoSetNames(t *testing.T) {
	var rows []Row
	for _, dd := range []float64{10, 12, 14, 130, 132, 134, 250, 252, 254} {
		rows = append(rows, Row{HasPlane: true, Plane: geom.Plane{Dip: 60, DipDirection: dd}})
	}
	rep, err := Stats(Input{Rows: rows}, Options{Sets: Sets{Auto: 3, Seed: 1}})
	if err != nil {
		t.Fatal(err)
	}
	var names []string
	for _, st := range rep.Planes.Sets {
		names = append(names, st.Name)
	}
	if strings.Join(names, ",") != "A,B,C" {
		t.Errorf("automatic set names %v, want A,B,C", names)
	}
	if AutoSetName(MaxAutoSets-1) != string(rune('A'+MaxAutoSets-1)) {
		t.Errorf("last automatic set name %q", AutoSetName(MaxAutoSets-1))
	}
}

func isOption(err error, name string) bool {
	var oe *OptionError
	return errors.As(err, &oe) && oe.Option == name
}

// TestParseOptions: every bad option names itself, as the doors report it.
func TestParseOptions(t *testing.T) {
	_, err1 := ParseWeighting("terzaghi:0.5")
	_, err2 := ParseSets("auto:0", "", nil, 1)
	_, err3 := ParseSets("", "poles", nil, 1)
	_, err4 := ParseWindow("J1:400/10:20", nil)
	_, err5 := ParseShow("poles,contours")
	_, _, _, err6 := ParseDensity("kamb", "percent", 0)
	_, _, _, err7 := ParseRose("strike", 7, 0)
	_, err8 := ParseOf("all")
	for _, c := range []struct {
		err  error
		name string
	}{{err1, "weighting"}, {err2, "sets"}, {err3, "sets_on"}, {err4, "set"}, {err5, "show"}, {err6, "units"}, {err7, "bin"}, {err8, "of"}} {
		if !isOption(c.err, c.name) {
			t.Errorf("%v: want an option error naming %s", c.err, c.name)
		}
	}
	w, _ := ParseWindow("J1:310/15:25", nil)
	if _, err := ParseSets("type", "", []dirstat.Window{w}, 1); !isOption(err, "sets") {
		t.Errorf("type and windows together: %v", err)
	}
	if _, err := ParseWindow("J1:10/10:20", []dirstat.Window{w}); !isOption(err, "set") {
		t.Errorf("a repeated set name: %v", err)
	}
}
