package utm

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// TestConvergenceReference checks grid convergence against the check points
// of the project's reference list (references README, section 7), computed
// with PROJ 9.1.1 `proj -V +proj=utm +zone=Z [+south] +ellps=WGS84` and
// agreeing with GeographicLib to 1e-8 degrees.
func TestConvergenceReference(t *testing.T) {
	cases := []struct {
		zone     Zone
		lat, lon float64
		want     float64
	}{
		{Zone{31, false}, 50.0, 6.0, 2.29900844},      // PROJ 9.1.1 / GeographicLib
		{Zone{56, true}, -33.9, 151.2, 1.00417196},    // PROJ 9.1.1 / GeographicLib
		{Zone{6, false}, 64.84, -147.72, -0.65169556}, // PROJ 9.1.1 / GeographicLib
	}
	for _, c := range cases {
		g, err := Forward(c.zone, c.lat, c.lon)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(g.Convergence-c.want) > 1e-8 {
			t.Errorf("%v %v,%v: convergence %.10f, PROJ gives %.8f", c.zone, c.lat, c.lon, g.Convergence, c.want)
		}
		// The same convergence must come back from the grid coordinates.
		geo, err := Inverse(c.zone, g.Easting, g.Northing)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(geo.Convergence-c.want) > 1e-8 {
			t.Errorf("%v inverse: convergence %.10f, want %.8f", c.zone, geo.Convergence, c.want)
		}
	}
}

// TestCentralMeridian: on the central meridian the point scale is k0 = 0.9996
// exactly and the convergence zero (UTM definition, common practice); the
// northing at latitude 90 is k0 times the WGS 84 quarter meridian,
// 10 001 965.7293 m (GeographicLib's published WGS 84 constants, from memory),
// and the rectifying radius is 6 367 449.1458 m (same source, from memory).
// Because on the central meridian k = k0 holds only if the forward series
// and the rectifying radius agree, the tight tolerance checks the series
// coefficients too.
func TestCentralMeridian(t *testing.T) {
	for lat := -89.0; lat <= 89; lat += 0.5 {
		for _, zn := range []int{1, 31, 60} {
			z := Zone{zn, lat < 0}
			g, err := Forward(z, lat, z.CentralMeridian())
			if err != nil {
				t.Fatal(err)
			}
			if math.Abs(g.Scale-K0) > 1e-13 || g.Convergence != 0 || g.Easting != FalseEasting {
				t.Fatalf("lat %v zone %v: k %.16f gamma %v E %v", lat, z, g.Scale, g.Convergence, g.Easting)
			}
		}
	}
	g, _ := Forward(Zone{31, false}, 90, 3)
	if want := K0 * 10001965.7293; math.Abs(g.Northing-want) > 1e-3 {
		t.Errorf("northing at the pole %.4f, want %.4f", g.Northing, want)
	}
	if math.Abs(wgs84.rectA-6367449.1458) > 1e-4 {
		t.Errorf("rectifying radius %.5f", wgs84.rectA)
	}
}

// TestScaleLines: the UTM scale factor rises from 0.9996 on the central
// meridian to 1 about 180 km either side (the lines of true scale; common
// practice) and to about 1.0010 at 3 degrees from the central meridian at the
// equator (common practice: k ~ k0 / sqrt(1 - (cos(lat) sin(dlon))^2) = 1.00097
// on the sphere).
func TestScaleLines(t *testing.T) {
	for _, sign := range []float64{-1, 1} {
		geo, err := Inverse(Zone{33, false}, FalseEasting+sign*180000, 0)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(geo.Scale-1) > 2e-5 {
			t.Errorf("k at 180 km from the central meridian = %.7f, want about 1", geo.Scale)
		}
	}
	g, _ := Forward(Zone{33, false}, 0, 18)
	sph := K0 / math.Sqrt(1-math.Pow(math.Sin(3*math.Pi/180), 2))
	if math.Abs(g.Scale-sph) > 2e-5 {
		t.Errorf("k at 3 degrees on the equator %.7f, spherical approximation %.7f", g.Scale, sph)
	}
}

