package northref

import (
	"errors"
	"math"
	"strings"
	"testing"
	"time"

	"corvane/internal/utm"
	"corvane/internal/wmm"
)

func TestParseCRS(t *testing.T) {
	good := map[string]utm.Zone{
		"EPSG:32750":   {Number: 50, South: true},
		"epsg:32750":   {Number: 50, South: true},
		" EPSG:32601 ": {Number: 1},
		"Epsg:32660":   {Number: 60},
		"EPSG:32706":   {Number: 6, South: true},
		"EPSG:28350":   {Number: 50, South: true}, // GDA94 / MGA zone 50
		"EPSG:7850":    {Number: 50, South: true}, // GDA2020 / MGA zone 50
		"EPSG:26911":   {Number: 11},              // NAD83 / UTM zone 11N
		"EPSG:25832":   {Number: 32},              // ETRS89 / UTM zone 32N
		"EPSG:31983":   {Number: 23, South: true}, // SIRGAS 2000 / UTM zone 23S
	}
	for s, want := range good {
		c, err := ParseCRS(s)
		if err != nil || c.Zone != want {
			t.Errorf("ParseCRS(%q) = %+v, %v; want zone %v", s, c, err, want)
		}
	}
	if c, _ := ParseCRS("epsg:32750"); c.String() != "EPSG:32750" {
		t.Errorf("canonical label %q", c.String())
	}
	bad := map[string]string{
		"":           "no coordinate system",
		"EPSG:32600": "unsupported",
		"EPSG:32761": "unsupported",
		"EPSG:4326":  "GDA2020 / MGA EPSG:7846-7859",
		"EPSG:2193":  "unsupported",
		"MINEGRID":   "unknown coordinate system",
		"EPSG:abc":   "not a number",
	}
	for s, msg := range bad {
		_, err := ParseCRS(s)
		var e *Error
		if !errors.As(err, &e) || e.Field != FieldCRS || !strings.Contains(err.Error(), msg) {
			t.Errorf("ParseCRS(%q): %v; want a crs error mentioning %q", s, err, msg)
		}
	}
}

// TestConvergenceReference: the PROJ 9.1.1 / GeographicLib convergence check
// points (references README, section 7), reached through grid coordinates
// and the coordinate system label as a collar would be.
func TestConvergenceReference(t *testing.T) {
	cases := []struct {
		crs      string
		zone     utm.Zone
		lat, lon float64
		want     float64
	}{
		{"EPSG:32631", utm.Zone{Number: 31}, 50.0, 6.0, 2.29900844},                 // PROJ 9.1.1 / GeographicLib
		{"epsg:32756", utm.Zone{Number: 56, South: true}, -33.9, 151.2, 1.00417196}, // PROJ 9.1.1 / GeographicLib
		{"EPSG:32606", utm.Zone{Number: 6}, 64.84, -147.72, -0.65169556},            // PROJ 9.1.1 / GeographicLib
	}
	for _, c := range cases {
		g, err := utm.Forward(c.zone, c.lat, c.lon)
		if err != nil {
			t.Fatal(err)
		}
		r, err := Corrections(c.crs, g.Easting, g.Northing, 300, time.Time{}, false, true)
		if err != nil {
			t.Fatal(err)
		}
		if !r.HasConvergence || r.HasDeclination || math.Abs(r.Convergence-c.want) > 1e-8 {
			t.Errorf("%s: %+v, want convergence %v only", c.crs, r, c.want)
		}
		if math.Abs(r.Lat-c.lat) > 1e-9 || math.Abs(r.Lon-c.lon) > 1e-9 {
			t.Errorf("%s: collar placed at %v,%v, want %v,%v", c.crs, r.Lat, r.Lon, c.lat, c.lon)
		}
	}
}

