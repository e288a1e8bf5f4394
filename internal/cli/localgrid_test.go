package cli

import (
	"fmt"
	"math"
	"path/filepath"
	"strings"
	"testing"

	"corvane/internal/localgrid"
)

// A hole logged in a local mine grid (crs "local", grid azimuths in the
// local grid) converts exactly as the same hole given directly in the
// projected grid, its position carried by the similarity transformation
// and its grid azimuths turned by the rotation (checked against PROJ in
// package localgrid). The transformation is reported on standard error.
func TestConvertLocalGrid(t *testing.T) {
	tr := localgrid.FromOrigin(5000, 10000, 391250, 6465480, -37.25, 0.99975)
	e, n := tr.ToGrid(5100, 10050)
	az := func(a float64) string { return fmt.Sprintf("%.10f", tr.LocalToGridAzimuth(a)) }
	dir := convertFiles(t, map[string]string{
		"grid.json": `{"name":"Zelvorra Reach mine grid","grid_crs":"EPSG:28350","rotation":-37.25,"scale":0.99975,
			"origin":{"local_easting":5000,"local_northing":10000,"easting":391250,"northing":6465480}}`,
		"c.csv": "hole_id,easting,northing,elevation,azimuth,dip,depth,crs,azimuth_reference\n" +
			"L1,5100,10050,300,30,-60,200,LOCAL,grid\n" +
			fmt.Sprintf("P1,%.10f,%.10f,300,%s,-60,200,EPSG:28350,grid\n", e, n, az(30)),
		"s.csv": "hole_id,depth,azimuth,dip,azimuth_reference,survey_date\n" +
			"L1,0,30,-60,,2026-03-01\nL1,100,35,-58,magnetic,2026-03-01\n" +
			fmt.Sprintf("P1,0,%s,-60,,2026-03-01\nP1,100,35,-58,magnetic,2026-03-01\n", az(30)),
		"m.csv": "hole_id,depth,alpha,beta\nL1,50,40,30\nL1,150,60,200\nP1,50,40,30\nP1,150,60,200\n",
	})
	out := filepath.Join(dir, "out.csv")
	code, _, errs := runCLI("convert", "--collars", filepath.Join(dir, "c.csv"), "--surveys", filepath.Join(dir, "s.csv"),
		"--structures", filepath.Join(dir, "m.csv"), "--local-grid", filepath.Join(dir, "grid.json"), "-o", out)
	if code != ExitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	if !strings.Contains(errs, `local grid "Zelvorra Reach mine grid" -> EPSG:28350: rotation -37.250000`) || !strings.Contains(errs, "1 collar(s) carried") {
		t.Errorf("stderr: %s", errs)
	}
	rows := e2eReadRows(t, out)
	for i := 0; i < 2; i++ {
		l, p := rows[i], rows[i+2]
		for _, col := range []string{"easting", "northing", "elevation", "dip", "dip_direction", "hole_azimuth", "declination", "grid_convergence"} {
			if d := math.Abs(e2eNum(t, l[col]) - e2eNum(t, p[col])); d > 0.0011 {
				t.Errorf("row %d %s: local %s, projected %s", i, col, l[col], p[col])
			}
		}
	}

	// A bad declaration stops before anything is written, naming the file.
	dir2 := convertFiles(t, map[string]string{"bad.json": `{"grid_crs":"EPSG:2193","rotation":1,"origin":{"local_easting":0,"local_northing":0,"easting":0,"northing":0}}`})
	code, _, errs = runCLI("convert", "--collars", filepath.Join(dir, "c.csv"), "--surveys", filepath.Join(dir, "s.csv"),
		"--structures", filepath.Join(dir, "m.csv"), "--local-grid", filepath.Join(dir2, "bad.json"))
	if code != ExitUsage || !strings.Contains(errs, "bad.json: local grid: grid_crs") {
		t.Errorf("bad grid: exit %d %s", code, errs)
	}
}

// --output-reference local needs a local grid: a hole without one (no
// --local-grid, no local_grid column) has the error on each of its rows
// (exit 1) while a hole with its own converts; transfer, whose files stay in
// the projected grid, does not take it; a bad local_grid cell is refused at
// its line and column.
func TestConvertOutputLocalNeedsAGrid(t *testing.T) {
	grid := `"{""name"":""pit"",""grid_crs"":""EPSG:28350"",""rotation"":10,""origin"":{""local_easting"":0,""local_northing"":0,""easting"":391000,""northing"":6465000}}"`
	dir := convertFiles(t, map[string]string{
		"c.csv": "hole_id,easting,northing,elevation,azimuth,dip,depth,crs,azimuth_reference,grid_convergence,local_grid\n" +
			"A,391100,6465100,300,30,-60,200,EPSG:28350,grid,0," + grid + "\n" +
			"B,391200,6465200,300,30,-60,200,EPSG:28350,grid,0,\n",
		"s.csv":   "hole_id,depth,azimuth,dip,azimuth_reference\nA,0,30,-60,grid\nB,0,30,-60,grid\n",
		"m.csv":   "hole_id,depth,alpha,beta\nA,50,40,30\nB,50,40,30\n",
		"bad.csv": "hole_id,easting,northing,elevation,azimuth,dip,depth,local_grid\nA,1,2,3,30,-60,200,{}\n",
	})
	p := func(n string) string { return filepath.Join(dir, n) }
	out := p("out.csv")
	code, _, errs := runCLI("convert", "--collars", p("c.csv"), "--surveys", p("s.csv"), "--structures", p("m.csv"), "--output-reference", "local", "-o", out)
	if code != ExitRows {
		t.Fatalf("exit %d: %s", code, errs)
	}
	rows := e2eReadRows(t, out)
	if rows[0]["error"] != "" || rows[0]["azimuth_reference"] != "local" || math.Abs(e2eNum(t, rows[0]["hole_azimuth"])-20) > 0.006 {
		t.Errorf("hole A in its own grid: %v", rows[0])
	}
	if !strings.Contains(rows[1]["error"], "needs a local grid") {
		t.Errorf("hole B without a grid: %v", rows[1])
	}
	code, _, errs = runCLI("transfer", "--collars", p("c.csv"), "--surveys", p("s.csv"), "--converted", out, "--output-reference", "local", "--glb", p("x.glb"))
	if code != ExitUsage || !strings.Contains(errs, "want grid or true") {
		t.Errorf("transfer --output-reference local: exit %d %s", code, errs)
	}
	code, _, errs = runCLI("convert", "--collars", p("bad.csv"), "--surveys", p("s.csv"), "--structures", p("m.csv"))
	if code != ExitUsage || !strings.Contains(errs, `line 2, column "local_grid"`) {
		t.Errorf("bad local_grid cell: exit %d %s", code, errs)
	}
}
