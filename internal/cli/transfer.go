package cli

import (
	"context"
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
	"corvane/internal/exchange/gltf"
	"corvane/internal/exchange/transfer"
	"corvane/internal/fabric"
	"corvane/internal/words"
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
                  direction between survey stations), CORE (with --intervals: recoveries
                  and RQD as corvane intervals computes them), DISC (structures; dip and
                  dip direction to the whole degree).

Uncertainty: with --uncertainty each structure carries the 95% cone of its pole's
uncertainty from the converted file's pole_cone95 column: the points get an uncertainty
column and each glTF disc a translucent cone about its pole of that half-angle.

Sets: with --sets auto:N, --sets type or --set windows (the options of corvane stats)
each structure is labelled with its set (A, B, C... for automatic sets), formed on the
poles of the structures written by the statistics' own grouping; the label goes to the
points' set column, the glTF disc's extras and AGS4 FRAC_SET (DISC and FRAC); with
--colour-by set the glTF discs are grouped and coloured by set (the nets' colours of the
sets; sets by type keep their types' colours; structures in no set grey; without set
options, the converted file's sets in sorted order). Without
them, the converted file's set column is carried as it is.

Rows of the converted file without a plane and position (no dip direction, an error, a
lineation alone) are skipped and counted. GeoJSON's qa_flags counts a hole's rows that
carry a warning or an error. Structure types are coloured in the sorted order of
--types (the project's vocabulary; default the types present). A hole whose path cannot
be built has its collar in GeoJSON and AGS4 LOCA but no trace.
The service's export routes (.../scene.glb, points.csv, holes.geojson, transfer.ags)
write the same files from a stored project.

Options:
`

func runTransfer(ctx context.Context, env *Env, args []string) int {
	fs := newFlagSet(env, "transfer", transferUsage)
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
	date := fs.String("date", "", "AGS4 TRAN_DATE, YYYY-MM-DD (default today)")
	intervals := fs.String("intervals", "", "core intervals CSV (as corvane intervals reads it): AGS4 CORE rows with recoveries and RQD")
	typesFlag := fs.String("types", "", "the project's type codes, comma-separated, that colours are given to in sorted order (default: the types in the converted file)")
	setsFlag := fs.String("sets", "", "label structures with sets: auto:N (k-means on the poles) or type (one set per type code)")
	var windows windowFlags
	fs.Var(&windows, "set", "label structures with a set window NAME:TREND/PLUNGE:CONE on the poles (repeatable)")
	seed := fs.Uint64("seed", fabric.DefaultSeed, "seed for --sets auto:N")
	colourBy := fs.String("colour-by", "type", "group and colour the glTF discs by type or by set (set needs the set options)")
	withUnc := fs.Bool("uncertainty", false, "carry each structure's 95% uncertainty cone (the converted file's pole_cone95): the points' uncertainty column and a cone per disc in glTF")
	var opt convert.Options
	paths := addPathFlags(fs, &opt, false)
	fail, code, done := parseOrientArgs(env, fs, "transfer", args)
	if done {
		return code
	}
	usageErr := func(format string, a ...any) int { return fail(fmt.Errorf(format, a...)) }
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

	// Holes, desurveyed as the conversion did (package convert builds each
	// through the hole model).
	crows, _, holes, err := loadHoles(*collars, *surveys, opt)
	if err != nil {
		reportAll(env, "transfer", err)
		return ExitUsage
	}
	prog := transfer.Programme{Name: *project, TraceStep: *step, Feet: opt.Unit == desurvey.Feet}
	if err := prog.Check(); err != nil {
		return usageErr("--feet: %v", err)
	}
	for _, c := range crows {
		th := transfer.Hole{Name: c.HoleID, Collar: c.Collar, CRS: c.CRS}
		switch h := holes.Hole(c.HoleID); {
		case h == nil:
		case h.Err != nil:
			th.Problem = h.Err.Error()
			fmt.Fprintf(env.Stderr, "corvane transfer: hole %s has no trace: %v\n", c.HoleID, h.Err)
		default:
			th.Path = h.Path
		}
		prog.Holes = append(prog.Holes, th)
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
	prog.Skipped = len(problems)
	for _, r := range rows {
		placed := r.HasPlane && r.HasPos && !math.IsNaN(r.Depth) // not: no dip direction, an error, a lineation alone
		prog.Count(r.HoleID, placed, r.Warnings != "" || r.Error != "")
		if placed {
			st := exchange.Structure{Hole: r.HoleID, Depth: r.Depth, Pos: r.Pos, Pole: r.Plane.Normal(),
				Dip: r.Plane.Dip, DipDirection: r.Plane.DipDirection, Type: r.Type, Set: r.Set, Uncertainty: math.NaN()}
			if *withUnc {
				st.Uncertainty = r.PoleCone95
			}
			prog.Structures = append(prog.Structures, st)
		}
	}
	if *withUnc && !slices.ContainsFunc(prog.Structures, exchange.Structure.HasUncertainty) {
		return usageErr("--uncertainty: %s has no %s values (convert writes them unless told not to)", *converted, csvio.ColPoleCone95)
	}
	sets, err := fabric.ParseSets(*setsFlag, "planes", windows, *seed)
	if err != nil {
		return fail(err)
	}
	if _, err := prog.LabelSets(sets); err != nil {
		return fail(err)
	}
	if *intervals != "" {
		ivs, err := readIntervalsFile(env, *intervals, *collars)
		if err != nil {
			fmt.Fprint(env.Stderr, "corvane transfer: ")
			csvio.Report(env.Stderr, err)
			return ExitUsage
		}
		for _, r := range ivs {
			prog.Intervals = append(prog.Intervals, transfer.Interval{Hole: r.HoleID, Interval: r.Interval})
		}
	}
	prog.Types = transfer.TypesOf(prog.Structures)
	if *typesFlag != "" {
		prog.Types = strings.Split(*typesFlag, ",")
	}

	so := transfer.SceneOptions{DiscRadius: *radius, Uncertainty: *withUnc}
	if so.BySet, err = transfer.ParseColourBy(*colourBy); err != nil {
		return usageErr("--colour-by %v", err)
	}
	if so.BySet && !prog.HasSets() && (*glbOut != "" || *gltfOut != "") {
		return usageErr("--colour-by set: %v", transfer.ErrNoSets)
	}
	if *originFlag != "" {
		o, err := transfer.ParseOrigin(*originFlag)
		if err != nil {
			return usageErr("--origin: %v", err)
		}
		so.Origin = o
	}
	if *geoOut != "" {
		if _, err := prog.Inverse(*crsFlag); err != nil {
			return usageErr("--geojson: %v", err)
		}
	}
	ao := transfer.AGSOptions{Recipient: *recipient}
	if *date != "" {
		if ao.Date, err = time.Parse(time.DateOnly, *date); err != nil {
			return usageErr("--date %q: want YYYY-MM-DD", *date)
		}
	}
	if *gltfOut != "" {
		bin := strings.TrimSuffix(*gltfOut, filepath.Ext(*gltfOut)) + ".bin"
		// The .gltf refers to the .bin by its base name, beside it.
		err := writeOutput(bin, func(bw io.Writer) error {
			return writeOutput(*gltfOut, func(jw io.Writer) error {
				return prog.WriteGLTF(jw, bw, filepath.Base(bin), so)
			})
		})
		if err != nil {
			return usageErr("%s: %v", *gltfOut, err)
		}
	}
	writes := []struct {
		path  string
		write func(io.Writer) error
	}{
		{*glbOut, func(w io.Writer) error { return prog.WriteGLB(w, so) }},
		{*pointsOut, prog.WritePoints},
		{*geoOut, func(w io.Writer) error { return prog.WriteGeoJSON(w, *crsFlag) }},
		{*agsOut, func(w io.Writer) error { return prog.WriteAGS(w, ao) }},
	}
	for _, wr := range writes {
		if wr.path == "" {
			continue
		}
		if err := writeOutput(wr.path, wr.write); err != nil {
			return usageErr("%s: %v", wr.path, err)
		}
	}
	traced := 0
	for _, h := range prog.Holes {
		if h.Path != nil {
			traced++
		}
	}
	fmt.Fprintf(env.Stderr, "corvane transfer: %s (%d with a trace), %s written; %s without a plane or position skipped\n",
		words.Plural(len(prog.Holes), "hole"), traced, words.Plural(len(prog.Structures), "structure"), words.Plural(prog.Skipped, "row"))
	return ExitOK
}
