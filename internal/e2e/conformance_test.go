package e2e

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	"corvane/internal/convert"
	"corvane/internal/coreangle"
	"corvane/internal/csvio"
	"corvane/internal/geom"
	"corvane/internal/northref"
	"corvane/internal/pgtest"
)

// One engine, one answer. The same fixture programmes go through five
// doors: `corvane convert`, POST /v1/convert, import + export on SQLite,
// import + export on PostgreSQL, and the logging page's preview route.
// Every derived column is equal across the five, byte for byte as the CSV
// writer formats it (the JSON doors' numbers are formatted with the same
// decimals). The converted orientations are also checked against the
// fixture's forward model (the true plane each alpha/beta was made from)
// and, where a hole allows it, against the published constructions of
// references README section 2.

// hole is one straight hole of a fixture: its true direction, how its
// azimuths are recorded, and the planes logged in it.
type hole struct {
	id                 string
	east, north, elev  float64
	trueAz, dip, depth float64
	crs                string
	ref                string // survey azimuth reference ("" = output reference)
	decl, conv         string // collar declination, grid_convergence cells
	collarDate, stDate string // collar survey_date cell, survey rows' survey_date
	// model is the magnetic model the programme chooses ("" is auto) and
	// wantSource the declination_source every door must report, "" to skip.
	model                northref.MagneticModel
	wantSource           string
	planes               []geom.Plane
	lines                bool // log a lineation (the plane's dip line) with each plane
	alphaBeta            [][2]float64
	wantDip, wantDipDirs []float64 // published expectations for alphaBeta rows
}

type programme struct {
	name    string
	flags   []string       // corvane convert options
	project map[string]any // the same conventions for the service
	query   string         // the query of the HTTP doors (e.g. "?output_reference=local"), "" for none
	out     string         // output reference
	conv    coreangle.Convention
	feet    bool
	holes   []hole
}

// The programmes of the conformance test. Collars in WGS 84 / UTM zone 50S
// (an invented prospect).
func programmes() []programme {
	planes := []geom.Plane{{Dip: 35, DipDirection: 120}, {Dip: 70, DipDirection: 300}, {Dip: 10, DipDirection: 20}}
	// references README section 2, "Consequences of the conventions": a hole
	// of azimuth 000 and dip -60, bottom line, beta to the down-hole apex
	// (and the same for the top line with beta to the up-hole apex).
	ref2 := hole{id: "R1", east: 402000, north: 7400000, elev: 310, trueAz: 0, dip: -60, depth: 120, ref: "grid",
		alphaBeta: [][2]float64{{20, 0}, {45, 0}, {20, 180}, {70, 180}, {45, 90}, {45, 270}},
		wantDip:   []float64{80, 75, 40, 10, 52.2, 52.2}, wantDipDirs: []float64{0, 180, 0, 180, 243.4, 116.6}}
	return []programme{
		{name: "default", out: "grid", holes: []hole{
			{id: "D1", east: 401000, north: 7401000, elev: 300, trueAz: 30, dip: -60, depth: 200, crs: "EPSG:32750", ref: "true", planes: planes, lines: true},
			// A vertical hole: dip = 90 - alpha, no dip direction (common practice).
			{id: "D2", east: 401500, north: 7401500, elev: 305, trueAz: 0, dip: -90, depth: 150, crs: "EPSG:32750", ref: "true",
				alphaBeta: [][2]float64{{35, 120}}, wantDip: []float64{55}, wantDipDirs: []float64{math.NaN()}},
			ref2,
		}},
		{name: "top-uphole-anticlockwise", out: "grid",
			flags:   []string{"--reference-line", "top", "--beta-apex", "uphole", "--gamma-sense", "anticlockwise"},
			project: map[string]any{"ref_line": "top", "beta_apex": "uphole", "gamma_sense": "anticlockwise"},
			conv:    coreangle.Convention{RefLine: coreangle.Top, BetaApex: coreangle.UpHole, GammaSense: coreangle.Anticlockwise},
			holes: []hole{
				{id: "T1", east: 401000, north: 7401000, elev: 300, trueAz: 250, dip: -55, depth: 180, crs: "EPSG:32750", ref: "true", planes: planes, lines: true},
				ref2,
			}},
		{name: "magnetic-per-hole", out: "grid", holes: []hole{
			{id: "M1", east: 1000, north: 2000, elev: 300, trueAz: 75, dip: -65, depth: 220, ref: "magnetic", decl: "12.5", conv: "-1.25", planes: planes, lines: true},
			{id: "M2", east: 1100, north: 2100, elev: 300, trueAz: 300, dip: -50, depth: 160, ref: "magnetic", decl: "-6", conv: "0.75", planes: planes},
		}},
		{name: "magnetic-computed", out: "grid", holes: []hole{
			{id: "C1", east: 402500, north: 7402500, elev: 420, trueAz: 140, dip: -70, depth: 250, crs: "EPSG:32750", ref: "magnetic", stDate: "2026-05-04", planes: planes, lines: true},
			// The date from the collar, for survey rows without one.
			{id: "C2", east: 403500, north: 7403500, elev: 380, trueAz: 200, dip: -62, depth: 200, crs: "EPSG:32750", ref: "magnetic", collarDate: "2028-11-20", planes: planes},
			// A survey before WMM2025's years: IGRF-14 under auto.
			{id: "C3", east: 404500, north: 7402500, elev: 400, trueAz: 65, dip: -58, depth: 180, crs: "EPSG:32750", ref: "magnetic", stDate: "2023-08-01",
				planes: planes, lines: true, wantSource: "computed (IGRF-14 at 2023.5808)"},
		}},
		{name: "magnetic-model-igrf", out: "grid", flags: []string{"--model", "igrf"}, project: map[string]any{"magnetic_model": "igrf"},
			holes: []hole{
				{id: "G1", east: 402500, north: 7402500, elev: 420, trueAz: 140, dip: -70, depth: 250, crs: "EPSG:32750", ref: "magnetic", stDate: "2026-05-04",
					model: northref.ModelIGRF, planes: planes, lines: true, wantSource: "computed (IGRF-14 at 2026.3370)"},
				{id: "G2", east: 403500, north: 7403500, elev: 380, trueAz: 200, dip: -62, depth: 200, crs: "EPSG:32750", ref: "magnetic", stDate: "1998-02-10",
					model: northref.ModelIGRF, planes: planes, wantSource: "computed (IGRF-14 at 1998.1096)"},
			}},
		{name: "true-output", out: "true", flags: []string{"--output-reference", "true"}, project: map[string]any{"output_azimuth_ref": "true"},
			holes: []hole{
				{id: "O1", east: 1000, north: 2000, elev: 100, trueAz: 10, dip: -60, depth: 150, ref: "grid", conv: "1.5", planes: planes, lines: true},
				{id: "O2", east: 1200, north: 2000, elev: 100, trueAz: 95, dip: -75, depth: 150, ref: "true", planes: planes},
				{id: "O3", east: 1400, north: 2000, elev: 100, trueAz: 185, dip: -45, depth: 150, ref: "magnetic", decl: "-3.25", planes: planes},
				// No azimuth_reference: the output reference (true), as in the
				// files; a collar that could be placed, but no convergence is
				// applied, so none is reported.
				{id: "O4", east: 402000, north: 7400000, elev: 100, trueAz: 275, dip: -65, depth: 150, crs: "EPSG:32750", planes: planes},
			}},
		{name: "feet", out: "grid", feet: true, flags: []string{"--feet"}, project: map[string]any{"length_unit": "ft"},
			holes: []hole{
				{id: "F1", east: 404000, north: 7404000, elev: 9000, trueAz: 45, dip: -60, depth: 900, crs: "EPSG:32750", ref: "magnetic", stDate: "2027-02-14", planes: planes, lines: true},
				{id: "F2", east: 404500, north: 7404500, elev: 8800, trueAz: 320, dip: -80, depth: 700, crs: "EPSG:32750", ref: "true", planes: planes},
			}},
	}
}

