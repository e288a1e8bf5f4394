package cli

import (
	"archive/zip"
	"bytes"
	"encoding/binary"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"net/http"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	"corvane/internal/domain"
	"corvane/internal/exchange/ags4"
	"corvane/internal/exchange/exchangetest"
)

// TestTransferDoors: equal answers at both doors of the transfer formats.
// The demo programme is loaded into a SQLite store behind the real HTTP
// server; `corvane transfer` is given the same programme as files (the demo
// collars and surveys of testdata, which the demo is generated from, and
// the service's measurements.csv export as the converted file: the columns
// of `corvane convert`, one writer). Both doors then write every format
// through package transfer from hole-model paths.
//
// GeoJSON and the AGS4 LOCA and HORN groups come only from the holes, and
// CORE and FRAC from the core intervals (stored, and given to the command
// line as the route's intervals file) and the depths, so they must be the
// same. The structures differ by rounding only: the
// command line reads positions to 0.001 m and angles to 0.01 degree from
// the converted CSV, the route has full precision. So points, disc nodes
// and DISC rows are compared as parsed values within those roundings, and
// everything else (holes, types, sets, order, counts) exactly.
func TestTransferDoors(t *testing.T) {
	ctx, svc, p := demoService(t)
	dir := t.TempDir()
	vocab, err := svc.ListTypeCodes(ctx, p.ID)
	if err != nil {
		t.Fatal(err)
	}
	var codes []string
	for _, tc := range vocab {
		codes = append(codes, tc.Code)
	}
	srv, token := readerServer(t, ctx, svc, p.ID)
	base := "/v1/projects/" + strconv.FormatInt(p.ID, 10)

	converted := filepath.Join(dir, "measurements.csv")
	if err := os.WriteFile(converted, getRoute(t, srv, token, base+"/measurements.csv"), 0o644); err != nil {
		t.Fatal(err)
	}
	// Core intervals stored in the service; the command line reads the
	// route's intervals file.
	hs, err := svc.ListHoles(ctx, p.ID, domain.Page{})
	if err != nil {
		t.Fatal(err)
	}
	length := func(v float64) *float64 { return &v }
	if _, err := svc.PutCoreIntervals(ctx, p.ID, hs.Items[0].ID, []domain.CoreInterval{
		{From: 9, To: 12, Recovered: length(2.87), Solid: length(2.41), Sound: length(1.93)},
		{From: 12, To: 15.5, Recovered: length(3.5), Pieces: []float64{0.05, 0.4, 0.12, 1.3}},
		{From: 40, To: 41},
	}); err != nil {
		t.Fatal(err)
	}
	intervals := filepath.Join(dir, "intervals.csv")
	if err := os.WriteFile(intervals, getRoute(t, srv, token, base+"/intervals.csv"), 0o644); err != nil {
		t.Fatal(err)
	}
	out := func(n string) string { return filepath.Join(dir, n) }
	d := "../../testdata/zelvorra/"
	code, _, stderr := runCLI("transfer", "--collars", d+"collars.csv", "--surveys", d+"surveys.csv", "--converted", converted,
		"--output-reference", p.OutputAzimuthRef, "--types", strings.Join(codes, ","), "--project", p.Name,
		"--glb", out("scene.glb"), "--gltf", out("scene.gltf"), "--geojson", out("holes.geojson"), "--points", out("points.csv"), "--ags", out("transfer.ags"),
		"--intervals", intervals, "--disc-radius", "0.5", "--trace-step", "10")
	if code != ExitOK {
		t.Fatalf("transfer: exit %d: %s", code, stderr)
	}
	read := func(n string) []byte {
		b, err := os.ReadFile(out(n))
		if err != nil {
			t.Fatal(err)
		}
		return b
	}

	// The counts: the route's headers say what the command line says.
	req, _ := http.NewRequest(http.MethodGet, srv.URL+base+"/points.csv", nil)
	req.Header.Set("Authorization", "Bearer "+token)
	res, err := srv.Client().Do(req)
	if err != nil {
		t.Fatal(err)
	}
	res.Body.Close()
	said := fmt.Sprintf("%s holes (%s with a trace), %s structures written; %s rows without a plane or position skipped",
		res.Header.Get("Corvane-Holes"), res.Header.Get("Corvane-Holes"), res.Header.Get("Corvane-Structures"), res.Header.Get("Corvane-Skipped"))
	if res.Header.Get("Corvane-Skipped") == "" || !strings.Contains(stderr, said) {
		t.Errorf("route's counts %q are not the command line's:\n%s", said, stderr)
	}

	// GeoJSON: the same bytes.
	if cli, http := read("holes.geojson"), getRoute(t, srv, token, base+"/holes.geojson?trace_step=10"); !bytes.Equal(cli, http) {
		t.Errorf("GeoJSON differs between the doors:\ncli  %.400s\nhttp %.400s", cli, http)
	}

	// Points: same rows; numbers within the CSV roundings.
	cliPts, httpPts := parseCSV(t, read("points.csv")), parseCSV(t, getRoute(t, srv, token, base+"/points.csv"))
	if len(cliPts) != len(httpPts) || len(cliPts) < 100 {
		t.Fatalf("points: %d rows by the command line, %d by the route", len(cliPts), len(httpPts))
	}
	// Tolerances: x, y, z to 0.001 m each side; the normal from angles read
	// to 0.01 degree (0.005 degree is 8.7e-5 rad, twice over for dip and
	// dip direction); dip and dip direction are written to 0.01 from a value
	// that is already one (a rounding of a rounding can move a half-way
	// value by one step).
	tol := []float64{0.0011, 0.0011, 0.0011, 3e-4, 3e-4, 3e-4, 0.0101, 0.0101}
	for i := 1; i < len(cliPts); i++ {
		c, h := cliPts[i], httpPts[i]
		for k := 0; k < 8; k++ {
			if dv := math.Abs(num(t, c[k]) - num(t, h[k])); dv > tol[k] && !(k == 7 && math.Abs(dv-360) <= tol[k]) {
				t.Fatalf("points row %d column %s: command line %s, route %s", i, cliPts[0][k], c[k], h[k])
			}
		}
		if strings.Join(c[8:], ",") != strings.Join(h[8:], ",") {
			t.Fatalf("points row %d: command line %v, route %v", i, c, h)
		}
	}

	// glTF: the same JSON but for the disc nodes' translations and
	// rotations (the positions and poles above); the same binary size.
	cliDoc, cliBin := glbParts(t, read("scene.glb"))
	httpGLB := getRoute(t, srv, token, base+"/scene.glb?disc_radius=0.5&trace_step=10")
	httpDoc, httpBin := glbParts(t, httpGLB)
	if len(cliBin) != len(httpBin) {
		t.Errorf("glb binary chunk: %d bytes by the command line, %d by the route", len(cliBin), len(httpBin))
	}
	compareScenes(t, "glb", cliDoc, httpDoc, len(cliPts)-1)

	// The .gltf + .bin pair: the route's zip holds scene.gltf and the
	// scene.bin it names; the command line's --gltf writes the same pair.
	cliGLTF, cliGLTFBin := map[string]any{}, read("scene.bin")
	if err := json.Unmarshal(read("scene.gltf"), &cliGLTF); err != nil {
		t.Fatal(err)
	}
	zipped := unzip(t, getRoute(t, srv, token, base+"/scene.gltf.zip?disc_radius=0.5&trace_step=10"))
	if len(zipped) != 2 || zipped["scene.gltf"] == nil || zipped["scene.bin"] == nil {
		t.Fatalf("scene.gltf.zip holds %d files, want scene.gltf and scene.bin", len(zipped))
	}
	httpGLTF := map[string]any{}
	if err := json.Unmarshal(zipped["scene.gltf"], &httpGLTF); err != nil {
		t.Fatal(err)
	}
	if len(cliGLTFBin) != len(zipped["scene.bin"]) || len(zipped["scene.bin"]) != len(httpBin) {
		t.Errorf(".bin: %d bytes by the command line, %d in the route's zip, %d in the .glb", len(cliGLTFBin), len(zipped["scene.bin"]), len(httpBin))
	}
	compareScenes(t, "gltf", cliGLTF, httpGLTF, len(cliPts)-1)
	zdir := filepath.Join(dir, "zip")
	if err := os.MkdirAll(zdir, 0o755); err != nil {
		t.Fatal(err)
	}
	for n, b := range zipped {
		if err := os.WriteFile(filepath.Join(zdir, n), b, 0o644); err != nil {
			t.Fatal(err)
		}
	}

	// Both scenes pass the Khronos glTF validator (skipped without Node
	// locally, required in CI).
	if err := os.WriteFile(out("route.glb"), httpGLB, 0o644); err != nil {
		t.Fatal(err)
	}
	t.Run("khronos", func(t *testing.T) {
		exchangetest.RequireValid(t, exchangetest.ValidatorDir(t), out("scene.glb"), out("route.glb"), out("scene.gltf"), filepath.Join(zdir, "scene.gltf"))
	})

	// AGS4: LOCA and HORN the same; DISC the same rows, whole degrees equal
	// unless the route's value is within rounding of a half degree.
	ca, err := ags4.Read(bytes.NewReader(read("transfer.ags")), "cli.ags")
	if err != nil {
		t.Fatal(err)
	}
	ha, err := ags4.Read(bytes.NewReader(getRoute(t, srv, token, base+"/transfer.ags")), "http.ags")
	if err != nil {
		t.Fatal(err)
	}
	eq := func(what string, a, b any) {
		ja, _ := json.Marshal(a)
		jb, _ := json.Marshal(b)
		if !bytes.Equal(ja, jb) {
			t.Errorf("AGS4 %s differs:\n%.400s\n%.400s", what, ja, jb)
		}
	}
	eq("PROJ", ca.Project, ha.Project)
	eq("LOCA", ca.Locations, ha.Locations)
	eq("HORN", ca.Orientations, ha.Orientations)
	eq("ABBR", ca.Abbreviations, ha.Abbreviations)
	// CORE and FRAC: the same rows (printed, as NaN has no JSON).
	for _, g := range []struct {
		what string
		a, b any
		n    int
	}{{"CORE", ca.Cores, ha.Cores, len(ha.Cores)}, {"FRAC", ca.Spacings, ha.Spacings, len(ha.Spacings)}} {
		if fa, fb := fmt.Sprintf("%+v", g.a), fmt.Sprintf("%+v", g.b); fa != fb || g.n != 3 {
			t.Errorf("AGS4 %s (%d rows, want 3) differs:\n%.600s\n%.600s", g.what, g.n, fa, fb)
		}
	}
	if len(ca.Discontinuities) != len(ha.Discontinuities) || len(ca.Discontinuities) != len(cliPts)-1 {
		t.Fatalf("DISC: %d rows by the command line, %d by the route, want %d", len(ca.Discontinuities), len(ha.Discontinuities), len(cliPts)-1)
	}
	for i, c := range ca.Discontinuities {
		h := ha.Discontinuities[i]
		exact := httpPts[i+1]
		for _, v := range []struct {
			a, b float64
			full string
		}{{c.Dip, h.Dip, exact[6]}, {c.DipDirection, h.DipDirection, exact[7]}} {
			if v.a != v.b && math.Abs(math.Abs(num(t, v.full)-math.Trunc(num(t, v.full)))-0.5) > 0.011 {
				t.Fatalf("DISC row %d: %+v by the command line, %+v by the route (route's value %s)", i, c, h, v.full)
			}
		}
		c.Dip, c.DipDirection = h.Dip, h.DipDirection
		eq("DISC row", c, h)
	}
	if time.Since(ha.Transmission.Date) > 48*time.Hour {
		t.Errorf("TRAN_DATE %v is not today", ha.Transmission.Date)
	}
}

