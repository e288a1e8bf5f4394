package cli

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"time"

	"corvane/internal/convert"
	"corvane/internal/csvio"
	"corvane/internal/desurvey"
	"corvane/internal/exchange"
	"corvane/internal/exchange/ags4"
	"corvane/internal/exchange/geojson"
	"corvane/internal/exchange/gltf"
	"corvane/internal/geom"
	"corvane/internal/northref"
	"corvane/internal/palette"
)

func init() {
	register(command{
		name:    "transfer",
		summary: "write converted structures and hole traces as glTF (3D), GeoJSON (map), points-with-normals CSV or AGS4",
		run:     runTransfer,
	})
}

const transferUsage = `Usage:
  corvane transfer --collars C.csv --surveys S.csv --converted OUT.csv
                   [--glb F.glb] [--gltf F.gltf] [--geojson F.geojson] [--points F.csv] [--ags F.ags] [options]

Reads the output of 'corvane convert' (its hole_id, depth, easting, northing, elevation,
dip, dip_direction and type columns; set when present) and the collars and surveys it
was made from, desurveys the holes the same way (give the same --method, --feet,
--output-reference and correction options as to convert), and writes any of:

  --glb / --gltf  glTF 2.0 scene: hole traces as lines (the part below the last survey
                  station separately), structures as discs in their planes, coloured by
                  type. Axes x = East, y = Up, z = -North, metres from --origin (default:
                  the first collar rounded down to whole metres), stated in the file.
                  --gltf also writes the binary buffer beside it as NAME.bin.
  --geojson       collars and traces projected to the surface in WGS 84 longitude,
                  latitude; needs the collars' crs column (EPSG:326NN/327NN) or --crs.
  --points        one row per structure: x, y, z, nx, ny, nz (the pole), dip,
                  dip_direction, type, set, hole_id, depth.
  --ags           AGS4: PROJ, TRAN, UNIT, TYPE, ABBR, LOCA (collars), HORN (hole
                  direction between survey stations), DISC (structures; dip and dip
                  direction to the whole degree).

Rows of the converted file without a plane and position (no dip direction, an error, a
lineation alone) are skipped and counted. GeoJSON's qa_flags counts a hole's rows that
carry a warning or an error. Structure types are coloured in the sorted order of the types present.

Options:
`

