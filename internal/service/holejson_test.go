package service

import (
	"encoding/json"
	"strconv"
	"strings"
	"testing"

	"corvane/internal/convert"
	"corvane/internal/csvio"
)

// jsonAtCSV checks that the number under key in the JSON object b is the
// CSV cell csvio writes for v with the decimals of column col
// (convert.Decimals): the same figure, nothing finer.
func jsonAtCSV(t *testing.T, b []byte, key string, v float64, col string) {
	t.Helper()
	var got map[string]any
	if err := json.Unmarshal(b, &got); err != nil {
		t.Fatal(err)
	}
	cell := csvio.FormatFloat(v, convert.Decimals(col))
	want, _ := strconv.ParseFloat(cell, 64)
	if x, ok := got[key].(float64); !ok || x != want {
		t.Errorf("%s: JSON %v, want %v (the CSV cell %q) in %s", key, got[key], want, cell, b)
	}
}

// The hole's corrections are written in JSON at the precision of the
// derived values' declination and grid_convergence (0.001 degree), as the
// hole summary CSV writes them.
func TestHoleCorrectionsJSONAtCSVPrecision(t *testing.T) {
	f := func(x float64) *float64 { return &x }
	src := "computed"
	c := HoleCorrections{OutputAzimuthRef: "grid", CollarAzimuthRef: "magnetic", Declination: f(6.782787327512236),
		DeclinationSource: &src, GridConvergence: f(-0.35996871974993505), ConvergenceSource: "computed", Cautions: []string{}}
	b, err := json.Marshal(c)
	if err != nil {
		t.Fatal(err)
	}
	jsonAtCSV(t, b, "declination", *c.Declination, convert.ColDeclination)
	jsonAtCSV(t, b, "grid_convergence", *c.GridConvergence, convert.ColGridConvergence)
	if !strings.Contains(string(b), `"declination":6.783,`) || *c.Declination != 6.782787327512236 {
		t.Errorf("declination: %s (the value itself must stay as it is: %v)", b, *c.Declination)
	}
	// Nulls stay null.
	b, err = json.Marshal(HoleCorrections{ConvergenceSource: "none"})
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(b), `"declination":null`) || !strings.Contains(string(b), `"grid_convergence":null`) {
		t.Errorf("no corrections: %s", b)
	}
	// Inside a hole view, the corrections keep their precision.
	b, err = json.Marshal(HoleView{Corrections: c})
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(b), `"corrections":{`) || !strings.Contains(string(b), `"declination":6.783,`) {
		t.Errorf("hole view: %s", b)
	}
}

// A path point is written as the derived values write the same
// quantities: positions and depth to 0.001 of the length unit, the hole's
// direction and the dogleg severity to 0.01 degree.
func TestPathPointJSONAtCSVPrecision(t *testing.T) {
	sev := 1.2345678912
	p := PathPoint{Depth: 19.999999999999996, East: 431281.97276790877, North: 6652443.28280882, Elevation: 397.7496866119501,
		Azimuth: 20.451656644087333, Dip: -59.75568538786767, DoglegSeverity: &sev}
	b, err := json.Marshal(p)
	if err != nil {
		t.Fatal(err)
	}
	jsonAtCSV(t, b, "depth", p.Depth, convert.ColEasting)
	jsonAtCSV(t, b, "easting", p.East, convert.ColEasting)
	jsonAtCSV(t, b, "northing", p.North, convert.ColNorthing)
	jsonAtCSV(t, b, "elevation", p.Elevation, convert.ColElevation)
	jsonAtCSV(t, b, "azimuth", p.Azimuth, convert.ColHoleAzimuth)
	jsonAtCSV(t, b, "dip", p.Dip, convert.ColHoleDip)
	jsonAtCSV(t, b, "dogleg_severity", sev, convert.ColHoleDip)
	if !strings.Contains(string(b), `"depth":20,`) || !strings.Contains(string(b), `"dogleg_severity":1.23}`) {
		t.Errorf("path point: %s", b)
	}
	b, err = json.Marshal(PathPoint{Depth: 250, Extrapolated: true})
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(b), `"dogleg_severity":null`) {
		t.Errorf("no dogleg severity below the last station: %s", b)
	}
}
