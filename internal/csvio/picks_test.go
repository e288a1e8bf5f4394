package csvio

import (
	"errors"
	"strings"
	"testing"

	"corvane/internal/domain"
)

func TestReadPicks(t *testing.T) {
	in := "Hole_ID,DEPTH,dip,dip_direction,source\nZR001,12.5,45,120,log\nZR001,13,0,360,log\n"
	rows, err := ReadPicks(strings.NewReader(in), "picks.csv")
	if err != nil {
		t.Fatal(err)
	}
	if len(rows) != 2 || rows[0] != (PickRow{Line: 2, HoleID: "ZR001", Depth: 12.5, Dip: 45, DipDirection: 120}) || rows[1].Line != 3 {
		t.Errorf("rows %+v", rows)
	}
}

func TestReadPicksErrors(t *testing.T) {
	for _, c := range []struct{ in, want string }{
		{"hole_id,depth,dip\nA,1,2\n", "dip_direction"},
		{"hole_id,depth,dip,dip_direction\nA,1,95,10\n", "line 2"},
		{"hole_id,depth,dip,dip_direction\nA,1,45,10\nA,x,45,10\n", "line 3"},
		{"hole_id,depth,dip,dip_direction\nA,1,45,400\n", "dip_direction"},
		{"hole_id,depth,dip,dip_direction\n,1,45,40\n", "hole_id"},
	} {
		_, err := ReadPicks(strings.NewReader(c.in), "picks.csv")
		var de *domain.Error
		if err == nil || !errors.As(err, &de) || !strings.Contains(err.Error(), c.want) || !strings.Contains(err.Error(), "picks.csv") {
			t.Errorf("%q: error %v, want one naming %q and the file", c.in, err, c.want)
		}
	}
}

// FuzzReadPicks: no panic, and a failure always names the file.
func FuzzReadPicks(f *testing.F) {
	f.Add("hole_id,depth,dip,dip_direction\nA,1,45,10\n")
	f.Add("hole_id,depth,dip,dip_direction\nA,1,\"45,10\n")
	f.Fuzz(func(t *testing.T, s string) {
		rows, err := ReadPicks(strings.NewReader(s), "p.csv")
		if err != nil && !strings.Contains(err.Error(), "p.csv") {
			t.Errorf("error without the file name: %v", err)
		}
		if err != nil && rows != nil {
			t.Error("rows returned with an error")
		}
	})
}
