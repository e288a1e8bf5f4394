package gltf

import (
	"bytes"
	"encoding/binary"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"corvane/internal/exchange"
	"corvane/internal/exchange/exchangetest"
	"corvane/internal/geom"
	"corvane/internal/palette"
)

// doc is the part of a glTF document the tests read back.
type doc struct {
	Asset struct {
		Version string `json:"version"`
		Extras  struct {
			Frame  string `json:"frame"`
			Origin struct {
				Easting, Northing, Elevation float64
			} `json:"origin"`
		} `json:"extras"`
	} `json:"asset"`
	Nodes []struct {
		Name        string          `json:"name"`
		Mesh        *int            `json:"mesh"`
		Children    []int           `json:"children"`
		Translation [3]float64      `json:"translation"`
		Rotation    *[4]float64     `json:"rotation"`
		Scale       *[3]float64     `json:"scale"`
		Extras      json.RawMessage `json:"extras"`
	} `json:"nodes"`
	Meshes []struct {
		Name       string `json:"name"`
		Primitives []struct {
			Attributes map[string]int `json:"attributes"`
			Indices    *int           `json:"indices"`
			Mode       int            `json:"mode"`
			Material   int            `json:"material"`
		} `json:"primitives"`
	} `json:"meshes"`
	Materials []struct {
		Name string `json:"name"`
		PBR  struct {
			BaseColorFactor []float64 `json:"baseColorFactor"`
		} `json:"pbrMetallicRoughness"`
	} `json:"materials"`
	Accessors []struct {
		BufferView    int    `json:"bufferView"`
		ByteOffset    int    `json:"byteOffset"`
		ComponentType int    `json:"componentType"`
		Count         int    `json:"count"`
		Type          string `json:"type"`
	} `json:"accessors"`
	BufferViews []struct {
		ByteOffset int `json:"byteOffset"`
		ByteLength int `json:"byteLength"`
	} `json:"bufferViews"`
	Buffers []struct {
		ByteLength int    `json:"byteLength"`
		URI        string `json:"uri"`
	} `json:"buffers"`
}

// readGLB splits a .glb into its JSON document and binary chunk, checking
// the container layout of the glTF 2.0 specification (section 4.4).
func readGLB(t *testing.T, b []byte) (doc, []byte) {
	t.Helper()
	if len(b) < 28 || string(b[:4]) != "glTF" || binary.LittleEndian.Uint32(b[4:]) != 2 {
		t.Fatalf("not a glTF 2 binary: % x", b[:min(len(b), 12)])
	}
	if n := binary.LittleEndian.Uint32(b[8:]); int(n) != len(b) {
		t.Fatalf("header length %d, file %d bytes", n, len(b))
	}
	jl := int(binary.LittleEndian.Uint32(b[12:]))
	if string(b[16:20]) != "JSON" || jl%4 != 0 {
		t.Fatalf("first chunk %q of %d bytes", b[16:20], jl)
	}
	var d doc
	if err := json.Unmarshal(b[20:20+jl], &d); err != nil {
		t.Fatalf("JSON chunk: %v", err)
	}
	rest := b[20+jl:]
	bl := int(binary.LittleEndian.Uint32(rest))
	if string(rest[4:8]) != "BIN\x00" || bl%4 != 0 || 8+bl != len(rest) {
		t.Fatalf("second chunk %q of %d bytes, %d left", rest[4:8], bl, len(rest))
	}
	return d, rest[8:]
}

// vec3 reads element i of a VEC3 float accessor.
func (d doc) vec3(bin []byte, acc, i int) [3]float64 {
	a := d.Accessors[acc]
	off := d.BufferViews[a.BufferView].ByteOffset + a.ByteOffset + 12*i
	var v [3]float64
	for k := 0; k < 3; k++ {
		v[k] = float64(math.Float32frombits(binary.LittleEndian.Uint32(bin[off+4*k:])))
	}
	return v
}

func near(a, b geom.Vec3, tol float64) bool { return a.Sub(b).Norm() <= tol }

// discs returns the disc nodes by name "hole depth".
func discNodes(d doc) map[string]int {
	m := map[string]int{}
	for i, n := range d.Nodes {
		if n.Rotation != nil {
			m[n.Name] = i
		}
	}
	return m
}

