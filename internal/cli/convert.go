package cli

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"strconv"

	"corvane/internal/convert"
	"corvane/internal/coreangle"
	"corvane/internal/csvio"
	"corvane/internal/desurvey"
	"corvane/internal/domain"
	"corvane/internal/localgrid"
	"corvane/internal/northref"
	"corvane/internal/progress"
	"corvane/internal/words"
)

func init() {
	register(command{
		name:    "convert",
		summary: "desurvey holes and convert alpha/beta/gamma in CSV files to true orientations",
		run:     runConvert,
	})
}

const convertUsage = `Usage:
  corvane convert --collars C.csv --surveys S.csv --structures M.csv [-o OUT.csv] [options]

Desurveys every hole from its collar and survey stations (minimum curvature unless
--method says otherwise) and converts each structure row's alpha, beta and gamma at its
depth into a true plane (dip, dip direction, right-hand strike, pole) and lineation
(plunge, trend).

Input files have a header; names are case-insensitive and columns may come in any order.
  collars:    hole_id, easting, northing, elevation, azimuth, dip, depth
              optional: declination, grid_convergence, azimuth_reference, crs
  surveys:    hole_id, depth, azimuth, dip   (stations of a hole in increasing depth)
              optional: azimuth_reference (true, grid or magnetic), survey_date (YYYY-MM-DD),
              kind (gyro, magnetic, planned or other), instrument (magnetic, gyro or
              unknown; one per survey set)
  structures: hole_id, depth, alpha, beta
              optional: gamma (empty when there is no lineation), apparent_thickness or
              thickness; any other columns are carried through to the output.
Dips are negative downward. alpha 0..90, beta and gamma 0..360.

The output has one row per structure row, in input order: the input columns, then
hole_azimuth, hole_dip, easting, northing, elevation, dip, dip_direction, strike,
line_trend, line_plunge, warnings, pole_trend, pole_plunge, [true_thickness],
azimuth_reference, declination, declination_source, grid_convergence,
convergence_source, pole_cone95, pole_long95, pole_short95, pole_method,
line_cone95, line_long95, line_short95, line_method, survey_instrument, error.

The eight columns from pole_cone95 are how sure each orientation is: the 95% region of
the pole and of the lineation (the cone's half-angle and the elongated region's long and
short semi-axes, degrees) and which method gave it: first-order by default, or
monte-carlo (1,000 seeded draws, the same at every door) where first order is known to
be unreliable (a direction within 1.5 first-order long semi-axes of the core axis) or
differs from it by more than 10%; --monte-carlo runs the draws for every row.
survey_instrument names the survey errors used. The errors come from --error-model
(defaults of common practice otherwise), the instrument column of the survey set in
use, and the structures file's optional run_confidence (good, fair, poor, none) and
run_mismatch (degrees) columns for the orientation mark (without them: an unrated
mark); a run rated poor or none also adds its warning. The figures depend on the error
model and are no substitute for the reviewer's judgement or local practice.

--hole-summary FILE.csv also writes one row per hole: hole_id,
survey_azimuth_reference, output_azimuth_reference, declination,
declination_source, grid_convergence, convergence_source, rows,
rows_with_warnings, rows_with_errors, caution, error (why the hole's rows
could not be converted, e.g. a magnetic survey on a collar corvane cannot
place). A declination that changes with the survey date is listed per date,
separated by ";".

Azimuths: true = magnetic + declination; grid = true - grid_convergence. A survey
azimuth without azimuth_reference is taken to be in the output reference. Corrections
come from the collar's columns, else from --declination / --grid-convergence, else are
computed from the collar's crs (an EPSG code of a supported UTM or MGA grid, see the
README) and the survey date with the magnetic model chosen by --model (auto: World
Magnetic Model 2025 for 2025-2030, IGRF-14 before); the *_source columns say which (given, project, computed or none; a computed
declination names its model and decimal year, e.g. "computed (IGRF-14 at 2023.5808)").
A collars file may give survey_date, the date of a hole's survey for survey rows
without their own. A surveys file may give kind (gyro, magnetic, planned, other), each
kind's set with its own instrument: a hole may then have several survey sets, and the one used is chosen by
--survey-priority, else the rows without a kind, else the first kind in that order
(the --hole-summary column survey_set names it).

--local-grid GRID.json declares a local (mine) grid (a JSON object: name, grid_crs, and
rotation, scale and origin, or control_points; see the README). A collar whose crs is
"local" is then in that grid: its easting and northing are carried into grid_crs, and
its azimuths referenced to grid (given as grid, or without a reference when the output
reference is grid) are local-grid azimuths, turned into grid azimuths by the rotation.
Output positions and grid azimuths are in grid_crs. The transformation (and the control
points' residuals when fitted) is printed on standard error. Not with --feet.

Exit status: 0 all rows converted; 1 some rows have a message in the error column
(all rows are still written); 2 bad options or a file that cannot be read as a whole
(nothing is written).

Orientations feed geological models and slope or excavation design: check the warnings
and QA, and base any design on local codes and the judgement of a licensed practitioner.

Options:
`