// hole returns the programme's hole with the given id.
func (pg programme) hole(id string) hole {
	for _, h := range pg.holes {
		if h.id == id {
			return h
		}
	}
	panic("no hole " + id)
}

// corrections returns the declination and convergence the fixture's hole
// is recorded with: its given numbers, else northref's (whose own tests
// check WMM2025's official test values and PROJ's convergences).
func (h hole) corrections(t *testing.T, feet bool) (decl, conv float64) {
	t.Helper()
	parse := func(s string) float64 {
		v, err := strconv.ParseFloat(s, 64)
		if err != nil {
			t.Fatal(err)
		}
		return v
	}
	if h.decl != "" {
		decl = parse(h.decl)
	}
	if h.conv != "" {
		conv = parse(h.conv)
	}
	if h.crs == "" {
		return decl, conv
	}
	date := h.stDate
	if date == "" {
		date = h.collarDate
	}
	var when time.Time
	if date != "" {
		when, _ = time.Parse(time.DateOnly, date)
	}
	elev := h.elev
	if feet {
		elev *= 0.3048
	}
	r, err := northref.CorrectionsModel(h.model, h.crs, h.east, h.north, elev, when, h.decl == "" && h.ref == "magnetic", h.conv == "")
	if err != nil {
		t.Fatal(err)
	}
	if h.decl == "" {
		decl = r.Declination
	}
	if h.conv == "" {
		conv = r.Convergence
	}
	return decl, conv
}

// row is one structure row with what the forward model expects of it.
type row struct {
	hole                     string
	depth, alpha, beta       float64
	gamma                    float64 // NaN for none
	thick                    float64
	wantDip, wantDD          float64
	wantTrend, wantPlunge    float64 // the lineation, NaN for none
	wantE, wantN, wantElev   float64
	checkPosition, published bool
}