func parseCSV(t *testing.T, b []byte) [][]string {
	t.Helper()
	recs, err := csv.NewReader(bytes.NewReader(b)).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	return recs
}

func num(t *testing.T, s string) float64 {
	t.Helper()
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		t.Fatalf("%q: %v", s, err)
	}
	return v
}

// glbParts splits a .glb into its JSON document and binary chunk.
func glbParts(t *testing.T, b []byte) (map[string]any, []byte) {
	t.Helper()
	if len(b) < 28 || string(b[:4]) != "glTF" || int(binary.LittleEndian.Uint32(b[8:])) != len(b) {
		t.Fatal("not a glTF binary")
	}
	jl := int(binary.LittleEndian.Uint32(b[12:]))
	var doc map[string]any
	if err := json.Unmarshal(b[20:20+jl], &doc); err != nil {
		t.Fatal(err)
	}
	rest := b[20+jl:]
	bl := int(binary.LittleEndian.Uint32(rest))
	return doc, rest[8 : 8+bl]
}

// compareScenes compares the glTF documents of the two doors: the same JSON
// but for the disc nodes' translations and rotations (positions and poles,
// within the converted CSV's roundings) and their extras (dip and dip
// direction, as in the points).
func compareScenes(t *testing.T, what string, cliDoc, httpDoc map[string]any, wantDiscs int) {
	t.Helper()
	cn, hn := cliDoc["nodes"].([]any), httpDoc["nodes"].([]any)
	if len(cn) != len(hn) {
		t.Fatalf(what+" glTF nodes: %d by the command line, %d by the route", len(cn), len(hn))
	}
	discs := 0
	for i := range cn {
		a, b := cn[i].(map[string]any), hn[i].(map[string]any)
		if _, ok := a["rotation"]; ok {
			discs++
			for _, k := range []string{"translation", "rotation"} {
				va, vb := a[k].([]any), b[k].([]any)
				for j := range va {
					if math.Abs(va[j].(float64)-vb[j].(float64)) > 2e-3 {
						t.Fatalf("glTF node %d %s: %v by the command line, %v by the route", i, k, va, vb)
					}
				}
				delete(a, k)
				delete(b, k)
			}
			delete(a, "extras") // dip and dip direction, as in the points
			delete(b, "extras")
		}
		ja, _ := json.Marshal(a)
		jb, _ := json.Marshal(b)
		if !bytes.Equal(ja, jb) {
			t.Fatalf("glTF node %d: %s by the command line, %s by the route", i, ja, jb)
		}
	}
	if discs != wantDiscs {
		t.Errorf("%s: %d disc nodes, want %d", what, discs, wantDiscs)
	}
	for _, k := range []string{"asset", "materials", "meshes", "accessors", "bufferViews", "buffers", "scenes"} {
		ja, _ := json.Marshal(cliDoc[k])
		jb, _ := json.Marshal(httpDoc[k])
		if !bytes.Equal(ja, jb) {
			t.Errorf("%s: glTF %s differs: %.300s by the command line, %.300s by the route", what, k, ja, jb)
		}
	}
}

// unzip returns the files of a zip archive by name.
func unzip(t *testing.T, b []byte) map[string][]byte {
	t.Helper()
	zr, err := zip.NewReader(bytes.NewReader(b), int64(len(b)))
	if err != nil {
		t.Fatal(err)
	}
	out := map[string][]byte{}
	for _, f := range zr.File {
		r, err := f.Open()
		if err != nil {
			t.Fatal(err)
		}
		out[f.Name], err = io.ReadAll(r)
		r.Close()
		if err != nil {
			t.Fatal(err)
		}
	}
	return out
}
