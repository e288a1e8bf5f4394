// Package utm converts between WGS 84 geodetic coordinates and Universal
// Transverse Mercator (UTM) grid coordinates, and gives the grid convergence
// and point scale factor at a point.
//
// The transverse Mercator projection uses Krüger's series to order n^6 in the
// third flattening n, in the form published by Karney, C.F.F. (2011),
// "Transverse Mercator with an accuracy of a few nanometers", Journal of
// Geodesy 85(8), 475-485 (equations 7-36 there). Conformal latitude is
// computed exactly and its inverse by Newton's method, so within about
// 3900 km of the central meridian the error of the series is a few
// nanometres, far below the millimetre this project needs.
//
// UTM parameters (common practice): zones 1..60 of 6 degrees, zone z having
// central meridian -183 + 6z degrees; scale k0 = 0.9996 on the central
// meridian; false easting 500 000 m; false northing 0 in the northern and
// 10 000 000 m in the southern hemisphere.
//
// Conventions: angles in degrees, lengths in metres. Grid convergence C is
// the angle from true north to grid north, positive when grid north lies
// east of true north, so that grid azimuth = true azimuth - C. The scale
// factor k is grid distance over ellipsoid distance at the point.
//
// Everything here is pure and safe for concurrent use.
package utm

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// WGS 84 and UTM constants.
const (
	A                  = 6378137.0         // WGS 84 semi-major axis, m
	F                  = 1 / 298.257223563 // WGS 84 flattening
	K0                 = 0.9996            // UTM central scale factor
	FalseEasting       = 500000.0
	FalseNorthingSouth = 10000000.0
)

// series holds the constants of the transverse Mercator series for one
// ellipsoid.
type series struct {
	a, e2, e    float64 // semi-major axis (m), eccentricity squared, eccentricity
	rectA       float64 // Karney's A
	alpha, beta [6]float64
}

// newSeries prepares the series for an ellipsoid of semi-major axis a and
// flattening f.
func newSeries(a, f float64) *series {
	n := f / (2 - f)
	e2 := f * (2 - f)
	return &series{
		a: a, e2: e2, e: math.Sqrt(e2),
		// Karney's A: the radius of the sphere with the same meridian length,
		// A = a/(1+n) (1 + n^2/4 + n^4/64 + n^6/256 + 25 n^8/16384).
		rectA: a / (1 + n) * (1 + n*n/4 + math.Pow(n, 4)/64 + math.Pow(n, 6)/256 + 25*math.Pow(n, 8)/16384),
		alpha: krugerAlpha(n), beta: krugerBeta(n),
	}
}

// wgs84 is the series of UTM on WGS 84.
var wgs84 = newSeries(A, F)

// krugerAlpha returns alpha_1..alpha_6 of Karney (2011) eq. 35 (forward series).
func krugerAlpha(n float64) [6]float64 {
	n2 := n * n
	n3, n4, n5, n6 := n2*n, n2*n2, n2*n2*n, n2*n2*n2
	return [6]float64{
		n/2 - 2*n2/3 + 5*n3/16 + 41*n4/180 - 127*n5/288 + 7891*n6/37800,
		13*n2/48 - 3*n3/5 + 557*n4/1440 + 281*n5/630 - 1983433*n6/1935360,
		61*n3/240 - 103*n4/140 + 15061*n5/26880 + 167603*n6/181440,
		49561*n4/161280 - 179*n5/168 + 6601661*n6/7257600,
		34729*n5/80640 - 3418889*n6/1995840,
		212378941 * n6 / 319334400,
	}
}