func runTransfer(ctx context.Context, env *Env, args []string) int {
	fs := flag.NewFlagSet("transfer", flag.ContinueOnError)
	fs.SetOutput(env.Stderr)
	fs.Usage = func() {
		fmt.Fprint(env.Stderr, transferUsage)
		fs.PrintDefaults()
	}
	collars := fs.String("collars", "", "collars CSV file (required)")
	surveys := fs.String("surveys", "", "surveys CSV file (required)")
	converted := fs.String("converted", "", "output of corvane convert (required)")
	glbOut := fs.String("glb", "", "write a binary glTF scene to this file")
	gltfOut := fs.String("gltf", "", "write a glTF scene to this file and its buffer to the same name with .bin")
	geoOut := fs.String("geojson", "", "write collars and surface traces as GeoJSON to this file")
	pointsOut := fs.String("points", "", "write points with normals as CSV to this file")
	agsOut := fs.String("ags", "", "write an AGS4 file")
	radius := fs.Float64("disc-radius", gltf.DefaultDiscRadius, "radius of the structure discs in the glTF scene, metres")
	step := fs.Float64("trace-step", exchange.DefaultTraceStep, "largest spacing of trace points between survey stations, in the length unit")
	originFlag := fs.String("origin", "", "local origin of the glTF scene as EASTING,NORTHING,ELEVATION (default: first collar, whole metres)")
	crsFlag := fs.String("crs", "", "coordinate system of the collars for GeoJSON when their crs column is empty (EPSG:326NN or EPSG:327NN)")
	project := fs.String("project", "corvane", "AGS4 PROJ_ID (and PROJ_NAME)")
	recipient := fs.String("recipient", "geotechnical database", "AGS4 TRAN_RECV")
	var opt convert.Options
	paths := addPathFlags(fs, &opt)
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return ExitOK
		}
		return ExitUsage
	}
	usageErr := func(format string, a ...any) int {
		fmt.Fprintf(env.Stderr, "corvane transfer: "+format+"\n", a...)
		return ExitUsage
	}
	if fs.NArg() > 0 {
		return usageErr("unexpected argument %q", fs.Arg(0))
	}
	if *collars == "" || *surveys == "" || *converted == "" {
		return usageErr("--collars, --surveys and --converted are required (see corvane transfer -h)")
	}
	if *glbOut == "" && *gltfOut == "" && *geoOut == "" && *pointsOut == "" && *agsOut == "" {
		return usageErr("nothing to write: give one or more of --glb, --gltf, --geojson, --points, --ags")
	}
	if err := paths.apply(); err != nil {
		return usageErr("%v", err)
	}
	opt.CollarsFile, opt.SurveysFile = *collars, *surveys

	// Holes, desurveyed as the conversion did.
	crows, _, holes, err := loadHoles(*collars, *surveys, opt)
	if err != nil {
		fmt.Fprint(env.Stderr, "corvane transfer: ")
		csvio.Report(env.Stderr, err)
		return ExitUsage
	}
	var traces []exchange.Trace
	for _, h := range holes.List() {
		if h.Path == nil {
			fmt.Fprintf(env.Stderr, "corvane transfer: hole %s left out: %v\n", h.ID, h.Err)
			continue
		}
		t, err := exchange.TraceFromPath(h.ID, h.Path, *step)
		if err != nil {
			return usageErr("%v", err)
		}
		traces = append(traces, t)
	}

	// Structures from the converted file.
	cf, err := os.Open(*converted)
	if err != nil {
		return usageErr("%v", err)
	}
	rows, problems, err := csvio.ReadOrientations(cf, *converted)
	cf.Close()
	if err != nil {
		fmt.Fprint(env.Stderr, "corvane transfer: ")
		csvio.Report(env.Stderr, err)
		return ExitUsage
	}
	var structs []exchange.Structure
	skipped := len(problems)
	warned := map[string]int{}
	counted := map[string]int{}
	for _, r := range rows {
		if r.Warnings != "" || r.Error != "" {
			warned[r.HoleID]++
		}
		if !r.HasPlane || !r.HasPos || math.IsNaN(r.Depth) {
			skipped++ // no dip direction, an error, a lineation alone
			continue
		}
		counted[r.HoleID]++
		structs = append(structs, exchange.Structure{Hole: r.HoleID, Depth: r.Depth, Pos: r.Pos, Pole: r.Plane.Normal(),
			Dip: r.Plane.Dip, DipDirection: r.Plane.DipDirection, Type: r.Type, Set: r.Set, Uncertainty: math.NaN()})
	}
	var types []string
	for _, s := range structs {
		types = append(types, s.Type)
	}
	slices.Sort(types)
	types = slices.Compact(types)

	gopt := gltf.Options{Origin: gltf.OriginOf(traces, structs), DiscRadius: *radius, Colours: palette.New(types)}
	if *originFlag != "" {
		if gopt.Origin, err = parseOrigin(*originFlag); err != nil {
			return usageErr("--origin: %v", err)
		}
	}
	if len(crows) > 0 {
		gopt.CRS = crows[0].CRS
	}
	writes := []struct {
		path  string
		write func(io.Writer) error
	}{
		{*glbOut, func(w io.Writer) error { return gltf.WriteGLB(w, traces, structs, gopt) }},
		{*pointsOut, func(w io.Writer) error { return csvio.WritePoints(w, structs) }},
	}
	if *gltfOut != "" {
		bin := strings.TrimSuffix(*gltfOut, filepath.Ext(*gltfOut)) + ".bin"
		// The .gltf refers to the .bin by its base name, beside it.
		err := writeOutput(bin, func(bw io.Writer) error {
			return writeOutput(*gltfOut, func(jw io.Writer) error {
				return gltf.WriteGLTF(jw, bw, filepath.Base(bin), traces, structs, gopt)
			})
		})
		if err != nil {
			return usageErr("%s: %v", *gltfOut, err)
		}
	}
	if *geoOut != "" {
		inv, err := inverseFor(crows, *crsFlag)
		if err != nil {
			return usageErr("--geojson: %v", err)
		}
		var gh []geojson.Hole
		for _, t := range traces {
			c := collarRow(crows, t.Hole)
			gh = append(gh, geojson.Hole{Name: t.Hole, East: c.East, North: c.North, Elevation: c.Elevation, Azimuth: c.Azimuth, Dip: c.Dip,
				Depth: c.Depth, Measurements: counted[t.Hole], QAFlags: warned[t.Hole], Trace: t})
		}
		writes = append(writes, struct {
			path  string
			write func(io.Writer) error
		}{*geoOut, func(w io.Writer) error { return geojson.Write(w, inv, gh) }})
	}
	if *agsOut != "" {
		d := agsData(*project, *recipient, crows, holes, structs, types)
		writes = append(writes, struct {
			path  string
			write func(io.Writer) error
		}{*agsOut, func(w io.Writer) error { return ags4.Write(w, d) }})
	}
	for _, wr := range writes {
		if wr.path == "" {
			continue
		}
		if err := writeOutput(wr.path, wr.write); err != nil {
			return usageErr("%s: %v", wr.path, err)
		}
	}
	fmt.Fprintf(env.Stderr, "corvane transfer: %d holes, %d structures written; %d rows without a plane or position skipped\n",
		len(traces), len(structs), skipped)
	return ExitOK
}

