package geom

import (
	"math"
	"math/rand/v2"
	"testing"
)

func near(a, b, tol float64) bool { return math.Abs(a-b) <= tol }

// Brady, B.H.G. & Brown, E.T. (2004) Rock Mechanics for Underground Mining, 3rd ed.,
// App. A: the pole of plane 130/50 is 310/40, planes 130/50 and 250/30 intersect in 201/21.
func TestBradyBrownPoleAndIntersection(t *testing.T) {
	p := Plane{Dip: 50, DipDirection: 130}.Pole()
	if !near(p.Trend, 310, 1e-12) || !near(p.Plunge, 40, 1e-12) {
		t.Fatalf("pole = %+v, want 310/40", p)
	}
	l, ok := Intersection(Plane{50, 130}, Plane{30, 250})
	if !ok || !near(l.Trend, 201, 0.5) || !near(l.Plunge, 21, 0.5) {
		t.Fatalf("intersection = %+v, want 201/21 (+-0.5, published to the degree)", l)
	}
}

// Hudson, J.A. & Harrison, J.P. (1997) Engineering Rock Mechanics, App. B:
// planes 266/36 and 146/59 intersect in 219/26 (graphical, +-1 degree).
func TestHudsonHarrisonIntersection(t *testing.T) {
	l, ok := Intersection(Plane{36, 266}, Plane{59, 146})
	if !ok || !near(l.Trend, 219, 1) || !near(l.Plunge, 26, 1) {
		t.Fatalf("intersection = %+v, want 219/26 +-1", l)
	}
}

// The frame of conventions.md: trend 90 plunge 0 is East, plunge 90 is straight down.
func TestFrame(t *testing.T) {
	e := FromTrendPlunge(90, 0)
	if !near(e.X, 1, 1e-15) || !near(e.Y, 0, 1e-15) || !near(e.Z, 0, 1e-15) {
		t.Fatalf("east = %+v", e)
	}
	d := HoleDirection(0, -90)
	if !near(d.Z, -1, 1e-15) {
		t.Fatalf("straight down = %+v", d)
	}
	// Right-handed: East x North = Up.
	if c := (Vec3{1, 0, 0}).Cross(Vec3{0, 1, 0}); c != (Vec3{0, 0, 1}) {
		t.Fatalf("E x N = %+v", c)
	}
}

func TestRoundTrips(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 2))
	for i := 0; i < 10000; i++ {
		p := Plane{Dip: r.Float64() * 89.9, DipDirection: r.Float64() * 359.9}
		q := PlaneOf(p.Normal().Neg())
		if p.Dip > 1e-6 && (!near(q.Dip, p.Dip, 1e-9) || !near(q.DipDirection, p.DipDirection, 1e-9)) {
			t.Fatalf("plane %+v -> %+v", p, q)
		}
		if !near(Angle(p.DipVector(), p.Normal()), 90, 1e-9) {
			t.Fatalf("dip vector not in plane %+v", p)
		}
		tr, pl := FromTrendPlunge(p.DipDirection, p.Dip-45).TrendPlunge()
		if !near(tr, p.DipDirection, 1e-9) || !near(pl, p.Dip-45, 1e-9) {
			t.Fatalf("trend/plunge round trip %v %v", tr, pl)
		}
	}
}

func TestNormAzimuth(t *testing.T) {
	for _, c := range []struct{ in, want float64 }{{360, 0}, {-90, 270}, {725, 5}, {-1e-18, 0}, {0, 0}} {
		if got := NormAzimuth(c.in); got != c.want {
			t.Errorf("NormAzimuth(%v) = %v, want %v", c.in, got, c.want)
		}
	}
	if !math.IsNaN(NormAzimuth(math.NaN())) {
		t.Error("NaN must stay NaN")
	}
}

func TestStrikeRightHand(t *testing.T) {
	if s := (Plane{Dip: 30, DipDirection: 45}).Strike(); s != 315 {
		t.Fatalf("strike = %v, want 315 (right-hand rule, common practice)", s)
	}
}
