package cli

import (
	"context"
	"encoding/csv"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
	"strings"

	"corvane/internal/csvio"
	"corvane/internal/northref"
	"corvane/internal/utm"
	"corvane/internal/wmm"
)

func init() {
	register(command{
		name:    "declination",
		summary: "magnetic declination (WMM2025, IGRF-14) and grid convergence at points",
		run:     runDeclination,
	})
}

const declinationConventions = "declination positive east (true = magnetic + declination); " +
	"inclination positive down; grid_convergence positive when grid north is east of true north " +
	"(grid = true - grid_convergence); height above the WGS 84 ellipsoid; decimal year = year + " +
	"(day of year - 1)/(days in year); angles in degrees, intensities in nT, rates per year"

const declinationUsage = `Usage:
  corvane declination --lat DEG --lon DEG --date DATE [--height-km KM] [--utm-zone 50S] [--model auto]
  corvane declination --in POINTS.csv [-o OUT.csv] [--model auto]

Computes the magnetic field of a magnetic model (--model): auto (the default) uses the
World Magnetic Model 2025 for 2025.0 to 2030.0 and the International Geomagnetic
Reference Field IGRF-14 before, back to 1900.0; wmm uses WMM2025 only; igrf IGRF-14 only.
The output names the model used. It gives
declination, inclination, horizontal and total intensity and the yearly rate of
declination, and with a UTM zone the grid convergence and scale factor of WGS 84 / UTM.

Latitude and longitude are WGS 84 degrees; height is kilometres above the WGS 84
ellipsoid (not above sea level; the difference is negligible for declination).
DATE is YYYY-MM-DD or a decimal year such as 2027.5; a calendar date becomes
year + (day of year - 1)/(days in the year), leap years having 366 days.
A UTM zone is its number and the hemisphere letter N or S (not a latitude band) for
WGS 84 / UTM, or an EPSG label of a supported grid: WGS 84 / UTM (EPSG:326NN, 327NN),
NAD83 / UTM, ETRS89 / UTM, GDA94 and GDA2020 / MGA, SIRGAS 2000 / UTM (see README).

Signs: declination is positive when magnetic north is east of true north
(true = magnetic + declination); convergence is positive when grid north is east of
true north (grid = true - convergence).

One point prints JSON. With --in, the CSV needs a header with the columns lat, lon,
height_km, date and optionally zone (or utm_zone); the output CSV repeats them and adds
decimal_year, declination, inclination, horizontal_intensity, total_intensity,
declination_rate (and grid_convergence, scale_factor with a zone column), model (the
magnetic model that computed the row), caution and error. Rows that cannot be computed are reported with line and column and give exit
status 1.

Declinations are model values of the main field: local magnetic anomalies are not
included. Where results feed slope or excavation design, check them against local
observations and follow local codes and licensed practice.

Options:
`

func runDeclination(_ context.Context, env *Env, args []string) int {
	fs := newFlagSet(env, "declination", declinationUsage)
	// No default: the flags are required (checked below), so the help
	// shows none.
	lat := fs.Float64("lat", 0, "latitude, WGS 84 degrees, north positive (required without --in)")
	lon := fs.Float64("lon", 0, "longitude, WGS 84 degrees, east positive (required without --in)")
	hkm := fs.Float64("height-km", 0, "height above the WGS 84 ellipsoid, km")
	date := fs.String("date", "", "date: YYYY-MM-DD or decimal year")
	zone := fs.String("utm-zone", "", "UTM zone for grid convergence and scale, e.g. 50S")
	in := fs.String("in", "", "CSV file of points (columns lat, lon, height_km, date [, zone])")
	out := fs.String("o", "", "output file for --in (default standard output)")
	modelS := fs.String("model", "auto", "magnetic model: auto, wmm or igrf")
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return ExitOK
		}
		return ExitUsage
	}
	if fs.NArg() > 0 {
		fmt.Fprintf(env.Stderr, "corvane declination: unexpected argument %q\n", fs.Arg(0))
		return ExitUsage
	}
	model, err := northref.ParseMagneticModel(*modelS)
	if err != nil {
		fmt.Fprintf(env.Stderr, "corvane declination: --model: %v\n", err)
		return ExitUsage
	}
	set := map[string]bool{}
	fs.Visit(func(f *flag.Flag) { set[f.Name] = true })
	if *in != "" {
		for _, f := range []string{"lat", "lon", "height-km", "date", "utm-zone"} {
			if set[f] {
				fmt.Fprintf(env.Stderr, "corvane declination: --%s cannot be combined with --in (put it in the CSV)\n", f)
				return ExitUsage
			}
		}
		return declinationFile(env, *in, *out, model)
	}
	if set["o"] {
		fmt.Fprintln(env.Stderr, "corvane declination: -o is for --in; one point prints JSON to standard output")
		return ExitUsage
	}
	for _, f := range []string{"lat", "lon", "date"} {
		if !set[f] {
			fmt.Fprintf(env.Stderr, "corvane declination: --%s is required (or give --in FILE)\n", f)
			return ExitUsage
		}
	}
	p, ferr := declinationPoint(strconv.FormatFloat(*lat, 'f', -1, 64), strconv.FormatFloat(*lon, 'f', -1, 64),
		strconv.FormatFloat(*hkm, 'f', -1, 64), *date, *zone, set["utm-zone"], model)
	if ferr != nil {
		name := ferr.field
		if name == "height_km" {
			name = "height-km"
		} else if name == "zone" {
			name = "utm-zone"
		}
		fmt.Fprintf(env.Stderr, "corvane declination: --%s: %v\n", name, ferr.err)
		return ExitUsage
	}
	enc := json.NewEncoder(env.Stdout)
	enc.SetIndent("", "  ")
	if err := enc.Encode(p.json()); err != nil {
		fmt.Fprintf(env.Stderr, "corvane declination: %v\n", err)
		return ExitUsage
	}
	return ExitOK
}

