package domain

import (
	"strings"
	"testing"
)

func TestProblemListSummarises(t *testing.T) {
	var pl ProblemList
	for line := 2; line <= 427; line++ {
		pl.Add(Errorf(Invalid, "duplicate of a stored measurement").At(Location{File: "s.csv", Line: line, Column: "depth"}))
	}
	pl.Add(Errorf(Invalid, "alpha 95 is outside 0..90").At(Location{File: "s.csv", Line: 500, Column: "alpha"}))
	pl.Add(Errorf(Invalid, "duplicate of a stored measurement").At(Location{File: "s.csv", Line: 600, Column: "depth"}))
	es := pl.Errors()
	if pl.Len() != 428 || len(es) != 2 {
		t.Fatalf("%d problems in %d groups, want 428 in 2: %v", pl.Len(), len(es), es)
	}
	if got, want := es[0].Error(), `s.csv:line 2, column "depth": 427 rows: duplicate of a stored measurement (lines 2-427, 600)`; got != want {
		t.Errorf("summary\n got %s\nwant %s", got, want)
	}
	if got := es[1].Msg; got != "alpha 95 is outside 0..90" {
		t.Errorf("single problem: %q", got)
	}
}

func TestLineRanges(t *testing.T) {
	for _, c := range []struct {
		in   []int
		want string
	}{
		{[]int{7}, "line 7"},
		{[]int{2, 3, 4, 9, 11, 12}, "lines 2-4, 9, 11-12"},
	} {
		if got := LineRanges(c.in); got != c.want {
			t.Errorf("LineRanges(%v) = %q, want %q", c.in, got, c.want)
		}
	}
	var many []int
	for i := 0; i < 20; i++ {
		many = append(many, 10*i)
	}
	if got := LineRanges(many); !strings.HasSuffix(got, "110 and 8 more") {
		t.Errorf("LineRanges of 20 lines = %q", got)
	}
}
