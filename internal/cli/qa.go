package cli

import (
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
	"strings"

	"corvane/internal/convert"
	"corvane/internal/coreangle"
	"corvane/internal/csvio"
	"corvane/internal/desurvey"
	"corvane/internal/domain"
	"corvane/internal/localgrid"
	"corvane/internal/northref"
	"corvane/internal/progress"
	"corvane/internal/qa"
	"corvane/internal/qa/qapage"
	"corvane/internal/uncertainty"
	"corvane/internal/words"
)

func init() {
	register(command{
		name:    "qa",
		summary: "check orientation marks, surveys and measurements; JSON or an HTML page",
		run:     runQA,
	})
}

const qaUsage = `Usage:
  corvane qa --collars C.csv --surveys S.csv --structures M.csv --runs R.csv
             [--picks P.csv] [--persistent TYPE] [--format json|html] [-o OUT]
             [--mismatch-tolerance DEG] [--magnetic-zone HOLE:FROM-TO ...]

Checks a programme's oriented core and surveys and reports what it finds; it changes
nothing. Inputs are the files of corvane convert plus the orientation runs
(hole_id, from, to, confidence, mismatch) and, optionally, reference picks of the same
holes from another source (hole_id, depth, dip, dip_direction).

  runs and marks      oriented length and share per hole; measurements outside runs or
                      in unusable runs; mark mismatch across run breaks
  mark rotation       with --persistent TYPE: each run's rotation about the core axis
                      (a beta offset) that brings TYPE onto the fabric of its neighbours,
                      from however few measurements the run has; a run is flagged when
                      the 95% interval, computed with the error model (--error-model),
                      lies beyond --rotation-tolerance. A logger who rounds to 5 deg
                      gets a wider reading error, not flags
  reference picks     depth shift, matches, misfit per hole and run, implied offsets
  surveys             dogleg severity, leave-one-out outliers, gaps, short surveys,
                      first station against the collar, magnetic shots in magnetic zones,
                      a magnetic set against the hole's gyro set (surveys column kind)
  measurements        alpha >= 85, near-vertical holes, past the final depth,
                      duplicates, beta 0/360 in bulk, round-number preference per logger
                      (structures column logged_by; type from the column type)

Survey azimuths are brought to the output reference (--output-reference, default grid)
with the collars' declination and grid_convergence columns or --declination and
--grid-convergence, as corvane convert does.

QA flags guide a geologist's judgement and do not replace it. Suggested corrections are
suggestions: the logged values are never changed. Where orientations feed slope or
excavation design, follow local codes and licensed practice.

Exit status: 0 when the report was written, 1 when it was written but some input rows
could not be read (they are listed in the report), 2 for bad options or unreadable files.

Options:
`

type zoneFlags []qa.MagneticZone

func (z *zoneFlags) String() string { return fmt.Sprint(len(*z)) }

// Set parses HOLE:FROM-TO.
func (z *zoneFlags) Set(s string) error {
	i := strings.LastIndex(s, ":")
	if i <= 0 {
		return fmt.Errorf("magnetic zone %q: want HOLE:FROM-TO", s)
	}
	hole, span := s[:i], s[i+1:]
	j := strings.Index(span, "-")
	if j <= 0 {
		return fmt.Errorf("magnetic zone %q: want HOLE:FROM-TO", s)
	}
	from, err1 := strconv.ParseFloat(span[:j], 64)
	to, err2 := strconv.ParseFloat(span[j+1:], 64)
	if err1 != nil || err2 != nil || math.IsNaN(from) || math.IsNaN(to) || from < 0 || to < from {
		return fmt.Errorf("magnetic zone %q: FROM and TO must be depths with FROM <= TO", s)
	}
	*z = append(*z, qa.MagneticZone{HoleID: hole, From: from, To: to})
	return nil
}