// declPoint is one computed point.
type declPoint struct {
	lat, lon, hkm float64
	date          string
	year          float64
	field         wmm.Field
	model         string
	hasGrid       bool
	zone          utm.Zone
	grid          utm.Grid
}

// fieldError names the input field (CSV column name) at fault.
type fieldError struct {
	field string
	err   error
}

func (e *fieldError) Error() string { return e.field + ": " + e.err.Error() }

// parseFinite parses a finite decimal number, as the CSV readers do.
func parseFinite(s string) (float64, error) {
	v, msg := csvio.ParseNumber(strings.TrimSpace(s))
	if msg != "" {
		return 0, errors.New(msg)
	}
	return v, nil
}

// parseZoneLabel reads "50S"-style zones (WGS 84 / UTM) and the EPSG labels
// northref places collars in (UTM and MGA zones of several datums); it
// returns the zone and its projection.
func parseZoneLabel(s string) (utm.Zone, *utm.TransverseMercator, error) {
	if strings.HasPrefix(strings.ToUpper(strings.TrimSpace(s)), "EPSG:") {
		c, err := northref.ParseCRS(s)
		return c.Zone, c.Grid, err
	}
	z, err := utm.ParseZone(s)
	if err != nil {
		return z, nil, err
	}
	code := 32600 + z.Number // WGS 84 / UTM north
	if z.South {
		code += 100
	}
	c, err := utm.LookupEPSG(code)
	return z, c.TM, err
}

// declinationPoint validates and computes one point from its text fields.
func declinationPoint(latS, lonS, hS, dateS, zoneS string, wantZone bool, model northref.MagneticModel) (*declPoint, *fieldError) {
	p := &declPoint{date: strings.TrimSpace(dateS)}
	var err error
	if p.lat, err = parseFinite(latS); err != nil {
		return nil, &fieldError{"lat", err}
	}
	if p.lat < -90 || p.lat > 90 {
		return nil, &fieldError{"lat", fmt.Errorf("%v is outside -90..90 degrees", p.lat)}
	}
	if p.lon, err = parseFinite(lonS); err != nil {
		return nil, &fieldError{"lon", err}
	}
	if p.lon < -360 || p.lon > 360 {
		return nil, &fieldError{"lon", fmt.Errorf("%v is outside -360..360 degrees", p.lon)}
	}
	if strings.TrimSpace(hS) == "" {
		hS = "0"
	}
	if p.hkm, err = parseFinite(hS); err != nil {
		return nil, &fieldError{"height_km", err}
	}
	if p.hkm < -10 || p.hkm > 850 {
		return nil, &fieldError{"height_km", fmt.Errorf("%v km is outside the model's range of -10 to 850 km (is it in metres?)", p.hkm)}
	}
	if p.year, err = wmm.ParseDate(dateS); err != nil {
		return nil, &fieldError{"date", err}
	}
	if p.field, p.model, err = northref.FieldAt(model, p.lat, p.lon, p.hkm, p.year); err != nil {
		var re *northref.RangeError
		if errors.As(err, &re) {
			err = fmt.Errorf("%s %w", p.date, err) // the date once, as typed
		}
		return nil, &fieldError{"date", err}
	}
	if wantZone {
		var tm *utm.TransverseMercator
		if p.zone, tm, err = parseZoneLabel(zoneS); err != nil {
			return nil, &fieldError{"zone", err}
		}
		if p.zone.South && p.lat > 0 || !p.zone.South && p.lat < 0 {
			return nil, &fieldError{"zone", fmt.Errorf("zone %v is in the %s hemisphere but latitude %v is not (the letter is the hemisphere, N or S, not a latitude band)",
				p.zone, map[bool]string{true: "southern", false: "northern"}[p.zone.South], p.lat)}
		}
		if p.grid, err = tm.Forward(p.lat, p.lon); err != nil {
			return nil, &fieldError{"zone", err}
		}
		p.hasGrid = true
	}
	return p, nil
}

