package cli

import (
	"bytes"
	"encoding/binary"
	"encoding/csv"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"corvane/internal/exchange/ags4"
	"corvane/internal/exchange/exchangetest"
	"corvane/internal/geom"
)

// TestTransferDemo converts the demo programme, then writes every transfer
// format from the converted file and reads each back: the structures in
// the points file, the glTF's disc nodes and the AGS4 DISC rows are the
// converted rows with a plane; GeoJSON has a collar per hole.
func TestTransferDemo(t *testing.T) {
	dir := t.TempDir()
	d := "../../testdata/zelvorra/"
	conv := filepath.Join(dir, "oriented.csv")
	if code, _, stderr := runCLI("convert", "--collars", d+"collars.csv", "--surveys", d+"surveys.csv", "--structures", d+"structures.csv", "-o", conv); code != ExitOK {
		t.Fatalf("convert: exit %d: %s", code, stderr)
	}
	out := func(n string) string { return filepath.Join(dir, n) }
	code, _, stderr := runCLI("transfer", "--collars", d+"collars.csv", "--surveys", d+"surveys.csv", "--converted", conv,
		"--glb", out("scene.glb"), "--gltf", out("scene.gltf"), "--geojson", out("holes.geojson"), "--points", out("points.csv"), "--ags", out("zelvorra.ags"),
		"--disc-radius", "0.5")
	if code != ExitOK {
		t.Fatalf("transfer: exit %d: %s", code, stderr)
	}

	// The converted rows with a plane and a position.
	cf, _ := os.Open(conv)
	recs, err := csv.NewReader(cf).ReadAll()
	cf.Close()
	if err != nil {
		t.Fatal(err)
	}
	col := map[string]int{}
	for i, h := range recs[0] {
		col[h] = i
	}
	type row struct {
		hole string
		pos  geom.Vec3
		pl   geom.Plane
	}
	var want []row
	holes := map[string]bool{}
	for _, r := range recs[1:] {
		holes[r[col["hole_id"]]] = true
		if r[col["dip"]] == "" || r[col["easting"]] == "" {
			continue
		}
		f := func(c string) float64 { v, _ := strconv.ParseFloat(r[col[c]], 64); return v }
		want = append(want, row{r[col["hole_id"]], geom.Vec3{X: f("easting"), Y: f("northing"), Z: f("elevation")}, geom.Plane{Dip: f("dip"), DipDirection: f("dip_direction")}})
	}
	if len(want) < 100 {
		t.Fatalf("only %d converted rows", len(want))
	}

	// Points: one row per structure, the normal the pole of the plane.
	pf, _ := os.Open(out("points.csv"))
	prs, err := csv.NewReader(pf).ReadAll()
	pf.Close()
	if err != nil || len(prs) != len(want)+1 {
		t.Fatalf("points: %d rows, want %d (%v)", len(prs)-1, len(want), err)
	}
	for i, w := range want {
		p := prs[i+1]
		v := func(k int) float64 { x, _ := strconv.ParseFloat(p[k], 64); return x }
		n := w.pl.Normal()
		if p[10] != w.hole || math.Abs(v(0)-w.pos.X) > 1e-9 || math.Abs(v(1)-w.pos.Y) > 1e-9 ||
			math.Abs(v(3)-n.X) > 1e-6 || math.Abs(v(4)-n.Y) > 1e-6 || math.Abs(v(5)-n.Z) > 1e-6 {
			t.Fatalf("points row %d: %v, want %+v (normal %v)", i+1, p, w, n)
		}
	}

	// glTF: one disc node per structure; .gltf + .bin beside each other.
	glb, _ := os.ReadFile(out("scene.glb"))
	if string(glb[:4]) != "glTF" || int(binary.LittleEndian.Uint32(glb[8:])) != len(glb) {
		t.Fatal("scene.glb is not a glTF binary")
	}
	jl := binary.LittleEndian.Uint32(glb[12:])
	var doc struct {
		Nodes []struct {
			Rotation []float64 `json:"rotation"`
		} `json:"nodes"`
	}
	if err := json.Unmarshal(glb[20:20+jl], &doc); err != nil {
		t.Fatal(err)
	}
	discs := 0
	for _, n := range doc.Nodes {
		if n.Rotation != nil {
			discs++
		}
	}
	if discs != len(want) {
		t.Errorf("%d disc nodes, want %d", discs, len(want))
	}
	gj, _ := os.ReadFile(out("scene.gltf"))
	bin, _ := os.ReadFile(out("scene.bin"))
	if !bytes.Contains(gj, []byte(`"uri":"scene.bin"`)) || len(bin) == 0 {
		t.Errorf(".gltf does not refer to scene.bin (%d bytes)", len(bin))
	}

	// GeoJSON: a collar Point per hole.
	var fc struct {
		Features []struct {
			Geometry   struct{ Type string }
			Properties map[string]any
		}
	}
	gb, _ := os.ReadFile(out("holes.geojson"))
	if err := json.Unmarshal(gb, &fc); err != nil {
		t.Fatal(err)
	}
	points := 0
	for _, f := range fc.Features {
		if f.Geometry.Type == "Point" {
			points++
		}
	}
	if points != len(holes) {
		t.Errorf("%d collars in GeoJSON, want %d", points, len(holes))
	}

	// AGS4 reads back with a DISC row per structure.
	af, _ := os.Open(out("zelvorra.ags"))
	data, err := ags4.Read(af, "zelvorra.ags")
	af.Close()
	if err != nil {
		t.Fatal(err)
	}
	if len(data.Discontinuities) != len(want) || len(data.Locations) != len(holes) || len(data.Orientations) == 0 {
		t.Errorf("AGS4: %d DISC, %d LOCA, %d HORN rows; want %d, %d, some", len(data.Discontinuities), len(data.Locations), len(data.Orientations), len(want), len(holes))
	}
	t.Run("khronos", func(t *testing.T) {
		exchangetest.RequireValid(t, exchangetest.ValidatorDir(t), out("scene.glb"), out("scene.gltf"))
	})
	left, _ := filepath.Glob(filepath.Join(dir, ".*.tmp"))
	if len(left) != 0 {
		t.Errorf("temporary files left: %v", left)
	}
}