// krugerBeta returns beta_1..beta_6 of Karney (2011) eq. 36 (inverse series).
func krugerBeta(n float64) [6]float64 {
	n2 := n * n
	n3, n4, n5, n6 := n2*n, n2*n2, n2*n2*n, n2*n2*n2
	return [6]float64{
		n/2 - 2*n2/3 + 37*n3/96 - n4/360 - 81*n5/512 + 96199*n6/604800,
		n2/48 + n3/15 - 437*n4/1440 + 46*n5/105 - 1118711*n6/3870720,
		17*n3/480 - 37*n4/840 - 209*n5/4480 + 5569*n6/90720,
		4397*n4/161280 - 11*n5/504 - 830251*n6/7257600,
		4583*n5/161280 - 108847*n6/3991680,
		20648693 * n6 / 638668800,
	}
}

// Zone is a UTM zone: its number 1..60 and hemisphere. South selects the
// 10 000 000 m false northing; it is the hemisphere, not a latitude band letter.
type Zone struct {
	Number int
	South  bool
}

// String returns e.g. "50S" or "31N".
func (z Zone) String() string {
	if z.South {
		return strconv.Itoa(z.Number) + "S"
	}
	return strconv.Itoa(z.Number) + "N"
}

// CentralMeridian returns the longitude of the zone's central meridian, degrees.
func (z Zone) CentralMeridian() float64 { return float64(6*z.Number - 183) }

// Valid reports an error if the zone number is outside 1..60.
func (z Zone) Valid() error {
	if z.Number < 1 || z.Number > 60 {
		return fmt.Errorf("UTM zone %d is out of range: zones are numbered 1 to 60", z.Number)
	}
	return nil
}

// ParseZone reads a zone written as a number followed by the hemisphere
// letter N or S, e.g. "50S", "6n", "31 N". The letter is the hemisphere
// (N north, S south), not a latitude band; the letter is required.
func ParseZone(s string) (Zone, error) {
	t := strings.ToUpper(strings.ReplaceAll(strings.TrimSpace(s), " ", ""))
	if len(t) < 2 {
		return Zone{}, fmt.Errorf("UTM zone %q: want a zone number 1-60 and hemisphere N or S, e.g. 50S", s)
	}
	h := t[len(t)-1]
	if h != 'N' && h != 'S' {
		return Zone{}, fmt.Errorf("UTM zone %q: must end in the hemisphere letter N or S (e.g. 50S)", s)
	}
	num, err := strconv.Atoi(t[:len(t)-1])
	if err != nil {
		return Zone{}, fmt.Errorf("UTM zone %q: %q is not a zone number", s, t[:len(t)-1])
	}
	z := Zone{Number: num, South: h == 'S'}
	if err := z.Valid(); err != nil {
		return Zone{}, err
	}
	return z, nil
}

// MaxOffset is the largest longitude difference from the central meridian,
// in degrees, that Forward accepts; beyond it the series is not guaranteed
// to nanometre accuracy. Standard UTM use stays within about 3.5 degrees.
const MaxOffset = 30.0

// Grid is a point on the UTM grid with the local convergence and scale.
type Grid struct {
	Easting, Northing float64 // metres
	Convergence       float64 // degrees, positive when grid north is east of true north
	Scale             float64 // point scale factor k (K0 on the central meridian)
}

// Geo is a geodetic position with the local convergence and scale.
type Geo struct {
	Lat, Lon    float64 // degrees, WGS 84
	Convergence float64 // degrees, as in Grid
	Scale       float64
}

