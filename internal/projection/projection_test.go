package projection

import (
	"encoding/csv"
	"math"
	"os"
	"strconv"
	"testing"

	"corvane/internal/geom"
)

// TestReferencePoints checks both projections against
// testdata/projection_reference_points.csv, made with PROJ 9.1.1 (Debian
// proj-bin): +proj=laea +lat_0=-90 divided by sqrt(2) for equal-area and
// +proj=stere +lat_0=-90 divided by 2 for equal-angle (references README
// section 6). PROJ printed 10 decimals.
func TestReferencePoints(t *testing.T) {
	f, err := os.Open("testdata/projection_reference_points.csv")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	r := csv.NewReader(f)
	r.Comment = '#'
	recs, err := r.ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if len(recs) < 10 {
		t.Fatalf("only %d rows", len(recs))
	}
	for _, rec := range recs[1:] {
		var v [6]float64
		for i := range v {
			v[i], err = strconv.ParseFloat(rec[i], 64)
			if err != nil {
				t.Fatal(err)
			}
		}
		l := geom.Line{Trend: v[0], Plunge: v[1]}
		for _, c := range []struct {
			k    Kind
			x, y float64
		}{{EqualArea, v[2], v[3]}, {EqualAngle, v[4], v[5]}} {
			p := c.k.ProjectLine(l)
			if math.Abs(p.X-c.x) > 2e-10 || math.Abs(p.Y-c.y) > 2e-10 {
				t.Errorf("%v %v: got (%.10f, %.10f), PROJ (%.10f, %.10f)", c.k, l, p.X, p.Y, c.x, c.y)
			}
			back, ok := c.k.Inverse(p)
			if !ok || geom.AxialAngle(back, l.Vec()) > 1e-9 {
				t.Errorf("%v %v: inverse gives %v", c.k, l, back)
			}
		}
	}
}

// TestEqualAngleGreatCircle: on the equal-angle net a plane dipping d is a
// circle of radius sec(d) centred tan(d) from the net centre on the side
// opposite its dip direction (references README section 6; a property of the
// stereographic projection).
func TestEqualAngleGreatCircle(t *testing.T) {
	for _, pl := range []geom.Plane{{Dip: 30, DipDirection: 0}, {Dip: 60, DipDirection: 135}, {Dip: 10, DipDirection: 250}, {Dip: 85, DipDirection: 333}} {
		d := geom.Rad(pl.Dip)
		back := geom.Rad(pl.DipDirection + 180)
		cx, cy := math.Tan(d)*math.Sin(back), math.Tan(d)*math.Cos(back)
		pts := EqualAngle.GreatCircle(pl, 90)
		for _, p := range pts {
			if got := math.Hypot(p.X-cx, p.Y-cy); math.Abs(got-1/math.Cos(d)) > 1e-9 {
				t.Fatalf("plane %v: point at %.9f from centre, want sec(d) = %.9f", pl, got, 1/math.Cos(d))
			}
			if math.Hypot(p.X, p.Y) > 1+1e-12 {
				t.Fatalf("plane %v: point outside the primitive", pl)
			}
		}
		// ends on the primitive along the strike
		if r := math.Hypot(pts[0].X, pts[0].Y); math.Abs(r-1) > 1e-12 {
			t.Errorf("plane %v: end at radius %v", pl, r)
		}
		// the middle point is the dip vector at radius tan((90 - dip)/2)
		mid := pts[45]
		if r := math.Hypot(mid.X, mid.Y); math.Abs(r-math.Tan((math.Pi/2-d)/2)) > 1e-9 {
			t.Errorf("plane %v: dip point at radius %v", pl, r)
		}
	}
}

// TestSmallCircle: every point of a cone of half-angle h about a lies at h
// from a or from -a, and inside the primitive; a cone straddling the
// horizontal is cut into parts.
func TestSmallCircle(t *testing.T) {
	for _, k := range []Kind{EqualArea, EqualAngle} {
		for _, c := range []struct {
			axis    geom.Line
			half    float64
			closed  bool
			minPart int
		}{
			{geom.Line{Trend: 40, Plunge: 60}, 10, true, 1},
			{geom.Line{Trend: 200, Plunge: 5}, 15, false, 2},
			{geom.Line{Trend: 300, Plunge: 0}, 8, false, 2},
		} {
			parts, closed := k.SmallCircle(c.axis.Vec(), c.half, 120)
			if closed != c.closed || len(parts) < c.minPart {
				t.Errorf("%v %v: closed=%v parts=%d", k, c.axis, closed, len(parts))
			}
			for _, part := range parts {
				for _, p := range part {
					if math.Hypot(p.X, p.Y) > 1+1e-9 {
						t.Fatalf("%v %v: point outside primitive", k, c.axis)
					}
					v, _ := k.Inverse(p)
					if a := geom.AxialAngle(v, c.axis.Vec()); math.Abs(a-c.half) > 1e-9 {
						t.Fatalf("%v %v: point at %v degrees from axis", k, c.axis, a)
					}
				}
			}
		}
	}
}

