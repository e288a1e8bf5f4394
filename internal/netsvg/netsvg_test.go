package netsvg

import (
	"bytes"
	"encoding/xml"
	"io"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"corvane/internal/density"
	"corvane/internal/geom"
	"corvane/internal/projection"
)

// wellFormed decodes the whole document with encoding/xml and returns the
// number of elements by name.
func wellFormed(t *testing.T, doc []byte) map[string]int {
	t.Helper()
	d := xml.NewDecoder(bytes.NewReader(doc))
	count := map[string]int{}
	for {
		tok, err := d.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatalf("SVG is not well-formed XML: %v", err)
		}
		if se, ok := tok.(xml.StartElement); ok {
			count[se.Name.Local]++
		}
	}
	if count["svg"] != 1 {
		t.Fatalf("want one svg root, got %d", count["svg"])
	}
	return count
}

// shoelace returns the area enclosed by the rings under the even-odd rule
// for non-crossing rings (outer minus holes): the absolute signed areas with
// nesting resolved by sign via containment depth.
func evenOddArea(rs [][]projection.Point) float64 {
	var total float64
	for i, r := range rs {
		a := 0.0
		for k := range r {
			p, q := r[k], r[(k+1)%len(r)]
			a += p.X*q.Y - q.X*p.Y
		}
		a = math.Abs(a) / 2
		depth := 0
		for j, o := range rs {
			if j != i && inside(r[0], o) {
				depth++
			}
		}
		if depth%2 == 1 {
			a = -a
		}
		total += a
	}
	return total
}

func inside(p projection.Point, ring []projection.Point) bool {
	in := false
	for k := range ring {
		a, b := ring[k], ring[(k+1)%len(ring)]
		if (a.Y > p.Y) != (b.Y > p.Y) && p.X < a.X+(p.Y-a.Y)*(b.X-a.X)/(b.Y-a.Y) {
			in = !in
		}
	}
	return in
}

func gridOf(n int, extent float64, f func(x, y float64) float64) [][]float64 {
	g := make([][]float64, n)
	for i := range g {
		g[i] = make([]float64, n)
		for j := range g[i] {
			g[i][j] = f(-extent+2*extent*float64(i)/float64(n-1), -extent+2*extent*float64(j)/float64(n-1))
		}
	}
	return g
}

// TestRingsCircle: for the cone f = 1 - r the region f >= L is the disc of
// radius 1 - L, whose area is pi (1 - L)^2 (geometry; marching squares with
// linear interpolation is exact on the cone's edges up to the polygon's
// chord error).
func TestRingsCircle(t *testing.T) {
	g := gridOf(101, 1, func(x, y float64) float64 { return 1 - math.Hypot(x, y) })
	for _, l := range []float64{0.2, 0.5, 0.8} {
		rs := rings(g, 1, l)
		if len(rs) != 1 {
			t.Fatalf("level %v: %d rings", l, len(rs))
		}
		for _, p := range rs[0] {
			if d := math.Hypot(p.X, p.Y) - (1 - l); math.Abs(d) > 1e-3 {
				t.Fatalf("level %v: point at radius %v", l, math.Hypot(p.X, p.Y))
			}
		}
		want := math.Pi * (1 - l) * (1 - l)
		if a := evenOddArea(rs); math.Abs(a-want) > 0.01*want {
			t.Errorf("level %v: area %v, want %v", l, a, want)
		}
	}
}

// TestRingsAnnulusAndEdge: a ring-shaped region gives an outer ring and a
// hole; a region reaching the grid edge is still closed; NaN nodes are
// outside.
func TestRingsAnnulusAndEdge(t *testing.T) {
	g := gridOf(121, 1, func(x, y float64) float64 { r := math.Hypot(x, y); return -math.Abs(r - 0.5) })
	rs := rings(g, 1, -0.2) // 0.3 <= r <= 0.7
	if len(rs) != 2 {
		t.Fatalf("annulus: %d rings", len(rs))
	}
	want := math.Pi * (0.7*0.7 - 0.3*0.3)
	if a := evenOddArea(rs); math.Abs(a-want) > 0.01*want {
		t.Errorf("annulus area %v, want %v", a, want)
	}
	g = gridOf(51, 1, func(x, y float64) float64 { return x })
	g[10][10] = math.NaN()
	rs = rings(g, 1, 0.5)
	if len(rs) != 1 {
		t.Fatalf("edge: %d rings", len(rs))
	}
	if a := evenOddArea(rs); math.Abs(a-1) > 0.02 { // the strip 0.5 <= x <= 1 of height 2
		t.Errorf("edge area %v, want 1", a)
	}
}