// TestDeclinationReference: the official WMM2025 test points at height 0
// (NOAA NCEI WMM2025 test values) that lie inside a UTM zone, reached from
// grid coordinates: the declination must match the table's rounding.
func TestDeclinationReference(t *testing.T) {
	cases := []struct {
		crs      string
		zone     utm.Zone
		lat, lon float64
		year     float64
		wantD    float64 // degrees, printed to 0.01
		wantH    float64 // nT, printed to 0.1
	}{
		{"EPSG:32650", utm.Zone{Number: 50}, 0, 120, 2025.0, -0.16, 39677.9},                // WMM2025 test values
		{"EPSG:32711", utm.Zone{Number: 11, South: true}, -80, 240, 2025.0, 68.78, 16898.1}, // WMM2025 test values
		{"EPSG:32650", utm.Zone{Number: 50}, 0, 120, 2027.5, -0.24, 39702.0},                // WMM2025 test values
		{"EPSG:32711", utm.Zone{Number: 11, South: true}, -80, 240, 2027.5, 68.49, 16908.3}, // WMM2025 test values
	}
	for _, c := range cases {
		g, err := utm.Forward(c.zone, c.lat, c.lon)
		if err != nil {
			t.Fatal(err)
		}
		r, err := CorrectionsYear(c.crs, g.Easting, g.Northing, 0, c.year, true, true)
		if err != nil {
			t.Fatal(err)
		}
		if !r.HasDeclination || math.Abs(r.Declination-c.wantD) > 0.005 || math.Abs(r.Field.H-c.wantH) > 0.05 {
			t.Errorf("%s %v,%v %.1f: D %.4f H %.2f; official %v, %v", c.crs, c.lat, c.lon, c.year, r.Declination, r.Field.H, c.wantD, c.wantH)
		}
		if r.Model != "WMM-2025" || r.Year != c.year || r.Caution() != "" {
			t.Errorf("%s: model %q year %v caution %q", c.crs, r.Model, r.Year, r.Caution())
		}
	}
	// The date path: 1 January 2025 is decimal year 2025.0 (WMM convention).
	g, _ := utm.Forward(utm.Zone{Number: 50}, 0, 120)
	r, err := Corrections("EPSG:32650", g.Easting, g.Northing, 0, time.Date(2025, 1, 1, 15, 0, 0, 0, time.UTC), true, false)
	if err != nil || math.Abs(r.Declination-(-0.16)) > 0.005 || r.HasConvergence {
		t.Errorf("by date: %+v %v", r, err)
	}
}

// TestPoleCaution: the caution (H < 6000 nT) and blackout (H < 2000 nT)
// zones of the WMM2025 report. Near the south magnetic pole (about 64S 135E
// in 2025, WMM2025 report, from memory) a collar is in the blackout zone;
// at 70S 135E it is in the caution zone. The thresholds come from the
// report; which side a point falls on comes from the model.
func TestPoleCaution(t *testing.T) {
	z := utm.Zone{Number: 53, South: true}
	for _, c := range []struct {
		lat, lon float64
		zone     wmm.Zone
		word     string
	}{{-64, 135, wmm.Blackout, "blackout"}, {-70, 135, wmm.Caution, "caution zone"}, {-30, 135, wmm.Normal, ""}} {
		g, _ := utm.Forward(z, c.lat, c.lon)
		r, err := CorrectionsYear("EPSG:32753", g.Easting, g.Northing, 0, 2026, true, false)
		if err != nil {
			t.Fatal(err)
		}
		if r.PoleZone != c.zone || (c.word == "") != (r.Caution() == "") || !strings.Contains(r.Caution(), c.word) {
			t.Errorf("%v,%v: H %.0f zone %v caution %q; want %v", c.lat, c.lon, r.Field.H, r.PoleZone, r.Caution(), c.zone)
		}
		if (r.PoleZone == wmm.Blackout) != (r.Field.H < 2000) || (r.PoleZone == wmm.Caution) != (r.Field.H >= 2000 && r.Field.H < 6000) {
			t.Errorf("zone %v does not follow H = %v", r.PoleZone, r.Field.H)
		}
	}
}

