package csvio

import (
	"bytes"
	"math"
	"math/rand/v2"
	"testing"
	"time"

	"corvane/internal/desurvey"
)

func sameFloat(a, b float64) bool { return a == b || (math.IsNaN(a) && math.IsNaN(b)) }

// Property: what the writers write, the readers read back to the same values.
func TestWriteReadRoundTrip(t *testing.T) {
	r := rand.New(rand.NewPCG(50, 51))
	opt := func(v float64) float64 {
		if r.IntN(3) == 0 {
			return math.NaN()
		}
		return v
	}
	var collars []CollarRow
	var surveys []SurveyRow
	var runs []RunRow
	for i := 0; i < 200; i++ {
		id := string(rune('A'+i%26)) + "-" + string(rune('a'+i/26)) + ", x"
		collars = append(collars, CollarRow{HoleID: id, Collar: desurvey.Collar{East: r.NormFloat64() * 1e6, North: r.Float64() * 1e7,
			Elevation: r.NormFloat64() * 500, Azimuth: r.Float64() * 360, Dip: -90 + r.Float64()*180, Depth: 1 + r.Float64()*1000},
			Declination: opt(r.NormFloat64() * 10), GridConvergence: opt(r.NormFloat64()), AzimuthRef: []string{"", "grid", "true", "magnetic"}[r.IntN(4)],
			CRS: []string{"", "EPSG:32750"}[r.IntN(2)], SurveyDate: []time.Time{{}, time.Date(2027, 4, 9, 0, 0, 0, 0, time.UTC)}[r.IntN(2)]})
		if r.IntN(3) == 0 {
			collars[len(collars)-1].LocalGrid = testGrid(r.NormFloat64()*40, 1+r.NormFloat64()*1e-4)
		}
		d := 0.0
		for k := 0; k < 5; k++ {
			d += r.Float64() * 50
			date := time.Time{}
			if r.IntN(2) == 0 {
				date = time.Date(2026, time.Month(1+r.IntN(12)), 1+r.IntN(28), 0, 0, 0, 0, time.UTC)
			}
			surveys = append(surveys, SurveyRow{HoleID: id, Station: desurvey.Station{Depth: d, Azimuth: r.Float64() * 360, Dip: -r.Float64() * 90},
				AzimuthRef: []string{"", "magnetic"}[r.IntN(2)], Date: date})
			// The same depth again in a set by kind of the hole.
			surveys = append(surveys, SurveyRow{HoleID: id, Station: desurvey.Station{Depth: d, Azimuth: r.Float64() * 360, Dip: -r.Float64() * 90},
				Kind: "gyro", Instrument: "gyro", Preferred: i%2 == 0})
			runs = append(runs, RunRow{HoleID: id, From: d, To: d + 0.1 + r.Float64()*3, Confidence: Confidences[r.IntN(4)], Mismatch: opt(r.Float64() * 180)})
		}
	}
	var buf bytes.Buffer
	if err := WriteCollars(&buf, collars); err != nil {
		t.Fatal(err)
	}
	gotC, err := ReadCollars(&buf, "c")
	if err != nil || len(gotC) != len(collars) {
		t.Fatal(err, len(gotC))
	}
	for i, c := range collars {
		g := gotC[i]
		if g.HoleID != c.HoleID || g.Collar != c.Collar || !sameFloat(g.Declination, c.Declination) || !sameFloat(g.GridConvergence, c.GridConvergence) ||
			g.AzimuthRef != c.AzimuthRef || g.CRS != c.CRS || !g.SurveyDate.Equal(c.SurveyDate) || (g.LocalGrid == nil) != (c.LocalGrid == nil) ||
			g.LocalGrid != nil && (g.LocalGrid.T != c.LocalGrid.T || string(g.LocalGrid.JSON()) != string(c.LocalGrid.JSON())) {
			t.Fatalf("collar %d: %+v, wrote %+v", i, g, c)
		}
	}
	buf.Reset()
	if err := WriteSurveys(&buf, surveys); err != nil {
		t.Fatal(err)
	}
	gotS, err := ReadSurveys(&buf, "s")
	if err != nil || len(gotS) != len(surveys) {
		t.Fatal(err, len(gotS))
	}
	for i, s := range surveys {
		g := gotS[i]
		if g.HoleID != s.HoleID || g.Station != s.Station || g.AzimuthRef != s.AzimuthRef || !g.Date.Equal(s.Date) || g.Kind != s.Kind || g.Instrument != s.Instrument ||
			g.Preferred != s.Preferred {
			t.Fatalf("survey %d: %+v, wrote %+v", i, g, s)
		}
	}
	buf.Reset()
	if err := WriteRuns(&buf, runs); err != nil {
		t.Fatal(err)
	}
	gotR, err := ReadRuns(&buf, "r")
	if err != nil || len(gotR) != len(runs) {
		t.Fatal(err, len(gotR))
	}
	for i, x := range runs {
		g := gotR[i]
		if g.HoleID != x.HoleID || g.From != x.From || g.To != x.To || g.Confidence != x.Confidence || !sameFloat(g.Mismatch, x.Mismatch) {
			t.Fatalf("run %d: %+v, wrote %+v", i, g, x)
		}
	}
}

// TestNumNoNegativeZero: the exact writers never show a negative zero.
func TestNumNoNegativeZero(t *testing.T) {
	if got := num(math.Copysign(0, -1)); got != "0" {
		t.Errorf("num(-0) = %q, want 0", got)
	}
	if got := num(-1.5); got != "-1.5" {
		t.Errorf("num(-1.5) = %q", got)
	}
}