func round(x float64, digits int) float64 {
	s := math.Pow(10, float64(digits))
	return math.Round(x*s) / s
}

type declJSON struct {
	Model                   string   `json:"model"`
	Latitude                float64  `json:"latitude"`
	Longitude               float64  `json:"longitude"`
	HeightKm                float64  `json:"height_km"`
	Date                    string   `json:"date"`
	DecimalYear             float64  `json:"decimal_year"`
	Declination             float64  `json:"declination"`
	Inclination             float64  `json:"inclination"`
	HorizontalIntensity     float64  `json:"horizontal_intensity"`
	TotalIntensity          float64  `json:"total_intensity"`
	North                   float64  `json:"north_intensity"`
	East                    float64  `json:"east_intensity"`
	Down                    float64  `json:"down_intensity"`
	DeclinationRate         float64  `json:"declination_rate"`
	InclinationRate         float64  `json:"inclination_rate"`
	HorizontalIntensityRate float64  `json:"horizontal_intensity_rate"`
	TotalIntensityRate      float64  `json:"total_intensity_rate"`
	PoleZone                string   `json:"pole_zone"`
	Caution                 string   `json:"caution,omitempty"`
	UTMZone                 string   `json:"utm_zone,omitempty"`
	Easting                 *float64 `json:"easting,omitempty"`
	Northing                *float64 `json:"northing,omitempty"`
	GridConvergence         *float64 `json:"grid_convergence,omitempty"`
	ScaleFactor             *float64 `json:"scale_factor,omitempty"`
	Conventions             string   `json:"conventions"`
}

func (p *declPoint) caution() string {
	switch p.field.Zone {
	case wmm.Blackout:
		return "blackout: horizontal field below 2000 nT near a magnetic pole; compass directions and declination unreliable"
	case wmm.Caution:
		return "caution: horizontal field below 6000 nT near a magnetic pole; compass directions and declination degraded"
	}
	return ""
}

func (p *declPoint) json() declJSON {
	f := p.field
	j := declJSON{
		Model: p.model, Latitude: p.lat, Longitude: p.lon, HeightKm: p.hkm, Date: p.date,
		DecimalYear:             round(p.year, 6),
		Declination:             round(f.Declination, 6),
		Inclination:             round(f.Inclination, 6),
		HorizontalIntensity:     round(f.H, 2),
		TotalIntensity:          round(f.F, 2),
		North:                   round(f.X, 2),
		East:                    round(f.Y, 2),
		Down:                    round(f.Z, 2),
		DeclinationRate:         round(f.DeclinationDot, 6),
		InclinationRate:         round(f.InclinationDot, 6),
		HorizontalIntensityRate: round(f.HDot, 2),
		TotalIntensityRate:      round(f.FDot, 2),
		PoleZone:                f.Zone.String(),
		Caution:                 p.caution(),
		Conventions:             declinationConventions,
	}
	if p.hasGrid {
		e, n := round(p.grid.Easting, 3), round(p.grid.Northing, 3)
		c, k := round(p.grid.Convergence, 8), round(p.grid.Scale, 10)
		j.UTMZone, j.Easting, j.Northing, j.GridConvergence, j.ScaleFactor = p.zone.String(), &e, &n, &c, &k
	}
	return j
}