func TestTransferUsage(t *testing.T) {
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"transfer"}, "are required"},
		{[]string{"transfer", "--collars", "c", "--surveys", "s", "--converted", "x"}, "nothing to write"},
		{[]string{"transfer", "--collars", "c", "--surveys", "s", "--converted", "x", "--glb", "g", "--method", "spline"}, "--method"},
		{[]string{"transfer", "--collars", "../../testdata/zelvorra/collars.csv", "--surveys", "../../testdata/zelvorra/surveys.csv",
			"--converted", "x", "--glb", "g", "--feet"}, "written in metres"},
	} {
		code, _, stderr := runCLI(c.args...)
		if code != ExitUsage || !strings.Contains(stderr, c.want) {
			t.Errorf("%v: exit %d, %q", c.args, code, stderr)
		}
	}
}

// TestTransferCoreIntervals: with --intervals the AGS4 file has a CORE row
// per interval with the recoveries and RQD of package coreinterval. Values
// by the definitions (Deere 1964; Deere & Deere 1988): TCR = 100 x 2.85 / 3
// = 95, SCR = 100 x 2.4 / 3 = 80, RQD = 100 x (0.5 + 0.3 + 1.2) / 3 = 66.7,
// written to the whole percent as CORE's 0DP asks; an interval without
// pieces or sound has an empty RQD. An interval past the hole is refused.
func TestTransferCoreIntervals(t *testing.T) {
	dir := t.TempDir()
	d := "../../testdata/zelvorra/"
	conv := filepath.Join(dir, "oriented.csv")
	if code, _, stderr := runCLI("convert", "--collars", d+"collars.csv", "--surveys", d+"surveys.csv", "--structures", d+"structures.csv", "-o", conv); code != ExitOK {
		t.Fatalf("convert: exit %d: %s", code, stderr)
	}
	iv := filepath.Join(dir, "intervals.csv")
	if err := os.WriteFile(iv, []byte("hole_id,from,to,recovered,solid,pieces,natural_breaks\nZR001,0,3,2.85,2.4,0.5;0.05;0.3;0.08;1.2,4\nZR001,3,6,3,3,,0\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	ags := filepath.Join(dir, "t.ags")
	if code, _, stderr := runCLI("transfer", "--collars", d+"collars.csv", "--surveys", d+"surveys.csv", "--converted", conv, "--ags", ags, "--intervals", iv); code != ExitOK {
		t.Fatalf("transfer: exit %d: %s", code, stderr)
	}
	f, _ := os.Open(ags)
	data, err := ags4.Read(f, "t.ags")
	f.Close()
	if err != nil {
		t.Fatal(err)
	}
	if len(data.Cores) != 2 {
		t.Fatalf("%d CORE rows, want 2", len(data.Cores))
	}
	c := data.Cores[0]
	if c.Hole != "ZR001" || c.Top != 0 || c.Base != 3 || c.TotalRecovery != 95 || c.SolidRecovery != 80 || c.RQD != 67 {
		t.Errorf("CORE row 1: %+v", c)
	}
	if c := data.Cores[1]; c.TotalRecovery != 100 || !math.IsNaN(c.RQD) {
		t.Errorf("CORE row 2: %+v", c)
	}
	if err := os.WriteFile(iv, []byte("hole_id,from,to\nZR001,250,260\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, stderr := runCLI("transfer", "--collars", d+"collars.csv", "--surveys", d+"surveys.csv", "--converted", conv, "--ags", ags, "--intervals", iv)
	if code != ExitUsage || !strings.Contains(stderr, "intervals.csv") || !strings.Contains(stderr, "line 2") {
		t.Errorf("an interval past the hole: exit %d: %s", code, stderr)
	}
}