// Forward projects WGS 84 latitude lat and longitude lon (degrees) into zone
// z. It returns an error for an invalid zone, a latitude outside -90..90, a
// non-finite longitude, or a longitude more than MaxOffset degrees from the
// zone's central meridian. The hemisphere of z only sets the false northing:
// a northern point projected in a southern zone gets a northing above
// 10 000 000 m, as the projection defines.
func Forward(z Zone, lat, lon float64) (Grid, error) {
	if err := z.Valid(); err != nil {
		return Grid{}, err
	}
	if math.IsNaN(lat) || lat < -90 || lat > 90 {
		return Grid{}, fmt.Errorf("latitude %v is outside -90..90 degrees", lat)
	}
	if math.IsNaN(lon) || math.IsInf(lon, 0) {
		return Grid{}, fmt.Errorf("longitude %v is not a finite number", lon)
	}
	dl := math.Remainder(lon-z.CentralMeridian(), 360)
	if math.Abs(dl) > MaxOffset {
		return Grid{}, fmt.Errorf("longitude %v is %.1f degrees from the central meridian of UTM zone %v (%v); more than %v is outside the projection's accurate range",
			lon, math.Abs(dl), z, z.CentralMeridian(), MaxOffset)
	}
	x, y, gam, k := wgs84.forward(K0, lat, dl)
	g := Grid{Easting: FalseEasting + x, Northing: y, Convergence: gam, Scale: k}
	if z.South {
		g.Northing += FalseNorthingSouth
	}
	return g, nil
}

// forward is the transverse Mercator on the series' ellipsoid with central
// scale k0, for latitude phi and longitude dl from the central meridian (degrees).
// It returns x (east) and y (north) in metres without false origins, the
// convergence in degrees and the scale factor (Karney 2011, eqs. 7-13, 25, 26).
func (sr *series) forward(k0, phiDeg, dlDeg float64) (x, y, gamma, k float64) {
	phi := phiDeg * math.Pi / 180
	lam := dlDeg * math.Pi / 180
	sphi, cphi := math.Sincos(phi)
	slam, clam := math.Sincos(lam)
	tau := sphi / cphi
	if cphi < 1e-300 { // guard exact poles
		cphi = 1e-300
		tau = math.Copysign(1e300, sphi)
	}
	taup := sr.taupf(tau)
	xip := math.Atan2(taup, clam)
	etap := math.Asinh(slam / math.Hypot(taup, clam))

	xi, eta := xip, etap
	pp, qp := 1.0, 0.0
	for j := 1; j <= 6; j++ {
		a := sr.alpha[j-1]
		s2, c2 := math.Sincos(2 * float64(j) * xip)
		sh, ch := math.Sinh(2*float64(j)*etap), math.Cosh(2*float64(j)*etap)
		xi += a * s2 * ch
		eta += a * c2 * sh
		pp += 2 * float64(j) * a * c2 * ch
		qp += 2 * float64(j) * a * s2 * sh
	}
	x = k0 * sr.rectA * eta
	y = k0 * sr.rectA * xi

	// Convergence: gamma' = atan(tau'/sqrt(1+tau'^2) tan lam), gamma'' = atan2(q', p').
	gp := math.Atan2(taup*slam, math.Sqrt(1+taup*taup)*clam)
	gpp := math.Atan2(qp, pp)
	gamma = (gp + gpp) * 180 / math.Pi

	// Scale: k = K0 (A/a) sqrt(p'^2+q'^2) sqrt(1-e^2 sin^2 phi) sqrt(1+tau^2) / sqrt(tau'^2 + cos^2 lam).
	kp := math.Sqrt(1-sr.e2*sphi*sphi) / cphi / math.Hypot(taup, clam)
	kpp := sr.rectA / sr.a * math.Hypot(pp, qp)
	k = k0 * kp * kpp
	return
}

// taupf returns tau' = tan(conformal latitude) from tau = tan(latitude),
// tau' = tau sqrt(1+sigma^2) - sigma sqrt(1+tau^2), sigma = sinh(e atanh(e tau/sqrt(1+tau^2)))
// (Karney 2011, eqs. 7-9).
func (sr *series) taupf(tau float64) float64 {
	t1 := math.Hypot(1, tau)
	sig := math.Sinh(sr.e * math.Atanh(sr.e*tau/t1))
	return tau*math.Hypot(1, sig) - sig*t1
}

