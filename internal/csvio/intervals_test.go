package csvio

import (
	"bytes"
	"errors"
	"math"
	"strings"
	"testing"

	"corvane/internal/domain"
)

func TestReadIntervals(t *testing.T) {
	in := "Hole_ID,from,to,recovered,solid,sound,pieces,natural_breaks,induced_breaks,confidence\n" +
		"ZR001,0,3,2.9,2.5,2.1,,4,2,good\n" +
		"ZR001,3,6,3,2.8,,0.5;0.05;1.2,3,,\n" +
		"ZR002,10,12,,,,,,,\n"
	rows, err := ReadIntervals(strings.NewReader(in), "iv.csv")
	if err != nil {
		t.Fatal(err)
	}
	if len(rows) != 3 {
		t.Fatalf("%d rows", len(rows))
	}
	r := rows[1]
	if r.Line != 3 || r.HoleID != "ZR001" || len(r.Interval.Pieces) != 3 || r.Interval.Pieces[2] != 1.2 ||
		r.Interval.NaturalBreaks != 3 || r.Interval.InducedBreaks != -1 || !math.IsNaN(r.Interval.Sound) {
		t.Errorf("row 2: %+v", r)
	}
	if iv := rows[2].Interval; !math.IsNaN(iv.Recovered) || iv.Pieces != nil || iv.NaturalBreaks != -1 {
		t.Errorf("row 3: %+v", iv)
	}
	if rows[0].Interval.Confidence != "good" {
		t.Errorf("confidence %q", rows[0].Interval.Confidence)
	}
}

func TestReadIntervalsProblems(t *testing.T) {
	in := "hole_id,from,to,recovered,solid,pieces,natural_breaks\n" +
		"A,0,3,2,,,\n" + // 2 good
		"A,5,4,,,,\n" + // 3 to < from
		"A,3,6,3.5,,,\n" + // 4 recovered > length
		"A,1,2,,,,\n" + // 5 overlaps line 2
		"A,6,7,,,0.3;x,\n" + // 6 bad piece
		"A,7,8,,,,2.5\n" // 7 count not whole
	_, err := ReadIntervals(strings.NewReader(in), "iv.csv")
	var de *domain.Error
	if !errors.As(err, &de) {
		t.Fatalf("err = %v", err)
	}
	want := []string{
		`iv.csv:line 3, column "to": to 4 is not greater than from 5`,
		`iv.csv:line 4, column "recovered": recovered 3.5 is more than the interval length 3`,
		`iv.csv:line 6, column "pieces": pieces: piece 2 "x" is not a number`,
		`iv.csv:line 7, column "natural_breaks": natural_breaks "2.5" is not a whole number >= 0`,
	}
	if len(de.Problems) != len(want) {
		t.Fatalf("problems %v", de.Problems)
	}
	for i, w := range want {
		if got := de.Problems[i].Error(); got != w {
			t.Errorf("problem %d: %q, want %q", i, got, w)
		}
	}
	// Overlaps are checked once every row reads well.
	in = "hole_id,from,to\nA,0,3\nB,0,3\nA,2.5,4\n"
	_, err = ReadIntervals(strings.NewReader(in), "iv.csv")
	if err == nil || err.Error() != `iv.csv:line 4, column "from": hole "A": from 2.5 overlaps the interval 0 to 3 on line 2` {
		t.Errorf("overlap: %v", err)
	}
	rows, err := ReadIntervals(strings.NewReader("hole_id,from,to\nA,0,3\nA,3,9\n"), "iv.csv")
	if err != nil {
		t.Fatal(err)
	}
	err = CheckIntervalDepths(rows, "iv.csv", map[string]float64{"A": 8})
	if err == nil || err.Error() != `iv.csv:line 3, column "to": hole "A": to 9 is beyond the end of the hole at 8` {
		t.Errorf("depth: %v", err)
	}
	err = CheckIntervalDepths(rows, "iv.csv", map[string]float64{"B": 8})
	if err == nil || !strings.Contains(err.Error(), `hole "A" is not in the collars`) {
		t.Errorf("unknown hole: %v", err)
	}
}

func FuzzReadIntervals(f *testing.F) {
	f.Add([]byte("hole_id,from,to,recovered,solid,sound,pieces,natural_breaks,induced_breaks,confidence\nA,0,3,2.9,2.5,2.1,,4,2,good\nA,2,4,,,,0.1;0.2,,,\n"))
	f.Add([]byte("hole_id,from,to,pieces\nA,0,1,0.5;;0.2\nA,1,2,-1\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		rows, err := ReadIntervals(bytes.NewReader(data), "f.csv")
		checkWholeFile(t, data, len(rows), err)
		for _, r := range rows {
			iv := r.Interval
			if r.HoleID == "" || !(iv.From >= 0 && iv.To > iv.From) || iv.NaturalBreaks < -1 || iv.Recovered > iv.To-iv.From+1e-6 {
				t.Fatalf("bad row accepted: %+v", r)
			}
		}
	})
}

// WriteIntervals writes what ReadIntervals reads back to the same values.
func TestWriteIntervalsRoundTrip(t *testing.T) {
	in := "hole_id,from,to,recovered,solid,sound,pieces,natural_breaks,induced_breaks,confidence\n" +
		"ZR001,0,3,2.9,2.5,2.1,,4,2,good\n" +
		"ZR001,3,6.1,3,2.8,,0.5;0.05;0.3333333333333333,0,,\n" +
		"ZR002,10,12,,,,,,,\n"
	rows, err := ReadIntervals(strings.NewReader(in), "iv.csv")
	if err != nil {
		t.Fatal(err)
	}
	var b bytes.Buffer
	if err := WriteIntervals(&b, rows); err != nil {
		t.Fatal(err)
	}
	if b.String() != in {
		t.Errorf("written\n%s\nwant\n%s", b.String(), in)
	}
}
