package igrf

import (
	"bufio"
	"bytes"
	"math"
	"strconv"
	"strings"
	"testing"

	"corvane/internal/wmm"
)

// Check values published with the British Geological Survey's reference
// code for IGRF-14 (geocentric input; X, Y, Z in the geocentric frame, nT;
// tolerance 0.01 nT as published there). Copied from the project's
// references README, section 8.
func TestBGSCheckValues(t *testing.T) {
	cases := []struct {
		year, colat, lon, r float64
		x, y, z             float64
	}{
		{1900, 175, -150, 6300, -5072.93, 10620.34, -67233.55},
		{1930, 135, -90, 6400, 23925.47, 10358.94, -30640.98},
		{1960, 95, -30, 6500, 23647.00, -9302.27, -3610.73},
		{1990, 55, 30, 6600, 25224.81, 1058.25, 30965.61},
		{2010, 170, 0, 6371, 17529.48, -7143.78, -42722.46},
		{2025, 56, -3, 6375, 28927.56, 261.98, 30910.08},
	}
	m := Default()
	for _, c := range cases {
		f, err := m.AtGeocentric(90-c.colat, c.lon, c.r, c.year)
		if err != nil {
			t.Fatalf("%v: %v", c.year, err)
		}
		if math.Abs(f.X-c.x) > 0.01 || math.Abs(f.Y-c.y) > 0.01 || math.Abs(f.Z-c.z) > 0.01 {
			t.Errorf("%v colat %v lon %v r %v: X Y Z = %.3f %.3f %.3f, want %.2f %.2f %.2f",
				c.year, c.colat, c.lon, c.r, f.X, f.Y, f.Z, c.x, c.y, c.z)
		}
	}
}

func TestHeaderAndRange(t *testing.T) {
	m := Default()
	if m.From != 1900 || m.To != 2030 || m.MaxDeg != 13 || len(m.spans) != 26 {
		t.Fatalf("model %+v: want 1900..2030, degree 13, 26 intervals", m)
	}
	for _, y := range []float64{1899.99, 2030.01, math.NaN()} {
		_, err := m.At(0, 0, 0, y)
		var re *RangeError
		if err == nil || !errorsAs(err, &re) {
			t.Errorf("year %v: error %v, want a *RangeError", y, err)
		}
	}
	for _, y := range []float64{1900, 2030} {
		if _, err := m.At(10, 20, 0, y); err != nil {
			t.Errorf("year %v: %v", y, err)
		}
	}
}

func errorsAs(err error, re **RangeError) bool {
	r, ok := err.(*RangeError)
	*re = r
	return ok
}

// The field is continuous in time at an epoch (linear interpolation on both
// sides), while the rate jumps to the next interval's slope.
func TestContinuousAtEpochs(t *testing.T) {
	m := Default()
	for _, ep := range []float64{1950, 1985, 2020} {
		a, _ := m.At(-31.9, 115.9, 0.3, ep-1e-9)
		b, _ := m.At(-31.9, 115.9, 0.3, ep)
		if math.Abs(a.X-b.X) > 1e-4 || math.Abs(a.Z-b.Z) > 1e-4 {
			t.Errorf("epoch %v: X %v vs %v, Z %v vs %v", ep, a.X, b.X, a.Z, b.Z)
		}
	}
}

// The yearly change of D agrees with a centred difference of D over a
// month inside one interval.
func TestDeclinationRate(t *testing.T) {
	m := Default()
	f, _ := m.At(51.5, -0.1, 0, 1967.5)
	a, _ := m.At(51.5, -0.1, 0, 1967.5-1.0/24)
	b, _ := m.At(51.5, -0.1, 0, 1967.5+1.0/24)
	num := (b.Declination - a.Declination) * 12
	if math.Abs(f.DeclinationDot-num) > 1e-6 {
		t.Errorf("dD/dt %v, difference quotient %v", f.DeclinationDot, num)
	}
}