// TestDiscsReadBack reads the .glb back and checks that each disc's rendered
// normal (the node rotation applied to the stored vertex normals) equals
// the structure's pole and its centre (node translation plus the stored
// centre vertex, back in East-North-Up from the stated origin) the
// structure's position, to 1e-6 m and 1e-6 — as the issue asks.
func TestDiscsReadBack(t *testing.T) {
	traces := exchangetest.Traces()
	discs := exchangetest.Structures(400)
	o := Options{Origin: OriginOf(traces, discs), DiscRadius: 2.5, Colours: palette.New(exchangetest.Types), CRS: "EPSG:32750"}
	var buf bytes.Buffer
	if err := WriteGLB(&buf, traces, discs, o); err != nil {
		t.Fatal(err)
	}
	d, bin := readGLB(t, buf.Bytes())
	if d.Asset.Version != "2.0" || !strings.Contains(d.Asset.Extras.Frame, "z = -North") {
		t.Errorf("asset = %+v", d.Asset)
	}
	org := geom.Vec3{X: d.Asset.Extras.Origin.Easting, Y: d.Asset.Extras.Origin.Northing, Z: d.Asset.Extras.Origin.Elevation}
	if org != o.Origin {
		t.Fatalf("origin in extras %v, want %v", org, o.Origin)
	}
	byName := discNodes(d)
	if len(byName) != len(discs) {
		t.Fatalf("%d disc nodes, want %d", len(byName), len(discs))
	}
	for _, s := range discs {
		name := s.Hole + " " + fmt.Sprint(s.Depth)
		ni, ok := byName[name]
		if !ok {
			t.Fatalf("no node %q", name)
		}
		n := d.Nodes[ni]
		p := d.Meshes[*n.Mesh].Primitives[0]
		if want := "type " + s.Type; d.Materials[p.Material].Name != want {
			t.Errorf("%s: material %q, want %q", name, d.Materials[p.Material].Name, want)
		}
		lin := o.Colours.Colour(s.Type).Linear()
		for k := 0; k < 3; k++ {
			if math.Abs(d.Materials[p.Material].PBR.BaseColorFactor[k]-lin[k]) > 1e-12 {
				t.Errorf("%s: colour %v, want %v", name, d.Materials[p.Material].PBR.BaseColorFactor, lin)
			}
		}
		centre := d.vec3(bin, p.Attributes["POSITION"], 0)
		pos := FromGLTF([3]float64{n.Translation[0] + centre[0], n.Translation[1] + centre[1], n.Translation[2] + centre[2]}).Add(org)
		if !near(pos, s.Pos, 1e-6) {
			t.Errorf("%s: centre %v, want %v (off %.3g m)", name, pos, s.Pos, pos.Sub(s.Pos).Norm())
		}
		na := d.Accessors[p.Attributes["NORMAL"]]
		for i := 0; i < na.Count; i++ {
			nv := FromGLTF(Rotate(*n.Rotation, d.vec3(bin, p.Attributes["NORMAL"], i)))
			if !near(nv, s.Pole, 1e-6) {
				t.Fatalf("%s: normal %d = %v, want pole %v", name, i, nv, s.Pole)
			}
		}
		// The rim lies in the plane at the radius.
		for i := 1; i < d.Accessors[p.Attributes["POSITION"]].Count; i++ {
			r := FromGLTF(Rotate(*n.Rotation, d.vec3(bin, p.Attributes["POSITION"], i)))
			if math.Abs(r.Dot(s.Pole)) > 1e-6 || math.Abs(r.Norm()-o.DiscRadius) > 1e-6 {
				t.Fatalf("%s: rim point %d at %v is not on the plane's circle", name, i, r)
			}
		}
		var ex struct {
			Hole         string
			Depth        float64
			Dip          float64
			DipDirection float64 `json:"dip_direction"`
			Type, Set    string
			Uncertainty  *float64
		}
		if err := json.Unmarshal(n.Extras, &ex); err != nil {
			t.Fatal(err)
		}
		if ex.Hole != s.Hole || ex.Depth != s.Depth || ex.Dip != s.Dip || ex.DipDirection != s.DipDirection || ex.Type != s.Type || ex.Set != s.Set ||
			(ex.Uncertainty == nil) != !s.HasUncertainty() {
			t.Errorf("%s: extras %s", name, n.Extras)
		}
	}
}