func TestNiceLevels(t *testing.T) {
	cases := []struct {
		max  float64
		unit string
		want []float64
	}{
		{13.2, "MUD", []float64{2, 4, 6, 8, 10, 12}},
		{9, "sigma", []float64{2, 4, 6, 8}},
		{0.7, "MUD", []float64{0.1, 0.2, 0.3, 0.4, 0.5, 0.6}},
	}
	for _, c := range cases {
		got := NiceLevels(c.max, c.unit)
		if len(got) != len(c.want) {
			t.Errorf("%v %s: %v, want %v", c.max, c.unit, got, c.want)
			continue
		}
		for i := range got {
			if math.Abs(got[i]-c.want[i]) > 1e-12 {
				t.Errorf("%v %s: %v, want %v", c.max, c.unit, got, c.want)
			}
		}
	}
}

func demoNet(t *testing.T, k projection.Kind) Net {
	t.Helper()
	rng := rand.New(rand.NewPCG(11, 12))
	means := []geom.Vec3{geom.FromTrendPlunge(300, 40), geom.FromTrendPlunge(95, 10)}
	var poles []Mark
	var planes []PlaneMark
	var axes []geom.Vec3
	for s, m := range means {
		for i := 0; i < 40; i++ {
			v := m.Add(geom.Vec3{X: rng.NormFloat64() * 0.12, Y: rng.NormFloat64() * 0.12, Z: rng.NormFloat64() * 0.12}).Unit()
			poles = append(poles, Mark{Axis: v, Set: s})
			planes = append(planes, PlaneMark{Plane: geom.PlaneOf(v), Set: s})
			axes = append(axes, v)
		}
	}
	poles = append(poles, Mark{Axis: geom.FromTrendPlunge(200, 80), Set: -1})
	e, err := density.New(density.Exponential, axes, nil)
	if err != nil {
		t.Fatal(err)
	}
	return Net{
		Projection: k,
		Title:      "Test & <net>",
		Subtitle:   "synthetic",
		Poles:      poles,
		Planes:     planes,
		Lines:      []Mark{{Axis: geom.FromTrendPlunge(10, 30), Set: -1}},
		Sets: []SetMark{
			{Name: "S1", Mean: means[0], Cone: 4, Count: 40},
			{Name: "S2", Mean: means[1], Cone: 5, Count: 40},
		},
		Density: ContourGrid(k, e, 80, false),
		Notes:   []string{"weights: none"},
		Caution: "For review only.",
	}
}

func TestWriteNetWellFormed(t *testing.T) {
	for _, k := range []projection.Kind{projection.EqualArea, projection.EqualAngle} {
		var b bytes.Buffer
		n := demoNet(t, k)
		if err := WriteNet(&b, n); err != nil {
			t.Fatal(err)
		}
		c := wellFormed(t, b.Bytes())
		s := b.String()
		for _, want := range []string{"Lower hemisphere", k.String() + " projection", "81 poles to planes", "80 great circles", "1 line<", "Test &amp; &lt;net&gt;", "For review only.", "clip-path", ">N<"} {
			if !strings.Contains(s, want) {
				t.Errorf("%v: sheet lacks %q", k, want)
			}
		}
		if c["path"] < 80+len(n.Density.Levels) {
			t.Errorf("%v: only %d paths", k, c["path"])
		}
	}
}

