package e2e

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"corvane/internal/convert"
	"corvane/internal/coreangle"
	"corvane/internal/csvio"
	"corvane/internal/geom"
	"corvane/internal/localgrid"
	"corvane/internal/pgtest"
	"corvane/internal/qa"
)

// The north options at every door: a programme in a mine grid, converted
// with output in the local grid, through `corvane convert --local-grid
// FILE --output-reference local`, POST /v1/convert?output_reference=local
// (conventions.local_grid, a collar's own local_grid, surveys by kind with
// the preferred flag) and an import into a project with that local grid
// exported with ?output_reference=local, on SQLite and PostgreSQL. Every
// derived column is equal at every door (survey_set included), and the
// values are those of a forward model written in the local grid:
//
//   - L1: a collar typed in the mine grid (crs local), two survey sets by
//     kind, the magnetic one marked preferred in the file (the order
//     without a preference would take the gyro set);
//   - L2: a collar in WGS 84 / UTM zone 50S with a local grid of its own,
//     which wins over the project's;
//   - L3: a collar in WGS 84 / UTM zone 50S, output in the project's grid.
//
// The local grid's rule (EPSG method 9621, IOGP Geomatics Guidance Note 7-2):
// grid = local + theta for azimuths, and a displacement of d metres on the
// ground is d / M in the local grid.
func TestNorthOptionsAtEveryDoor(t *testing.T) {
	const theta1, m1 = -37.25, 0.99975 // the project's mine grid
	const theta2 = 20.0                // L2's own grid
	const decl, conv1 = 3.5, 0.8       // L1's declination and convergence, given
	projectGrid := map[string]any{"name": "Mine grid", "grid_crs": "EPSG:32750", "rotation": theta1, "scale": m1,
		"origin": map[string]any{"local_easting": 5000, "local_northing": 10000, "easting": 401250, "northing": 7401480}}
	holeGrid := map[string]any{"name": "Pit grid", "grid_crs": "EPSG:32750", "rotation": theta2,
		"origin": map[string]any{"local_easting": 0, "local_northing": 0, "easting": 401000, "northing": 7401000}}
	gridJSON := func(v any) string {
		b, err := json.Marshal(v)
		if err != nil {
			t.Fatal(err)
		}
		return string(b)
	}
	g2, _, err := localgrid.Parse([]byte(gridJSON(holeGrid)))
	if err != nil {
		t.Fatal(err)
	}
	type fixHole struct {
		id           string
		east, north  float64 // as typed (local for L1)
		crs, grid    string
		localAz, dip float64 // the true path, in the local grid of the output
		scale        float64 // local units per ground metre are 1/scale
		depth        float64
	}
	holes := []fixHole{
		{id: "L1", east: 5100, north: 10200, crs: "local", localAz: 45, dip: -60, scale: m1, depth: 200},
		{id: "L2", east: 401600, north: 7401900, crs: "EPSG:32750", grid: gridJSON(holeGrid), localAz: 110, dip: -55, scale: 1, depth: 150},
		{id: "L3", east: 401400, north: 7401300, crs: "EPSG:32750", localAz: 287.25, dip: -70, scale: m1, depth: 180},
	}
	planes := []geom.Plane{{Dip: 35, DipDirection: 120}, {Dip: 70, DipDirection: 300}, {Dip: 10, DipDirection: 20}}
	f := func(v float64) string { return strconv.FormatFloat(v, 'f', 6, 64) }
	var collars, surveys, structures strings.Builder
	collars.WriteString("hole_id,easting,northing,elevation,azimuth,dip,depth,crs,azimuth_reference,declination,grid_convergence,local_grid\n")
	surveys.WriteString("hole_id,depth,azimuth,dip,azimuth_reference,kind,instrument,preferred\n")
	structures.WriteString("hole_id,depth,alpha,beta,apparent_thickness,type\n")
	type want struct {
		hole              string
		depth             float64
		dip, dd, east, no float64
	}
	var wants []want
	for _, h := range holes {
		// The recorded azimuth, in the grid of the collar's coordinates:
		// L1's grid is the mine grid itself (crs local), L2's and L3's the
		// UTM grid: grid = local + theta.
		gridAz := h.localAz
		localE, localN := h.east, h.north
		switch h.id {
		case "L2":
			gridAz = geom.NormAzimuth(h.localAz + theta2)
			localE, localN = g2.T.ToLocal(h.east, h.north)
		case "L3":
			gridAz = geom.NormAzimuth(h.localAz + theta1)
			pg, _, _ := localgrid.Parse([]byte(gridJSON(projectGrid)))
			localE, localN = pg.T.ToLocal(h.east, h.north)
		}
		declCell, convCell := "", ""
		if h.id == "L1" {
			declCell, convCell = f(decl), f(conv1)
		}
		fmt.Fprintf(&collars, "%s,%s,%s,300,%s,%s,%s,%s,grid,%s,%s,%s\n", h.id, f(h.east), f(h.north), f(gridAz), f(h.dip), f(h.depth), h.crs,
			declCell, convCell, csvQuote(h.grid))
		for _, d := range []float64{0, h.depth / 2} {
			if h.id == "L1" {
				// The gyro set 2 degrees off the true path (not used); the
				// magnetic one on it: magnetic = local + theta + C - D.
				fmt.Fprintf(&surveys, "L1,%s,%s,%s,grid,gyro,gyro,\n", f(d), f(geom.NormAzimuth(gridAz+2)), f(h.dip))
				fmt.Fprintf(&surveys, "L1,%s,%s,%s,magnetic,magnetic,magnetic,yes\n", f(d), f(geom.NormAzimuth(h.localAz+theta1+conv1-decl)), f(h.dip))
				continue
			}
			fmt.Fprintf(&surveys, "%s,%s,%s,%s,grid,,,\n", h.id, f(d), f(gridAz), f(h.dip))
		}
		dir := geom.HoleDirection(h.localAz, h.dip)
		for i, p := range planes {
			a, b, _ := coreangle.Angles(dir, p, coreangle.Convention{})
			md := 10 + float64(i)*h.depth/4
			fmt.Fprintf(&structures, "%s,%s,%s,%s,0.5,BD\n", h.id, f(md), f(a), f(b))
			wants = append(wants, want{h.id, md, p.Dip, p.DipDirection, localE + md*dir.X/h.scale, localN + md*dir.Y/h.scale})
		}
	}
	dir := t.TempDir()
	for name, text := range map[string]string{"collars.csv": collars.String(), "surveys.csv": surveys.String(),
		"structures.csv": structures.String(), "grid.json": gridJSON(projectGrid)} {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	cli := convertCLI(t, dir, []string{"--local-grid", filepath.Join(dir, "grid.json"), "--output-reference", "local"})
	if len(cli) != len(wants) {
		t.Fatalf("convert wrote %d rows for %d", len(cli), len(wants))
	}
	for i, w := range wants {
		r := cli[i]
		num := func(col string) float64 { return atof(t, r[col]) }
		if r[convert.ColError] != "" {
			t.Fatalf("row %d: %s", i+1, r[convert.ColError])
		}
		if math.Abs(num("dip")-w.dip) > 0.006 || math.Abs(azDelta(num("dip_direction"), w.dd)) > 0.006 ||
			math.Abs(num("easting")-w.east) > 0.001 || math.Abs(num("northing")-w.no) > 0.001 {
			t.Errorf("%s at %g: dip %s/%s at %s %s, want %.2f/%.2f at %.3f %.3f", w.hole, w.depth, r["dip"], r["dip_direction"],
				r["easting"], r["northing"], w.dip, w.dd, w.east, w.no)
		}
		wantSet := "survey"
		if w.hole == "L1" {
			wantSet = "magnetic"
		}
		if r[convert.ColAzimuthReference] != "local" || r[convert.ColSurveySet] != wantSet {
			t.Errorf("%s: azimuth_reference %q survey_set %q, want local and %s", w.hole, r[convert.ColAzimuthReference], r[convert.ColSurveySet], wantSet)
		}
	}

	same := func(t *testing.T, door string, got []map[string]string) {
		t.Helper()
		if len(got) != len(cli) {
			t.Fatalf("%s: %d rows, convert %d", door, len(got), len(cli))
		}
		for i := range cli {
			for _, col := range derivedColumns() {
				if got[i][col] != cli[i][col] {
					t.Errorf("%s row %d (%s) %s = %q, corvane convert %q", door, i+1, wants[i].hole, col, got[i][col], cli[i][col])
				}
			}
			if got[i][convert.ColError] != "" {
				t.Errorf("%s row %d: error %q", door, i+1, got[i][convert.ColError])
			}
		}
	}

	lite := siteServer(t, filepath.Join(t.TempDir(), "north.db"))
	pg := programme{name: "north options", project: map[string]any{"local_grid": projectGrid}, query: "?output_reference=local"}
	same(t, "POST /v1/convert", convertJSON(t, lite, pg, collars.String(), surveys.String(), structures.String()))
	export := func(s *server) []map[string]string {
		base := importProject(t, s, "", pg, [2]string{"collars", collars.String()}, [2]string{"surveys", surveys.String()},
			[2]string{"measurements", structures.String()})
		code, _, b := s.call(t, "GET", base+"/measurements.csv"+pg.query, nil)
		if code != 200 {
			t.Fatalf("export: %d %s", code, b)
		}
		// The JSON list says the same north and set.
		var list struct {
			Items []struct {
				Derived map[string]any `json:"derived"`
			} `json:"items"`
		}
		s.mustJSON(t, 200, "GET", base+"/measurements?output_reference=local&limit=1000", nil, &list)
		for i, it := range list.Items {
			if got := fromJSON(it.Derived); got[convert.ColDipDirection] != cli[i][convert.ColDipDirection] || got[convert.ColSurveySet] != cli[i][convert.ColSurveySet] ||
				got[convert.ColAzimuthReference] != "local" {
				t.Errorf("list row %d: %v", i+1, got)
			}
		}
		// The path in the local grid starts at L1's collar as typed, in
		// its direction.
		var path struct {
			Items []struct {
				Easting, Northing, Azimuth, Dip float64
			} `json:"items"`
		}
		s.mustJSON(t, 200, "GET", base+"/holes/L1/path?output_reference=local", nil, &path)
		if p0 := path.Items[0]; math.Abs(p0.Easting-5100) > 1e-6 || math.Abs(p0.Northing-10200) > 1e-6 || math.Abs(p0.Azimuth-45) > 1e-6 {
			t.Errorf("L1 path in the local grid starts at %+v, want 5100, 10200, azimuth 45", p0)
		}
		// Nothing read is dropped: the holes export gives back L2's grid,
		// the surveys export the preferred mark.
		code, _, hb := s.call(t, "GET", base+"/holes.csv", nil)
		if code != 200 {
			t.Fatalf("holes export: %d %s", code, hb)
		}
		back, err := csvio.ReadCollars(strings.NewReader(string(hb)), "holes.csv")
		if err != nil || len(back) != 3 || back[1].LocalGrid == nil || back[1].LocalGrid.T != g2.T || back[0].LocalGrid != nil {
			t.Errorf("holes export: %v\n%s", err, hb)
		}
		code, _, sb := s.call(t, "GET", base+"/surveys.csv", nil)
		if code != 200 {
			t.Fatalf("surveys export: %d %s", code, sb)
		}
		srows, err := csvio.ReadSurveys(strings.NewReader(string(sb)), "surveys.csv")
		if err != nil {
			t.Fatal(err)
		}
		for _, r := range srows {
			if r.Preferred != (r.HoleID == "L1" && r.Kind == "magnetic") {
				t.Errorf("surveys export: %+v", r)
			}
		}
		return readCSV(t, b)
	}
	same(t, "SQLite import + export", export(lite))
	t.Run("postgres", func(t *testing.T) {
		same(t, "PostgreSQL import + export", export(siteServer(t, pgtest.DB(t))))
	})

	// A door refuses output in the local grid where it cannot give it: a
	// hole without a local grid is an error on its rows, the transfer
	// exports refuse the option.
	var resp struct {
		Results []struct {
			Derived map[string]any `json:"derived"`
		} `json:"results"`
	}
	lite.mustJSON(t, 200, "POST", "/v1/convert?output_reference=local", map[string]any{
		"collars":      []any{map[string]any{"hole_id": "X", "easting": 401000, "northing": 7401000, "elevation": 0, "azimuth": 0, "dip": -60, "final_depth": 50, "crs": "EPSG:32750"}},
		"measurements": []any{map[string]any{"hole_id": "X", "depth": 10, "alpha": 40, "beta": 10}}}, &resp)
	if e, _ := resp.Results[0].Derived["error"].(string); !strings.Contains(e, "needs a local grid") {
		t.Errorf("no local grid: %v", resp.Results[0].Derived)
	}
	code, _, b := lite.call(t, "GET", "/v1/projects/1/holes.geojson?output_reference=local", nil)
	if code != 422 || !strings.Contains(string(b), "output_reference") {
		t.Errorf("transfer with output_reference: %d %s", code, b)
	}
}

// csvQuote quotes a cell that holds commas or quotes.
func csvQuote(s string) string {
	if !strings.ContainsAny(s, ",\"") {
		return s
	}
	return `"` + strings.ReplaceAll(s, `"`, `""`) + `"`
}

// azDelta is a - b wrapped to [-180, 180).
func azDelta(a, b float64) float64 { return math.Mod(math.Mod(a-b+180, 360)+360, 360) - 180 }

// corvane qa --local-grid and GET .../qa on a project with that local grid
// check the same stations: a hole typed in the mine grid, its survey in
// local-grid azimuths, reported in true north as true = local + theta + C
// (IOGP 7-2 method 9621 for the rotation; the convergence given).
func TestQALocalGridAtBothDoors(t *testing.T) {
	const theta, c = -37.25, 0.8
	grid := map[string]any{"name": "Mine grid", "grid_crs": "EPSG:32750", "rotation": theta,
		"origin": map[string]any{"local_easting": 5000, "local_northing": 10000, "easting": 401250, "northing": 7401480}}
	b, err := json.Marshal(grid)
	if err != nil {
		t.Fatal(err)
	}
	files := map[string]string{
		"grid.json":      string(b),
		"collars.csv":    "hole_id,easting,northing,elevation,azimuth,dip,depth,crs,azimuth_reference,grid_convergence\nQ1,5100,10200,300,45,-60,200,local,grid,0.8\n",
		"surveys.csv":    "hole_id,depth,azimuth,dip,azimuth_reference\nQ1,0,45,-60,grid\nQ1,50,46,-59,grid\nQ1,100,48,-58,grid\nQ1,150,49,-57,grid\n",
		"structures.csv": "hole_id,depth,alpha,beta,type\nQ1,60,40,200,BD\n",
		"runs.csv":       "hole_id,from,to,confidence\nQ1,0,200,good\n",
	}
	dir := t.TempDir()
	p := func(n string) string { return filepath.Join(dir, n) }
	for n, text := range files {
		if err := os.WriteFile(p(n), []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	out, err := exec.Command(binary, "qa", "--collars", p("collars.csv"), "--surveys", p("surveys.csv"), "--structures", p("structures.csv"),
		"--runs", p("runs.csv"), "--output-reference", "true", "--local-grid", p("grid.json")).Output()
	if err != nil {
		t.Fatalf("corvane qa: %v", err)
	}
	var cli, web qa.Report
	if err := json.Unmarshal(out, &cli); err != nil {
		t.Fatal(err)
	}
	s := siteServer(t, filepath.Join(t.TempDir(), "qa-grid.db"))
	pg := programme{name: "qa local grid", project: map[string]any{"output_azimuth_ref": "true", "local_grid": grid}}
	base := importProject(t, s, "", pg, [2]string{"collars", files["collars.csv"]}, [2]string{"surveys", files["surveys.csv"]},
		[2]string{"runs", files["runs.csv"]}, [2]string{"measurements", files["structures.csv"]})
	s.mustJSON(t, 200, "GET", base+"/qa", nil, &web)
	if len(cli.Holes) != 1 || len(web.Holes) != 1 || len(cli.Holes[0].Stations) != 4 || len(web.Holes[0].Stations) != 4 {
		t.Fatalf("holes: command %+v, route %+v", cli.Holes, web.Holes)
	}
	for i, want := range []float64{45, 46, 48, 49} {
		a, w := cli.Holes[0].Stations[i].Azimuth, web.Holes[0].Stations[i].Azimuth
		if math.Abs(azDelta(a, want+theta+c)) > 1e-9 || a != w {
			t.Errorf("station %d: command %.9f, route %.9f, want %.9f", i, a, w, geom.NormAzimuth(want+theta+c))
		}
	}
}
