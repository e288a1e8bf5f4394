package utm

import (
	"fmt"
	"math"
	"strings"
	"sync"
)

// Ellipsoid is a reference ellipsoid: semi-major axis A (m) and flattening F.
type Ellipsoid struct {
	Name string
	A, F float64
}

// The ellipsoids of the supported coordinate systems (EPSG dataset).
var (
	EllipsoidWGS84 = Ellipsoid{"WGS 84", 6378137, 1 / 298.257223563}
	EllipsoidGRS80 = Ellipsoid{"GRS 1980", 6378137, 1 / 298.257222101}
)

// TransverseMercator is one transverse Mercator grid: its ellipsoid,
// central meridian Lon0 (degrees), scale K0 on the central meridian, and
// false easting and northing (m). Latitude of origin is the equator, as in
// every grid of the EPSG table here. The projection is Krüger's series to
// order n^6 (Karney 2011), the same as [Forward] and [Inverse].
type TransverseMercator struct {
	Ellipsoid                   Ellipsoid
	Lon0, K0                    float64
	FalseEasting, FalseNorthing float64
	s                           *series
}

// NewTransverseMercator prepares a transverse Mercator grid.
func NewTransverseMercator(ell Ellipsoid, lon0, k0, fe, fn float64) *TransverseMercator {
	return &TransverseMercator{Ellipsoid: ell, Lon0: lon0, K0: k0, FalseEasting: fe, FalseNorthing: fn, s: newSeries(ell.A, ell.F)}
}

// Forward projects latitude and longitude (degrees, on the grid's own
// ellipsoid and datum) to easting and northing, with convergence and scale.
// Errors as for [Forward].
func (p *TransverseMercator) Forward(lat, lon float64) (Grid, error) {
	if math.IsNaN(lat) || lat < -90 || lat > 90 {
		return Grid{}, fmt.Errorf("latitude %v is outside -90..90 degrees", lat)
	}
	if math.IsNaN(lon) || math.IsInf(lon, 0) {
		return Grid{}, fmt.Errorf("longitude %v is not a finite number", lon)
	}
	dl := math.Remainder(lon-p.Lon0, 360)
	if math.Abs(dl) > MaxOffset {
		return Grid{}, fmt.Errorf("longitude %v is %.1f degrees from the central meridian %v; more than %v is outside the projection's accurate range",
			lon, math.Abs(dl), p.Lon0, MaxOffset)
	}
	x, y, gam, k := p.s.forward(p.K0, lat, dl)
	return Grid{Easting: p.FalseEasting + x, Northing: p.FalseNorthing + y, Convergence: gam, Scale: k}, nil
}

// Inverse converts easting and northing to latitude and longitude (degrees,
// longitude in [-180, 180)), with convergence and scale there.
func (p *TransverseMercator) Inverse(easting, northing float64) (Geo, error) {
	if math.IsNaN(easting) || math.IsInf(easting, 0) {
		return Geo{}, fmt.Errorf("easting %v is not a finite number", easting)
	}
	if math.IsNaN(northing) || math.IsInf(northing, 0) {
		return Geo{}, fmt.Errorf("northing %v is not a finite number", northing)
	}
	lat, dl, gam, k := p.s.inverse(p.K0, easting-p.FalseEasting, northing-p.FalseNorthing)
	if math.IsNaN(lat) || math.IsNaN(dl) || math.Abs(dl) > MaxOffset {
		return Geo{}, fmt.Errorf("easting %v, northing %v is outside the accurate range of the projection", easting, northing)
	}
	lon := math.Remainder(p.Lon0+dl, 360)
	if lon == 180 {
		lon = -180
	}
	return Geo{Lat: lat, Lon: lon, Convergence: gam, Scale: k}, nil
}

// Family is a run of EPSG codes for the UTM zones of one datum. Every
// supported grid is a UTM zone (central scale 0.9996, false easting
// 500 000 m, false northing 0 north or 10 000 000 m south); the families
// differ in datum, ellipsoid and the zones EPSG defines.
type Family struct {
	Name      string    // e.g. "GDA2020 / MGA"
	Ellipsoid Ellipsoid // of the datum
	Ranges    []Range   // the codes and the zones they stand for
}

// Range maps codes First..Last to zones FirstZone.. in one hemisphere.
type Range struct {
	First, Last int
	FirstZone   int
	South       bool
}

// Families is the table of supported EPSG codes, checked against PROJ's
// EPSG database (projinfo, PROJ 9.1.1).
var Families = []Family{
	{"WGS 84 / UTM", EllipsoidWGS84, []Range{{32601, 32660, 1, false}, {32701, 32760, 1, true}}},
	{"NAD83 / UTM", EllipsoidGRS80, []Range{{26901, 26923, 1, false}, {3372, 3373, 59, false}}},
	{"ETRS89 / UTM", EllipsoidGRS80, []Range{{25828, 25838, 28, false}}},
	{"GDA94 / MGA", EllipsoidGRS80, []Range{{28348, 28358, 48, true}}},
	{"GDA2020 / MGA", EllipsoidGRS80, []Range{{7846, 7859, 46, true}}},
	{"SIRGAS 2000 / UTM", EllipsoidGRS80, []Range{{31965, 31976, 11, false}, {6210, 6211, 23, false}, {31977, 31985, 17, true}, {5396, 5396, 26, true}}},
}

// CRS is a supported projected coordinate system.
type CRS struct {
	EPSG   int
	Name   string // e.g. "GDA2020 / MGA zone 50"
	Family string
	Zone   Zone
	TM     *TransverseMercator
}

// grids caches one projection per code, so that equal codes give equal CRS
// values.
var grids sync.Map

// LookupEPSG returns the coordinate system of an EPSG code, or an error
// naming the supported families.
func LookupEPSG(code int) (CRS, error) {
	for _, f := range Families {
		for _, r := range f.Ranges {
			if code < r.First || code > r.Last {
				continue
			}
			z := Zone{Number: r.FirstZone + code - r.First, South: r.South}
			name := fmt.Sprintf("%s zone %s", f.Name, z)
			if strings.HasSuffix(f.Name, "MGA") {
				name = fmt.Sprintf("%s zone %d", f.Name, z.Number)
			}
			fn := 0.0
			if z.South {
				fn = FalseNorthingSouth
			}
			tm, _ := grids.LoadOrStore(code, NewTransverseMercator(f.Ellipsoid, z.CentralMeridian(), K0, FalseEasting, fn))
			return CRS{EPSG: code, Name: name, Family: f.Name, Zone: z, TM: tm.(*TransverseMercator)}, nil
		}
	}
	return CRS{}, fmt.Errorf("EPSG:%d is not a supported coordinate system; supported: %s", code, SupportedText())
}

// SupportedText lists the supported families and their code ranges, for
// messages and help.
func SupportedText() string {
	var parts []string
	for _, f := range Families {
		var rs []string
		for _, r := range f.Ranges {
			h := "N"
			if r.South {
				h = "S"
			}
			if r.First == r.Last {
				rs = append(rs, fmt.Sprintf("%d (zone %d%s)", r.First, r.FirstZone, h))
			} else {
				rs = append(rs, fmt.Sprintf("%d-%d (zones %d%s-%d%s)", r.First, r.Last, r.FirstZone, h, r.FirstZone+r.Last-r.First, h))
			}
		}
		parts = append(parts, f.Name+" EPSG:"+strings.Join(rs, ", "))
	}
	return strings.Join(parts, "; ")
}