// files writes the programme's collars, surveys, structures and runs CSVs
// and returns their text and the rows with their expectations. Every hole
// has two orientation runs, the upper half rated good, fair or unrated by
// hole with a logged mismatch, the lower half rated poor; the structures
// file names each measurement's run in its run_confidence and run_mismatch
// columns (what `corvane convert` and POST /v1/convert read), the stores
// get the runs file, so the uncertainty columns and the run's warning must
// agree at every door.
func (pg programme) files(t *testing.T) (collars, surveys, structures, runs string, rows []row) {
	var c, s, m, rn strings.Builder
	c.WriteString("hole_id,easting,northing,elevation,azimuth,dip,depth,crs,declination,grid_convergence,survey_date\n")
	s.WriteString("hole_id,depth,azimuth,dip,azimuth_reference,survey_date,instrument\n")
	m.WriteString("hole_id,depth,alpha,beta,gamma,apparent_thickness,type,run_confidence,run_mismatch\n")
	rn.WriteString("hole_id,from,to,confidence,mismatch\n")
	f := func(v float64) string { return strconv.FormatFloat(v, 'f', 6, 64) }
	for hi, h := range pg.holes {
		upper := []string{"good", "fair", "good"}[hi%3]
		upperMismatch := []string{"2.5", "", "31"}[hi%3] // 31: a mismatch that widens a good mark's error
		fmt.Fprintf(&rn, "%s,0,%s,%s,%s\n%s,%s,%s,poor,\n", h.id, f(h.depth/2), upper, upperMismatch, h.id, f(h.depth/2), f(h.depth))
		decl, conv := h.corrections(t, pg.feet)
		// The recorded azimuth: true = magnetic + D, grid = true - C.
		rec := h.trueAz
		switch h.ref {
		case "magnetic":
			rec = h.trueAz - decl
		case "grid":
			rec = h.trueAz - conv
		}
		rec = geom.NormAzimuth(rec)
		// Output azimuths: the true ones, less C for grid output.
		shift := 0.0
		if pg.out == "grid" {
			shift = -conv
		}
		outAz := geom.NormAzimuth(h.trueAz + shift)
		fmt.Fprintf(&c, "%s,%s,%s,%s,%s,%s,%s,%s,%s,%s,%s\n", h.id, f(h.east), f(h.north), f(h.elev), f(rec), f(h.dip), f(h.depth), h.crs, h.decl, h.conv, h.collarDate)
		// The survey instrument, for the uncertainty columns: magnetic
		// surveys by a magnetic instrument, grid ones by a gyro, the rest
		// not given (unknown); on the first station only.
		inst := map[string]string{"magnetic": "magnetic", "grid": "gyro"}[h.ref]
		for _, d := range []float64{0, h.depth / 2} {
			fmt.Fprintf(&s, "%s,%s,%s,%s,%s,%s,%s\n", h.id, f(d), f(rec), f(h.dip), h.ref, h.stDate, inst)
			inst = ""
		}
		dir := geom.HoleDirection(outAz, h.dip)
		at := func(md float64) (e, n, z float64) {
			return h.east + md*dir.X, h.north + md*dir.Y, h.elev + md*dir.Z
		}
		k := 0
		add := func(r row) {
			k++
			r.hole, r.depth, r.thick = h.id, 5+float64(k)*h.depth/12, 0.25*float64(k)
			r.wantE, r.wantN, r.wantElev = at(r.depth)
			r.checkPosition = true
			rows = append(rows, r)
			g := ""
			typ := "BD"
			if !math.IsNaN(r.gamma) {
				g, typ = f(r.gamma), "LN"
			}
			b := "" // unoriented
			if !math.IsNaN(r.beta) {
				b = f(r.beta)
			}
			conf, mismatch := upper, upperMismatch
			if r.depth > h.depth/2 {
				conf, mismatch = "poor", ""
			}
			fmt.Fprintf(&m, "%s,%s,%s,%s,%s,%s,%s,%s,%s\n", h.id, f(r.depth), f(r.alpha), b, g, f(r.thick), typ, conf, mismatch)
		}
		for _, p := range h.planes {
			// Forward model: the plane in the output reference, and the
			// angles it makes with the hole.
			po := geom.Plane{Dip: p.Dip, DipDirection: geom.NormAzimuth(p.DipDirection + shift)}
			a, b, _ := coreangle.Angles(dir, po, pg.conv)
			r := row{alpha: a, beta: b, gamma: math.NaN(), wantDip: po.Dip, wantDD: po.DipDirection, wantTrend: math.NaN(), wantPlunge: math.NaN()}
			if h.lines {
				l := geom.Line{Trend: po.DipDirection, Plunge: po.Dip} // the dip line lies on the plane
				g, err := coreangle.Gamma(dir, po, l, pg.conv)
				if err != nil {
					t.Fatal(err)
				}
				r.gamma, r.wantTrend, r.wantPlunge = g, l.Trend, l.Plunge
			}
			add(r)
		}
		if !h.lines {
			// An unoriented measurement (no beta): the hole direction and
			// position only, the dip (90 - alpha) in a vertical hole.
			wantDip := math.NaN()
			if h.dip == -90 {
				wantDip = 55
			}
			add(row{alpha: 35, beta: math.NaN(), gamma: math.NaN(), wantDip: wantDip, wantDD: math.NaN(), wantTrend: math.NaN(), wantPlunge: math.NaN()})
		}
		for i, ab := range h.alphaBeta {
			add(row{alpha: ab[0], beta: ab[1], gamma: math.NaN(), wantDip: h.wantDip[i], wantDD: h.wantDipDirs[i],
				wantTrend: math.NaN(), wantPlunge: math.NaN(), published: true})
		}
	}
	return c.String(), s.String(), m.String(), rn.String(), rows
}