// meridianRadius is the WGS 84 radius of curvature in the meridian,
// M = a (1 - e^2) / (1 - e^2 sin^2 lat)^(3/2) (common practice).
func meridianRadius(lat float64) float64 {
	s := math.Sin(lat * math.Pi / 180)
	return A * (1 - wgs84.e2) / math.Pow(1-wgs84.e2*s*s, 1.5)
}

// TestConvergenceAndScaleByDifferences checks convergence and scale against
// their definitions, by finite differences of the projection along a meridian:
// grid north lies C east of true north, so the image of the meridian points
// -C from grid north; and k is grid length over ellipsoid length
// (definitions of the quantities; common practice).
func TestConvergenceAndScaleByDifferences(t *testing.T) {
	const h = 1e-5 // degrees of latitude
	for _, c := range []struct{ lat, dl float64 }{{10, 2}, {-45, -3}, {60, 3.5}, {-70, 1}, {0.5, -2.5}} {
		z := Zone{20, c.lat < 0}
		lon := z.CentralMeridian() + c.dl
		g, _ := Forward(z, c.lat, lon)
		a, _ := Forward(z, c.lat-h, lon)
		b, _ := Forward(z, c.lat+h, lon)
		dE, dN := b.Easting-a.Easting, b.Northing-a.Northing
		conv := -math.Atan2(dE, dN) * 180 / math.Pi
		if math.Abs(conv-g.Convergence) > 1e-7 {
			t.Errorf("%+v: convergence %.9f, by differences %.9f", c, g.Convergence, conv)
		}
		ds := meridianRadius(c.lat) * 2 * h * math.Pi / 180
		k := math.Hypot(dE, dN) / ds
		if math.Abs(k-g.Scale) > 1e-9 {
			t.Errorf("%+v: scale %.12f, by differences %.12f", c, g.Scale, k)
		}
	}
}

// TestRoundTrip: forward then inverse (and inverse then forward) over a grid
// of points in several zones, both hemispheres, out to 3.5 degrees from the
// central meridian. The issue asks for 1 mm; Karney (2011) states that the
// n^6 series is good to a few nanometres, so we hold it to 10 nanometres,
// which catches an error in a series coefficient down to order n^4 that a
// 1 mm tolerance would miss. Forward computes convergence and scale from the
// alpha series and Inverse from the beta series (Karney 2011 eqs. 26-28), so
// their agreement checks both.
func TestRoundTrip(t *testing.T) {
	const mPerDeg = 111320.0 // at most, along a meridian or the equator
	for _, zn := range []int{1, 17, 31, 50, 56, 60} {
		for _, south := range []bool{false, true} {
			z := Zone{zn, south}
			for lat := 0.0; lat <= 84; lat += 4 {
				phi := lat
				if south {
					phi = -lat
					if lat > 80 {
						continue
					}
				}
				for dl := -3.5; dl <= 3.5; dl += 0.5 {
					lon := z.CentralMeridian() + dl
					g, err := Forward(z, phi, lon)
					if err != nil {
						t.Fatal(err)
					}
					geo, err := Inverse(z, g.Easting, g.Northing)
					if err != nil {
						t.Fatal(err)
					}
					dLat := math.Abs(geo.Lat - phi)
					dLon := math.Abs(math.Remainder(geo.Lon-lon, 360)) * math.Cos(phi*math.Pi/180)
					if d := math.Hypot(dLat, dLon) * mPerDeg; d > 1e-8 {
						t.Errorf("zone %v lat %v lon %v: round trip misses by %.3g m", z, phi, lon, d)
					}
					if math.Abs(geo.Convergence-g.Convergence) > 1e-9 || math.Abs(geo.Scale-g.Scale) > 1e-12 {
						t.Errorf("zone %v lat %v lon %v: convergence/scale differ after the round trip", z, phi, lon)
					}
				}
			}
		}
	}
	// Grid -> geographic -> grid, random points inside zones, fixed seed.
	r := rand.New(rand.NewPCG(7, 11))
	for i := 0; i < 2000; i++ {
		z := Zone{1 + r.IntN(60), r.IntN(2) == 1}
		e := 200000 + 600000*r.Float64()
		nn := 9300000 * r.Float64()
		if z.South {
			nn = 1200000 + 8800000*r.Float64()
		}
		geo, err := Inverse(z, e, nn)
		if err != nil {
			t.Fatal(err)
		}
		g, err := Forward(z, geo.Lat, geo.Lon)
		if err != nil {
			t.Fatal(err)
		}
		if d := math.Hypot(g.Easting-e, g.Northing-nn); d > 1e-8 {
			t.Errorf("zone %v E %v N %v: grid round trip misses by %.3g m", z, e, nn, d)
		}
	}
}