type floatFlag struct{ g *convert.Given }

func (f floatFlag) String() string {
	if f.g == nil || !f.g.Set {
		return ""
	}
	return strconv.FormatFloat(f.g.Value, 'g', -1, 64)
}

func (f floatFlag) Set(s string) error {
	v, msg := csvio.ParseNumber(s)
	if msg != "" {
		return errors.New(msg)
	}
	if v < -180 || v > 180 {
		return fmt.Errorf("%g is outside -180..180", v)
	}
	*f.g = convert.Given{Value: v, Set: true}
	return nil
}

// pathFlags are the options that decide how holes are desurveyed and which
// north their azimuths refer to. convert and transfer share them, so both
// read the same holes the same way.
type pathFlags struct {
	opt                                *convert.Options
	outRef, method, magModel, priority *string
	feet, noCompute                    *bool
	// local allows --output-reference local (convert, not transfer).
	local bool
}

// addPathFlags adds the flags; local allows the output reference local
// (azimuths and coordinates in the local grid).
func addPathFlags(fs *flag.FlagSet, opt *convert.Options, local bool) *pathFlags {
	p := &pathFlags{opt: opt, local: local}
	usage := "north reference of output azimuths: grid or true"
	if local {
		usage = "north reference of output azimuths: grid, true or local (the local grid of --local-grid or of the collars' local_grid column: azimuths and coordinates in it)"
	}
	p.outRef = fs.String("output-reference", "grid", usage)
	p.method = fs.String("method", "minimum-curvature", "desurvey method: minimum-curvature, balanced-tangential or tangential")
	p.feet = fs.Bool("feet", false, "lengths are in feet (collar elevations are converted to metres for the magnetic model)")
	p.noCompute = fs.Bool("no-computed-corrections", false, "never compute declination or grid convergence; holes that need one get an error")
	p.magModel = fs.String("model", "auto", "magnetic model of computed declinations: auto (WMM2025 for 2025-2030, IGRF-14 before), wmm or igrf")
	p.priority = fs.String("survey-priority", "", "survey set kinds by priority for holes with sets by kind (surveys column kind), e.g. gyro,magnetic,planned")
	fs.Var(floatFlag{&opt.Declination}, "declination", "magnetic declination in degrees for holes whose collar gives none (true = magnetic + D)")
	fs.Var(floatFlag{&opt.GridConvergence}, "grid-convergence", "grid convergence in degrees for holes whose collar gives none (grid = true - C)")
	return p
}

// apply puts the parsed flags into the options.
func (p *pathFlags) apply() error {
	var err error
	if p.opt.Output, err = convert.ParseOutput(*p.outRef); err != nil || p.opt.Output == convert.Local && !p.local {
		if p.local {
			return fmt.Errorf("--output-reference %q: want grid, true or local", *p.outRef)
		}
		return fmt.Errorf("--output-reference %q: want grid or true", *p.outRef)
	}
	if p.opt.Method, err = desurvey.ParseMethod(*p.method); err != nil {
		return fmt.Errorf("--method: %v", err)
	}
	if *p.feet {
		p.opt.Unit = desurvey.Feet
	}
	p.opt.NoCompute = *p.noCompute
	if p.opt.MagneticModel, err = northref.ParseMagneticModel(*p.magModel); err != nil {
		return fmt.Errorf("--model: %v", err)
	}
	pr, perr := domain.ParseSurveyPriority(*p.priority)
	if perr != nil {
		return fmt.Errorf("--survey-priority: %v", perr)
	}
	p.opt.SurveyPriority = pr
	return nil
}

// loadHoles reads the collars and surveys files and desurveys the holes
// (convert.Build): the holes every command that works from these files
// uses.
func loadHoles(collars, surveys string, opt convert.Options) ([]csvio.CollarRow, []csvio.SurveyRow, *convert.Holes, error) {
	cf, err := os.Open(collars)
	if err != nil {
		return nil, nil, nil, err
	}
	defer cf.Close()
	sf, err := os.Open(surveys)
	if err != nil {
		return nil, nil, nil, err
	}
	defer sf.Close()
	// Both files are read whatever the first holds, so that the problems
	// of both are reported at once (errors.Join; see reportAll).
	crows, cerr := csvio.ReadCollars(cf, collars)
	srows, serr := csvio.ReadSurveys(sf, surveys)
	if err := errors.Join(cerr, serr); err != nil {
		return nil, nil, nil, err
	}
	holes, err := convert.Build(crows, srows, opt)
	return crows, srows, holes, err
}