func collarRow(crows []csvio.CollarRow, id string) desurvey.Collar {
	for _, c := range crows {
		if c.HoleID == id {
			return c.Collar
		}
	}
	return desurvey.Collar{East: math.NaN(), North: math.NaN()}
}

func parseOrigin(s string) (geom.Vec3, error) {
	parts := strings.Split(s, ",")
	if len(parts) != 3 {
		return geom.Vec3{}, fmt.Errorf("%q: want EASTING,NORTHING,ELEVATION", s)
	}
	var v [3]float64
	for i, p := range parts {
		x, msg := csvio.ParseNumber(strings.TrimSpace(p))
		if msg != "" {
			return geom.Vec3{}, fmt.Errorf("%q: %s", p, msg)
		}
		v[i] = x
	}
	return geom.Vec3{X: v[0], Y: v[1], Z: v[2]}, nil
}

// inverseFor returns the grid inverse of the collars' coordinate system:
// --crs when given, else the crs column, which must then name one system
// for all collars.
func inverseFor(crows []csvio.CollarRow, flagCRS string) (geojson.Inverse, error) {
	label := strings.TrimSpace(flagCRS)
	if label == "" {
		for _, c := range crows {
			switch {
			case c.CRS == "":
			case label == "":
				label = c.CRS
			case !strings.EqualFold(label, c.CRS):
				return nil, fmt.Errorf("collars are in %s and %s; write one coordinate system at a time or give --crs", label, c.CRS)
			}
		}
	}
	crs, err := northref.ParseCRS(label)
	if err != nil {
		return nil, err
	}
	return geojson.UTM(crs.Zone), nil
}

// agsData gathers the AGS4 transfer: LOCA from the collars, HORN from the
// desurveyed path between survey stations (direction at the top of each
// section, in the conversion's output reference), DISC from the structures
// numbered per hole in file order.
func agsData(project, recipient string, crows []csvio.CollarRow, holes *convert.Holes, structs []exchange.Structure, types []string) *ags4.Data {
	d := &ags4.Data{
		Project: ags4.Project{ID: project, Name: project},
		Transmission: ags4.Transmission{IssueNo: "1", Date: time.Now().UTC(), Producer: "corvane", Status: "Draft",
			Description: "oriented core discontinuities", Recipient: recipient},
		Abbreviations: []ags4.Abbreviation{{Heading: "LOCA_TYPE", Code: "RC", Description: "Rotary core"}},
	}
	grefs := map[string]bool{}
	for _, c := range crows {
		gref := strings.ToUpper(strings.TrimSpace(c.CRS))
		if gref != "" && !grefs[gref] {
			grefs[gref] = true
			d.Abbreviations = append(d.Abbreviations, ags4.Abbreviation{Heading: "LOCA_GREF", Code: gref, Description: "coordinate reference system " + gref})
		}
		d.Locations = append(d.Locations, ags4.Location{ID: c.HoleID, Type: "RC", East: c.Collar.East, North: c.Collar.North, GridRef: gref,
			GroundLevel: c.Collar.Elevation, FinalDepth: c.Collar.Depth})
		h := holes.Hole(c.HoleID)
		if h == nil || h.Path == nil {
			continue
		}
		tops := []float64{0}
		for _, iv := range h.Path.Intervals() {
			tops = append(tops, iv.To)
		}
		tops = append(tops, h.Path.Depth())
		slices.Sort(tops)
		tops = slices.Compact(tops)
		for i := 0; i+1 < len(tops); i++ {
			pt, err := h.Path.At(tops[i])
			if err != nil {
				continue
			}
			az, dip := pt.Dir.AzimuthDip()
			rem := ""
			if tops[i] >= h.Path.LastStation() && tops[i] < h.Path.Depth() {
				rem = "below the last survey station"
			}
			d.Orientations = append(d.Orientations, ags4.Orientation{Hole: c.HoleID, Top: tops[i], Base: tops[i+1], Azimuth: az, Dip: dip, Remarks: rem})
		}
	}
	for _, t := range types {
		d.Abbreviations = append(d.Abbreviations, ags4.Abbreviation{Heading: "DISC_TYPE", Code: t, Description: "structure type " + t})
	}
	n := map[string]int{}
	for _, s := range structs {
		n[s.Hole]++
		d.Discontinuities = append(d.Discontinuities, ags4.Discontinuity{Hole: s.Hole, Top: s.Depth, Base: s.Depth, Set: s.Set,
			Number: fmt.Sprint(n[s.Hole]), Type: s.Type, Dip: s.Dip, DipDirection: s.DipDirection})
	}
	return d
}