// derivedColumns are the columns compared across the doors: what
// `corvane convert` appends, but the error text (which names the door's
// file or field).
func derivedColumns() []string {
	cols := convert.OutputColumns(true)
	return cols[:len(cols)-1]
}

// readCSV reads a CSV text into rows keyed by column.
func readCSV(t *testing.T, text []byte) []map[string]string {
	t.Helper()
	recs, err := csv.NewReader(bytes.NewReader(text)).ReadAll()
	if err != nil {
		t.Fatalf("%v\n%s", err, text)
	}
	var out []map[string]string
	for _, r := range recs[1:] {
		m := map[string]string{}
		for i, c := range recs[0] {
			m[c] = r[i]
		}
		out = append(out, m)
	}
	return out
}

// fromJSON formats the derived values of a JSON door as the CSV writer
// formats them.
func fromJSON(d map[string]any) map[string]string {
	out := map[string]string{}
	for _, col := range derivedColumns() {
		key := col
		if col == convert.ColAzimuthReference {
			key = "azimuth_ref"
		}
		switch v := d[key].(type) {
		case nil:
			out[col] = ""
		case float64:
			out[col] = string(csvio.AppendFloat(nil, v, convert.Decimals(col)))
		case string:
			out[col] = v
		case []any:
			ws := make([]string, len(v))
			for i, w := range v {
				ws[i] = w.(string)
			}
			out[col] = strings.Join(ws, "; ")
		}
	}
	if e, _ := d["error"].(string); e != "" {
		out[convert.ColError] = e
	}
	return out
}

// convertCLI runs `corvane convert` on the files in dir.
func convertCLI(t *testing.T, dir string, flags []string) []map[string]string {
	t.Helper()
	args := append([]string{"convert", "--collars", filepath.Join(dir, "collars.csv"), "--surveys", filepath.Join(dir, "surveys.csv"),
		"--structures", filepath.Join(dir, "structures.csv")}, flags...)
	cmd := exec.Command(binary, args...)
	var stdout, stderr bytes.Buffer
	cmd.Stdout, cmd.Stderr = &stdout, &stderr
	if err := cmd.Run(); err != nil {
		if ee, ok := err.(*exec.ExitError); !ok || ee.ExitCode() != 1 {
			t.Fatalf("corvane convert: %v\n%s", err, stderr.String())
		}
	}
	return readCSV(t, stdout.Bytes())
}

// convertJSON sends the programme to POST /v1/convert (with the
// programme's query), built from the same CSV files as the command line
// reads them: a collar's own local grid, and surveys by kind with their
// preferred flag.
func convertJSON(t *testing.T, s *server, pg programme, collars, surveys, structures string) []map[string]string {
	return convertJSONWith(t, s, pg, collars, surveys, structures, nil)
}

// convertJSONWith is convertJSON with further top-level fields of the
// request.
func convertJSONWith(t *testing.T, s *server, pg programme, collars, surveys, structures string, extra map[string]any) []map[string]string {
	t.Helper()
	crows, err := csvio.ReadCollars(strings.NewReader(collars), "collars.csv")
	if err != nil {
		t.Fatal(err)
	}
	srows, err := csvio.ReadSurveys(strings.NewReader(surveys), "surveys.csv")
	if err != nil {
		t.Fatal(err)
	}
	num := func(v float64) any {
		if math.IsNaN(v) {
			return nil
		}
		return v
	}
	conv := map[string]any{}
	for k, v := range pg.project {
		conv[k] = v
	}
	var cs, ss, ms []map[string]any
	for _, c := range crows {
		cm := map[string]any{"hole_id": c.HoleID, "easting": c.Collar.East, "northing": c.Collar.North, "elevation": c.Collar.Elevation,
			"azimuth": c.Collar.Azimuth, "dip": c.Collar.Dip, "final_depth": c.Collar.Depth, "crs": c.CRS,
			"declination": num(c.Declination), "grid_convergence": num(c.GridConvergence)}
		if c.AzimuthRef != "" { // absent: the output reference, as in the file
			cm["azimuth_ref"] = c.AzimuthRef
		}
		if c.LocalGrid != nil {
			cm["local_grid"] = json.RawMessage(c.LocalGrid.JSON())
		}
		if !c.SurveyDate.IsZero() {
			cm["survey_date"] = c.SurveyDate.Format(time.DateOnly)
		}
		cs = append(cs, cm)
	}
	bySet := map[string]map[string]any{}
	for _, r := range srows {
		key := r.HoleID + "\x00" + r.Kind
		sm := bySet[key]
		if sm == nil {
			sm = map[string]any{"hole_id": r.HoleID, "stations": []map[string]float64{}}
			if r.Kind != "" {
				sm["kind"] = r.Kind
			}
			if r.AzimuthRef != "" { // absent: the output reference, as in the file
				sm["azimuth_ref"] = r.AzimuthRef
			}
			if !r.Date.IsZero() {
				sm["survey_date"] = r.Date.Format(time.DateOnly)
			}
			bySet[key] = sm
			ss = append(ss, sm)
		}
		if r.Instrument != "" {
			sm["instrument"] = string(r.Instrument)
		}
		if r.Preferred {
			sm["preferred"] = true
		}
		sm["stations"] = append(sm["stations"].([]map[string]float64), map[string]float64{"depth": r.Station.Depth, "azimuth": r.Station.Azimuth, "dip": r.Station.Dip})
	}
	for _, m := range readCSV(t, []byte(structures)) {
		mm := map[string]any{"hole_id": m["hole_id"], "depth": atof(t, m["depth"]), "alpha": atof(t, m["alpha"]), "beta": optAtof(t, m["beta"]),
			"apparent_thickness": atof(t, m["apparent_thickness"]), "type": m["type"]}
		if m["gamma"] != "" {
			mm["gamma"] = atof(t, m["gamma"])
		}
		mm["run_confidence"], mm["run_mismatch"] = m["run_confidence"], optAtof(t, m["run_mismatch"])
		ms = append(ms, mm)
	}
	var resp struct {
		Results []struct {
			Derived map[string]any `json:"derived"`
		} `json:"results"`
	}
	body := map[string]any{"conventions": conv, "collars": cs, "surveys": ss, "measurements": ms}
	for k, v := range extra {
		body[k] = v
	}
	s.mustJSON(t, 200, "POST", "/v1/convert"+pg.query, body, &resp)
	out := make([]map[string]string, len(resp.Results))
	for i, r := range resp.Results {
		out[i] = fromJSON(r.Derived)
	}
	return out
}