// TestTracesReadBack checks the trace line strips: points back in East-North-
// Up within float32 resolution of the collar offset, surveyed and
// extrapolated parts as separate primitives with their materials, sharing
// their boundary point.
func TestTracesReadBack(t *testing.T) {
	traces := exchangetest.Traces()
	o := Options{Origin: OriginOf(traces, nil)}
	var buf bytes.Buffer
	if err := WriteGLB(&buf, traces, nil, o); err != nil {
		t.Fatal(err)
	}
	d, bin := readGLB(t, buf.Bytes())
	sawTail := false
	for _, tr := range traces {
		var n *int
		var tl [3]float64
		for _, nd := range d.Nodes {
			if nd.Name == tr.Hole && nd.Mesh != nil {
				n, tl = nd.Mesh, nd.Translation
			}
		}
		if n == nil {
			t.Fatalf("no node for %s", tr.Hole)
		}
		var got []geom.Vec3
		var mats []string
		for _, p := range d.Meshes[*n].Primitives {
			if p.Mode != 3 {
				t.Errorf("%s: mode %d, want LINE_STRIP (3)", tr.Hole, p.Mode)
			}
			mats = append(mats, d.Materials[p.Material].Name)
			a := p.Attributes["POSITION"]
			for i := 0; i < d.Accessors[a].Count; i++ {
				v := d.vec3(bin, a, i)
				got = append(got, FromGLTF([3]float64{tl[0] + v[0], tl[1] + v[1], tl[2] + v[2]}).Add(o.Origin))
			}
		}
		surveyed, extra := tr.Split()
		want := append(append([]exchange.TracePoint{}, surveyed...), extra...)
		if len(extra) > 0 {
			sawTail = true
			if strings.Join(mats, ",") != "trace surveyed,trace extrapolated" {
				t.Errorf("%s: materials %v", tr.Hole, mats)
			}
		} else if strings.Join(mats, ",") != "trace surveyed" {
			t.Errorf("%s: materials %v", tr.Hole, mats)
		}
		if len(got) != len(want) {
			t.Fatalf("%s: %d points, want %d", tr.Hole, len(got), len(want))
		}
		for i := range got {
			// float32 offsets from the collar of a hole a few hundred metres long: 1e-4 m.
			if !near(got[i], want[i].Pos, 1e-4) {
				t.Errorf("%s point %d: %v, want %v", tr.Hole, i, got[i], want[i].Pos)
			}
		}
	}
	if !sawTail {
		t.Fatal("the scene has no extrapolated tail; the test would not check that part")
	}
}

// TestFrame checks the axis map against the glTF 2.0 specification's frame
// (section 3.4: right-handed, +Y up) and corvane's (x East, y North, z Up):
// Up goes to +Y, North to -Z, and the map keeps handedness (East x North =
// Up in both frames).
func TestFrame(t *testing.T) {
	e, n, u := ToGLTF(geom.Vec3{X: 1}), ToGLTF(geom.Vec3{Y: 1}), ToGLTF(geom.Vec3{Z: 1})
	if e != [3]float64{1, 0, 0} || n != [3]float64{0, 0, -1} || u != [3]float64{0, 1, 0} {
		t.Fatalf("E %v N %v U %v", e, n, u)
	}
	cross := [3]float64{e[1]*n[2] - e[2]*n[1], e[2]*n[0] - e[0]*n[2], e[0]*n[1] - e[1]*n[0]}
	if cross != u {
		t.Errorf("E x N = %v in glTF axes, want Up %v", cross, u)
	}
	// Rotation of +Y onto every pole, including straight down.
	for _, p := range []geom.Vec3{{Z: -1}, {Z: 1}, {X: 1}, {Y: -1}, geom.FromTrendPlunge(123, 45)} {
		q, err := Rotation(p)
		if err != nil {
			t.Fatal(err)
		}
		got := FromGLTF(Rotate(q, [3]float64{0, 1, 0}))
		if !near(got, p, 1e-12) {
			t.Errorf("pole %v: rotated +Y = %v", p, got)
		}
	}
	if _, err := Rotation(geom.Vec3{}); err == nil {
		t.Error("a zero pole was accepted")
	}
}