// declinationFile runs the CSV mode.
func declinationFile(env *Env, inPath, outPath string, model northref.MagneticModel) int {
	fail := func(format string, a ...any) int {
		fmt.Fprintf(env.Stderr, "corvane declination: "+format+"\n", a...)
		return ExitUsage
	}
	fh, err := os.Open(inPath)
	if err != nil {
		return fail("%v", err)
	}
	defer fh.Close()
	r := csv.NewReader(fh)
	r.FieldsPerRecord = -1
	r.Comment = '#'
	r.TrimLeadingSpace = true
	header, err := r.Read()
	if err == io.EOF {
		return fail("%s: the file is empty; want a header line with lat, lon, height_km, date", inPath)
	}
	if err != nil {
		return fail("%s: %v", inPath, err)
	}
	col := map[string]int{}
	for i, h := range header {
		name := strings.ToLower(strings.TrimSpace(strings.TrimPrefix(h, "\ufeff")))
		if name == "utm_zone" {
			name = "zone"
		}
		if _, dup := col[name]; dup && name != "" {
			return fail("%s:1: column %d: column %q appears twice", inPath, i+1, h)
		}
		col[name] = i
	}
	for _, need := range []string{"lat", "lon", "height_km", "date"} {
		if _, ok := col[need]; !ok {
			return fail("%s:1: the header has no %q column; want lat, lon, height_km, date [, zone]", inPath, need)
		}
	}
	_, withZone := col["zone"]

	type row struct {
		line int
		rec  []string
		pos  []int // column (1-based, in characters) of each field
	}
	var rows []row
	for {
		rec, err := r.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			return fail("%s: %v", inPath, err) // csv.ParseError carries line and column
		}
		line, _ := r.FieldPos(0)
		pos := make([]int, len(rec))
		for i := range rec {
			_, pos[i] = r.FieldPos(i)
		}
		rows = append(rows, row{line, rec, pos})
	}

	// Write to a temporary file beside the output and rename at the end, so a
	// failure never leaves a half-written file.
	var w io.Writer = env.Stdout
	var tmp *outputFile
	if outPath != "" {
		tmp, err = createOutput(outPath)
		if err != nil {
			return fail("%v", err)
		}
		defer tmp.Abort() // no-op after Commit
		w = tmp
	}
	cw := csv.NewWriter(w)
	outHeader := []string{"lat", "lon", "height_km", "date"}
	if withZone {
		outHeader = append(outHeader, "zone")
	}
	outHeader = append(outHeader, "decimal_year", "declination", "inclination", "horizontal_intensity",
		"total_intensity", "declination_rate")
	if withZone {
		outHeader = append(outHeader, "grid_convergence", "scale_factor")
	}
	outHeader = append(outHeader, "model", "caution", "error")
	_ = cw.Write(outHeader)

	bad := 0
	get := func(rw row, name string) string {
		i, ok := col[name]
		if !ok || i >= len(rw.rec) {
			return ""
		}
		return rw.rec[i]
	}
	ff := func(v float64, d int) string { return strconv.FormatFloat(v, 'f', d, 64) }
	for _, rw := range rows {
		out := []string{get(rw, "lat"), get(rw, "lon"), get(rw, "height_km"), get(rw, "date")}
		if withZone {
			out = append(out, get(rw, "zone"))
		}
		var p *declPoint
		var ferr *fieldError
		if len(rw.rec) != len(header) {
			ferr = &fieldError{"", fmt.Errorf("has %d fields, the header has %d", len(rw.rec), len(header))}
		} else {
			p, ferr = declinationPoint(get(rw, "lat"), get(rw, "lon"), get(rw, "height_km"), get(rw, "date"), get(rw, "zone"), withZone, model)
		}
		nOut := 7
		if withZone {
			nOut += 2
		}
		if ferr != nil {
			bad++
			var msg string
			if ferr.field == "" {
				msg = fmt.Sprintf("%s:%d: row %v", inPath, rw.line, ferr.err)
			} else {
				i := col[ferr.field]
				msg = fmt.Sprintf("%s:%d:%d: column %q (field %d): %v", inPath, rw.line, rw.pos[i], header[i], i+1, ferr.err)
			}
			fmt.Fprintln(env.Stderr, msg)
			out = append(out, make([]string, nOut+1)...)
			out = append(out, msg)
			_ = cw.Write(out)
			continue
		}
		f := p.field
		out = append(out, ff(p.year, 6), ff(f.Declination, 4), ff(f.Inclination, 4), ff(f.H, 1), ff(f.F, 1), ff(f.DeclinationDot, 4))
		if withZone {
			out = append(out, ff(p.grid.Convergence, 6), ff(p.grid.Scale, 8))
		}
		out = append(out, p.model, p.caution(), "")
		_ = cw.Write(out)
	}
	cw.Flush()
	if err := cw.Error(); err != nil {
		return fail("writing output: %v", err)
	}
	if tmp != nil {
		if err := tmp.Commit(); err != nil {
			return fail("writing %s: %v", outPath, err)
		}
	}
	if bad > 0 {
		fmt.Fprintf(env.Stderr, "corvane declination: %d of %d rows could not be computed\n", bad, len(rows))
		return ExitRows
	}
	return ExitOK
}