func TestErrors(t *testing.T) {
	// Collar ZR001 of the fictional Zelvorra Reach prospect, zone 50S (in
	// open ocean on purpose).
	const e, n, elev = 431280.38, 5400038.96, 405.69
	cases := []struct {
		name       string
		crs        string
		e, n, elev float64
		date       time.Time
		field, msg string
	}{
		{"local grid", "EPSG:32750", 5120, 10240, elev, time.Date(2026, 3, 1, 0, 0, 0, 0, time.UTC), FieldEasting, "local grid"},
		{"wrong hemisphere", "EPSG:32650", e, n + 5e6, elev, time.Date(2026, 3, 1, 0, 0, 0, 0, time.UTC), FieldNorthing, "hemisphere"},
		{"south too far", "EPSG:32750", e, 500000, elev, time.Date(2026, 3, 1, 0, 0, 0, 0, time.UTC), FieldNorthing, "southern zone"},
		{"no date", "EPSG:32750", e, n, elev, time.Time{}, FieldSurveyDate, "no survey date"},
		{"after both models", "EPSG:32750", e, n, elev, time.Date(2030, 1, 2, 0, 0, 0, 0, time.UTC), FieldSurveyDate, `survey_date "2030-01-02": is outside the years of both magnetic models (IGRF-14 covers 1900.0 to 2030.0; WMM-2025 covers 2025.0 to 2030.0)`},
		{"elevation in mm", "EPSG:32750", e, n, 405690, time.Date(2026, 3, 1, 0, 0, 0, 0, time.UTC), FieldElevation, "metres"},
		{"unknown label", "GDA94 / MGA zone 50", e, n, elev, time.Date(2026, 3, 1, 0, 0, 0, 0, time.UTC), FieldCRS, "unknown"},
		{"NaN northing", "EPSG:32750", e, math.NaN(), elev, time.Date(2026, 3, 1, 0, 0, 0, 0, time.UTC), FieldNorthing, "not a number"},
	}
	for _, c := range cases {
		_, err := Corrections(c.crs, c.e, c.n, c.elev, c.date, true, true)
		var ne *Error
		if !errors.As(err, &ne) || ne.Field != c.field || !strings.Contains(err.Error(), c.msg) {
			t.Errorf("%s: %v; want a %s error mentioning %q", c.name, err, c.field, c.msg)
		}
	}
	var re *RangeError
	_, err := Corrections("EPSG:32750", e, n, elev, time.Date(2031, 1, 1, 0, 0, 0, 0, time.UTC), true, false)
	if !errors.As(err, &re) {
		t.Errorf("a date past the models should unwrap to a RangeError: %v", err)
	}
	// A date before the WMM with the WMM chosen: the message names the WMM's
	// years and the other model, and gives the date once, as given.
	_, err = CorrectionsModel(ModelWMM, "EPSG:32750", e, n, elev, time.Date(2023, 8, 1, 0, 0, 0, 0, time.UTC), true, false)
	want := `survey_date "2023-08-01": is outside the years of magnetic model WMM-2025 (2025.0 to 2030.0); IGRF-14 covers 1900.0 to 2030.0: choose model igrf or auto`
	if err == nil || err.Error() != want {
		t.Errorf("2023 with the WMM:\n got %v\nwant %s", err, want)
	}
	// Nothing wanted: only the label is checked, coordinates are not used.
	if _, err := Corrections("EPSG:32750", 0, 0, 0, time.Time{}, false, false); err != nil {
		t.Errorf("no corrections wanted: %v", err)
	}
	// Convergence alone needs no date.
	if r, err := Corrections("EPSG:32750", e, n, elev, time.Time{}, false, true); err != nil || !r.HasConvergence || r.ScaleFactor == 0 {
		t.Errorf("convergence only: %+v %v", r, err)
	}
}

// TestAzimuths: true = magnetic + D and grid = true - C (project conventions).
func TestAzimuths(t *testing.T) {
	if got := TrueAzimuth(355, 7); got != 2 {
		t.Errorf("TrueAzimuth(355, +7) = %v, want 2", got)
	}
	if got := GridAzimuth(10, -2, 1.5); got != 6.5 {
		t.Errorf("GridAzimuth(10, -2, 1.5) = %v, want 6.5", got)
	}
	if got := GridAzimuth(1, 0, 2); got != 359 {
		t.Errorf("GridAzimuth(1, 0, 2) = %v, want 359", got)
	}
	from, to := ValidYears()
	if from != 1900 || to != 2030 {
		t.Errorf("ValidYears = %v, %v", from, to)
	}
	if y, err := ParseDate("2028-03-01"); err != nil || y != 2028+60.0/366 {
		t.Errorf("ParseDate leap year: %v %v", y, err)
	}
}

func BenchmarkCorrections(b *testing.B) {
	d := time.Date(2026, 5, 20, 0, 0, 0, 0, time.UTC)
	for b.Loop() {
		_, _ = Corrections("EPSG:32750", 431280.38, 5400038.96, 405.69, d, true, true)
	}
}

// FuzzParseCRS: a label is either refused with a crs error or gives a valid
// zone whose canonical label parses back to the same thing.
func FuzzParseCRS(f *testing.F) {
	for _, s := range []string{"EPSG:32750", "epsg:32601", "EPSG:32700", "EPSG:4326", "", "EPSG:-32750", "EPSG: 32750"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		c, err := ParseCRS(s)
		if err != nil {
			var e *Error
			if !errors.As(err, &e) || e.Field != FieldCRS {
				t.Fatalf("ParseCRS(%q): %v is not a crs error", s, err)
			}
			return
		}
		if c.Zone.Valid() != nil {
			t.Fatalf("ParseCRS(%q) accepted zone %v", s, c.Zone)
		}
		c2, err := ParseCRS(c.String())
		if err != nil || c2 != c {
			t.Fatalf("ParseCRS(%q) = %v does not round trip: %v %v", s, c, c2, err)
		}
	})
}

// A collar in GDA2020 / MGA zone 50 gets the convergence PROJ 9.1.1 gives
// for its position (internal/utm/testdata/proj_checks.txt, EPSG:7850 line:
// -31.95, 115.86 -> E 392259.361885, N 6464539.163993, C 0.60332222).
func TestCorrectionsMGA(t *testing.T) {
	r, err := Corrections("EPSG:7850", 392259.361885, 6464539.163993, 30, time.Time{}, false, true)
	if err != nil || math.Abs(r.Convergence-0.60332222) > 1e-6 || math.Abs(r.Lat+31.95) > 1e-9 || r.CRS.Name != "GDA2020 / MGA zone 50" {
		t.Errorf("%+v %v", r, err)
	}
}
