// Package geojson writes collars and hole traces as a GeoJSON (RFC 7946)
// FeatureCollection for maps and GIS: per hole a Point at the collar and a
// LineString of the trace projected to the surface (the horizontal
// positions of the desurveyed path), in WGS 84 longitude, latitude.
//
// Grid coordinates reach WGS 84 through an inverse projection given by the
// caller ([UTM] wraps corvane's UTM inverse). Positions carry no altitude:
// RFC 7946 altitudes are heights above the WGS 84 ellipsoid, which collar
// elevations usually are not; the elevation is a property instead.
// Coordinates are written to 1e-8 degree (about 1 mm), finer than the RFC's
// suggested 6 decimals because collars are surveyed to the centimetre.
package geojson

import (
	"bufio"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strconv"

	"corvane/internal/exchange"
	"corvane/internal/utm"
)

// Inverse converts grid easting and northing (metres) to WGS 84 latitude and
// longitude in degrees.
type Inverse func(easting, northing float64) (lat, lon float64, err error)

// UTM returns the inverse of UTM zone z (corvane/internal/utm).
func UTM(z utm.Zone) Inverse {
	return func(e, n float64) (float64, float64, error) {
		g, err := utm.Inverse(z, e, n)
		return g.Lat, g.Lon, err
	}
}

// Grid returns the inverse of a transverse Mercator grid of any supported
// EPSG family (utm.LookupEPSG). Latitude and longitude come out on the
// grid's own datum (NAD83, ETRS89, GDA94, GDA2020, SIRGAS 2000 or WGS 84);
// they are written as WGS 84 without a datum shift, and the file says so
// ([Datum]).
func Grid(tm *utm.TransverseMercator) Inverse {
	return func(e, n float64) (float64, float64, error) {
		g, err := tm.Inverse(e, n)
		return g.Lat, g.Lon, err
	}
}

// DatumApproximation is what a file from a grid on another datum than WGS
// 84 says of its coordinates. The sizes are recalled from memory, not
// computed by corvane: the datums of the supported grids (NAD83, ETRS89,
// GDA94, GDA2020, SIRGAS 2000) were tied to the international terrestrial
// frame at their reference epochs, and WGS 84 follows that frame today, so
// the two drift apart with the plate's motion (centimetres a year): a few
// decimetres (GDA2020, SIRGAS 2000) to about 1 m (ETRS89) and 1 to 2 m
// (NAD83, GDA94).
const DatumApproximation = "longitude and latitude are on the grid's own datum and are written as WGS 84 " +
	"without a datum shift; for NAD83, ETRS89, GDA94, GDA2020 and SIRGAS 2000 the two differ by a few " +
	"decimetres up to about 2 m, growing with the plate's motion since the datum's reference epoch; " +
	"where that matters, transform from the grid coordinates with a tool that knows the datum shift"

// Datum is the "datum" foreign member of the FeatureCollection (RFC 7946
// section 6.1): the grid the coordinates came from and whether a datum
// shift was applied (never: corvane applies none).
type Datum struct {
	Grid         string `json:"grid"`
	ShiftApplied bool   `json:"shift_applied"`
	Note         string `json:"note"`
}

// DatumOf describes coordinates from grid (its name and EPSG code); wgs84
// says the grid is on WGS 84 itself, which then needs no shift.
func DatumOf(grid string, wgs84 bool) Datum {
	d := Datum{Grid: grid, Note: "longitude and latitude are on WGS 84, the grid's own datum"}
	if !wgs84 {
		d.Note = DatumApproximation
	}
	return d
}

// Hole is one hole of the map: its collar, its summary and its trace.
type Hole struct {
	Name                   string
	East, North, Elevation float64 // collar, grid metres
	Azimuth, Dip           float64 // at the collar, degrees (dip negative down)
	Depth                  float64 // final depth
	// Measurements and QAFlags count the hole's structure measurements and
	// its QA findings.
	Measurements, QAFlags int
	// Trace is the desurveyed path; its first point is the collar. A hole
	// without trace points gets only its collar Point.
	Trace exchange.Trace
}

// Decimals of the written longitudes and latitudes.
const Decimals = 8

// properties are the members of each feature's "properties".
type properties struct {
	Hole         string   `json:"hole"`
	Feature      string   `json:"feature"` // "collar" or "trace"
	Depth        *float64 `json:"depth"`
	Azimuth      *float64 `json:"azimuth"`
	Dip          *float64 `json:"dip"`
	Elevation    *float64 `json:"elevation,omitempty"`
	Measurements int      `json:"measurements"`
	QAFlags      int      `json:"qa_flags"`
	// ExtrapolatedBelow is the depth below which the trace is extrapolated
	// (traces only; absent when the whole trace is surveyed).
	ExtrapolatedBelow *float64 `json:"extrapolated_below,omitempty"`
}

func opt(v float64) *float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	return &v
}

