// Package wmm evaluates the World Magnetic Model (WMM): the main geomagnetic
// field as a spherical-harmonic expansion of degree and order 12 with a linear
// secular variation, from the official coefficient file.
//
// The model carried by the package is WMM2025 (file WMM2025.COF, embedded),
// produced by NOAA's National Centers for Environmental Information and the
// British Geological Survey. The coefficients are a work of the US Government
// and in the public domain. Method and constants follow Chulliat et al. (2025),
// The US/UK World Magnetic Model for 2025-2030: Technical Report, NOAA NCEI.
//
// # Conventions
//
//   - Position: WGS 84 geodetic latitude and longitude in degrees, height in
//     kilometres above the WGS 84 ellipsoid (ellipsoidal height, not height
//     above sea level; the difference, at most about 100 m, moves declination
//     by far less than the model's own uncertainty).
//   - Time: a decimal year (see [DecimalYear] for the convention).
//   - Field components in nanotesla in the local geodetic frame: X north,
//     Y east, Z down. H is the horizontal intensity, F the total intensity.
//   - Declination D is the angle from true north to the horizontal field,
//     positive east (true azimuth = magnetic azimuth + D). Inclination I is
//     the dip of the field below the horizontal, positive down.
//   - Rates are per year: nT/yr for intensities, degrees/yr for angles.
//
// A [Model] is immutable once loaded and safe for concurrent use.
package wmm

import (
	"bufio"
	"bytes"
	_ "embed"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"sync"
)

//go:embed WMM2025.COF
var wmm2025 []byte

// WGS 84 ellipsoid and the model's geomagnetic reference radius, as the WMM
// report defines them.
const (
	wgs84A    = 6378.137 // semi-major axis, km
	wgs84F    = 1 / 298.257223563
	wgs84E2   = wgs84F * (2 - wgs84F) // first eccentricity squared
	refRadius = 6371.2                // geomagnetic reference radius a, km
)

// Thresholds of the WMM report for regions near the magnetic poles, where the
// horizontal field is weak and compass directions become unreliable.
const (
	BlackoutH = 2000.0 // nT: H below this is the blackout zone
	CautionH  = 6000.0 // nT: H below this (and at least BlackoutH) is the caution zone
)

// Zone says how close to a magnetic pole a point is, by its horizontal
// intensity H, following the WMM report.
type Zone int

const (
	// Normal: H >= 6000 nT; declination is as reliable as the model allows.
	Normal Zone = iota
	// Caution: 2000 nT <= H < 6000 nT; compasses and declination degrade.
	Caution
	// Blackout: H < 2000 nT; compass directions are unreliable and declination
	// from the model must not be trusted for navigation or surveying.
	Blackout
)

// String returns "normal", "caution" or "blackout".
func (z Zone) String() string {
	switch z {
	case Caution:
		return "caution"
	case Blackout:
		return "blackout"
	}
	return "normal"
}

// ZoneOf classifies a horizontal intensity h in nT.
func ZoneOf(h float64) Zone {
	switch {
	case h < BlackoutH:
		return Blackout
	case h < CautionH:
		return Caution
	}
	return Normal
}

// Model is a loaded coefficient set: main-field Gauss coefficients g, h at the
// epoch and their secular variation, Schmidt semi-normalised, in nT and nT/yr.
type Model struct {
	Name    string  // model name from the file header, e.g. "WMM-2025"
	Epoch   float64 // decimal year of the coefficients
	Release string  // release date as printed in the header
	MaxDeg  int

	// g, h, gd, hd are indexed by idx(n, m).
	g, h, gd, hd []float64
}

func idx(n, m int) int { return n*(n+1)/2 + m }

// ValidFrom and ValidTo return the interval of decimal years over which the
// model may be used: from its epoch to five years later, both ends included.
func (m *Model) ValidFrom() float64 { return m.Epoch }

// ValidTo returns the last decimal year the model covers (epoch + 5).
func (m *Model) ValidTo() float64 { return m.Epoch + 5 }

var (
	defaultOnce  sync.Once
	defaultModel *Model
)

