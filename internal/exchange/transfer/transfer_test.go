package transfer

import (
	"encoding/json"
	"math"
	"strings"
	"testing"

	"corvane/internal/coreinterval"
	"corvane/internal/desurvey"
	"corvane/internal/dirstat"
	"corvane/internal/exchange"
	"corvane/internal/exchange/geojson"
	"corvane/internal/fabric"
)

// The counts a GeoJSON hole carries and the grid the map is drawn through.
func TestCountAndInverse(t *testing.T) {
	p := Programme{Holes: []Hole{{Name: "A", CRS: "EPSG:32750"}, {Name: "B"}}}
	p.Count("A", true, false)
	p.Count("A", false, true)
	p.Count("B", true, true)
	p.Count("C", false, false) // not a hole of the selection: skipped only
	if a, b := p.Holes[0], p.Holes[1]; a.Measurements != 1 || a.QAFlags != 1 || b.Measurements != 1 || b.QAFlags != 1 || p.Skipped != 2 {
		t.Errorf("counts %+v %+v, skipped %d", a, b, p.Skipped)
	}
	if _, err := p.Inverse(""); err != nil {
		t.Errorf("one labelled system and an unlabelled collar: %v", err)
	}
	p.Holes[1].CRS = "EPSG:32751"
	if _, err := p.Inverse(""); err == nil || !strings.Contains(err.Error(), "EPSG:32751") {
		t.Errorf("two systems: %v", err)
	}
	if _, err := p.Inverse("EPSG:32750"); err != nil {
		t.Errorf("a system named overrides the labels: %v", err)
	}
	q := Programme{Holes: []Hole{{Name: "A"}}}
	if _, err := q.Inverse(""); err == nil {
		t.Error("no system at all: no error")
	}
}

// FRAC rows: one per set of the structures in each core interval, the
// unassigned ones under an empty FRAC_SET, an interval without structures
// one empty-set row with index 0; structures of another hole or outside
// [From, To) do not count.
func TestAGSSpacingsPerSet(t *testing.T) {
	st := func(hole string, z float64, set string) exchange.Structure {
		return exchange.Structure{Hole: hole, Depth: z, Set: set, Type: "JN", Dip: 40, DipDirection: 100, Uncertainty: math.NaN()}
	}
	p := Programme{Name: "P", Holes: []Hole{{Name: "A"}, {Name: "B"}},
		Structures: []exchange.Structure{st("A", 1.0, "S2"), st("A", 1.2, "S1"), st("A", 1.5, "S1"), st("A", 1.9, ""), st("A", 2.0, "S1"), st("B", 1.1, "")},
		Intervals: []Interval{{Hole: "A", Interval: coreinterval.Interval{From: 1, To: 2}}, {Hole: "A", Interval: coreinterval.Interval{From: 2, To: 3}},
			{Hole: "B", Interval: coreinterval.Interval{From: 5, To: 6}}},
	}
	got := p.AGS(AGSOptions{}).Spacings
	type row struct {
		hole, set string
		from      float64
		index     float64
		mean      float64
	}
	want := []row{{"A", "", 1, 1, math.NaN()}, {"A", "S1", 1, 2, 300}, {"A", "S2", 1, 1, math.NaN()}, {"A", "S1", 2, 1, math.NaN()}, {"B", "", 5, 0, math.NaN()}}
	if len(got) != len(want) {
		t.Fatalf("%d FRAC rows %+v, want %d", len(got), got, len(want))
	}
	for i, w := range want {
		g := got[i]
		if g.Hole != w.hole || g.Set != w.set || g.From != w.from || math.Abs(g.Index-w.index) > 1e-12 ||
			(math.IsNaN(w.mean) != math.IsNaN(g.Mean)) || (!math.IsNaN(w.mean) && math.Abs(g.Mean-w.mean) > 1e-9) {
			t.Errorf("FRAC row %d %+v, want %+v", i+1, g, w)
		}
	}
}

