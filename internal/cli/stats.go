package cli

import (
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"strconv"
	"strings"

	"corvane/internal/csvio"
	"corvane/internal/dirstat"
	"corvane/internal/domain"
	"corvane/internal/fabric"
	"corvane/internal/uncertainty"
)

func init() {
	register(command{
		name:    "stats",
		summary: "set statistics of planes and lines from a CSV (Fisher, orientation tensor, Terzaghi)",
		run:     runStats,
	})
}

const statsUsage = `Usage:
  corvane stats --in FILE [--sets auto:N|type | --set NAME:TREND/PLUNGE:CONE ...]
                [--sets-on planes|lines|both] [--weighting terzaghi[:CAP]] [--type TYPE]
                [--of planes|lines|both] [--set-uncertainty first-order|monte-carlo|off]
                [--uncertainty=false] [--error-model M.json]
                [-o OUT.json]

Reads planes (columns dip, dip_direction) and/or lines (line_trend, line_plunge) from a
CSV such as the one corvane convert writes (header names in any case; hole_azimuth and
hole_dip, with dip negative down, give the hole direction for weighting; a type column
allows --type). Prints JSON with, for all measurements and for each set: count, mean
(dip and dip direction of planes, from the mean pole; trend and plunge of lines), the
Fisher (1953) resultant R, concentration k = (N-1)/(N-R), the exact 95% cone of
confidence, the angular spread, the orientation-tensor eigenvalues and eigenvectors,
and the fabric shape (Woodcock 1977 K and C; Vollmer 1990 P, G, R, B; K or C is null
with a note where it is infinite or undefined, e.g. K of identical axes). Poles and lines
are treated as axes: the end given does not matter.

Sets:
  --set NAME:TREND/PLUNGE:CONE   a window: every axis within CONE degrees of the axis
                                 TREND/PLUNGE (for planes, the pole) joins NAME; an axis
                                 in several windows joins the nearest centre. Repeatable.
  --sets auto:N                  N sets by k-means on axes (see "set_method" in the output),
                                 deterministic for a given --seed.
  --sets type                    one set per type code.
  --sets-on planes|lines|both    what the sets apply to: by default the planes (their
                                 poles), or the lines when the file has no planes.

Weighting:
  --weighting terzaghi[:CAP]     Terzaghi (1965) weight 1/|cos delta| for each plane, delta
                                 the angle between its pole and the hole, capped at CAP
                                 (default 2.924 = 1/cos 70, after Brady & Brown 2004 citing
                                 Goodman 1976). Weighted and unweighted results are shown
                                 side by side. Lines are not weighted.

Measurement uncertainty (on unless --uncertainty=false or --set-uncertainty off): each set
of planes and of lines also gets "measurement_uncertainty": the 95% cone of its mean moved
by the measurement errors (alpha, beta and, for lines, gamma readings per measurement, one
mark error per orientation run and one survey error per hole, shared by their
measurements) beside the classical Fisher cone, the two combined, and which dominates; a
line needs its plane on the row. --set-uncertainty first-order (the default) propagates
the errors linearly; monte-carlo draws them (1,000 seeded trials per set, at most 5,000
axes per report). The report's measurement_uncertainty.used names the method.
The errors come from --error-model (defaults of common practice otherwise) and the
columns corvane convert and the export write or carry: hole_id, hole_azimuth, hole_dip,
survey_instrument (unknown when absent), run_confidence and run_mismatch (an unrated
mark when absent), run_from (measurements of a hole with the same run_from share one
mark error; without it each has its own). Rows without a hole direction are left out of
it and counted. The figures depend on the error model and are no substitute for the
reviewer's judgement or local practice.

Rows without a dip direction (dip given, no dip direction: a vertical hole) and rows the
conversion could not orient (error column filled) are skipped and counted in
"rows_skipped" with the reason; they do not change the exit status. Rows that cannot be
read are reported with file, line and column on standard error and in "problems"; the
other rows are used and the exit status is 1.

` + fabric.Caution + `

Options:
`