// Default returns the embedded WMM2025 model. It panics only if the embedded
// file is corrupt, which the package tests rule out.
func Default() *Model {
	defaultOnce.Do(func() {
		m, err := Parse(bytes.NewReader(wmm2025))
		if err != nil {
			panic("wmm: embedded coefficient file: " + err.Error())
		}
		defaultModel = m
	})
	return defaultModel
}

// Parse reads a coefficient file in the WMM .COF layout: a header line
// "epoch name release-date", then lines "n m g h gdot hdot", ended by a line
// of nines or the end of input. Blank lines and lines starting with '#' are
// skipped. The degree of the model is the largest n found; every (n, m) with
// 1 <= n <= that degree and 0 <= m <= n must appear exactly once.
// Errors name the line and field.
func Parse(r io.Reader) (*Model, error) {
	sc := bufio.NewScanner(r)
	line := 0
	var m *Model
	type coef struct {
		n, m         int
		g, h, gd, hd float64
	}
	var cs []coef
	for sc.Scan() {
		line++
		text := strings.TrimSpace(sc.Text())
		if text == "" || strings.HasPrefix(text, "#") {
			continue
		}
		if strings.HasPrefix(text, "9999") {
			break
		}
		f := strings.Fields(text)
		if m == nil {
			if len(f) < 2 {
				return nil, fmt.Errorf("wmm: line %d: header needs at least epoch and model name, got %q", line, text)
			}
			ep, err := strconv.ParseFloat(f[0], 64)
			if err != nil || ep < 1900 || ep > 2200 {
				return nil, fmt.Errorf("wmm: line %d, field 1 (epoch): %q is not a decimal year", line, f[0])
			}
			m = &Model{Name: f[1], Epoch: ep}
			if len(f) > 2 {
				m.Release = f[2]
			}
			continue
		}
		if len(f) != 6 {
			return nil, fmt.Errorf("wmm: line %d: want 6 fields (n m g h gdot hdot), got %d", line, len(f))
		}
		var c coef
		var err error
		if c.n, err = strconv.Atoi(f[0]); err != nil || c.n < 1 || c.n > 100 {
			return nil, fmt.Errorf("wmm: line %d, field 1 (n): %q is not a degree in 1..100", line, f[0])
		}
		if c.m, err = strconv.Atoi(f[1]); err != nil || c.m < 0 || c.m > c.n {
			return nil, fmt.Errorf("wmm: line %d, field 2 (m): %q is not an order in 0..%d", line, f[1], c.n)
		}
		vals := []*float64{&c.g, &c.h, &c.gd, &c.hd}
		names := []string{"g", "h", "gdot", "hdot"}
		for i, p := range vals {
			v, err := strconv.ParseFloat(f[2+i], 64)
			if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, fmt.Errorf("wmm: line %d, field %d (%s): %q is not a number", line, 3+i, names[i], f[2+i])
			}
			*p = v
		}
		cs = append(cs, c)
	}
	if err := sc.Err(); err != nil {
		return nil, fmt.Errorf("wmm: reading coefficients: %w", err)
	}
	if m == nil {
		return nil, fmt.Errorf("wmm: no header line found")
	}
	for _, c := range cs {
		m.MaxDeg = max(m.MaxDeg, c.n)
	}
	if m.MaxDeg == 0 {
		return nil, fmt.Errorf("wmm: no coefficients found")
	}
	size := idx(m.MaxDeg, m.MaxDeg) + 1
	m.g, m.h, m.gd, m.hd = make([]float64, size), make([]float64, size), make([]float64, size), make([]float64, size)
	seen := make([]bool, size)
	for _, c := range cs {
		k := idx(c.n, c.m)
		if seen[k] {
			return nil, fmt.Errorf("wmm: coefficient n=%d m=%d appears twice", c.n, c.m)
		}
		seen[k] = true
		m.g[k], m.h[k], m.gd[k], m.hd[k] = c.g, c.h, c.gd, c.hd
	}
	for n := 1; n <= m.MaxDeg; n++ {
		for o := 0; o <= n; o++ {
			if !seen[idx(n, o)] {
				return nil, fmt.Errorf("wmm: coefficient n=%d m=%d is missing", n, o)
			}
		}
	}
	return m, nil
}

