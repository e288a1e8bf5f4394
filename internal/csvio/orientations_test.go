package csvio

import (
	"math"
	"strings"
	"testing"

	"corvane/internal/geom"
)

func TestReadOrientations(t *testing.T) {
	in := "Hole_ID,Type,DIP,Dip_Direction,line_trend,line_plunge,hole_azimuth,hole_dip,extra,error,azimuth_reference\n" +
		"TM-001,bedding,30,120,,,45,-60,x,,grid\n" + // line 2: plane
		"TM-001,joint,abc,120,,,45,-60,x,,\n" + // line 3: not a number
		"TM-001,joint,95,120,,,45,-60,x,,\n" + // line 4: dip out of range
		"TM-001,lineation,,,200,35,45,-60,x,,\n" + // line 5: line only
		"TM-001,joint,,40,,,45,-60,x,,\n" + // line 6: half a pair
		"# a comment\n" +
		"TM-002,joint,,,,,45,-60,x,,\n" + // line 8: nothing
		"TM-002,joint,60,360,10,20,,,,,\n" + // line 9: plane and line, no hole
		"TM-003,joint,50,,,37,0,-90,,,\n" + // line 10: vertical hole: dip and plunge without azimuths
		"TM-003,joint,,,,,,,,depth past the end,\n" // line 11: not converted
	rows, problems, err := ReadOrientations(strings.NewReader(in), "demo.csv")
	if err != nil {
		t.Fatal(err)
	}
	if len(rows) != 5 {
		t.Fatalf("got %d rows, want 5: %+v", len(rows), rows)
	}
	if r := rows[3]; r.Line != 10 || !r.NoAzimuth || r.HasPlane || r.HasLine || !r.HasHole {
		t.Errorf("row 3 (vertical hole): %+v", r)
	}
	if r := rows[4]; r.Line != 11 || r.Error != "depth past the end" || r.HasPlane || r.HasLine || r.NoAzimuth {
		t.Errorf("row 4 (not converted): %+v", r)
	}
	if r := rows[0]; r.Line != 2 || !r.HasPlane || r.Plane != (geom.Plane{Dip: 30, DipDirection: 120}) || !r.HasHole || r.Type != "bedding" || r.HoleID != "TM-001" || r.AzimuthRef != "grid" || r.NoAzimuth {
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
		`demo.csv:line 6, column "dip": dip is empty but dip_direction is given`,
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

// FuzzReadOrientations: any input either fails as a whole or yields rows whose
// values are in range, each with a line number, and never panics.
func FuzzReadOrientations(f *testing.F) {
	f.Add("dip,dip_direction\n30,120\n")
	f.Add("LINE_TREND,line_plunge,hole_azimuth,hole_dip\n10,20,30,-40\n\"x\n")
	f.Add("dip,dip_direction,line_trend,line_plunge\n,,,\n90,360,360,90\n")
	f.Fuzz(func(t *testing.T, in string) {
		rows, problems, err := ReadOrientations(strings.NewReader(in), "f.csv")
		if err != nil {
			return
		}
		for _, r := range rows {
			if r.Line < 2 || (!r.HasPlane && !r.HasLine) {
				t.Fatalf("bad row %+v", r)
			}
			if r.HasPlane && !(r.Plane.Dip >= 0 && r.Plane.Dip <= 90 && r.Plane.DipDirection >= 0 && r.Plane.DipDirection < 360) {
				t.Fatalf("plane out of range %+v", r.Plane)
			}
			if r.HasLine && !(r.LineDir.Plunge >= 0 && r.LineDir.Plunge <= 90 && r.LineDir.Trend >= 0 && r.LineDir.Trend < 360) {
				t.Fatalf("line out of range %+v", r.LineDir)
			}
		}
		for _, p := range problems {
			if p.Loc.File != "f.csv" || p.Loc.Line < 1 {
				t.Fatalf("problem without location: %v", p)
			}
		}
	})
}

func TestReadOrientationsGeotech(t *testing.T) {
	in := "hole_id,depth,alpha,beta,rock_type,dip,dip_direction,hole_azimuth,hole_dip\n" +
		"A,10.5,40,120,granite,30,120,45,-60\n" + // 2 oriented
		"A,11.0,35,,granite,,,45,-60\n" + // 3 unoriented
		"A,12.0,35,,,,,,\n" + // 4 unoriented without a hole direction
		"A,-1,35,,,,,45,-60\n" + // 5 negative depth
		"A,13,95,,,,,45,-60\n" // 6 alpha out of range
	rows, problems, err := ReadOrientationsWith(strings.NewReader(in), "g.csv", OrientationOptions{Geotech: true})
	if err != nil {
		t.Fatal(err)
	}
	if len(rows) != 2 || rows[0].Depth != 10.5 || rows[0].Alpha != 40 || rows[0].RockType != "granite" || rows[0].Unoriented {
		t.Fatalf("rows %+v", rows)
	}
	if r := rows[1]; !r.Unoriented || r.HasPlane || !r.HasHole || r.Alpha != 35 || r.Line != 3 {
		t.Errorf("unoriented row %+v", r)
	}
	want := []string{
		`g.csv:line 4: an unoriented row (alpha without dip and dip_direction) needs hole_azimuth and hole_dip`,
		`g.csv:line 5, column "depth": depth -1 is negative`,
		`g.csv:line 6, column "alpha": alpha 95 is outside [0, 90]`,
	}
	if len(problems) != len(want) {
		t.Fatalf("problems %v", problems)
	}
	for i, w := range want {
		if problems[i].Error() != w {
			t.Errorf("problem %d: %q, want %q", i, problems[i].Error(), w)
		}
	}
	// Without the option an unoriented row with its hole direction is kept
	// and marked (the statistics count it as left out); depth is not read,
	// alpha must still be an angle.
	rows, problems, _ = ReadOrientations(strings.NewReader(in), "g.csv")
	if len(rows) != 3 || !rows[1].Unoriented || rows[1].Line != 3 || !rows[2].Unoriented || rows[2].Line != 5 || rows[0].Unoriented {
		t.Errorf("default reader rows: %+v", rows)
	}
	if len(problems) != 2 || problems[0].Error() != "g.csv:line 4: no plane and no line on this row" ||
		problems[1].Error() != `g.csv:line 6, column "alpha": alpha 95 is outside [0, 90]` {
		t.Errorf("default reader problems: %v", problems)
	}
}

func TestReadOrientationsPositions(t *testing.T) {
	in := "hole_id,depth,easting,northing,elevation,dip,dip_direction,type,set,warnings\n" +
		"ZR001,12.5,431290.1,5400050.2,395.3,30,45,JN,2,\n" +
		"ZR001,13,,,,40,50,BD,,below the last survey station\n" +
		"ZR001,14,4312x,5400050,395,40,50,BD,,\n"
	rows, problems, err := ReadOrientations(strings.NewReader(in), "c.csv")
	if err != nil {
		t.Fatal(err)
	}
	if len(rows) != 2 || len(problems) != 1 || problems[0].Loc.Line != 4 || problems[0].Loc.Column != "easting" {
		t.Fatalf("rows %+v problems %v", rows, problems)
	}
	r := rows[0]
	if r.Depth != 12.5 || !r.HasPos || r.Pos != (geom.Vec3{X: 431290.1, Y: 5400050.2, Z: 395.3}) || r.Set != "2" || r.Type != "JN" || r.Warnings != "" {
		t.Errorf("row 1: %+v", r)
	}
	if r := rows[1]; r.HasPos || r.Warnings != "below the last survey station" {
		t.Errorf("row 2: %+v", r)
	}
}

// The error sources of the set statistics: survey_instrument and the run
// columns, as corvane convert and the export write them; absent or empty
// cells are unknown (NaN, ""), bad values are problems naming the column.
func TestReadOrientationsErrorSources(t *testing.T) {
	in := "hole_id,dip,dip_direction,hole_azimuth,hole_dip,survey_instrument,run_confidence,run_mismatch,run_from\n" +
		"A,30,120,45,-60,Gyro,POOR,12.5,3.2\n" +
		"A,30,120,45,-60,,,,\n" +
		"A,30,120,45,-60,laser,,,\n" +
		"A,30,120,45,-60,,great,,\n" +
		"A,30,120,45,-60,,,190,\n" +
		"A,30,120,45,-60,,,,-1\n"
	rows, problems, err := ReadOrientations(strings.NewReader(in), "o.csv")
	if err != nil {
		t.Fatal(err)
	}
	if len(rows) != 2 || len(problems) != 4 {
		t.Fatalf("%d rows, problems %v", len(rows), problems)
	}
	if r := rows[0]; r.SurveyInstrument != "gyro" || r.RunConfidence != "poor" || r.RunMismatch != 12.5 || r.RunFrom != 3.2 {
		t.Errorf("row 2: %+v", r)
	}
	if r := rows[1]; r.SurveyInstrument != "unknown" || r.RunConfidence != "" || !math.IsNaN(r.RunMismatch) || !math.IsNaN(r.RunFrom) {
		t.Errorf("row 3: %+v", r)
	}
	for i, col := range []string{"survey_instrument", "run_confidence", "run_mismatch", "run_from"} {
		if !strings.Contains(problems[i].Error(), `column "`+col+`"`) {
			t.Errorf("problem %d: %v, want column %s", i, problems[i], col)
		}
	}
}
