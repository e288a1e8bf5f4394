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