func runQA(_ context.Context, env *Env, args []string) int {
	fs := newFlagSet(env, "qa", qaUsage)
	def := qa.DefaultOptions()
	collars := fs.String("collars", "", "collars CSV (required)")
	surveys := fs.String("surveys", "", "surveys CSV (required)")
	structures := fs.String("structures", "", "structures CSV (required)")
	runsF := fs.String("runs", "", "orientation runs CSV (required)")
	picks := fs.String("picks", "", "reference picks CSV (optional)")
	persistent := fs.String("persistent", "", "structure type to treat as a persistent fabric for the mark-rotation check (e.g. bedding)")
	format := fs.String("format", "json", "output format: json or html")
	out := fs.String("o", "", "output file (default standard output)")
	title := fs.String("title", "Oriented core QA", "title of the HTML page")
	refLine := fs.String("reference-line", "bottom", "orientation line: bottom or top of hole")
	betaApex := fs.String("beta-apex", "downhole", "beta measured to the downhole or uphole apex")
	outRef := fs.String("output-reference", "grid", "north reference of the checks: grid or true")
	var decl, conv convert.Given
	fs.Var(floatFlag{&decl}, "declination", "magnetic declination for every hole, degrees east (collar column declination wins)")
	fs.Var(floatFlag{&conv}, "grid-convergence", "grid convergence for every hole, degrees (collar column grid_convergence wins)")
	feet := fs.Bool("feet", false, "depths in feet: dogleg severity per 100 ft")
	magModel := fs.String("model", "auto", "magnetic model of computed declinations: auto (WMM2025 for 2025-2030, IGRF-14 before), wmm or igrf")
	priority := fs.String("survey-priority", "", "survey set kinds by priority for holes with sets by kind (surveys column kind), e.g. gyro,magnetic,planned")
	gridFile := fs.String("local-grid", "", "JSON file declaring the project's local grid, for collars whose crs is \"local\" (as corvane convert)")
	var zones zoneFlags
	fs.Var(&zones, "magnetic-zone", "HOLE:FROM-TO where magnetic surveys are unreliable (repeatable)")
	o := def
	fs.Float64Var(&o.MismatchTolerance, "mismatch-tolerance", def.MismatchTolerance, "mark mismatch across a run break to flag, degrees (common practice)")
	fs.StringVar(&o.Reference, "reference", def.Reference, "fabric reference for mark rotation: neighbours or hole")
	fs.IntVar(&o.Neighbours, "neighbours", def.Neighbours, "runs on each side forming the neighbours' reference")
	fs.Float64Var(&o.RotationTolerance, "rotation-tolerance", def.RotationTolerance, "mark rotation: flag when the 95% interval excludes zero by more than this, degrees")
	fs.IntVar(&o.MinReference, "min-reference", def.MinReference, "mark rotation: poles the neighbours must hold, else the hole-wide fabric is the reference")
	errModel := fs.String("error-model", "", errorModelUsage)
	fs.Float64Var(&o.RotationThreshold, "rotation-threshold", def.RotationThreshold, "reference picks: beta offset to flag, degrees")
	fs.IntVar(&o.MinRunCount, "min-run-count", def.MinRunCount, "reference picks: matches a run's flag must rest on")
	fs.Float64Var(&o.DoglegThreshold, "dogleg-threshold", def.DoglegThreshold, "dogleg severity to flag, degrees per 30 m (per 100 ft with --feet)")
	fs.Float64Var(&o.GapThreshold, "gap-threshold", def.GapThreshold, "survey gap to flag, length units")
	fs.Float64Var(&o.InterferenceThreshold, "interference-threshold", def.InterferenceThreshold, "magnetic set's departure from the hole's gyro set to flag as likely magnetic interference, degrees")
	fs.Float64Var(&o.PickWindow, "pick-window", def.PickWindow, "depth window for matching picks, length units")
	fs.Float64Var(&o.MaxDepthShift, "max-depth-shift", def.MaxDepthShift, "largest depth shift between picks and core searched, length units")
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return ExitOK
		}
		return ExitUsage
	}
	if fs.NArg() > 0 {
		fmt.Fprintf(env.Stderr, "corvane qa: unexpected argument %q\n", fs.Arg(0))
		return ExitUsage
	}
	for _, req := range []struct{ name, v string }{{"--collars", *collars}, {"--surveys", *surveys}, {"--structures", *structures}, {"--runs", *runsF}} {
		if req.v == "" {
			fmt.Fprintf(env.Stderr, "corvane qa: %s is required\n", req.name)
			return ExitUsage
		}
	}
	if *format != "json" && *format != "html" {
		fmt.Fprintf(env.Stderr, "corvane qa: --format %q: want json or html\n", *format)
		return ExitUsage
	}
	if o.Reference != "neighbours" && o.Reference != "hole" {
		fmt.Fprintf(env.Stderr, "corvane qa: --reference %q: want neighbours or hole\n", o.Reference)
		return ExitUsage
	}
	if *outRef != "grid" && *outRef != "true" {
		fmt.Fprintf(env.Stderr, "corvane qa: --output-reference %q: want grid or true\n", *outRef)
		return ExitUsage
	}
	var err error
	if o.Convention.RefLine, err = coreangle.ParseRefLine(*refLine); err != nil {
		fmt.Fprintf(env.Stderr, "corvane qa: --reference-line: %v\n", err)
		return ExitUsage
	}
	if o.Convention.BetaApex, err = coreangle.ParseApex(*betaApex); err != nil {
		fmt.Fprintf(env.Stderr, "corvane qa: --beta-apex: %v\n", err)
		return ExitUsage
	}
	model, err := northref.ParseMagneticModel(*magModel)
	if err != nil {
		fmt.Fprintf(env.Stderr, "corvane qa: --model: %v\n", err)
		return ExitUsage
	}
	pr, perr := domain.ParseSurveyPriority(*priority)
	if perr != nil {
		fmt.Fprintf(env.Stderr, "corvane qa: --survey-priority: %v\n", perr)
		return ExitUsage
	}
	o.PersistentType = strings.TrimSpace(*persistent)
	o.Feet = *feet
	if o.Errors, err = readErrorModel(*errModel); err != nil {
		fmt.Fprintf(env.Stderr, "corvane qa: %v\n", err)
		return ExitUsage
	}
	if err := o.Check(); err != nil {
		fmt.Fprintf(env.Stderr, "corvane qa: %v\n", err)
		return ExitUsage
	}

	// The local grid as corvane convert reads it (the same options).
	gridOpt := convert.Options{}
	if *feet {
		gridOpt.Unit = desurvey.Feet
	}
	if code := applyLocalGrid(env, "qa", *gridFile, &gridOpt); code != ExitOK {
		return code
	}
	in, rejected, err := readQAInput(*collars, *surveys, *structures, *runsF, *picks, qaHoles{*outRef, givenOrNaN(decl), givenOrNaN(conv), *feet, model, pr, gridOpt.LocalGrid}, env.Stderr)
	if err != nil {
		reportAll(env, "qa", err)
		return ExitUsage
	}
	in.MagneticZones = zones
	rep := qa.Run(in, o)

	write := func(w io.Writer) error {
		if *format == "html" {
			return qapage.Write(w, rep, *title)
		}
		enc := json.NewEncoder(w)
		enc.SetIndent("", "  ")
		return enc.Encode(rep)
	}
	if *out == "" {
		err = write(env.Stdout)
	} else {
		err = writeOutput(*out, write)
	}
	if err != nil {
		fmt.Fprintf(env.Stderr, "corvane qa: %v\n", err)
		return ExitUsage
	}
	fmt.Fprintf(env.Stderr, "corvane qa: %s, %s: %s, %s, %s with a suspect mark\n",
		words.Plural(rep.Summary.Holes, "hole"), words.Plural(rep.Summary.Measurements, "measurement"),
		words.Plural(rep.Summary.BySeverity[qa.SeverityFlag], "flag"), words.Plural(rep.Summary.BySeverity[qa.SeverityWarning], "warning"),
		words.Plural(rep.Summary.RunsFlagged, "run"))
	if rejected > 0 {
		return ExitRows
	}
	return ExitOK
}

