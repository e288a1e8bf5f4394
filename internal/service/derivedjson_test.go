package service

import (
	"encoding/json"
	"strconv"
	"strings"
	"testing"

	"corvane/internal/convert"
	"corvane/internal/csvio"
)

// TestDerivedJSONAtCSVPrecision: each number of the derived values is
// written in JSON as the CSV column of the same name writes it
// (convert.Decimals), so the two doors give the same figures and no
// floating-point noise reaches the JSON.
func TestDerivedJSONAtCSVPrecision(t *testing.T) {
	f := func(x float64) *float64 { return &x }
	d := Derived{AzimuthRef: "grid", HoleAzimuth: f(20.451656644087333), HoleDip: f(-59.75568538786767),
		East: f(431281.97276790877), North: f(6652443.28280882), Elevation: f(397.7496866119501),
		Dip: f(72.64999999999995), DipDirection: f(359.996), Strike: f(269.996), PoleTrend: f(179.996), PolePlunge: f(-0.0000001),
		TrueThickness: f(0.12345), GridConvergence: f(0.35996871974993505), Declination: f(-0.8054453215420382),
		PoleCone95: f(7.727392470841029), PoleLong95: f(9.199266624812507), PoleShort95: f(5.054003342496165), Warnings: []string{}}
	b, err := json.Marshal(d)
	if err != nil {
		t.Fatal(err)
	}
	var got map[string]any
	if err := json.Unmarshal(b, &got); err != nil {
		t.Fatal(err)
	}
	check := func(col string, v *float64) {
		t.Helper()
		want := csvio.FormatFloat(*v, convert.Decimals(col))
		x, ok := got[col].(float64)
		if !ok {
			t.Fatalf("%s: %v is not a number in %s", col, got[col], b)
		}
		// The JSON number, written as the CSV writes it, is the CSV's
		// cell; and it is the cell's value (nothing finer).
		if s := csvio.FormatFloat(x, convert.Decimals(col)); s != want {
			t.Errorf("%s: JSON %v writes %q in CSV terms, the CSV has %q", col, x, s, want)
		}
		if w, _ := strconv.ParseFloat(want, 64); x != w {
			t.Errorf("%s: JSON %v, want %v (the CSV cell %q)", col, x, w, want)
		}
	}
	check(convert.ColHoleAzimuth, d.HoleAzimuth)
	check(convert.ColHoleDip, d.HoleDip)
	check(convert.ColEasting, d.East)
	check(convert.ColNorthing, d.North)
	check(convert.ColElevation, d.Elevation)
	check(convert.ColDip, d.Dip)
	check(convert.ColDipDirection, d.DipDirection)
	check(convert.ColStrike, d.Strike)
	check(convert.ColPoleTrend, d.PoleTrend)
	check(convert.ColPolePlunge, d.PolePlunge)
	check(convert.ColTrueThickness, d.TrueThickness)
	check(convert.ColGridConvergence, d.GridConvergence)
	check(convert.ColDeclination, d.Declination)
	check(convert.ColPoleCone95, d.PoleCone95)
	check(convert.ColPoleLong95, d.PoleLong95)
	check(convert.ColPoleShort95, d.PoleShort95)
	if got["dip"] != 72.65 || got["easting"] != 431281.973 || got["declination"] != -0.805 {
		t.Errorf("dip %v easting %v declination %v; want 72.65, 431281.973, -0.805", got["dip"], got["easting"], got["declination"])
	}
	// -0.0000001 rounds to zero: written 0, never -0.
	if s := string(b); !strings.Contains(s, `"pole_plunge":0,`) {
		t.Errorf("pole_plunge not written as 0: %s", s)
	}
	if got["line_trend"] != nil || got["azimuth_ref"] != "grid" {
		t.Errorf("null and text fields changed: %s", b)
	}
}

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