func runConvert(ctx context.Context, env *Env, args []string) int {
	fs := newFlagSet(env, "convert", convertUsage)
	var opt convert.Options
	collars := fs.String("collars", "", "collars CSV file (required)")
	surveys := fs.String("surveys", "", "surveys CSV file (required)")
	structures := fs.String("structures", "", "structures CSV file (required; - for standard input)")
	out := fs.String("o", "", "output CSV file (default standard output)")
	refLine := fs.String("reference-line", "bottom", "orientation reference line: bottom or top")
	apex := fs.String("beta-apex", "downhole", "ellipse apex beta is measured to: downhole or uphole")
	sense := fs.String("gamma-sense", "clockwise", "sense of gamma looking along the down-hole plane normal: clockwise or anticlockwise")
	errModel := fs.String("error-model", "", errorModelUsage)
	fs.BoolVar(&opt.NoUncertainty, "no-uncertainty", false, "leave the uncertainty columns empty")
	fs.BoolVar(&opt.MonteCarlo, "monte-carlo", false, "run the Monte Carlo (1,000 seeded draws) for every measurement's region, not only where first order is unreliable")
	summary := fs.String("hole-summary", "", "also write one row per hole to this CSV file: azimuth references, corrections and their sources, row counts, caution, error")
	gridFile := fs.String("local-grid", "", "JSON file declaring a local grid for collars whose crs is \"local\"")
	paths := addPathFlags(fs, &opt, true)
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return ExitOK
		}
		return ExitUsage
	}
	usageErr := func(format string, a ...any) int {
		fmt.Fprintf(env.Stderr, "corvane convert: "+format+"\n", a...)
		return ExitUsage
	}
	if fs.NArg() > 0 {
		return usageErr("unexpected argument %q", fs.Arg(0))
	}
	if *collars == "" || *surveys == "" || *structures == "" {
		return usageErr("--collars, --surveys and --structures are required (see corvane convert -h)")
	}
	var err error
	if opt.Convention.RefLine, err = coreangle.ParseRefLine(*refLine); err != nil {
		return usageErr("--reference-line: %v", err)
	}
	if opt.Convention.BetaApex, err = coreangle.ParseApex(*apex); err != nil {
		return usageErr("--beta-apex: %v", err)
	}
	if opt.Convention.GammaSense, err = coreangle.ParseSense(*sense); err != nil {
		return usageErr("--gamma-sense: %v", err)
	}
	if err := paths.apply(); err != nil {
		return usageErr("%v", err)
	}
	if opt.ErrorModel, err = readErrorModel(*errModel); err != nil {
		return usageErr("%v", err)
	}
	if code := applyLocalGrid(env, "convert", *gridFile, &opt); code != ExitOK {
		return code
	}
	opt.CollarsFile, opt.SurveysFile, opt.StructuresFile = *collars, *surveys, *structures

	crows, srows, holes, err := loadHoles(*collars, *surveys, opt)
	if err != nil {
		reportAll(env, "convert", err)
		return ExitUsage
	}
	if opt.LocalGrid != nil {
		n := 0
		for _, c := range crows {
			if localgrid.IsLocal(c.CRS) && c.LocalGrid == nil {
				n++
			}
		}
		fmt.Fprintf(env.Stderr, "corvane convert: %d collar(s) carried from the local grid into %s\n", n, opt.LocalGrid.Spec.GridCRS)
	}
	var in io.Reader = env.Stdin
	var size int64
	if *structures != "-" {
		f, err := os.Open(*structures)
		if err != nil {
			return usageErr("%v", err)
		}
		defer f.Close()
		in = f
		if fi, err := f.Stat(); err == nil {
			size = fi.Size()
		}
	}
	// Progress on a terminal (rows, rows/s, time left); nothing when
	// standard error is a pipe or a file.
	meter := progress.New(env.Stderr, "corvane convert", size)
	in = meter.Reader(in)

	// Write to a temporary file first: a file that turns out to be unreadable
	// half-way leaves no partial output behind. With -o it is the output
	// file (created as every output file is, see createOutput); without, a
	// scratch file copied to standard output at the end.
	var tmp *os.File
	var outFile *outputFile
	if *out != "" {
		outFile, err = createOutput(*out)
		if err != nil {
			return usageErr("%v", err)
		}
		defer outFile.Abort() // no-op after Commit
		tmp = outFile.File
	} else {
		tmp, err = os.CreateTemp("", ".corvane-convert-*.csv")
		if err != nil {
			return usageErr("%v", err)
		}
		defer os.Remove(tmp.Name())
	}
	sum, err := holes.Convert(ctx, in, tmp)
	meter.Done()
	if err != nil {
		tmp.Close()
		reportAll(env, "convert", err)
		return ExitUsage
	}
	if *summary != "" {
		if code := holeSummary(env, *summary, sum.PerHole, holes, srows); code != ExitOK {
			tmp.Close()
			return code
		}
	}
	if outFile != nil {
		if err := outFile.Commit(); err != nil {
			return usageErr("%v", err)
		}
	} else {
		if _, err := tmp.Seek(0, io.SeekStart); err != nil {
			tmp.Close()
			return usageErr("%v", err)
		}
		_, err := io.Copy(env.Stdout, tmp)
		tmp.Close()
		if err != nil {
			return usageErr("writing the output: %v", err)
		}
	}
	fmt.Fprintf(env.Stderr, "corvane convert: %s (%d with warnings, %d below the last survey station), %d with errors; azimuths referenced to %v north, convention %v\n",
		words.Plural(sum.Rows, "row"), sum.WarnRows, sum.Extrapols, sum.BadRows, opt.Output, opt.Convention)
	if sum.BadRows > 0 {
		return ExitRows
	}
	return ExitOK
}