func atof(t *testing.T, s string) float64 {
	t.Helper()
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		t.Fatal(err)
	}
	return v
}

// optAtof is atof of a cell that may be empty (null).
func optAtof(t *testing.T, s string) any {
	if s == "" {
		return nil
	}
	return atof(t, s)
}

// importProject creates a project named prefix + the programme's name with
// its conventions on s and imports the given kinds of its files; it returns
// the project's path.
func importProject(t *testing.T, s *server, prefix string, pg programme, files ...[2]string) string {
	t.Helper()
	body := map[string]any{"name": prefix + pg.name}
	for k, v := range pg.project {
		body[k] = v
	}
	var p struct{ ID int64 }
	s.mustJSON(t, 201, "POST", "/v1/projects", body, &p)
	base := fmt.Sprintf("/v1/projects/%d", p.ID)
	s.mustJSON(t, 201, "PUT", base+"/types/BD", map[string]string{"description": "bedding", "kind": "plane"}, nil)
	s.mustJSON(t, 201, "PUT", base+"/types/LN", map[string]string{"description": "lineation", "kind": "line"}, nil)
	for _, f := range files {
		s.mustJSON(t, 201, "POST", base+"/imports/"+f[0], f[1], nil)
	}
	return base
}

// exportCSV imports the programme into a new project on s and exports it.
func exportCSV(t *testing.T, s *server, pg programme, collars, surveys, structures, runs string) []map[string]string {
	t.Helper()
	files := [][2]string{{"collars", collars}, {"surveys", surveys}}
	if runs != "" {
		files = append(files, [2]string{"runs", runs})
	}
	base := importProject(t, s, "Conformance ", pg, append(files, [2]string{"measurements", structures})...)
	code, _, b := s.call(t, "GET", base+"/measurements.csv", nil)
	if code != 200 {
		t.Fatalf("export: %d %s", code, b)
	}
	// Nothing read is dropped: the holes export gives back every collar
	// column the import read.
	code, _, hb := s.call(t, "GET", base+"/holes.csv", nil)
	if code != 200 {
		t.Fatalf("holes export: %d %s", code, hb)
	}
	in, err := csvio.ReadCollars(strings.NewReader(collars), "collars.csv")
	if err != nil {
		t.Fatal(err)
	}
	out, err := csvio.ReadCollars(bytes.NewReader(hb), "holes.csv")
	if err != nil || len(out) != len(in) {
		t.Fatalf("holes export read back: %v, %d holes for %d\n%s", err, len(out), len(in), hb)
	}
	same := func(a, b float64) bool { return a == b || math.IsNaN(a) && math.IsNaN(b) }
	for i, c := range in {
		o := out[i]
		if o.HoleID != c.HoleID || o.Collar != c.Collar || !same(o.Declination, c.Declination) || !same(o.GridConvergence, c.GridConvergence) ||
			!o.SurveyDate.Equal(c.SurveyDate) || o.CRS != c.CRS || (c.AzimuthRef != "" && o.AzimuthRef != c.AzimuthRef) {
			t.Errorf("hole %s exported as %+v, imported %+v", c.HoleID, o, c)
		}
	}
	// The export names each measurement's run as the structures file does.
	got := readCSV(t, b)
	for i, m := range readCSV(t, []byte(structures)) {
		if i < len(got) && runs != "" && (got[i]["run_confidence"] != m["run_confidence"] || got[i]["run_mismatch"] != m["run_mismatch"]) {
			if g, w := got[i]["run_mismatch"], m["run_mismatch"]; got[i]["run_confidence"] != m["run_confidence"] || (g == "") != (w == "") || g != "" && atof(t, g) != atof(t, w) {
				t.Errorf("export row %d: run %q %q, structures file %q %q", i+1, got[i]["run_confidence"], g, m["run_confidence"], w)
			}
		}
	}
	return got
}

