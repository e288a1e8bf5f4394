package csvio

import (
	"bytes"
	"encoding/csv"
	"errors"
	"io"
	"math"
	"strings"
	"testing"

	"corvane/internal/domain"
)

// records counts the data records encoding/csv finds in data (after the
// header), or -1 when it cannot parse the whole input.
func records(data []byte) int {
	cr := csv.NewReader(bytes.NewReader(data))
	cr.FieldsPerRecord = -1
	all, err := cr.ReadAll()
	if err != nil || len(all) == 0 {
		return -1
	}
	return len(all) - 1
}

// checkWholeFile checks the contract of the whole-file readers: either every
// record became a row, or every problem is located at a distinct line of the
// named file with a message, and there are no more problems than records.
func checkWholeFile(t *testing.T, data []byte, n int, err error) {
	t.Helper()
	if err == nil {
		if rec := records(data); rec >= 0 && rec != n {
			t.Fatalf("%d rows from %d records", n, rec)
		}
		return
	}
	var de *domain.Error
	if !errors.As(err, &de) {
		t.Fatalf("error %T %v", err, err)
	}
	if n != 0 {
		t.Fatalf("rows returned with an error")
	}
	ps := de.Problems
	if len(ps) == 0 {
		ps = []*domain.Error{de}
	}
	seen := map[int]bool{}
	for _, p := range ps {
		if p.Loc.File != "f.csv" || p.Msg == "" {
			t.Fatalf("problem without file or message: %v", p)
		}
		if len(de.Problems) > 0 {
			if p.Loc.Line < 2 || seen[p.Loc.Line] {
				t.Fatalf("row problem at line %d (duplicate or header): %v", p.Loc.Line, err)
			}
			seen[p.Loc.Line] = true
		}
	}
	if rec := records(data); rec >= 0 && len(de.Problems) > rec {
		t.Fatalf("%d problems for %d records", len(de.Problems), rec)
	}
}

func FuzzReadCollars(f *testing.F) {
	f.Add([]byte("hole_id,easting,northing,elevation,azimuth,dip,depth\nA,1,2,3,45,-60,100\nB,1,2,3,x,-60,100\n"))
	f.Add([]byte("HOLE_ID,dip,depth,easting,northing,elevation,azimuth,declination\nA,-60,10,1,2,3,4,NaN\n"))
	f.Add([]byte("hole_id,easting,northing,elevation,azimuth,dip,depth\n\"A,1\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		rows, err := ReadCollars(bytes.NewReader(data), "f.csv")
		checkWholeFile(t, data, len(rows), err)
		for _, r := range rows {
			c := r.Collar
			if r.HoleID == "" || !(c.Azimuth >= 0 && c.Azimuth <= 360) || !(c.Dip >= -90 && c.Dip <= 90) || !(c.Depth > 0) ||
				math.IsNaN(c.East+c.North+c.Elevation) || math.IsInf(c.East+c.North+c.Elevation, 0) {
				t.Fatalf("bad row accepted: %+v", r)
			}
		}
	})
}

func FuzzReadSurveys(f *testing.F) {
	f.Add([]byte("hole_id,depth,azimuth,dip\nA,0,45,-60\nA,10,46,-61\nA,5,1,1\n"))
	f.Add([]byte("hole_id,depth,azimuth,dip,survey_date,azimuth_reference\nA,0,45,-60,2026-01-01,magnetic\nA,0,45,-60,x,y\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		rows, err := ReadSurveys(bytes.NewReader(data), "f.csv")
		checkWholeFile(t, data, len(rows), err)
		last := map[string]float64{}
		for _, r := range rows {
			s := r.Station
			if d, ok := last[r.HoleID]; ok && !(s.Depth > d) {
				t.Fatalf("unsorted stations accepted: %+v", r)
			}
			last[r.HoleID] = s.Depth
			if r.HoleID == "" || !(s.Depth >= 0) || !(s.Azimuth >= 0 && s.Azimuth <= 360) || !(s.Dip >= -90 && s.Dip <= 90) {
				t.Fatalf("bad row accepted: %+v", r)
			}
		}
	})
}

func FuzzReadRuns(f *testing.F) {
	f.Add([]byte("hole_id,from,to,confidence,mismatch\nA,0,3,good,1\nA,3,2,poor,\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		rows, err := ReadRuns(bytes.NewReader(data), "f.csv")
		checkWholeFile(t, data, len(rows), err)
		for _, r := range rows {
			if !(r.From >= 0 && r.To > r.From) || r.Confidence == "" || (!math.IsNaN(r.Mismatch) && !(r.Mismatch >= 0 && r.Mismatch <= 180)) {
				t.Fatalf("bad row accepted: %+v", r)
			}
		}
	})
}

func FuzzStructureReader(f *testing.F) {
	f.Add([]byte("hole_id,depth,alpha,beta,gamma\nA,1,2,3,\nA,1,95,3,4\nA,x,1,1,1\n"))
	f.Add([]byte("type,hole_id,depth,alpha,beta,thickness\nj,A,1,2,3,0.5\nj,A,1,2\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		sr, err := NewStructureReader(bytes.NewReader(data), "f.csv")
		if err != nil {
			if !strings.Contains(err.Error(), "f.csv") {
				t.Fatalf("header error without file: %v", err)
			}
			return
		}
		for {
			r, err := sr.Next()
			if err == io.EOF {
				return
			}
			if err != nil {
				if !strings.Contains(err.Error(), "f.csv") {
					t.Fatalf("error without file: %v", err)
				}
				return
			}
			checkParseUnquoted(t, sr, r)
			if r.Err != nil {
				if r.Err.Loc.File != "f.csv" || r.Err.Loc.Line != r.Line || r.Err.Msg == "" {
					t.Fatalf("row problem not located: %v", r.Err)
				}
				continue
			}
			if r.HoleID == "" || !(r.Depth >= 0) || !(r.Alpha >= 0 && r.Alpha <= 90) ||
				(r.HasBeta && !(r.Beta >= 0 && r.Beta <= 360)) || (!r.HasBeta && !math.IsNaN(r.Beta)) ||
				(r.HasGamma && !(r.Gamma >= 0 && r.Gamma <= 360)) || (r.HasThickness && !(r.Thickness >= 0)) ||
				(!r.HasGamma && !math.IsNaN(r.Gamma)) || math.IsInf(r.Depth, 0) {
				t.Fatalf("bad row accepted: %+v", r)
			}
		}
	})
}

// FuzzWriter: whatever text goes in, encoding/csv reads the same fields back.
func FuzzWriter(f *testing.F) {
	f.Add("a", "b,c", "\"q\"")
	f.Add(" x", "\r\n", `\.`)
	f.Fuzz(func(t *testing.T, a, b, c string) {
		var buf bytes.Buffer
		w := NewWriter(&buf)
		w.Strings([]string{a, b, c})
		w.EndRow()
		w.Flush()
		var ref bytes.Buffer
		cw := csv.NewWriter(&ref)
		cw.Write([]string{a, b, c})
		cw.Flush()
		if buf.String() != ref.String() {
			t.Fatalf("writer %q, encoding/csv %q", buf.String(), ref.String())
		}
	})
}