// readQAInput reads the files, showing the progress of the structures on
// stderr when it is a terminal. Whole-file problems (missing files or
// columns, bad collar, survey, run or pick rows) are errors; bad structure
// rows become findings in the report and are counted in rejected.
// qaHoles are the options that build the holes, as in corvane convert: the
// output reference, the values for all holes (NaN when not given), feet, the
// magnetic model, the survey priority and the local grid.
type qaHoles struct {
	outRef     string
	decl, conv float64
	feet       bool
	model      northref.MagneticModel
	priority   string
	grid       *localgrid.Grid // the project's local grid, nil when none
}

func readQAInput(collars, surveys, structures, runs, picks string, o qaHoles, stderr io.Writer) (in qa.Input, rejected int, err error) {
	open := func(name string) (*os.File, error) {
		f, err := os.Open(name)
		if err != nil {
			return nil, fmt.Errorf("%s: %w", name, err)
		}
		return f, nil
	}
	// The three tables are read before any is used, so that the problems of
	// every file are reported at once.
	readTable := func(name string, read func(io.Reader, string) error) error {
		f, err := open(name)
		if err != nil {
			return err
		}
		defer f.Close()
		return read(f, name)
	}
	var crows []csvio.CollarRow
	var srows []csvio.SurveyRow
	var rrows []csvio.RunRow
	err = errors.Join(
		readTable(collars, func(r io.Reader, n string) (err error) { crows, err = csvio.ReadCollars(r, n); return }),
		readTable(surveys, func(r io.Reader, n string) (err error) { srows, err = csvio.ReadSurveys(r, n); return }),
		readTable(runs, func(r io.Reader, n string) (err error) { rrows, err = csvio.ReadRuns(r, n); return }))
	if err != nil {
		return in, 0, err
	}
	// The holes as corvane convert builds them: one hole model corrects
	// north (package holemodel). A hole it cannot build is a problem of
	// that hole, reported once, as in convert.
	opt := convert.Options{Output: convert.Grid, CollarsFile: collars, SurveysFile: surveys, MagneticModel: o.model, SurveyPriority: o.priority, LocalGrid: o.grid}
	if o.outRef == "true" {
		opt.Output = convert.True
	}
	if !math.IsNaN(o.decl) {
		opt.Declination = convert.Given{Value: o.decl, Set: true}
	}
	if !math.IsNaN(o.conv) {
		opt.GridConvergence = convert.Given{Value: o.conv, Set: true}
	}
	if o.feet {
		opt.Unit = desurvey.Feet
	}
	holes, err := convert.Build(crows, srows, opt)
	if err != nil {
		return in, 0, err
	}
	for _, h := range holes.List() {
		c := qa.Collar{HoleID: h.ID, East: h.Collar.East, North: h.Collar.North, Elevation: h.Collar.Elevation,
			Azimuth: h.Collar.Azimuth, Dip: h.Collar.Dip, Depth: h.Collar.Depth, Line: h.Line, Path: h.Path, DeclinationSource: h.DeclinationSource()}
		if h.Err != nil {
			c.Problem, c.ProblemSource, c.ProblemLine = h.Hole.Err.Msg, "collars", h.Err.Loc.Line
			if h.Err.Loc.File == surveys {
				c.ProblemSource = "surveys"
			}
			in.Collars = append(in.Collars, c)
			continue
		}
		in.Collars = append(in.Collars, c)
		for i, st := range h.Stations {
			in.Surveys = append(in.Surveys, qa.Station{HoleID: h.ID, Depth: st.Depth, Azimuth: st.Azimuth, Dip: st.Dip,
				Magnetic: h.Magnetic[i], Line: h.In.Stations[i].Line})
		}
		// The sets by kind, each in the output reference through the hole
		// model, for the comparison of magnetic and reference (gyro) sets;
		// a set the model cannot build is left out of it.
		for _, k := range h.Sets {
			if k.Hole.Err != nil {
				continue
			}
			qs := qa.SurveySet{HoleID: h.ID, Kind: k.Kind, Instrument: string(k.Hole.In.Instrument)}
			for i, st := range k.Hole.Stations {
				qs.Stations = append(qs.Stations, qa.Station{HoleID: h.ID, Depth: st.Depth, Azimuth: st.Azimuth, Dip: st.Dip,
					Magnetic: k.Hole.Magnetic[i], Line: k.Hole.In.Stations[i].Line})
			}
			in.SurveySets = append(in.SurveySets, qs)
		}
	}

	for _, r := range rrows {
		run := qa.OrientationRun{HoleID: r.HoleID, From: r.From, To: r.To, Confidence: r.Confidence, Line: r.Line}
		if !math.IsNaN(r.Mismatch) {
			m := r.Mismatch
			run.Mismatch = &m
		}
		in.Runs = append(in.Runs, run)
	}

	if picks != "" {
		f, err := open(picks)
		if err != nil {
			return in, 0, err
		}
		prows, err := csvio.ReadPicks(f, picks)
		f.Close()
		if err != nil {
			return in, 0, err
		}
		for _, p := range prows {
			in.Picks = append(in.Picks, qa.Pick{HoleID: p.HoleID, Depth: p.Depth, Dip: p.Dip, DipDirection: p.DipDirection, Line: p.Line})
		}
	}

	f, err := open(structures)
	if err != nil {
		return in, 0, err
	}
	defer f.Close()
	var size int64
	if fi, err := f.Stat(); err == nil {
		size = fi.Size()
	}
	meter := progress.New(stderr, "corvane qa: reading "+structures, size)
	defer meter.Done()
	sr, err := csvio.NewStructureReader(meter.Reader(f), structures)
	if err != nil {
		return in, 0, err
	}
	iType, iLogger := sr.Header.Index("type"), sr.Header.Index("logged_by")
	cell := func(rec []string, i int) string {
		if i < 0 || i >= len(rec) {
			return ""
		}
		return strings.TrimSpace(rec[i])
	}
	for {
		row, err := sr.Next()
		if err == io.EOF {
			break
		}
		if err != nil {
			return in, 0, err
		}
		if row.Err != nil {
			rejected++
			in.Problems = append(in.Problems, qa.Finding{Check: qa.CheckMeasurementInvalid, Severity: qa.SeverityFlag, HoleID: row.HoleID,
				Depth: row.Depth, Source: "structures", Line: row.Line, Message: "row not read: " + row.Err.Error()})
			continue
		}
		in.Measurements = append(in.Measurements, qa.Measurement{HoleID: row.HoleID, Depth: row.Depth, Alpha: row.Alpha, Beta: row.Beta,
			Type: cell(row.Record, iType), Logger: cell(row.Record, iLogger), Line: row.Line})
	}
	return in, rejected, nil
}

// givenOrNaN is a correction given on the command line, or NaN (not given).
func givenOrNaN(g convert.Given) float64 {
	if !g.Set {
		return math.NaN()
	}
	return g.Value
}

// errorModelUsage is the help of every command's --error-model option.
const errorModelUsage = "JSON file of standard errors in degrees (alpha, beta, gamma, mark_good, mark_fair, mark_poor, mark_unrated, magnetic/gyro/unknown {azimuth, dip}); absent fields take the defaults"

// readErrorModel reads the --error-model file; "" is the default model.
func readErrorModel(path string) (uncertainty.Model, error) {
	if path == "" {
		return uncertainty.Model{}, nil
	}
	f, err := os.Open(path)
	if err != nil {
		return uncertainty.Model{}, fmt.Errorf("--error-model: %w", err)
	}
	defer f.Close()
	m, err := uncertainty.ReadModel(f)
	if err != nil {
		return uncertainty.Model{}, fmt.Errorf("--error-model %s: %w", path, err)
	}
	return m, nil
}