// previewRoute imports the programme (holes only need collars and
// surveys) and asks the preview route for every structure row.
func previewRoute(t *testing.T, s *server, pg programme, collars, surveys, structures, runs string) []map[string]string {
	t.Helper()
	files := [][2]string{{"collars", collars}, {"surveys", surveys}}
	if runs != "" {
		files = append(files, [2]string{"runs", runs})
	}
	base := importProject(t, s, "Preview ", pg, files...)
	var holes struct {
		Items []struct {
			ID   int64  `json:"id"`
			Name string `json:"name"`
		} `json:"items"`
	}
	s.mustJSON(t, 200, "GET", base+"/holes?limit=1000", nil, &holes)
	ids := map[string]int64{}
	for _, h := range holes.Items {
		ids[h.Name] = h.ID
	}
	var out []map[string]string
	for _, m := range readCSV(t, []byte(structures)) {
		pm := map[string]any{"depth": atof(t, m["depth"]), "alpha": atof(t, m["alpha"]), "beta": optAtof(t, m["beta"]), "apparent_thickness": atof(t, m["apparent_thickness"])}
		if m["gamma"] != "" {
			pm["gamma"] = atof(t, m["gamma"])
		}
		var resp struct {
			Results []struct {
				Derived map[string]any `json:"derived"`
			} `json:"results"`
		}
		s.mustJSON(t, 200, "POST", fmt.Sprintf("%s/holes/%d/preview", base, ids[m["hole_id"]]), map[string]any{"measurements": []any{pm}}, &resp)
		out = append(out, fromJSON(resp.Results[0].Derived))
	}
	return out
}

func TestConformanceFiveDoors(t *testing.T) {
	type fixture struct {
		prog                               programme
		collars, surveys, structures, runs string
		rows                               []row
		cli                                []map[string]string
	}
	var fixtures []fixture
	for _, prog := range programmes() {
		f := fixture{prog: prog}
		f.collars, f.surveys, f.structures, f.runs, f.rows = prog.files(t)
		dir := t.TempDir()
		for name, text := range map[string]string{"collars.csv": f.collars, "surveys.csv": f.surveys, "structures.csv": f.structures} {
			if err := os.WriteFile(filepath.Join(dir, name), []byte(text), 0o644); err != nil {
				t.Fatal(err)
			}
		}
		f.cli = convertCLI(t, dir, prog.flags)
		if len(f.cli) != len(f.rows) {
			t.Fatalf("%s: convert wrote %d rows for %d", prog.name, len(f.cli), len(f.rows))
		}
		fixtures = append(fixtures, f)
	}
	same := func(t *testing.T, door string, f fixture, got []map[string]string) {
		t.Helper()
		if len(got) != len(f.cli) {
			t.Fatalf("%s: %d rows, convert %d", door, len(got), len(f.cli))
		}
		for i := range f.cli {
			for _, col := range derivedColumns() {
				if got[i][col] != f.cli[i][col] {
					t.Errorf("%s row %d (%s at %s) %s = %q, corvane convert %q", door, i+1, f.rows[i].hole, f.cli[i]["depth"], col, got[i][col], f.cli[i][col])
				}
			}
			if got[i][convert.ColError] != "" {
				t.Errorf("%s row %d: error %q", door, i+1, got[i][convert.ColError])
			}
		}
	}
	lite := siteServer(t, filepath.Join(t.TempDir(), "conformance.db"))
	for _, f := range fixtures {
		t.Run(f.prog.name, func(t *testing.T) {
			checkForwardModel(t, f.prog, f.rows, f.cli)
			same(t, "POST /v1/convert", f, convertJSON(t, lite, f.prog, f.collars, f.surveys, f.structures))
			same(t, "SQLite import + export", f, exportCSV(t, lite, f.prog, f.collars, f.surveys, f.structures, f.runs))
			same(t, "preview route", f, previewRoute(t, lite, f.prog, f.collars, f.surveys, f.structures, f.runs))
		})
	}
	// The Monte Carlo for every row, when asked: the same at both doors
	// that take the request, and the same figures as by default wherever
	// the method in use stays first order.
	t.Run("monte-carlo", func(t *testing.T) {
		f := fixtures[0]
		dir := t.TempDir()
		for name, text := range map[string]string{"collars.csv": f.collars, "surveys.csv": f.surveys, "structures.csv": f.structures} {
			if err := os.WriteFile(filepath.Join(dir, name), []byte(text), 0o644); err != nil {
				t.Fatal(err)
			}
		}
		cli := convertCLI(t, dir, append(append([]string{}, f.prog.flags...), "--monte-carlo"))
		same(t, "POST /v1/convert monte_carlo", fixture{prog: f.prog, rows: f.rows, cli: cli},
			convertJSONWith(t, lite, f.prog, f.collars, f.surveys, f.structures, map[string]any{"monte_carlo": true}))
		for i := range cli {
			for _, c := range []string{convert.ColPoleCone95, convert.ColPoleLong95, convert.ColLineCone95, convert.ColLineLong95} {
				if cli[i][convert.ColPoleMethod] == "first-order" && cli[i][convert.ColLineMethod] != "monte-carlo" && cli[i][c] != f.cli[i][c] {
					t.Errorf("row %d: %s %q with --monte-carlo, %q by default", i+1, c, cli[i][c], f.cli[i][c])
				}
			}
		}
	})
	t.Run("postgres", func(t *testing.T) {
		pg := siteServer(t, pgtest.DB(t))
		for _, f := range fixtures {
			t.Run(f.prog.name, func(t *testing.T) {
				same(t, "PostgreSQL import + export", f, exportCSV(t, pg, f.prog, f.collars, f.surveys, f.structures, f.runs))
			})
		}
	})
}