func TestParse(t *testing.T) {
	for _, s := range []string{"equal-area", "equal-angle"} {
		k, err := Parse(s)
		if err != nil || k.String() != s {
			t.Errorf("Parse(%q) = %v, %v", s, k, err)
		}
	}
	if _, err := Parse("mercator"); err == nil {
		t.Error("want error")
	}
}

// TestOnePercentCap: the 1% area counting cap has half-angle 8.1096 degrees
// (1 - cos theta = 0.01) and radius 0.1 on the equal-area net of radius 1
// (references README section 4; the equal-area property).
func TestOnePercentCap(t *testing.T) {
	theta := geom.Deg(math.Acos(1 - 0.01))
	if math.Abs(theta-8.1096) > 5e-5 {
		t.Errorf("theta = %v", theta)
	}
	if r := EqualArea.Radius(theta); math.Abs(r-0.1) > 1e-12 {
		t.Errorf("equal-area radius of the 1%% cap = %v, want 0.1", r)
	}
}

// TestSmallCircleParts: a cone crossing the horizontal once on each side
// gives exactly two parts (one about each end of the axis), each starting
// and ending on the primitive circle.
func TestSmallCircleParts(t *testing.T) {
	for _, k := range []Kind{EqualArea, EqualAngle} {
		for _, n := range []int{36, 90, 181} {
			parts, closed := k.SmallCircle(geom.FromTrendPlunge(75, 4), 12, n)
			if closed || len(parts) != 2 {
				t.Fatalf("%v n=%d: closed=%v, %d parts", k, n, closed, len(parts))
			}
			for _, part := range parts {
				for _, end := range []Point{part[0], part[len(part)-1]} {
					if r := math.Hypot(end.X, end.Y); math.Abs(r-1) > 1e-9 {
						t.Errorf("%v n=%d: part ends at radius %v", k, n, r)
					}
				}
			}
		}
	}
}

// Loop splits any closed loop of directions as SmallCircle splits a circle:
// a small circle sampled as a loop gives the same parts (a loop below the
// horizontal one closed polygon; one crossing it two open parts ending on
// the primitive circle), and every point keeps its angle from the axis
// (the crossings by bisection on the chord, renormalised, lie within the
// chord's sag of the circle).
func TestLoop(t *testing.T) {
	for _, k := range []Kind{EqualArea, EqualAngle} {
		for _, c := range []struct {
			axis geom.Vec3
			half float64
		}{{geom.FromTrendPlunge(40, 60), 10}, {geom.FromTrendPlunge(75, 4), 12}, {geom.FromTrendPlunge(300, 0), 8}} {
			const n = 180
			// the circle about the axis as a loop of directions (the axis's
			// lower end, as SmallCircle takes it)
			a := c.axis.Lower()
			u := a.Cross(geom.Vec3{Y: 1}).Unit()
			w := a.Cross(u)
			sh, ch := math.Sincos(geom.Rad(c.half))
			pts := make([]geom.Vec3, n)
			for i := range pts {
				s, co := math.Sincos(2 * math.Pi * float64(i) / n)
				pts[i] = a.Scale(ch).Add(u.Scale(sh * co)).Add(w.Scale(sh * s))
			}
			parts, closed := k.Loop(pts)
			want, wantClosed := k.SmallCircle(c.axis, c.half, n)
			if closed != wantClosed || len(parts) != len(want) {
				t.Fatalf("%v %v: loop closed=%v in %d parts, small circle closed=%v in %d", k, c.axis, closed, len(parts), wantClosed, len(want))
			}
			for _, part := range parts {
				for j, p := range part {
					if math.Hypot(p.X, p.Y) > 1+1e-9 {
						t.Fatalf("%v: point outside the primitive circle", k)
					}
					v, _ := k.Inverse(p)
					tol := 1e-9
					if !closed && (j == 0 || j == len(part)-1) {
						tol = 0.01 // a crossing on the chord between samples 2 deg apart
					}
					if d := geom.AxialAngle(v, c.axis); math.Abs(d-c.half) > tol {
						t.Fatalf("%v %v: point %d at %v deg from the axis, want %v", k, c.axis, j, d, c.half)
					}
				}
				if !closed {
					for _, end := range []Point{part[0], part[len(part)-1]} {
						if r := math.Hypot(end.X, end.Y); math.Abs(r-1) > 1e-9 {
							t.Errorf("%v: open part ends at radius %v", k, r)
						}
					}
				}
			}
		}
	}
}