// TestGLTFMatchesGLB checks that .gltf + .bin carry the same document and
// bytes as the .glb, the .bin named by a relative URI.
func TestGLTFMatchesGLB(t *testing.T) {
	traces := exchangetest.Traces()
	discs := exchangetest.Structures(30)
	o := Options{Origin: OriginOf(traces, discs), Colours: palette.New(exchangetest.Types)}
	var glb, js, bin bytes.Buffer
	if err := WriteGLB(&glb, traces, discs, o); err != nil {
		t.Fatal(err)
	}
	if err := WriteGLTF(&js, &bin, "scene one.bin", traces, discs, o); err != nil {
		t.Fatal(err)
	}
	d1, b1 := readGLB(t, glb.Bytes())
	var d2 doc
	if err := json.Unmarshal(js.Bytes(), &d2); err != nil {
		t.Fatal(err)
	}
	if d2.Buffers[0].URI != "scene%20one.bin" || d2.Buffers[0].ByteLength != bin.Len() {
		t.Errorf("buffer %+v, .bin %d bytes", d2.Buffers[0], bin.Len())
	}
	if !bytes.Equal(b1, bin.Bytes()) {
		t.Error(".bin differs from the .glb's binary chunk")
	}
	_ = d1
	jl := binary.LittleEndian.Uint32(glb.Bytes()[12:])
	inGLB := bytes.TrimRight(glb.Bytes()[20:20+jl], " ")
	if !bytes.Equal(bytes.Replace(js.Bytes(), []byte(`,"uri":"scene%20one.bin"`), nil, 1), inGLB) {
		t.Error(".gltf document differs from the .glb's other than by the buffer's uri")
	}
}

func TestErrors(t *testing.T) {
	good := exchangetest.Traces()
	disc := exchangetest.Structures(1)
	cases := []struct {
		name   string
		traces []exchange.Trace
		discs  []exchange.Structure
		o      Options
		want   string
	}{
		{"empty", nil, nil, Options{}, "nothing to write"},
		{"short trace", []exchange.Trace{{Hole: "A", Points: good[0].Points[:1]}}, nil, Options{}, `hole "A": a trace needs at least two points`},
		{"zero pole", nil, []exchange.Structure{{Hole: "B", Depth: 3}}, Options{}, `structure 1 (hole "B", depth 3)`},
		{"NaN position", nil, []exchange.Structure{{Hole: "C", Depth: 4, Pos: geom.Vec3{X: math.NaN()}, Pole: geom.Vec3{Z: -1}}}, Options{}, "position is not finite"},
		{"radius", nil, disc, Options{DiscRadius: -1}, "disc radius"},
		{"segments", nil, disc, Options{DiscSegments: 2}, "disc segments"},
	}
	for _, c := range cases {
		err := WriteGLB(io.Discard, c.traces, c.discs, c.o)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %v, want one containing %q", c.name, err, c.want)
		}
	}
}

