package csvio

import (
	"strings"
	"testing"

	"corvane/internal/geom"
)

func TestReadOrientations(t *testing.T) {
	in := "Hole_ID,Type,DIP,Dip_Direction,line_trend,line_plunge,hole_azimuth,hole_dip,extra\n" +
		"TM-001,bedding,30,120,,,45,-60,x\n" + // line 2: plane
		"TM-001,joint,abc,120,,,45,-60,x\n" + // line 3: not a number
		"TM-001,joint,95,120,,,45,-60,x\n" + // line 4: dip out of range
		"TM-001,lineation,,,200,35,45,-60,x\n" + // line 5: line only
		"TM-001,joint,40,,,,45,-60,x\n" + // line 6: half a pair
		"# a comment\n" +
		"TM-002,joint,,,,,45,-60,x\n" + // line 8: nothing
		"TM-002,joint,60,360,10,20,,,\n" // line 9: plane and line, no hole
	rows, problems, err := ReadOrientations(strings.NewReader(in), "demo.csv")
	if err != nil {
		t.Fatal(err)
	}
	if len(rows) != 3 {
		t.Fatalf("got %d rows, want 3: %+v", len(rows), rows)
	}
	if r := rows[0]; r.Line != 2 || !r.HasPlane || r.Plane != (geom.Plane{Dip: 30, DipDirection: 120}) || !r.HasHole || r.Type != "bedding" || r.HoleID != "TM-001" {
		t.Errorf("row 0: %+v", r)
	}
	if a := geom.Angle(rows[0].Hole, geom.HoleDirection(45, -60)); a > 1e-12 {
		t.Errorf("hole direction off by %v", a)
	}
	if r := rows[1]; r.Line != 5 || r.HasPlane || !r.HasLine || r.LineDir != (geom.Line{Trend: 200, Plunge: 35}) {
		t.Errorf("row 1: %+v", r)
	}
	if r := rows[2]; r.Line != 9 || r.Plane.DipDirection != 0 || !r.HasLine || r.HasHole {
		t.Errorf("row 2: %+v", r)
	}
	want := []string{
		`demo.csv:line 3, column "dip": "abc" is not a number`,
		`demo.csv:line 4, column "dip": dip 95 is outside [0, 90]`,
		`demo.csv:line 6, column "dip_direction": dip_direction is empty but dip is given`,
		`demo.csv:line 8: no plane and no line on this row`,
	}
	if len(problems) != len(want) {
		t.Fatalf("problems: %v", problems)
	}
	for i, w := range want {
		if problems[i].Error() != w {
			t.Errorf("problem %d: %q, want %q", i, problems[i].Error(), w)
		}
	}
}

func TestReadOrientationsWholeFile(t *testing.T) {
	for _, in := range []string{"", "hole_id,depth\nA,1\n"} {
		if _, _, err := ReadOrientations(strings.NewReader(in), "x.csv"); err == nil || !strings.Contains(err.Error(), "x.csv") {
			t.Errorf("%q: err = %v", in, err)
		}
	}
}