// holeSummary writes the hole summary to file, with the rows per hole that
// the conversion counted.
func holeSummary(env *Env, file string, perHole []convert.HoleRows, holes *convert.Holes, srows []csvio.SurveyRow) int {
	counts := make(map[string]*holeCounts, len(perHole))
	order := make([]string, len(perHole))
	for i, h := range perHole {
		counts[h.HoleID] = &holeCounts{rows: h.Rows, warn: h.WarnRows, bad: h.BadRows}
		order[i] = h.HoleID
	}
	werr := writeOutput(file, func(w io.Writer) error { return writeHoleSummary(w, holes, srows, counts, order) })
	if werr != nil {
		fmt.Fprintf(env.Stderr, "corvane convert: --hole-summary %s: %v\n", file, werr)
		return ExitUsage
	}
	return ExitOK
}

// reportAll writes each non-nil error as "corvane CMD: ..." with its row
// problems, and says whether there was any.
// Errors joined with errors.Join are reported one by one.
func reportAll(env *Env, cmd string, errs ...error) bool {
	failed := false
	for _, err := range errs {
		if j, ok := err.(interface{ Unwrap() []error }); ok {
			failed = reportAll(env, cmd, j.Unwrap()...) || failed
		} else if err != nil {
			failed = true
			fmt.Fprintf(env.Stderr, "corvane %s: ", cmd)
			csvio.Report(env.Stderr, err)
		}
	}
	return failed
}

// applyLocalGrid reads the local grid declaration in path (the rules of a
// project's local_grid setting, localgrid.Parse), sets it in opt as the
// project's local grid (collars labelled "local" are in it, output local is
// in it: holemodel.New, as the service does with a project's local grid),
// and reports the transformation on standard error; cmd names the command
// in messages. Nothing is done for an empty path. convert and qa share it.
func applyLocalGrid(env *Env, cmd, path string, opt *convert.Options) int {
	if path == "" {
		return ExitOK
	}
	if opt.Unit == desurvey.Feet {
		fmt.Fprintf(env.Stderr, "corvane %s: --local-grid cannot be combined with --feet (the local grid is in metres)\n", cmd)
		return ExitUsage
	}
	data, err := os.ReadFile(path)
	if err != nil {
		fmt.Fprintf(env.Stderr, "corvane %s: --local-grid: %v\n", cmd, err)
		return ExitUsage
	}
	g, fit, err := localgrid.Parse(data)
	if err != nil {
		fmt.Fprintf(env.Stderr, "corvane %s: --local-grid %s: %v\n", cmd, path, err)
		return ExitUsage
	}
	opt.LocalGrid = g
	reportLocalGrid(env.Stderr, g.Spec, g.T, fit)
	return ExitOK
}

// reportLocalGrid prints a local grid's transformation and, when fitted,
// each control point's residual.
func reportLocalGrid(w io.Writer, spec localgrid.Spec, t localgrid.Transform, fit *localgrid.Fit) {
	fmt.Fprintf(w, "local grid %q -> %s: rotation %.6f deg (grid azimuth of local north), scale %.9f, local origin at E %.3f N %.3f\n",
		spec.Name, spec.GridCRS, t.Rotation, t.Scale, t.E0, t.N0)
	if fit == nil {
		return
	}
	fmt.Fprintf(w, "fitted to %d control points, rms %.4f m; residuals (observed - computed):\n", len(fit.Residuals), fit.RMS)
	for _, r := range fit.Residuals {
		fmt.Fprintf(w, "  %-12s dE %+.4f dN %+.4f (%.4f m)\n", r.ID, r.DE, r.DN, r.Distance)
	}
}
