package geojson

import (
	"bufio"
	"bytes"
	"encoding/json"
	"errors"
	"math"
	"os"
	"strconv"
	"strings"
	"testing"

	"github.com/santhosh-tekuri/jsonschema/v6"

	"corvane/internal/exchange"
	"corvane/internal/exchange/exchangetest"
	"corvane/internal/geom"
	"corvane/internal/utm"
)

type fc struct {
	Type     string `json:"type"`
	Features []struct {
		Type     string `json:"type"`
		Geometry struct {
			Type        string          `json:"type"`
			Coordinates json.RawMessage `json:"coordinates"`
		} `json:"geometry"`
		Properties map[string]any `json:"properties"`
	} `json:"features"`
}

func decode(t *testing.T, b []byte) fc {
	t.Helper()
	var f fc
	if err := json.Unmarshal(b, &f); err != nil {
		t.Fatalf("%v\n%s", err, b)
	}
	return f
}

// schemaCheck validates b against the GeoJSON project's FeatureCollection
// JSON Schema (testdata/FeatureCollection.json, see its SOURCE note).
func schemaCheck(t *testing.T, b []byte) {
	t.Helper()
	sch, err := jsonschema.NewCompiler().Compile("testdata/FeatureCollection.json")
	if err != nil {
		t.Fatal(err)
	}
	inst, err := jsonschema.UnmarshalJSON(bytes.NewReader(b))
	if err != nil {
		t.Fatal(err)
	}
	if err := sch.Validate(inst); err != nil {
		t.Errorf("not a valid GeoJSON FeatureCollection: %v", err)
	}
}

type projPoint struct {
	epsg        int
	east, north float64
	lat, lon    float64
	zone        utm.Zone
	line        int
}

// projPoints reads testdata/proj_inverse.txt: UTM points and their WGS 84
// latitude, longitude from PROJ's cs2cs (command in the file).
func projPoints(t *testing.T) []projPoint {
	t.Helper()
	f, err := os.Open("testdata/proj_inverse.txt")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	var out []projPoint
	sc := bufio.NewScanner(f)
	for n := 1; sc.Scan(); n++ {
		s := strings.TrimSpace(sc.Text())
		if s == "" || s[0] == '#' {
			continue
		}
		fs := strings.Fields(s)
		if len(fs) != 5 {
			t.Fatalf("line %d: %q", n, s)
		}
		var v [5]float64
		for i, x := range fs {
			if v[i], err = strconv.ParseFloat(x, 64); err != nil {
				t.Fatalf("line %d: %v", n, err)
			}
		}
		p := projPoint{epsg: int(v[0]), east: v[1], north: v[2], lat: v[3], lon: v[4], line: n}
		p.zone = utm.Zone{Number: p.epsg % 100, South: p.epsg/100 == 327}
		out = append(out, p)
	}
	return out
}

// TestAgainstPROJ writes, for each zone of the PROJ file, one hole whose
// collar is the zone's first point and whose trace runs through all its
// points, and checks every written position against PROJ's inverse
// (cs2cs, values in testdata/proj_inverse.txt) to 1e-8 degree, longitude
// first (RFC 7946 section 3.1.1).
func TestAgainstPROJ(t *testing.T) {
	byZone := map[utm.Zone][]projPoint{}
	var zones []utm.Zone
	for _, p := range projPoints(t) {
		if _, ok := byZone[p.zone]; !ok {
			zones = append(zones, p.zone)
		}
		byZone[p.zone] = append(byZone[p.zone], p)
	}
	if len(zones) < 2 {
		t.Fatal("want points of a northern and a southern zone")
	}
	for _, z := range zones {
		ps := byZone[z]
		h := Hole{Name: "P" + z.String(), East: ps[0].east, North: ps[0].north, Elevation: 400, Azimuth: 20, Dip: -60, Depth: 100}
		for i, p := range ps {
			h.Trace.Points = append(h.Trace.Points, exchange.TracePoint{Depth: float64(i), Pos: geom.Vec3{X: p.east, Y: p.north, Z: 400 - float64(i)}})
		}
		var b bytes.Buffer
		if err := Write(&b, UTM(z), DatumOf("test grid", true), []Hole{h}); err != nil {
			t.Fatal(err)
		}
		schemaCheck(t, b.Bytes())
		f := decode(t, b.Bytes())
		var pt [2]float64
		var line [][2]float64
		json.Unmarshal(f.Features[0].Geometry.Coordinates, &pt)
		json.Unmarshal(f.Features[1].Geometry.Coordinates, &line)
		if f.Features[0].Geometry.Type != "Point" || f.Features[1].Geometry.Type != "LineString" || len(line) != len(ps) {
			t.Fatalf("zone %v: %s", z, b.String())
		}
		got := append([][2]float64{pt}, line...)
		want := append([]projPoint{ps[0]}, ps...)
		for i := range got {
			if math.Abs(got[i][0]-want[i].lon) > 1e-8 || math.Abs(got[i][1]-want[i].lat) > 1e-8 {
				t.Errorf("zone %v, PROJ line %d: [lon, lat] = %v, PROJ gives [%.10f, %.10f]", z, want[i].line, got[i], want[i].lon, want[i].lat)
			}
		}
	}
}