// Write writes holes as one FeatureCollection to w, with the member
// "datum" (see [Datum]) before the features, feature by feature: for
// each hole its collar Point, then its trace LineString (a MultiLineString
// cut at the antimeridian, RFC 7946 section 3.1.9, in the rare case a trace
// crosses it). A trace whose surface projection is a single position (a
// vertical hole) has no LineString. A point the inverse rejects is an
// error naming the hole.
func Write(w io.Writer, inv Inverse, datum Datum, holes []Hole) error {
	bw := bufio.NewWriterSize(w, 64<<10)
	dj, err := json.Marshal(datum)
	if err != nil {
		return err
	}
	bw.WriteString(`{"type":"FeatureCollection","datum":`)
	bw.Write(dj)
	bw.WriteString(`,"features":[`)
	first := true
	feature := func(geom []byte, p properties) error {
		pj, err := json.Marshal(p)
		if err != nil {
			return err
		}
		if !first {
			bw.WriteByte(',')
		}
		first = false
		bw.WriteString(`{"type":"Feature","geometry":`)
		bw.Write(geom)
		bw.WriteString(`,"properties":`)
		bw.Write(pj)
		bw.WriteByte('}')
		return nil
	}
	for _, h := range holes {
		lat, lon, err := inv(h.East, h.North)
		if err != nil {
			return fmt.Errorf("hole %s: collar: %w", h.Name, err)
		}
		p := properties{Hole: h.Name, Feature: "collar", Depth: opt(h.Depth), Azimuth: opt(h.Azimuth), Dip: opt(h.Dip),
			Elevation: opt(h.Elevation), Measurements: h.Measurements, QAFlags: h.QAFlags}
		g := append([]byte(`{"type":"Point","coordinates":`), position(nil, lon, lat)...)
		if err := feature(append(g, '}'), p); err != nil {
			return err
		}
		line, err := surfaceLine(inv, h.Trace)
		if err != nil {
			return fmt.Errorf("hole %s: %w", h.Name, err)
		}
		if len(line) < 2 {
			continue
		}
		p.Feature = "trace"
		p.Elevation = nil
		if _, ex := h.Trace.Split(); len(ex) > 0 {
			p.ExtrapolatedBelow = opt(ex[0].Depth)
		}
		if err := feature(lineGeometry(line), p); err != nil {
			return err
		}
	}
	bw.WriteString("]}\n")
	return bw.Flush()
}

type lonLat struct{ lon, lat float64 }

func round(v float64) float64 {
	const s = 1e8 // 10^Decimals
	return math.Round(v*s) / s
}

func position(b []byte, lon, lat float64) []byte {
	b = append(b, '[')
	b = strconv.AppendFloat(b, round(lon)+0, 'f', -1, 64)
	b = append(b, ',')
	b = strconv.AppendFloat(b, round(lat)+0, 'f', -1, 64)
	return append(b, ']')
}

// surfaceLine returns the trace's positions in longitude, latitude, rounded
// as written, without repeats of the previous position.
func surfaceLine(inv Inverse, t exchange.Trace) ([]lonLat, error) {
	var out []lonLat
	for _, p := range t.Points {
		lat, lon, err := inv(p.Pos.X, p.Pos.Y)
		if err != nil {
			return nil, fmt.Errorf("trace at depth %g: %w", p.Depth, err)
		}
		q := lonLat{round(lon), round(lat)}
		if len(out) > 0 && out[len(out)-1] == q {
			continue
		}
		out = append(out, q)
	}
	return out, nil
}

// lineGeometry returns a LineString, or a MultiLineString when the line
// crosses the antimeridian (a longitude step of more than 180 degrees),
// cut there with the crossing's latitude interpolated.
func lineGeometry(line []lonLat) []byte {
	parts := [][]lonLat{{line[0]}}
	for i := 1; i < len(line); i++ {
		a, b := line[i-1], line[i]
		if d := b.lon - a.lon; math.Abs(d) > 180 {
			edge := 180.0
			if d > 0 { // going west across: a near -180, b near +180
				edge = -180
			}
			// Unwrap b next to a, find the latitude where it meets the edge.
			bl := b.lon - math.Copysign(360, d)
			f := (edge - a.lon) / (bl - a.lon)
			lat := round(a.lat + f*(b.lat-a.lat))
			cur := &parts[len(parts)-1]
			*cur = append(*cur, lonLat{edge, lat})
			parts = append(parts, []lonLat{{-edge, lat}})
		}
		parts[len(parts)-1] = append(parts[len(parts)-1], b)
	}
	coords := func(b []byte, ps []lonLat) []byte {
		b = append(b, '[')
		for i, p := range ps {
			if i > 0 {
				b = append(b, ',')
			}
			b = position(b, p.lon, p.lat)
		}
		return append(b, ']')
	}
	if len(parts) == 1 {
		return append(coords([]byte(`{"type":"LineString","coordinates":`), line), '}')
	}
	b := []byte(`{"type":"MultiLineString","coordinates":[`)
	for i, ps := range parts {
		if i > 0 {
			b = append(b, ',')
		}
		b = coords(b, ps)
	}
	return append(b, "]}"...)
}