// WMM2025 and IGRF-14 are two models of the same field: at 2025.0 they
// differ by a few tens of nT and a fraction of a degree. The differences
// are reported, and only gross disagreement (a sign, frame or unit error)
// fails.
func TestContinuityWithWMMAt2025(t *testing.T) {
	m, w := Default(), wmm.Default()
	for _, p := range [][2]float64{{-31.9, 115.9}, {51.5, -0.1}, {64.8, -147.7}, {-23.5, -46.6}, {35.7, 139.7}, {0, 0}} {
		fi, err := m.At(p[0], p[1], 0, 2025)
		if err != nil {
			t.Fatal(err)
		}
		fw, err := w.At(p[0], p[1], 0, 2025)
		if err != nil {
			t.Fatal(err)
		}
		dD := fi.Declination - fw.Declination
		t.Logf("lat %6.1f lon %7.1f: IGRF-WMM dX %6.1f dY %6.1f dZ %6.1f nT, dD %+.3f deg, dI %+.3f deg",
			p[0], p[1], fi.X-fw.X, fi.Y-fw.Y, fi.Z-fw.Z, dD, fi.Inclination-fw.Inclination)
		if math.Abs(dD) > 1 || math.Abs(fi.F-fw.F) > 300 {
			t.Errorf("lat %v lon %v: models disagree grossly: dD %v deg, dF %v nT", p[0], p[1], dD, fi.F-fw.F)
		}
	}
}

// Declinations for dated points 1950-2024 against an independent synthesis
// written here from the definition in the coefficient file's header and the
// model paper (Alken et al. 2021): the potential
// V = a sum_n (a/r)^(n+1) sum_m (g cos m lon + h sin m lon) P_n^m(cos theta)
// with Schmidt semi-normalised P_n^m from the explicit polynomial form of
// the Legendre functions (no recurrence), coefficients interpolated
// linearly between epochs, and the field B = -grad V by centred numerical
// differences; the geodetic position and frame rotation from the WGS 84
// ellipsoid. Nothing of package wmm or igrf is used.
func TestDatedDeclinationsIndependent(t *testing.T) {
	ref := parseIndependent(t)
	m := Default()
	pts := []struct{ lat, lon, hm, year float64 }{
		{-31.95, 115.86, 20, 1950.0},
		{-20.7, 139.5, 350, 1957.3},
		{64.84, -147.72, 130, 1962.9},
		{-23.55, -46.63, 760, 1971.25},
		{51.48, -0.0, 45, 1978.5},
		{-33.9, 151.2, 0, 1984.99},
		{60.17, 24.94, 10, 1993.7},
		{-12.05, -77.04, 150, 2001.1},
		{49.25, -123.1, 70, 2008.42},
		{-26.2, 28.04, 1750, 2016.6},
		{35.68, 139.69, 40, 2021.2},
		{-31.9, 115.8, 300, 2023.5808},
		{78.2, 15.6, 10, 2024.99},
	}
	for _, p := range pts {
		f, err := m.At(p.lat, p.lon, p.hm/1000, p.year)
		if err != nil {
			t.Fatal(err)
		}
		d, inc := ref.declination(p.lat, p.lon, p.hm/1000, p.year)
		if math.Abs(f.Declination-d) > 1e-6 || math.Abs(f.Inclination-inc) > 1e-6 {
			t.Errorf("%+v: D %.7f I %.7f, independent %.7f %.7f", p, f.Declination, f.Inclination, d, inc)
		}
	}
}

type indep struct {
	epochs []float64
	g, h   map[[2]int][]float64
	nmax   int
}

func parseIndependent(t *testing.T) *indep {
	r := &indep{g: map[[2]int][]float64{}, h: map[[2]int][]float64{}}
	sc := bufio.NewScanner(bytes.NewReader(igrf14))
	sc.Buffer(nil, 1<<20)
	stage := 0
	for sc.Scan() {
		s := sc.Text()
		if strings.HasPrefix(s, "#") || strings.TrimSpace(s) == "" {
			continue
		}
		f := strings.Fields(s)
		num := func(x string) float64 {
			v, err := strconv.ParseFloat(x, 64)
			if err != nil {
				t.Fatal(err)
			}
			return v
		}
		switch stage {
		case 0:
			r.nmax = int(num(f[1]))
			stage++
		case 1:
			for _, x := range f {
				r.epochs = append(r.epochs, num(x))
			}
			stage++
		default:
			k := [2]int{int(num(f[0])), int(num(f[1]))}
			var row []float64
			for _, x := range f[2:] {
				row = append(row, num(x))
			}
			if _, ok := r.g[k]; ok {
				r.h[k] = row
			} else {
				r.g[k] = row
			}
		}
	}
	return r
}