// tauf inverts taupf by Newton's method (Karney 2011, eqs. 19-21).
func (sr *series) tauf(taup float64) float64 {
	tau := taup / (1 - sr.e2) // good start near the equator and the poles alike
	for i := 0; i < 10; i++ {
		tp := sr.taupf(tau)
		d := (taup - tp) / math.Hypot(1, tp) * (1 + (1-sr.e2)*tau*tau) / ((1 - sr.e2) * math.Hypot(1, tau))
		tau += d
		if math.Abs(d) <= 1e-15*math.Max(1, math.Abs(tau)) {
			break
		}
	}
	return tau
}

// Inverse converts easting and northing (metres) in zone z to WGS 84 latitude
// and longitude (degrees, longitude in [-180, 180)), with convergence and scale
// at that point. Errors: an invalid zone, non-finite coordinates, or a point
// whose longitude falls more than MaxOffset degrees from the central meridian.
// The hemisphere of z decides whether 10 000 000 m is taken off the northing.
func Inverse(z Zone, easting, northing float64) (Geo, error) {
	if err := z.Valid(); err != nil {
		return Geo{}, err
	}
	if math.IsNaN(easting) || math.IsInf(easting, 0) {
		return Geo{}, fmt.Errorf("easting %v is not a finite number", easting)
	}
	if math.IsNaN(northing) || math.IsInf(northing, 0) {
		return Geo{}, fmt.Errorf("northing %v is not a finite number", northing)
	}
	y := northing
	if z.South {
		y -= FalseNorthingSouth
	}
	lat, dl, gam, k := wgs84.inverse(K0, easting-FalseEasting, y)
	if math.IsNaN(lat) || math.IsNaN(dl) || math.Abs(dl) > MaxOffset {
		return Geo{}, fmt.Errorf("easting %v, northing %v is outside the accurate range of UTM zone %v", easting, northing, z)
	}
	lon := math.Remainder(z.CentralMeridian()+dl, 360)
	if lon == 180 {
		lon = -180
	}
	return Geo{Lat: lat, Lon: lon, Convergence: gam, Scale: k}, nil
}

// inverse returns latitude and longitude from the central meridian
// (degrees) for x, y in metres without false origins, with the convergence
// (degrees) and scale there, computed from the inverse series directly
// (Karney 2011, eqs. 11, 15-21, 27-28).
func (sr *series) inverse(k0, x, y float64) (lat, dl, gamma, k float64) {
	xi := y / (k0 * sr.rectA)
	eta := x / (k0 * sr.rectA)
	xip, etap := xi, eta
	pp, qp := 1.0, 0.0
	for j := 1; j <= 6; j++ {
		b := sr.beta[j-1]
		jj := 2 * float64(j)
		s2, c2 := math.Sincos(jj * xi)
		sh, ch := math.Sinh(jj*eta), math.Cosh(jj*eta)
		xip -= b * s2 * ch
		etap -= b * c2 * sh
		pp -= jj * b * c2 * ch
		qp += jj * b * s2 * sh
	}
	sxip, cxip := math.Sincos(xip)
	shetap, chetap := math.Sinh(etap), math.Cosh(etap)
	r := math.Hypot(shetap, cxip)
	taup := sxip / r
	lam := math.Atan2(shetap, cxip)
	tau := sr.tauf(taup)
	phi := math.Atan(tau)

	// Convergence: gamma' = atan(tan xi' tanh eta'), gamma'' = atan2(q, p).
	gamma = (math.Atan2(sxip*shetap, cxip*chetap) + math.Atan2(qp, pp)) * 180 / math.Pi
	// Scale: k = K0 (A/a) sqrt(1 - e^2 sin^2 phi) sqrt(1 + tau^2) sqrt(sinh^2 eta' + cos^2 xi') / sqrt(p^2 + q^2).
	sphi := math.Sin(phi)
	k = k0 * sr.rectA / sr.a * math.Sqrt(1-sr.e2*sphi*sphi) * math.Hypot(1, tau) * r / math.Hypot(pp, qp)
	return phi * 180 / math.Pi, lam * 180 / math.Pi, gamma, k
}
