package cli

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"corvane/internal/utm"
)

// TestMagneticHoleEndToEnd: a hole surveyed with a magnetic instrument
// converts to the same true orientations as the same hole surveyed against
// grid north, where the grid azimuths were made by hand from the corrections
// that `corvane declination` prints for the collar and survey date, using the
// project's sign conventions: true = magnetic + D, grid = true - C.
//
// The corrections themselves are checked against outside sources elsewhere
// (official WMM2025 test values, PROJ convergence check points); this test
// checks that convert applies them with the right signs and says where they
// came from.
func TestMagneticHoleEndToEnd(t *testing.T) {
	// A collar of the fictional Zelvorra Reach prospect, in UTM zone 50S
	// and in open ocean on purpose.
	const lat, lon, elev, date = -41.55, 116.18, 405.0, "2026-05-20"
	zone := utm.Zone{Number: 50, South: true}
	g, err := utm.Forward(zone, lat, lon)
	if err != nil {
		t.Fatal(err)
	}

	// By hand: ask corvane declination, as a logger would.
	code, out, errs := runDeclinationCmd(t, "--lat", fmt.Sprint(lat), "--lon", fmt.Sprint(lon),
		"--height-km", fmt.Sprint(elev/1000), "--date", date, "--utm-zone", "50S")
	if code != ExitOK {
		t.Fatalf("declination: exit %d: %s", code, errs)
	}
	var pt struct {
		Declination     float64 `json:"declination"`
		GridConvergence float64 `json:"grid_convergence"`
	}
	if err := json.Unmarshal([]byte(out), &pt); err != nil {
		t.Fatal(err)
	}
	D, C := pt.Declination, pt.GridConvergence
	if math.Abs(D) < 0.5 || math.Abs(C) < 0.3 {
		t.Fatalf("corrections too small to tell signs apart: D %v C %v", D, C)
	}

	// Hole MAG: magnetic survey azimuths. Hole GRD: the same survey in grid
	// azimuths computed by hand. Hole TRU: the same survey in true azimuths.
	type station struct{ depth, az, dip float64 }
	mag := []station{{0, 40, -62}, {50, 43.5, -60.5}, {100, 47, -58}, {150, 52, -56.5}, {200, 55, -55}}
	var collars, surveys strings.Builder
	collars.WriteString("hole_id,easting,northing,elevation,azimuth,dip,depth,azimuth_reference,crs\n")
	surveys.WriteString("hole_id,depth,azimuth,dip,azimuth_reference,survey_date\n")
	for _, h := range []struct {
		id, ref string
		shift   float64
	}{{"MAG", "magnetic", 0}, {"GRD", "grid", D - C}, {"TRU", "true", D}} {
		fmt.Fprintf(&collars, "%s,%.3f,%.3f,%.1f,%.6f,%g,250,%s,EPSG:32750\n", h.id, g.Easting, g.Northing, elev, mag[0].az+h.shift, mag[0].dip, h.ref)
		for _, s := range mag {
			fmt.Fprintf(&surveys, "%s,%g,%.8f,%g,%s,%s\n", h.id, s.depth, s.az+h.shift, s.dip, h.ref, date)
		}
	}
	var structs strings.Builder
	structs.WriteString("hole_id,depth,alpha,beta,gamma\n")
	type meas struct{ depth, alpha, beta, gamma float64 }
	ms := []meas{{12.5, 35, 20, 40}, {66, 52, 110, 150}, {120.2, 18, 250, 300}, {175, 70, 330, 10}, {199, 44, 180, 90}}
	for _, id := range []string{"MAG", "GRD", "TRU"} {
		for _, m := range ms {
			fmt.Fprintf(&structs, "%s,%g,%g,%g,%g\n", id, m.depth, m.alpha, m.beta, m.gamma)
		}
	}
	dir := t.TempDir()
	for name, text := range map[string]string{"collars.csv": collars.String(), "surveys.csv": surveys.String(), "structures.csv": structs.String()} {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
	}

	for _, ref := range []string{"grid", "true"} {
		outPath := filepath.Join(dir, "out-"+ref+".csv")
		var o, e strings.Builder
		code := Main(t.Context(), []string{"convert", "--collars", filepath.Join(dir, "collars.csv"),
			"--surveys", filepath.Join(dir, "surveys.csv"), "--structures", filepath.Join(dir, "structures.csv"),
			"--output-reference", ref, "-o", outPath}, strings.NewReader(""), &o, &e, func(string) string { return "" })
		if code != ExitOK {
			t.Fatalf("convert --output-reference %s: exit %d: %s", ref, code, e.String())
		}
		rows := e2eReadRows(t, outPath)
		if len(rows) != 3*len(ms) {
			t.Fatalf("%d rows", len(rows))
		}
		byHole := map[string][]map[string]string{}
		for _, r := range rows {
			if r["error"] != "" {
				t.Fatalf("row error: %v", r)
			}
			byHole[r["hole_id"]] = append(byHole[r["hole_id"]], r)
		}
		// Every hole's output must agree with the magnetic hole's.
		for _, id := range []string{"GRD", "TRU"} {
			for i := range ms {
				a, b := byHole["MAG"][i], byHole[id][i]
				for _, col := range []string{"hole_azimuth", "dip_direction", "line_trend"} {
					if d := math.Abs(math.Remainder(e2eNum(t, a[col])-e2eNum(t, b[col]), 360)); d > 0.002 {
						t.Errorf("%s output, depth %v, %s: MAG %s, %s %s", ref, ms[i].depth, col, a[col], id, b[col])
					}
				}
				for _, col := range []string{"hole_dip", "dip", "line_plunge", "easting", "northing", "elevation"} {
					if d := math.Abs(e2eNum(t, a[col]) - e2eNum(t, b[col])); d > 0.002 {
						t.Errorf("%s output, depth %v, %s: MAG %s, %s %s", ref, ms[i].depth, col, a[col], id, b[col])
					}
				}
			}
		}
		// The corrections used are stated, with where they came from.
		m := byHole["MAG"][0]
		if m["azimuth_reference"] != ref || m["declination_source"] != "computed (WMM-2025 at 2026.3808)" || math.Abs(e2eNum(t, m["declination"])-D) > 0.0006 {
			t.Errorf("%s output, MAG: reference %q declination %s (%s), want %v computed", ref, m["azimuth_reference"], m["declination"], m["declination_source"], D)
		}
		wantConv := map[string]map[string]string{ // hole -> convergence source, by output reference
			"grid": {"MAG": "computed", "TRU": "computed", "GRD": "none"},
			"true": {"MAG": "none", "TRU": "none", "GRD": "computed"},
		}
		for id, src := range wantConv[ref] {
			r := byHole[id][0]
			if r["convergence_source"] != src {
				t.Errorf("%s output, %s: convergence source %q, want %q", ref, id, r["convergence_source"], src)
			}
			if src == "computed" && math.Abs(e2eNum(t, r["grid_convergence"])-C) > 0.0006 {
				t.Errorf("%s output, %s: convergence %s, want %v", ref, id, r["grid_convergence"], C)
			}
		}
		if byHole["GRD"][0]["declination_source"] != "none" || byHole["TRU"][0]["declination_source"] != "none" {
			t.Errorf("%s output: declination applied to a hole not surveyed magnetically", ref)
		}
	}
}

func e2eReadRows(t *testing.T, path string) []map[string]string {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	var rows []map[string]string
	for _, rec := range recs[1:] {
		r := map[string]string{}
		for i, h := range recs[0] {
			r[h] = rec[i]
		}
		rows = append(rows, r)
	}
	return rows
}

func e2eNum(t *testing.T, s string) float64 {
	t.Helper()
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		t.Fatalf("%q is not a number", s)
	}
	return v
}