func (r *indep) coef(tab map[[2]int][]float64, n, m int, year float64) float64 {
	row, ok := tab[[2]int{n, m}]
	if !ok {
		return 0
	}
	for i := 0; i+1 < len(r.epochs); i++ {
		if year <= r.epochs[i+1] {
			w := (year - r.epochs[i]) / (r.epochs[i+1] - r.epochs[i])
			return row[i]*(1-w) + row[i+1]*w
		}
	}
	return row[len(row)-1]
}

func factorial(n int) float64 {
	f := 1.0
	for i := 2; i <= n; i++ {
		f *= float64(i)
	}
	return f
}

func binom(n, k int) float64 { return factorial(n) / (factorial(k) * factorial(n-k)) }

// schmidt returns the Schmidt semi-normalised P_n^m(x) from
// P_n(x) = 2^-n sum_k (-1)^k C(n,k) C(2n-2k,n) x^(n-2k) and
// P_n^m = (1-x^2)^(m/2) d^m P_n/dx^m, times sqrt(2 (n-m)!/(n+m)!) for m > 0.
func schmidt(n, m int, x float64) float64 {
	var d float64
	for k := 0; 2*k <= n; k++ {
		p := n - 2*k
		if p < m {
			continue
		}
		c := math.Pow(-1, float64(k)) * binom(n, k) * binom(2*n-2*k, n) / math.Pow(2, float64(n))
		c *= factorial(p) / factorial(p-m) // d^m x^p
		d += c * math.Pow(x, float64(p-m))
	}
	v := math.Pow(1-x*x, float64(m)/2) * d
	if m > 0 {
		v *= math.Sqrt(2 * factorial(n-m) / factorial(n+m))
	}
	return v
}

func (r *indep) potential(rad, theta, lon, year float64) float64 {
	const a = 6371.2
	var v float64
	for n := 1; n <= r.nmax; n++ {
		var s float64
		for m := 0; m <= n; m++ {
			g, h := r.coef(r.g, n, m, year), r.coef(r.h, n, m, year)
			s += (g*math.Cos(float64(m)*lon) + h*math.Sin(float64(m)*lon)) * schmidt(n, m, math.Cos(theta))
		}
		v += math.Pow(a/rad, float64(n+1)) * s
	}
	return a * v
}

// declination returns D and I (degrees) at a geodetic position.
func (r *indep) declination(lat, lon, hKm, year float64) (d, inc float64) {
	const aE, f = 6378.137, 1 / 298.257223563
	e2 := f * (2 - f)
	phi, lam := lat*math.Pi/180, lon*math.Pi/180
	nu := aE / math.Sqrt(1-e2*math.Sin(phi)*math.Sin(phi))
	p := (nu + hKm) * math.Cos(phi)
	z := (nu*(1-e2) + hKm) * math.Sin(phi)
	rad := math.Hypot(p, z)
	theta := math.Atan2(p, z) // colatitude
	const hT, hR = 1e-6, 1e-3
	dVdt := (r.potential(rad, theta+hT, lam, year) - r.potential(rad, theta-hT, lam, year)) / (2 * hT)
	dVdl := (r.potential(rad, theta, lam+hT, year) - r.potential(rad, theta, lam-hT, year)) / (2 * hT)
	dVdr := (r.potential(rad+hR, theta, lam, year) - r.potential(rad-hR, theta, lam, year)) / (2 * hR)
	// B = -grad V: north X = -B_theta, east Y = B_lambda, down Z = -B_r.
	xc := dVdt / rad
	yc := -dVdl / (rad * math.Sin(theta))
	zc := dVdr
	// Rotate by the angle between geocentric and geodetic latitude.
	psi := (math.Pi/2 - theta) - phi
	x := xc*math.Cos(psi) - zc*math.Sin(psi)
	zz := xc*math.Sin(psi) + zc*math.Cos(psi)
	return math.Atan2(yc, x) * 180 / math.Pi, math.Atan2(zz, math.Hypot(x, yc)) * 180 / math.Pi
}