// Index returns the position of the coefficient of degree n and order m in
// the slices given to [New]: n(n+1)/2 + m.
func Index(n, m int) int { return idx(n, m) }

// New builds a model of degree maxDeg from Gauss coefficients g, h at epoch
// (nT, Schmidt semi-normalised) and their yearly changes gdot, hdot (nT/yr),
// each slice indexed by [Index] and of length Index(maxDeg, maxDeg)+1 (the
// entries for n = 0 are ignored). The model covers epoch to epoch + 5 years
// like a WMM file; other spherical-harmonic models (IGRF) build one model per
// five-year interval this way. The slices are copied.
func New(name string, epoch float64, maxDeg int, g, h, gdot, hdot []float64) (*Model, error) {
	size := idx(maxDeg, maxDeg) + 1
	if maxDeg < 1 || maxDeg > 100 {
		return nil, fmt.Errorf("wmm: degree %d is outside 1..100", maxDeg)
	}
	for _, s := range [][]float64{g, h, gdot, hdot} {
		if len(s) != size {
			return nil, fmt.Errorf("wmm: %d coefficients given, degree %d needs %d", len(s), maxDeg, size)
		}
	}
	return &Model{Name: name, Epoch: epoch, MaxDeg: maxDeg,
		g: append([]float64(nil), g...), h: append([]float64(nil), h...),
		gd: append([]float64(nil), gdot...), hd: append([]float64(nil), hdot...)}, nil
}

// Field is the geomagnetic field at one place and time.
type Field struct {
	X, Y, Z float64 // north, east, down components, nT
	H, F    float64 // horizontal and total intensity, nT
	// Declination (positive east) and Inclination (positive down), degrees.
	Declination, Inclination float64

	// Yearly rates of change: nT/yr and degrees/yr.
	XDot, YDot, ZDot, HDot, FDot   float64
	DeclinationDot, InclinationDot float64

	// Zone is the WMM report's pole-proximity class from H.
	Zone Zone
}

// RangeError reports a date outside the model's validity.
type RangeError struct {
	Year     float64
	From, To float64
	Model    string
}

func (e *RangeError) Error() string {
	return fmt.Sprintf("decimal year %.4f is outside the range of magnetic model %s (%.1f to %.1f)",
		e.Year, e.Model, e.From, e.To)
}

// At evaluates the model at geodetic latitude lat and longitude lon (degrees,
// WGS 84), height hKm above the WGS 84 ellipsoid (km) and decimal year year.
//
// Method (WMM report, section 1.2): the geodetic position is turned into
// geocentric spherical coordinates (r, latitude phi', lon); the Gauss
// coefficients are carried to the date, g(t) = g(t0) + (t - t0) gdot; the
// field is the gradient of the potential expanded in Schmidt semi-normalised
// associated Legendre functions of sin(phi'); the components are then rotated
// by phi' - phi into the geodetic frame. Secular variation uses the same sums
// with gdot, hdot. At the geographic poles declination is measured from the
// meridian of the given longitude.
//
// Errors: a date outside [ValidFrom, ValidTo] gives a *RangeError; latitude
// outside [-90, 90], non-finite input or a height below -10 km or above
// 850 km (the model's stated range is -1 km to 850 km) give plain errors.
func (m *Model) At(lat, lon, hKm, year float64) (Field, error) {
	if err := m.check("latitude", lat, lon, year); err != nil {
		return Field{}, err
	}
	if math.IsNaN(hKm) || hKm < -10 || hKm > 850 {
		return Field{}, fmt.Errorf("height %v km is outside the model's range (-10 to 850 km above the ellipsoid)", hKm)
	}
	return m.eval(lat, lon, hKm, year), nil
}

// check reports a latitude (named latName), longitude or date the model
// cannot take; the date gives a *RangeError.
func (m *Model) check(latName string, lat, lon, year float64) error {
	switch {
	case math.IsNaN(lat) || lat < -90 || lat > 90:
		return fmt.Errorf("%s %v is outside -90..90 degrees", latName, lat)
	case math.IsNaN(lon) || math.IsInf(lon, 0):
		return fmt.Errorf("longitude %v is not a finite number", lon)
	case math.IsNaN(year) || year < m.ValidFrom() || year > m.ValidTo():
		return &RangeError{Year: year, From: m.ValidFrom(), To: m.ValidTo(), Model: m.Name}
	}
	return nil
}