// TestContourGridMatchesEstimator: the grid values are the estimator's MUD
// at the inverse-projected nodes.
func TestContourGridMatchesEstimator(t *testing.T) {
	axes := []geom.Vec3{geom.FromTrendPlunge(10, 20), geom.FromTrendPlunge(15, 25), geom.FromTrendPlunge(200, 70)}
	e, _ := density.New(density.Kamb, axes, nil)
	c := ContourGrid(projection.EqualArea, e, 21, false)
	i, j := 10, 10 // centre node
	if got, want := c.Grid[i][j], e.MUD(geom.Vec3{Z: -1}); math.Abs(got-want) > 1e-12 {
		t.Errorf("centre %v, want %v", got, want)
	}
	if !(c.Max > 0) || len(c.Levels) == 0 {
		t.Errorf("max %v levels %v", c.Max, c.Levels)
	}
}

// TestRose: bins of a known set of azimuths, and a well-formed sheet.
func TestRose(t *testing.T) {
	az := []float64{5, 7, 15, 185, 359.9}
	bins := RoseBins(az, nil, 10, false)
	if bins[0] != 2 || bins[1] != 1 || bins[18] != 1 || bins[35] != 1 {
		t.Errorf("directed bins %v", bins)
	}
	bins = RoseBins(az, []float64{1, 1, 2, 1, 1}, 10, true)
	if bins[0] != 3 || bins[18] != 3 || bins[1] != 2 || bins[19] != 2 || bins[17] != 1 || bins[35] != 1 {
		t.Errorf("axial bins %v", bins)
	}
	var b bytes.Buffer
	if err := WriteRose(&b, Rose{Title: "Rose", Azimuths: az, Axial: true, Quantity: "strike", Caution: "x"}); err != nil {
		t.Fatal(err)
	}
	c := wellFormed(t, b.Bytes())
	if c["path"] < 4 {
		t.Errorf("rose has %d paths", c["path"])
	}
	if err := WriteRose(io.Discard, Rose{Azimuths: az, BinWidth: 7}); err == nil {
		t.Error("bin width 7: want error")
	}
}

// TestZonesAndCircles: shaded zones are drawn as closed hatched paths under
// the poles with a legend entry per label, and small circles as paths.
func TestZonesAndCircles(t *testing.T) {
	n := Net{
		Projection: projection.EqualArea,
		Title:      "zones",
		Poles:      []Mark{{Axis: geom.FromTrendPlunge(0, 40), Set: -1}},
		Zones: []Zone{
			{Label: "planar sliding", Outline: []geom.Vec3{geom.FromTrendPlunge(350, 30), geom.FromTrendPlunge(10, 30), geom.FromTrendPlunge(10, 60), geom.FromTrendPlunge(350, 60)}},
			{Label: "oblique", Tone: 1, Outline: []geom.Vec3{{Z: -1}, geom.FromTrendPlunge(100, 0), geom.FromTrendPlunge(120, 0)}},
			{Label: "oblique", Tone: 1, Outline: []geom.Vec3{{Z: -1}, geom.FromTrendPlunge(200, 0), geom.FromTrendPlunge(220, 0)}},
		},
		Circles:     []CircleMark{{Axis: geom.HoleDirection(30, -60), Half: 40, Set: -1, Dashed: true}},
		CirclesNote: "possible poles of 1 unoriented measurement",
		Face:        &geom.Plane{Dip: 60, DipDirection: 180},
	}
	var b bytes.Buffer
	if err := WriteNet(&b, n); err != nil {
		t.Fatal(err)
	}
	c := wellFormed(t, b.Bytes())
	s := b.String()
	if c["pattern"] != len(zoneTones) {
		t.Errorf("%d patterns", c["pattern"])
	}
	if strings.Count(s, `fill="url(#zone`) != 3+2 { // three zones, two legend swatches
		t.Errorf("zone fills: %d", strings.Count(s, `fill="url(#zone`))
	}
	if strings.Index(s, `id="zones"`) > strings.Index(s, `id="poles"`) {
		t.Error("zones must be drawn under the poles")
	}
	if !strings.Contains(s, `id="face"`) || !strings.Contains(s, "face 60/180") {
		t.Error("face or its key missing")
	}
	if !strings.Contains(s, `id="circles"`) || !strings.Contains(s, "possible poles of 1 unoriented measurement") {
		t.Error("circle or its note missing")
	}
}