// windowFlags collects repeated --set NAME:TREND/PLUNGE:CONE values.
type windowFlags []dirstat.Window

func (w *windowFlags) String() string { return fmt.Sprint(len(*w), " windows") }

func (w *windowFlags) Set(s string) error {
	win, err := fabric.ParseWindow(s, *w)
	if err != nil {
		return err
	}
	*w = append(*w, win)
	return nil
}

// cliOptionError turns a fabric option error into the CLI's spelling
// (--sets-on rather than sets_on).
func cliOptionError(err error) error {
	var oe *fabric.OptionError
	if errors.As(err, &oe) {
		return fmt.Errorf("--%s %q: %s", strings.ReplaceAll(oe.Option, "_", "-"), oe.Value, oe.Msg)
	}
	return err
}

// orientInput is the measurements of one input file after --type filtering.
type orientInput struct {
	file       string
	in         fabric.Input
	azimuthRef string // the azimuth_reference shared by every row, "" when absent or mixed
	problems   []*domain.Error
	// where each row was logged (hole, depth, rock type), for domains
	where []rowWhere
}

type rowWhere struct {
	hole, rock string
	depth      float64
}

// loadOrientations reads path ("-" for standard input) and keeps the rows of
// type typ (all when typ is empty), each with its measurement errors under
// the error model em (fabric.RowErrors). Problems are also written to
// stderr.
func loadOrientations(env *Env, path, typ string, em uncertainty.Model) (*orientInput, error) {
	return loadOrientationsWith(env, path, typ, csvio.OrientationOptions{}, em)
}

// loadOrientationsWith is loadOrientations with read options (Geotech to
// read the rock type, as the domains report does).
func loadOrientationsWith(env *Env, path, typ string, opt csvio.OrientationOptions, em uncertainty.Model) (*orientInput, error) {
	rows, problems, err := readTypedRows(env, path, typ, opt)
	if err != nil {
		return nil, err
	}
	oi := &orientInput{file: path, problems: problems}
	oi.in.Rejected = len(problems)
	refs := map[string]bool{}
	for _, row := range rows {
		oi.in.Rows = append(oi.in.Rows, fabric.Row{Type: row.Type, HasPlane: row.HasPlane, Plane: row.Plane,
			HasLine: row.HasLine, Line: row.LineDir, HasHole: row.HasHole, Hole: row.Hole,
			NoAzimuth: row.NoAzimuth, Unoriented: row.Unoriented, Error: row.Error,
			Errors: fabric.RowErrors(em, row.HoleID, string(row.SurveyInstrument), row.RunConfidence, row.RunMismatch, row.RunFrom)})
		oi.where = append(oi.where, rowWhere{hole: row.HoleID, depth: row.Depth, rock: row.RockType})
		refs[row.AzimuthRef] = true
	}
	if len(refs) == 1 {
		for ref := range refs {
			oi.azimuthRef = ref
		}
	}
	return oi, nil
}

// orientFlags are the flags shared by stats, net and rose.
type orientFlags struct {
	in, out, typ, of, weighting, sets string
	setsOn                            string
	windows                           windowFlags
	seed                              uint64
}

func (c *orientFlags) register(fs *flag.FlagSet, withSets bool) {
	fs.StringVar(&c.in, "in", "", "input CSV (\"-\" for standard input)")
	fs.StringVar(&c.out, "o", "", "output file (default standard output)")
	fs.StringVar(&c.typ, "type", "", "use only rows whose type column equals this (case-insensitive)")
	fs.StringVar(&c.weighting, "weighting", "", "terzaghi or terzaghi:CAP (planes only)")
	if withSets {
		fs.StringVar(&c.sets, "sets", "", "auto:N for N sets by k-means on axes, type for one set per type code")
		fs.Var(&c.windows, "set", "a set window NAME:TREND/PLUNGE:CONE (repeatable; for planes the centre is the pole)")
		fs.Uint64Var(&c.seed, "seed", fabric.DefaultSeed, "seed for --sets auto:N")
		fs.StringVar(&c.setsOn, "sets-on", "", "planes, lines or both: what sets apply to (default planes, or lines when there are no planes)")
	}
}