func TestParseZone(t *testing.T) {
	good := map[string]Zone{"50S": {50, true}, "6n": {6, false}, " 31 N ": {31, false}, "1S": {1, true}, "60N": {60, false}}
	for s, want := range good {
		got, err := ParseZone(s)
		if err != nil || got != want {
			t.Errorf("ParseZone(%q) = %v, %v; want %v", s, got, err, want)
		}
		if back, _ := ParseZone(got.String()); back != got {
			t.Errorf("String round trip of %v", got)
		}
	}
	bad := map[string]string{"50": "hemisphere", "0N": "out of range", "61S": "out of range", "50J": "hemisphere", "xS": "not a zone number", "": "want a zone"}
	for s, msg := range bad {
		if _, err := ParseZone(s); err == nil || !strings.Contains(err.Error(), msg) {
			t.Errorf("ParseZone(%q) error %v, want mention of %q", s, err, msg)
		}
	}
	if (Zone{50, true}).CentralMeridian() != 117 || (Zone{1, false}).CentralMeridian() != -177 {
		t.Error("central meridians: zone 50 is 117E and zone 1 is 177W (UTM definition, common practice)")
	}
}

func TestErrors(t *testing.T) {
	if _, err := Forward(Zone{0, false}, 0, 0); err == nil {
		t.Error("zone 0 accepted")
	}
	if _, err := Forward(Zone{31, false}, 91, 3); err == nil {
		t.Error("latitude 91 accepted")
	}
	if _, err := Forward(Zone{31, false}, 10, 60); err == nil || !strings.Contains(err.Error(), "central meridian") {
		t.Errorf("longitude 57 degrees off the central meridian: %v", err)
	}
	if _, err := Inverse(Zone{31, false}, math.NaN(), 0); err == nil {
		t.Error("NaN easting accepted")
	}
	if _, err := Inverse(Zone{31, false}, 5e7, 0); err == nil {
		t.Error("easting 50 000 km accepted")
	}
	// Longitude wraps: zone 1 straddles the antimeridian.
	a, _ := Forward(Zone{1, false}, 10, -179)
	b, _ := Forward(Zone{1, false}, 10, 181)
	if a != b {
		t.Errorf("longitude -179 and 181 differ: %+v %+v", a, b)
	}
	geo, _ := Inverse(Zone{1, false}, 100000, 1000000)
	if geo.Lon < -180 || geo.Lon >= 180 {
		t.Errorf("longitude %v not in [-180, 180)", geo.Lon)
	}
}

func BenchmarkInverse(b *testing.B) {
	z := Zone{50, true}
	for b.Loop() {
		_, _ = Inverse(z, 391234.5, 6465432.1)
	}
}

func BenchmarkForward(b *testing.B) {
	z := Zone{50, true}
	for b.Loop() {
		_, _ = Forward(z, -31.95, 115.86)
	}
}
