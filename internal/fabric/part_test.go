package fabric

import (
	"math"
	"reflect"
	"strings"
	"testing"

	"corvane/internal/geom"
)

// TestNetPart: a net of part of the rows (a structural domain) forms its
// sets on every row and draws only the part's members: set B, absent from
// the part, is not drawn, set C keeps the name, colour and mark it has on
// the whole net, every pole drawn points at its own set, and the set means
// are those of the part's members. Exact geometry: two planes of C in the
// part, 40/100 and 50/100, have their mean pole midway (common practice:
// the mean of two unit axes 10 degrees apart bisects them).
func TestNetPart(t *testing.T) {
	rows := []Row{
		{HasPlane: true, Plane: geom.Plane{Dip: 80, DipDirection: 10}},  // A
		{HasPlane: true, Plane: geom.Plane{Dip: 82, DipDirection: 12}},  // A
		{HasPlane: true, Plane: geom.Plane{Dip: 20, DipDirection: 250}}, // B
		{HasPlane: true, Plane: geom.Plane{Dip: 22, DipDirection: 255}}, // B
		{HasPlane: true, Plane: geom.Plane{Dip: 40, DipDirection: 100}}, // C
		{NoAzimuth: true}, // left out, and in the part
		{HasPlane: true, Plane: geom.Plane{Dip: 50, DipDirection: 100}}, // C
		{HasPlane: true, Plane: geom.Plane{Dip: 45, DipDirection: 105}}, // C, not in the part
	}
	sets := Sets{Windows: nil}
	var err error
	for _, w := range []string{"A:190/9:20", "B:70/69:20", "C:282/45:20"} {
		win, err := ParseWindow(w, sets.Windows)
		if err != nil {
			t.Fatal(err)
		}
		sets.Windows = append(sets.Windows, win)
	}
	o := NetOptions{Show: Show{Poles: true, Sets: true}, Sets: sets}
	whole, err := Net(Input{Rows: rows}, o)
	if err != nil {
		t.Fatal(err)
	}
	o.Part = &Part{Name: "domain East", Keep: []bool{true, true, false, false, true, true, true, false}}
	part, err := Net(Input{Rows: rows}, o)
	if err != nil {
		t.Fatal(err)
	}
	if len(whole.Sets) != 3 || len(part.Sets) != 2 || part.Sets[0].Name != "A" || part.Sets[1].Name != "C" {
		t.Fatalf("sets %+v", part.Sets)
	}
	if part.Sets[1].Style != whole.Sets[2].Style || part.Sets[0].Style != whole.Sets[0].Style {
		t.Errorf("set styles %+v, want those of the whole net %+v", part.Sets, whole.Sets)
	}
	if part.Sets[1].Count != 2 || part.Sets[0].Count != 2 {
		t.Errorf("counts %+v", part.Sets)
	}
	mean := geom.LineOf(part.Sets[1].Mean)
	if math.Abs(mean.Trend-280) > 1e-9 || math.Abs(mean.Plunge-45) > 1e-9 {
		t.Errorf("mean pole of C in the part %v, want 280/45", mean)
	}
	var got []int
	for _, p := range part.Poles {
		got = append(got, p.Set)
	}
	if want := []int{0, 0, 1, 1}; !reflect.DeepEqual(got, want) {
		t.Errorf("poles' sets %v, want %v", got, want)
	}
	if note := strings.Join(part.Notes, "|"); !strings.Contains(note, "domain East: 5 of the 8 rows drawn; sets formed on all rows") {
		t.Errorf("notes %q", note)
	}
	// Every row kept: the whole net with the part's note.
	o.Part.Keep = []bool{true, true, true, true, true, true, true, true}
	all, _ := Net(Input{Rows: rows}, o)
	all.Notes, whole.Notes = nil, nil
	if !reflect.DeepEqual(all, whole) {
		t.Error("a part of every row differs from the whole net")
	}
	o.Part.Keep = o.Part.Keep[1:]
	if _, err := Net(Input{Rows: rows}, o); err == nil {
		t.Error("a part with too few flags accepted")
	}
}