// options parses the weighting and set flags.
func (c *orientFlags) options() (fabric.Weighting, fabric.Sets, error) {
	w, err := fabric.ParseWeighting(c.weighting)
	if err != nil {
		return w, fabric.Sets{}, cliOptionError(err)
	}
	s, err := fabric.ParseSets(c.sets, c.setsOn, c.windows, c.seed)
	return w, s, cliOptionError(err)
}

// parseOrientArgs parses args for the orientation command name (stats, net or
// rose). fail reports an error as "corvane NAME: ..." and returns ExitUsage;
// done is true, with the exit code, when the command must stop here (help, a
// bad flag or an unexpected argument).
func parseOrientArgs(env *Env, fs *flag.FlagSet, name string, args []string) (fail func(error) int, code int, done bool) {
	fail = func(err error) int {
		fmt.Fprintf(env.Stderr, "corvane %s: %v\n", name, cliOptionError(err))
		return ExitUsage
	}
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return fail, ExitOK, true
		}
		return fail, ExitUsage, true
	}
	if fs.NArg() > 0 {
		return fail, fail(fmt.Errorf("unexpected argument %q", fs.Arg(0))), true
	}
	return fail, ExitOK, false
}

// orientExit is the exit status after reading oi: 1 when rows were rejected.
func orientExit(oi *orientInput) int {
	if len(oi.problems) > 0 {
		return ExitRows
	}
	return ExitOK
}

func runStats(_ context.Context, env *Env, args []string) int {
	fs := newFlagSet(env, "stats", statsUsage)
	var c orientFlags
	c.register(fs, true)
	fs.StringVar(&c.of, "of", "both", "planes, lines or both (those present)")
	unc := fs.Bool("uncertainty", true, "each set carries the measurement errors into the cone of its mean, beside the Fisher cone; --uncertainty=false: not (as --set-uncertainty off)")
	setUnc := fs.String("set-uncertainty", "", "how the sets' measurement cones are found: first-order (the default), monte-carlo or off")
	emPath := fs.String("error-model", "", "error model JSON for the measurement uncertainty (fields as in the README; absent fields take the defaults)")
	fail, code, done := parseOrientArgs(env, fs, "stats", args)
	if done {
		return code
	}
	em, err := readErrorModel(*emPath)
	if err != nil {
		return fail(err)
	}
	w, so, err := c.options()
	if err != nil {
		return fail(err)
	}
	if _, err := fabric.ParseOf(c.of); err != nil {
		return fail(err)
	}
	method, err := fabric.ParseSetUncertainty(*setUnc, strconv.FormatBool(*unc))
	if err != nil {
		return fail(err)
	}
	oi, err := loadOrientations(env, c.in, c.typ, em)
	if err != nil {
		return fail(err)
	}
	rep, err := fabric.Stats(oi.in, fabric.Options{Of: c.of, Sets: so, Weighting: w, Uncertainty: method != fabric.SetUncertaintyOff, UncertaintyMethod: method, ErrorModel: em})
	if err != nil {
		return fail(err)
	}
	rep.Input, rep.TypeFilter, rep.AzimuthRef = oi.file, c.typ, oi.azimuthRef
	for _, p := range oi.problems {
		rep.Problems = append(rep.Problems, p.Error())
	}
	err = writeOutputOr(env.Stdout, c.out, func(out io.Writer) error {
		enc := json.NewEncoder(out)
		enc.SetIndent("", "  ")
		enc.SetEscapeHTML(false)
		return enc.Encode(rep)
	})
	if err != nil {
		return fail(err)
	}
	return orientExit(oi)
}