// TestFeatures checks the features and properties of the test scene and
// validates the file against the GeoJSON schema. It writes no Polygon, so
// RFC 7946's winding rule (section 3.1.6) has nothing to apply to; the test
// makes sure that stays so.
func TestFeatures(t *testing.T) {
	var holes []Hole
	for i, h := range exchangetest.Holes() {
		tr, err := exchange.TraceFromPath(h.Name, h.Path, 0)
		if err != nil {
			t.Fatal(err)
		}
		c := h.Collar
		holes = append(holes, Hole{Name: h.Name, East: c.East, North: c.North, Elevation: c.Elevation, Azimuth: c.Azimuth, Dip: c.Dip, Depth: c.Depth,
			Measurements: 10 * (i + 1), QAFlags: i, Trace: tr})
	}
	var b bytes.Buffer
	if err := Write(&b, UTM(utm.Zone{Number: 50, South: true}), DatumOf("test grid", true), holes); err != nil {
		t.Fatal(err)
	}
	schemaCheck(t, b.Bytes())
	if bytes.Contains(b.Bytes(), []byte("Polygon")) {
		t.Error("a polygon was written")
	}
	f := decode(t, b.Bytes())
	var kinds []string
	for _, ft := range f.Features {
		kinds = append(kinds, ft.Properties["hole"].(string)+" "+ft.Properties["feature"].(string)+" "+ft.Geometry.Type)
	}
	// ZR103 is drilled straight down to 50 m and nearly so below: its
	// surface projection still moves (dip -88), so it has a trace.
	want := `ZR101 collar Point|ZR101 trace LineString|ZR102 collar Point|ZR102 trace LineString|ZR103 "west" collar Point|ZR103 "west" trace LineString`
	if got := strings.Join(kinds, "|"); got != want {
		t.Errorf("features\n got %s\nwant %s", got, want)
	}
	p := f.Features[0].Properties
	if p["depth"] != 250.3 || p["azimuth"] != 20.0 || p["dip"] != -60.0 || p["elevation"] != 405.69 || p["measurements"] != 10.0 || p["qa_flags"] != 0.0 {
		t.Errorf("collar properties %v", p)
	}
	if p := f.Features[1].Properties; p["extrapolated_below"] != 201.0 || p["elevation"] != nil {
		t.Errorf("trace properties %v", p)
	}
	if _, ok := f.Features[3].Properties["extrapolated_below"]; ok {
		t.Errorf("ZR102 is surveyed to its end but has extrapolated_below")
	}
	// Coordinate order: longitude (about 116 E) before latitude (about 41.5 S).
	var c [2]float64
	json.Unmarshal(f.Features[0].Geometry.Coordinates, &c)
	if !(c[0] > 115 && c[0] < 117 && c[1] > -42 && c[1] < -41) {
		t.Errorf("collar at %v, want [lon, lat]", c)
	}
}

// TestVerticalHole: a trace whose surface projection is one position gets
// no LineString (RFC 7946 section 3.1.4 asks for two or more positions).
func TestVerticalHole(t *testing.T) {
	h := Hole{Name: "V1", East: 431280, North: 5400038, Azimuth: 0, Dip: -90, Depth: 50, Trace: exchange.Trace{Hole: "V1", Points: []exchange.TracePoint{
		{Depth: 0, Pos: geom.Vec3{X: 431280, Y: 5400038, Z: 400}}, {Depth: 50, Pos: geom.Vec3{X: 431280, Y: 5400038, Z: 350}}}}}
	var b bytes.Buffer
	if err := Write(&b, UTM(utm.Zone{Number: 50, South: true}), DatumOf("test grid", true), []Hole{h}); err != nil {
		t.Fatal(err)
	}
	if f := decode(t, b.Bytes()); len(f.Features) != 1 || f.Features[0].Geometry.Type != "Point" {
		t.Errorf("%s", b.String())
	}
}

// TestAntimeridian: a trace crossing 180 degrees is cut into a
// MultiLineString at the crossing (RFC 7946 section 3.1.9), the crossing's
// latitude interpolated linearly.
func TestAntimeridian(t *testing.T) {
	// A stand-in inverse: easting is longitude, northing latitude.
	inv := func(e, n float64) (float64, float64, error) { return n, e, nil }
	h := Hole{Name: "X", East: 179.99, North: -16, Trace: exchange.Trace{Points: []exchange.TracePoint{
		{Pos: geom.Vec3{X: 179.99, Y: -16}}, {Pos: geom.Vec3{X: -179.99, Y: -16.02}}, {Pos: geom.Vec3{X: -179.98, Y: -16.03}}}}}
	var b bytes.Buffer
	if err := Write(&b, inv, DatumOf("test grid", true), []Hole{h}); err != nil {
		t.Fatal(err)
	}
	schemaCheck(t, b.Bytes())
	f := decode(t, b.Bytes())
	if g := f.Features[1].Geometry; g.Type != "MultiLineString" || string(g.Coordinates) != `[[[179.99,-16],[180,-16.01]],[[-180,-16.01],[-179.99,-16.02],[-179.98,-16.03]]]` {
		t.Errorf("%s %s", g.Type, g.Coordinates)
	}
}

func TestInverseError(t *testing.T) {
	inv := func(e, n float64) (float64, float64, error) {
		if e > 10 {
			return 0, 0, errors.New("outside the zone")
		}
		return n, e, nil
	}
	h := Hole{Name: "TM9", Trace: exchange.Trace{Points: []exchange.TracePoint{{Depth: 0}, {Depth: 40, Pos: geom.Vec3{X: 11}}}}}
	err := Write(&bytes.Buffer{}, inv, DatumOf("test grid", true), []Hole{h})
	if err == nil || err.Error() != "hole TM9: trace at depth 40: outside the zone" {
		t.Errorf("error %v", err)
	}
}