// The map's grid inverse follows the collars' EPSG family, on its own
// ellipsoid: a GDA2020 / MGA zone 50 collar goes back to the latitude and
// longitude PROJ 9.1.1 gave for it (internal/utm/testdata/proj_checks.txt,
// `proj +proj=utm +zone=50 +south +ellps=GRS80`: -31.95, 115.86 ->
// 392259.361885 E, 6464539.163993 N).
func TestInverseFollowsTheEPSGFamily(t *testing.T) {
	for _, crs := range []string{"EPSG:7850", "EPSG:28350"} {
		p := Programme{Holes: []Hole{{Name: "A", CRS: crs}}}
		inv, err := p.Inverse("")
		if err != nil {
			t.Fatalf("%s: %v", crs, err)
		}
		lat, lon, err := inv(392259.361885, 6464539.163993)
		// 1e-10 degree (about 0.01 mm): PROJ's 1e-6 m rounding is 1e-11 degree,
		// while the WGS 84 ellipsoid in place of GRS80 is off by 9e-10.
		if err != nil || math.Abs(lat+31.95) > 1e-10 || math.Abs(lon-115.86) > 1e-10 {
			t.Errorf("%s: %.10f %.10f %v, want -31.95 115.86", crs, lat, lon, err)
		}
	}
}

// ParseOrigin is the one reader of a scene origin for the CLI and the route.
func TestParseOrigin(t *testing.T) {
	o, err := ParseOrigin(" 1000, 2000.5 ,-3")
	if err != nil || *o != [3]float64{1000, 2000.5, -3} {
		t.Errorf("ParseOrigin: %v %v", o, err)
	}
	for _, bad := range []string{"1,2", "1,2,3,4", "1,x,3", "1,NaN,3", "1,2,Inf"} {
		if _, err := ParseOrigin(bad); err == nil {
			t.Errorf("ParseOrigin(%q): no error", bad)
		}
	}
}

// The map says which grid its coordinates came from and that no datum shift
// was applied: a note of the approximation for a GRS80 grid (GDA2020 / MGA
// zone 50), none for WGS 84 / UTM (RFC 7946 section 4 asks for WGS 84;
// section 6.1 allows the foreign member).
func TestGeoJSONStatesTheDatum(t *testing.T) {
	for _, c := range []struct {
		crs, grid string
		approx    bool
	}{
		{"EPSG:7850", "GDA2020 / MGA zone 50 (EPSG:7850)", true},
		{"EPSG:32750", "WGS 84 / UTM zone 50S (EPSG:32750)", false},
	} {
		p := Programme{Holes: []Hole{{Name: "A", CRS: c.crs, Collar: desurvey.Collar{East: 392259, North: 6464539, Depth: 10}}}}
		var b strings.Builder
		if err := p.WriteGeoJSON(&b, ""); err != nil {
			t.Fatal(err)
		}
		var f struct {
			Datum struct {
				Grid         string `json:"grid"`
				ShiftApplied *bool  `json:"shift_applied"`
				Note         string `json:"note"`
			} `json:"datum"`
		}
		if err := json.Unmarshal([]byte(b.String()), &f); err != nil {
			t.Fatal(err)
		}
		d := f.Datum
		if d.Grid != c.grid || d.ShiftApplied == nil || *d.ShiftApplied || (d.Note == geojson.DatumApproximation) != c.approx {
			t.Errorf("%s: datum member %+v", c.crs, d)
		}
	}
}

// LabelSets writes the statistics' sets on the structures: windows by
// name, "" for a pole in no window (exact geometry: the pole of 80/010
// plunges 10 toward 190); without set options the structures keep theirs.
func TestLabelSets(t *testing.T) {
	p := Programme{Structures: []exchange.Structure{
		{Dip: 80, DipDirection: 10, Type: "JN", Set: "old"},
		{Dip: 20, DipDirection: 250, Type: "BD", Set: "old"},
	}}
	if m, err := p.LabelSets(fabric.Sets{}); err != nil || m != "" || p.Structures[0].Set != "old" {
		t.Fatalf("no sets: %q %v %+v", m, err, p.Structures)
	}
	w, err := fabric.ParseWindow("J1:190/10:5", nil)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := p.LabelSets(fabric.Sets{Windows: []dirstat.Window{w}}); err != nil {
		t.Fatal(err)
	}
	if p.Structures[0].Set != "J1" || p.Structures[1].Set != "" {
		t.Errorf("windows: %+v", p.Structures)
	}
	if _, err := p.LabelSets(fabric.Sets{ByType: true}); err != nil || p.Structures[0].Set != "JN" || p.Structures[1].Set != "BD" {
		t.Errorf("by type: %v %+v", err, p.Structures)
	}
}