func (m *Model) eval(lat, lon, hKm, year float64) Field {
	phi := lat * math.Pi / 180
	sphi, cphi := math.Sincos(phi)

	// Geodetic -> geocentric spherical.
	rc := wgs84A / math.Sqrt(1-wgs84E2*sphi*sphi)
	p := (rc + hKm) * cphi
	z := (rc*(1-wgs84E2) + hKm) * sphi
	r := math.Hypot(p, z)
	if p < 1e-12 { // exactly at a pole: keep the meridian of lon defined
		p = 1e-12
	}
	b, s := m.synth(r, z/r, p/r, lon*math.Pi/180, year-m.Epoch)

	// Rotate from geocentric to geodetic.
	psi := math.Atan2(z, p) - phi
	sp, cp := math.Sincos(psi)
	var f Field
	f.X = b[0]*cp - b[2]*sp
	f.Y = b[1]
	f.Z = b[0]*sp + b[2]*cp
	f.XDot = s[0]*cp - s[2]*sp
	f.YDot = s[1]
	f.ZDot = s[0]*sp + s[2]*cp
	f.derive()
	return f
}

// AtGeocentric evaluates the model at geocentric latitude latc (degrees,
// the angle at the Earth's centre, 90 - colatitude), longitude lon (degrees)
// and geocentric radius rKm (km) on decimal year year. The components X, Y,
// Z are those of the geocentric spherical frame (north along the meridian
// of the sphere, east, towards the centre), as published check values of
// spherical-harmonic models are given. Errors as for [Model.At]; the
// radius must lie within 6300 to 7300 km.
func (m *Model) AtGeocentric(latc, lon, rKm, year float64) (Field, error) {
	if err := m.check("geocentric latitude", latc, lon, year); err != nil {
		return Field{}, err
	}
	if math.IsNaN(rKm) || rKm < 6300 || rKm > 7300 {
		return Field{}, fmt.Errorf("radius %v km is outside 6300 to 7300 km", rKm)
	}
	t, u := math.Sincos(latc * math.Pi / 180)
	if u < 1e-12 {
		u = 1e-12
	}
	b, s := m.synth(rKm, t, u, lon*math.Pi/180, year-m.Epoch)
	f := Field{X: b[0], Y: b[1], Z: b[2], XDot: s[0], YDot: s[1], ZDot: s[2]}
	f.derive()
	return f, nil
}

// derive fills the intensities, angles, their rates and the zone from the
// components and their rates.
func (f *Field) derive() {
	f.H = math.Hypot(f.X, f.Y)
	f.F = math.Hypot(f.H, f.Z)
	f.Declination = math.Atan2(f.Y, f.X) * 180 / math.Pi
	f.Inclination = math.Atan2(f.Z, f.H) * 180 / math.Pi
	if f.H > 0 {
		f.HDot = (f.X*f.XDot + f.Y*f.YDot) / f.H
		f.DeclinationDot = (f.X*f.YDot - f.Y*f.XDot) / (f.H * f.H) * 180 / math.Pi
	}
	f.FDot = (f.X*f.XDot + f.Y*f.YDot + f.Z*f.ZDot) / f.F
	f.InclinationDot = (f.H*f.ZDot - f.Z*f.HDot) / (f.F * f.F) * 180 / math.Pi
	f.Zone = ZoneOf(f.H)
}