// siteServer starts `corvane serve` on db with a site-wide admin token
// made by `corvane token create` (projects are created through the API).
func siteServer(t *testing.T, db string) *server {
	t.Helper()
	for _, args := range [][]string{{"migrate", "up", "--db", db}, {"token", "create", "--db", db, "--project", "all", "--role", "admin", "--name", "conformance"}} {
		cmd := exec.Command(binary, args...)
		cmd.Env = append(os.Environ(), "CORVANE_DATABASE_URL=")
		out, err := cmd.Output()
		if err != nil {
			t.Fatalf("corvane %v: %v", args, err)
		}
		if args[0] == "token" {
			s := start(t, db)
			s.Token = strings.TrimSpace(string(out))
			return s
		}
	}
	return nil
}

// checkForwardModel compares the converted rows with the fixture's forward
// model: the plane and line each alpha/beta/gamma was made from, the
// position along the straight hole, true thickness = L sin(alpha) (common
// practice), and the published cases of references README section 2.
func checkForwardModel(t *testing.T, pg programme, rows []row, got []map[string]string) {
	t.Helper()
	val := func(r map[string]string, col string) float64 {
		if r[col] == "" {
			return math.NaN()
		}
		return atof(t, r[col])
	}
	angle := func(a, b float64) float64 {
		d := math.Abs(math.Mod(a-b+540, 360) - 180)
		return d
	}
	for i, r := range rows {
		g := got[i]
		if g[convert.ColError] != "" {
			t.Errorf("%s row %d: %s", pg.name, i+1, g[convert.ColError])
			continue
		}
		tol := 0.011 // the output's 0.01 degree, and 1e-6 degree inputs
		if r.published {
			tol = 0.06 // published to 0.1 degree
		}
		if dip := val(g, convert.ColDip); math.IsNaN(dip) != math.IsNaN(r.wantDip) || !math.IsNaN(dip) && !(math.Abs(dip-r.wantDip) <= tol) {
			t.Errorf("%s %s at %v: dip %s, forward model %v", pg.name, r.hole, r.depth, g[convert.ColDip], r.wantDip)
		}
		dd := val(g, convert.ColDipDirection)
		if math.IsNaN(r.wantDD) != math.IsNaN(dd) || (!math.IsNaN(dd) && !(angle(dd, r.wantDD) <= tol)) {
			t.Errorf("%s %s at %v: dip direction %q, forward model %v", pg.name, r.hole, r.depth, g[convert.ColDipDirection], r.wantDD)
		}
		if !math.IsNaN(r.wantTrend) {
			if angle(val(g, convert.ColLineTrend), r.wantTrend) > tol || math.Abs(val(g, convert.ColLinePlunge)-r.wantPlunge) > tol {
				t.Errorf("%s %s at %v: line %s/%s, forward model %v/%v", pg.name, r.hole, r.depth, g[convert.ColLineTrend], g[convert.ColLinePlunge], r.wantTrend, r.wantPlunge)
			}
		}
		for _, c := range []struct {
			col  string
			want float64
		}{{convert.ColEasting, r.wantE}, {convert.ColNorthing, r.wantN}, {convert.ColElevation, r.wantElev},
			{convert.ColTrueThickness, r.thick * math.Sin(r.alpha*math.Pi/180)}} {
			if d := math.Abs(val(g, c.col) - c.want); !(d <= 0.0011) {
				t.Errorf("%s %s at %v: %s %s, forward model %.4f", pg.name, r.hole, r.depth, c.col, g[c.col], c.want)
			}
		}
		if g[convert.ColAzimuthReference] != pg.out {
			t.Errorf("%s: azimuth_reference %q, want %q", pg.name, g[convert.ColAzimuthReference], pg.out)
		}
		// Every measurement with a dip direction has a pole region (and a
		// line region with gamma), positive, long >= short; in a vertical
		// hole none (the dip direction is unknown, not uncertain).
		for _, e := range []struct {
			cone, long, short, method string
			want                      bool
		}{{convert.ColPoleCone95, convert.ColPoleLong95, convert.ColPoleShort95, convert.ColPoleMethod, !math.IsNaN(r.wantDD)},
			{convert.ColLineCone95, convert.ColLineLong95, convert.ColLineShort95, convert.ColLineMethod, !math.IsNaN(r.wantTrend)}} {
			if !e.want {
				if g[e.cone] != "" || g[e.method] != "" {
					t.Errorf("%s %s at %v: %s %q %q, want none", pg.name, r.hole, r.depth, e.cone, g[e.cone], g[e.method])
				}
				continue
			}
			if c, l, sh := val(g, e.cone), val(g, e.long), val(g, e.short); !(c > 0 && sh > 0 && l >= sh) ||
				(g[e.method] != "first-order" && g[e.method] != "monte-carlo") {
				t.Errorf("%s %s at %v: region %s/%s/%s by %q", pg.name, r.hole, r.depth, g[e.cone], g[e.long], g[e.short], g[e.method])
			}
		}
		// Only what is applied is reported.
		h := pg.hole(r.hole)
		if needConv := (h.ref == "grid") != (pg.out == "grid") && h.ref != ""; needConv != (g[convert.ColConvergenceSource] != "none") {
			t.Errorf("%s %s: convergence %s from %s, applied %v", pg.name, r.hole, g[convert.ColGridConvergence], g[convert.ColConvergenceSource], needConv)
		}
		if (h.ref == "magnetic") != (g[convert.ColDeclinationSource] != "none") {
			t.Errorf("%s %s: declination %s from %s with %q surveys", pg.name, r.hole, g[convert.ColDeclination], g[convert.ColDeclinationSource], h.ref)
		}
		if h.wantSource != "" && g[convert.ColDeclinationSource] != h.wantSource {
			t.Errorf("%s %s: declination source %q, want %q", pg.name, r.hole, g[convert.ColDeclinationSource], h.wantSource)
		}
	}
}