// TestKhronosValidator runs the Khronos glTF validator (npm package
// gltf-validator, the reference checker of the glTF 2.0 specification) on a
// .glb and a .gltf + .bin of the test scene and requires no errors.
func TestKhronosValidator(t *testing.T) {
	dir := exchangetest.ValidatorDir(t)
	traces := exchangetest.Traces()
	discs := exchangetest.Structures(200)
	o := Options{Origin: OriginOf(traces, discs), Colours: palette.New(exchangetest.Types), DiscSegments: 12}
	tmp := t.TempDir()
	glb := filepath.Join(tmp, "scene.glb")
	var b bytes.Buffer
	if err := WriteGLB(&b, traces, discs, o); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(glb, b.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	var js, bin bytes.Buffer
	if err := WriteGLTF(&js, &bin, "scene.bin", traces, discs, o); err != nil {
		t.Fatal(err)
	}
	gl := filepath.Join(tmp, "scene.gltf")
	os.WriteFile(gl, js.Bytes(), 0o644)
	os.WriteFile(filepath.Join(tmp, "scene.bin"), bin.Bytes(), 0o644)
	// Traces alone and discs alone are valid scenes too.
	var tonly, donly bytes.Buffer
	if err := WriteGLB(&tonly, traces, nil, Options{Origin: o.Origin}); err != nil {
		t.Fatal(err)
	}
	if err := WriteGLB(&donly, nil, discs[:3], o); err != nil {
		t.Fatal(err)
	}
	os.WriteFile(filepath.Join(tmp, "traces.glb"), tonly.Bytes(), 0o644)
	os.WriteFile(filepath.Join(tmp, "discs.glb"), donly.Bytes(), 0o644)
	exchangetest.RequireValid(t, dir, glb, gl, filepath.Join(tmp, "traces.glb"), filepath.Join(tmp, "discs.glb"))
}

// TestUncertaintyCones reads the cones back: every structure with an
// uncertainty (every third of the test structures) has one child node whose
// mesh, under the node transforms (the disc's translation and rotation,
// the cone's scale), has its apex at the structure's position and every rim
// vertex at the disc radius from it and at the uncertainty's angle from the
// pole (exact geometry of the transforms, glTF 2.0 section 3.5.3: a child's
// matrix is the parent's times its own T R S). Structures without an
// uncertainty have none, and without the option no structure has one.
// Every file passes the Khronos validator.
func TestUncertaintyCones(t *testing.T) {
	traces := exchangetest.Traces()
	discs := exchangetest.Structures(60)
	o := Options{Origin: OriginOf(traces, discs), DiscRadius: 1.5, Colours: palette.New(exchangetest.Types), Uncertainty: true, DiscSegments: 16}
	var buf bytes.Buffer
	if err := WriteGLB(&buf, traces, discs, o); err != nil {
		t.Fatal(err)
	}
	d, bin := readGLB(t, buf.Bytes())
	org := o.Origin
	byName := discNodes(d)
	cones := 0
	for _, s := range discs {
		name := s.Hole + " " + fmt.Sprint(s.Depth)
		n := d.Nodes[byName[name]]
		if !s.HasUncertainty() {
			if len(n.Children) != 0 {
				t.Errorf("%s: a cone without an uncertainty", name)
			}
			continue
		}
		if len(n.Children) != 1 {
			t.Fatalf("%s: %d children, want the cone", name, len(n.Children))
		}
		cones++
		c := d.Nodes[n.Children[0]]
		if c.Scale == nil || c.Mesh == nil || c.Rotation != nil || c.Translation != [3]float64{} {
			t.Fatalf("%s: cone node %+v", name, c)
		}
		p := d.Meshes[*c.Mesh].Primitives[0]
		if d.Materials[p.Material].Name != "uncertainty 95%" {
			t.Errorf("%s: cone material %q", name, d.Materials[p.Material].Name)
		}
		world := func(i int) geom.Vec3 {
			v := d.vec3(bin, p.Attributes["POSITION"], i)
			for k := range v {
				v[k] *= c.Scale[k]
			}
			r := Rotate(*n.Rotation, v)
			return FromGLTF([3]float64{r[0] + n.Translation[0], r[1] + n.Translation[1], r[2] + n.Translation[2]}).Add(org)
		}
		if apex := world(0); !near(apex, s.Pos, 1e-6) {
			t.Errorf("%s: apex %v, want %v", name, apex, s.Pos)
		}
		count := d.Accessors[p.Attributes["POSITION"]].Count
		if count != 2*16+1 {
			t.Fatalf("cone of %d vertices", count)
		}
		for i := 1; i < count; i++ {
			r := world(i).Sub(s.Pos)
			ang := geom.Deg(math.Acos(math.Min(1, math.Abs(r.Unit().Dot(s.Pole)))))
			if math.Abs(r.Norm()-o.DiscRadius) > 1e-5 || math.Abs(ang-s.Uncertainty) > 1e-4 {
				t.Fatalf("%s: rim vertex %d at %.6g m and %.6g degrees from the pole, want %v and %v", name, i, r.Norm(), ang, o.DiscRadius, s.Uncertainty)
			}
		}
	}
	if cones != 20 {
		t.Errorf("%d cones, want 20", cones)
	}
	var plain bytes.Buffer
	o2 := o
	o2.Uncertainty = false
	if err := WriteGLB(&plain, traces, discs, o2); err != nil {
		t.Fatal(err)
	}
	if pd, _ := readGLB(t, plain.Bytes()); len(pd.Nodes) != len(d.Nodes)-20 {
		t.Errorf("without the option: %d nodes, want %d", len(pd.Nodes), len(d.Nodes)-20)
	}
	tmp := t.TempDir()
	var js, bn bytes.Buffer
	if err := WriteGLTF(&js, &bn, "cones.bin", traces, discs, o); err != nil {
		t.Fatal(err)
	}
	os.WriteFile(filepath.Join(tmp, "cones.glb"), buf.Bytes(), 0o644)
	os.WriteFile(filepath.Join(tmp, "cones.gltf"), js.Bytes(), 0o644)
	os.WriteFile(filepath.Join(tmp, "cones.bin"), bn.Bytes(), 0o644)
	exchangetest.RequireValid(t, exchangetest.ValidatorDir(t), filepath.Join(tmp, "cones.glb"), filepath.Join(tmp, "cones.gltf"))
}

// TestDiscsBySet: with BySet the discs are grouped and coloured by set (the
// test structures carry sets "1" to "3"; one without a set goes to
// NoSet), each disc under its set's node with its set's material and
// colour; the scene passes the Khronos validator.
func TestDiscsBySet(t *testing.T) {
	traces := exchangetest.Traces()
	discs := exchangetest.Structures(30)
	discs[4].Set = ""
	sets := palette.New([]string{"1", "2", "3"})
	o := Options{Origin: OriginOf(traces, discs), Colours: sets, BySet: true}
	var buf bytes.Buffer
	if err := WriteGLB(&buf, traces, discs, o); err != nil {
		t.Fatal(err)
	}
	d, _ := readGLB(t, buf.Bytes())
	groups := map[string][]int{}
	for _, n := range d.Nodes {
		if strings.HasPrefix(n.Name, "set ") {
			groups[strings.TrimPrefix(n.Name, "set ")] = n.Children
		}
	}
	if len(groups) != 4 || groups[NoSet] == nil {
		t.Fatalf("set groups %v", groups)
	}
	for _, s := range discs {
		name := s.Hole + " " + fmt.Sprint(s.Depth)
		ni := discNodes(d)[name]
		want := s.Set
		if want == "" {
			want = NoSet
		}
		if !slices.Contains(groups[want], ni) {
			t.Errorf("%s (set %q) is not under set %s", name, s.Set, want)
		}
		m := d.Materials[d.Meshes[*d.Nodes[ni].Mesh].Primitives[0].Material]
		lin := sets.Colour(s.Set).Linear()
		if m.Name != "set "+want || math.Abs(m.PBR.BaseColorFactor[0]-lin[0]) > 1e-12 || math.Abs(m.PBR.BaseColorFactor[2]-lin[2]) > 1e-12 {
			t.Errorf("%s: material %q %v, want set %s in %v", name, m.Name, m.PBR.BaseColorFactor, want, lin)
		}
	}
	tmp := t.TempDir()
	os.WriteFile(filepath.Join(tmp, "sets.glb"), buf.Bytes(), 0o644)
	exchangetest.RequireValid(t, exchangetest.ValidatorDir(t), filepath.Join(tmp, "sets.glb"))
}

// BenchmarkWriteGLB100k writes 1e5 discs and the three traces as .glb.
func BenchmarkWriteGLB100k(b *testing.B) {
	traces := exchangetest.Traces()
	discs := exchangetest.Structures(100_000)
	o := Options{Origin: OriginOf(traces, discs), Colours: palette.New(exchangetest.Types)}
	var cw counter
	if err := WriteGLB(&cw, traces, discs, o); err != nil {
		b.Fatal(err)
	}
	b.SetBytes(int64(cw))
	b.ReportAllocs()
	for b.Loop() {
		if err := WriteGLB(io.Discard, traces, discs, o); err != nil {
			b.Fatal(err)
		}
	}
}