// synth sums the expansion at geocentric radius r (km), t = sin and u = cos
// of the geocentric latitude, longitude lam (radians), dt years after the
// epoch. It returns the field b and its secular variation s as north, east
// and down components in the geocentric spherical frame.
func (m *Model) synth(r, t, u, lam, dt float64) (b, s [3]float64) {
	nmax := m.MaxDeg
	size := idx(nmax, nmax) + 1
	var pbuf, dpbuf [idxCap]float64
	var P, dP []float64
	if size <= idxCap {
		P, dP = pbuf[:size], dpbuf[:size]
	} else {
		P, dP = make([]float64, size), make([]float64, size)
	}
	legendre(nmax, t, u, P, dP)

	// cos(m lon), sin(m lon) by recurrence.
	var cbuf, sbuf [degCap + 1]float64
	var cm, sm []float64
	if nmax <= degCap {
		cm, sm = cbuf[:nmax+1], sbuf[:nmax+1]
	} else {
		cm, sm = make([]float64, nmax+1), make([]float64, nmax+1)
	}
	cm[0], sm[0] = 1, 0
	if nmax >= 1 {
		sm[1], cm[1] = math.Sincos(lam)
	}
	for k := 2; k <= nmax; k++ {
		cm[k] = cm[k-1]*cm[1] - sm[k-1]*sm[1]
		sm[k] = sm[k-1]*cm[1] + cm[k-1]*sm[1]
	}

	ar := refRadius / r
	arn := ar * ar // (a/r)^(n+2) starts at n = 0
	var bx, by, bz, sx, sy, sz float64
	for n := 1; n <= nmax; n++ {
		arn *= ar
		var x, y, zz, xs, ys, zs float64
		for o := 0; o <= n; o++ {
			k := idx(n, o)
			g := m.g[k] + dt*m.gd[k]
			h := m.h[k] + dt*m.hd[k]
			gc := g*cm[o] + h*sm[o]
			gs := g*sm[o] - h*cm[o]
			sc := m.gd[k]*cm[o] + m.hd[k]*sm[o]
			ss := m.gd[k]*sm[o] - m.hd[k]*cm[o]
			x += gc * dP[k]
			y += float64(o) * gs * P[k]
			zz += gc * P[k]
			xs += sc * dP[k]
			ys += float64(o) * ss * P[k]
			zs += sc * P[k]
		}
		bx -= arn * x
		by += arn * y
		bz -= float64(n+1) * arn * zz
		sx -= arn * xs
		sy += arn * ys
		sz -= float64(n+1) * arn * zs
	}
	return [3]float64{bx, by / u, bz}, [3]float64{sx, sy / u, sz}
}

// Stack buffers cover models up to degree 13 without allocation.
const (
	degCap = 13
	idxCap = (degCap + 1) * (degCap + 2) / 2
)

// legendre fills P[idx(n,m)] with the Schmidt semi-normalised associated
// Legendre functions P_n^m(t), t = sin(phi') = cos(colatitude), u = cos(phi'),
// and dP with their derivatives with respect to phi' (latitude), for
// 0 <= m <= n <= nmax. Recurrences (theta the colatitude):
//
//	P_n^n = sqrt((2n-1)/(2n)) u P_{n-1}^{n-1}   (P_1^1 = u)
//	P_n^m = [(2n-1) t P_{n-1}^m - sqrt((n-1)^2 - m^2) P_{n-2}^m] / sqrt(n^2 - m^2)
//
// differentiated with dt/dtheta = -u, du/dtheta = t, and dP/dphi' = -dP/dtheta.
func legendre(nmax int, t, u float64, P, dP []float64) {
	// Work with derivatives in theta, negate at the end.
	P[0], dP[0] = 1, 0
	for n := 1; n <= nmax; n++ {
		// Diagonal.
		kd, kp := idx(n, n), idx(n-1, n-1)
		c := 1.0
		if n > 1 {
			c = math.Sqrt(float64(2*n-1) / float64(2*n))
		}
		P[kd] = c * u * P[kp]
		dP[kd] = c * (t*P[kp] + u*dP[kp])
		for o := 0; o < n; o++ {
			k1 := idx(n-1, o)
			a := float64(2*n - 1)
			den := math.Sqrt(float64(n*n - o*o))
			p := a * t * P[k1]
			d := a * (-u*P[k1] + t*dP[k1])
			if n-2 >= o {
				k2 := idx(n-2, o)
				b := math.Sqrt(float64((n-1)*(n-1) - o*o))
				p -= b * P[k2]
				d -= b * dP[k2]
			}
			P[idx(n, o)] = p / den
			dP[idx(n, o)] = d / den
		}
	}
	for i := range dP[:idx(nmax, nmax)+1] {
		dP[i] = -dP[i]
	}
}