// A data problem has one rule at every door (README, Data rules):
//   - a magnetic survey with no declination from any source is an error on
//     every row of that hole (never a silent zero); other holes convert;
//   - a survey station past the final depth is a problem of that hole: its
//     rows carry the error in convert and /v1/convert, other holes convert,
//     and an import refuses the row naming file, line and column.
func TestConformanceHoleProblems(t *testing.T) {
	const structures = "hole_id,depth,alpha,beta,gamma,apparent_thickness,type\nX1,10,40,100,,1,BD\nY1,10,40,100,,1,BD\n"
	cases := []struct {
		name, collars, surveys, want string
	}{
		{"magnetic without declination",
			"hole_id,easting,northing,elevation,azimuth,dip,depth,grid_convergence\nX1,1000,2000,300,40,-60,100,0.5\nY1,1100,2000,300,40,-60,100,0.5\n",
			"hole_id,depth,azimuth,dip,azimuth_reference\nX1,0,40,-60,magnetic\nY1,0,40,-60,grid\n", "magnetic azimuths need a declination"},
		{"station past the final depth",
			"hole_id,easting,northing,elevation,azimuth,dip,depth\nX1,1000,2000,300,40,-60,100\nY1,1100,2000,300,40,-60,100\n",
			"hole_id,depth,azimuth,dip\nX1,0,40,-60\nX1,150,42,-58\nY1,0,40,-60\n", "depth 150"},
	}
	s := siteServer(t, filepath.Join(t.TempDir(), "problems.db"))
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			dir := t.TempDir()
			for name, text := range map[string]string{"collars.csv": c.collars, "surveys.csv": c.surveys, "structures.csv": structures} {
				if err := os.WriteFile(filepath.Join(dir, name), []byte(text), 0o644); err != nil {
					t.Fatal(err)
				}
			}
			pg := programme{name: c.name}
			doors := map[string][]map[string]string{
				"corvane convert":  convertCLI(t, dir, nil),
				"POST /v1/convert": convertJSON(t, s, pg, c.collars, c.surveys, structures),
			}
			if strings.Contains(c.want, "declination") {
				doors["import + export"] = exportCSV(t, s, pg, c.collars, c.surveys, structures, "")
				pg.name += " (preview)"
				doors["preview route"] = previewRoute(t, s, pg, c.collars, c.surveys, structures, "")
			} else {
				// The import refuses the station, located.
				base := importProject(t, s, "Problems ", pg, [2]string{"collars", c.collars})
				code, _, b := s.call(t, "POST", base+"/imports/surveys", c.surveys)
				if code != 422 || !strings.Contains(string(b), `"line":3`) || !strings.Contains(string(b), `"column":"depth"`) || !strings.Contains(string(b), "surveys.csv") {
					t.Errorf("import of a station past the final depth: %d %s, want 422 at surveys.csv line 3, column depth", code, b)
				}
			}
			for door, rows := range doors {
				if len(rows) != 2 {
					t.Fatalf("%s: %d rows", door, len(rows))
				}
				if e := rows[0][convert.ColError]; !strings.Contains(e, c.want) || rows[0][convert.ColDip] != "" {
					t.Errorf("%s: X1 row error %q dip %q, want an error about %s and no values", door, e, rows[0][convert.ColDip], c.want)
				}
				if rows[1][convert.ColError] != "" || rows[1][convert.ColDip] == "" {
					t.Errorf("%s: Y1 row %v, want converted", door, rows[1])
				}
			}
		})
	}
}
