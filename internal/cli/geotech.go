package cli

import (
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"

	"corvane/internal/csvio"
	"corvane/internal/domain"
	"corvane/internal/fabric"
	"corvane/internal/geom"
	"corvane/internal/geotech"
	"corvane/internal/kinematic"
	"corvane/internal/netsvg"
	"corvane/internal/structdomain"
	"corvane/internal/words"
)

// domainFlags collects repeated --domain NAME=HOLE[:FROM..TO],...[;rock=A|B].
type domainFlags []structdomain.Domain

func (d *domainFlags) String() string { return fmt.Sprint(len(*d), " domains") }

func (d *domainFlags) Set(s string) error {
	dom, err := structdomain.Parse(s)
	if err != nil {
		return err
	}
	all := append(append([]structdomain.Domain(nil), *d...), dom)
	if err := structdomain.Validate(all); err != nil {
		return err
	}
	*d = all
	return nil
}

// geoInput is a geotechnical command's input: the rows for the pipeline and
// what the report says of the source.
type geoInput struct {
	file     string
	in       geotech.Input
	problems []string
}

// loadGeo reads the rows of a geotechnical command (with depth, alpha, rock
// type and unoriented rows) and parses its set flags.
func loadGeo(env *Env, c *orientFlags) (*geoInput, fabric.Sets, error) {
	so, err := fabric.ParseSets(c.sets, "planes", c.windows, c.seed)
	if err != nil {
		return nil, so, cliOptionError(err)
	}
	rows, problems, err := readTypedRows(env, c.in, c.typ, csvio.OrientationOptions{Geotech: true})
	if err != nil {
		return nil, so, err
	}
	gi := &geoInput{file: c.in}
	gi.in.Rejected = len(problems)
	for _, p := range problems {
		gi.problems = append(gi.problems, p.Error())
	}
	for _, r := range rows {
		gi.in.Rows = append(gi.in.Rows, geotech.Row{HoleID: r.HoleID, Depth: r.Depth, Type: r.Type, RockType: r.RockType,
			HasPlane: r.HasPlane, Plane: r.Plane, HasHole: r.HasHole, Hole: r.Hole, Alpha: r.Alpha, Unoriented: r.Unoriented,
			NoAzimuth: r.NoAzimuth, Error: r.Error})
	}
	return gi, so, nil
}

// exit is the exit status after reading: 1 when rows were rejected.
func (gi *geoInput) exit() int {
	if len(gi.problems) > 0 {
		return ExitRows
	}
	return ExitOK
}

// registerGeoFlags adds the input and set flags of the geotechnical commands.
func registerGeoFlags(fs *flag.FlagSet, c *orientFlags) {
	fs.StringVar(&c.in, "in", "", "input CSV (\"-\" for standard input), e.g. the output of corvane convert")
	fs.StringVar(&c.out, "o", "", "output file (default standard output)")
	fs.StringVar(&c.typ, "type", "", "use only rows whose type column equals this (case-insensitive)")
	fs.StringVar(&c.sets, "sets", "", "auto:N for N sets by k-means on the poles, type for one set per type code")
	fs.Var(&c.windows, "set", "a set window NAME:TREND/PLUNGE:CONE on the poles (repeatable)")
	fs.Uint64Var(&c.seed, "seed", fabric.DefaultSeed, "seed for --sets auto:N")
}

// writeSVG writes net n to path.
func writeSVG(path string, n netsvg.Net) error {
	return writeOutput(path, func(w io.Writer) error { return netsvg.WriteNet(w, n) })
}

// writeJSON writes v as indented JSON to path (standard output when "").
func writeJSON(env *Env, fail func(error) int, path string, v any) int {
	err := writeOutputOr(env.Stdout, path, func(w io.Writer) error {
		enc := json.NewEncoder(w)
		enc.SetIndent("", "  ")
		enc.SetEscapeHTML(false)
		return enc.Encode(v)
	})
	if err != nil {
		return fail(err)
	}
	return ExitOK
}

// parseFace parses --face DIP/DIP_DIRECTION.
func parseFace(s string) (geom.Plane, error) {
	p, err := kinematic.ParseFace(s)
	if err != nil {
		return p, fmt.Errorf("--face %w", err)
	}
	return p, nil
}

// registerDomainFlags adds --domain.
func registerDomainFlags(fs *flag.FlagSet, d *domainFlags) {
	fs.Var(d, "domain", "a structural domain "+structdomain.Syntax+" (repeatable; a hole without a range is the whole hole)")
}

// readTypedRows reads path ("-" for standard input) with opt and returns
// the rows of type typ (all when typ is empty) and the problems, which are
// also written to stderr.
func readTypedRows(env *Env, path, typ string, opt csvio.OrientationOptions) ([]csvio.OrientationRow, []*domain.Error, error) {
	if path == "" {
		return nil, nil, errors.New("--in FILE is required")
	}
	r, closeIn, err := openInput(env, path)
	if err != nil {
		return nil, nil, err
	}
	defer closeIn()
	rows, problems, err := csvio.ReadOrientationsWith(r, path, opt)
	if err != nil {
		return nil, nil, err
	}
	for _, p := range problems {
		fmt.Fprintf(env.Stderr, "corvane: %v (row skipped)\n", p)
	}
	kept := rows[:0]
	for _, row := range rows {
		if typ == "" || words.SameCode(row.Type, typ) {
			kept = append(kept, row)
		}
	}
	if len(kept) == 0 {
		if typ != "" {
			return nil, nil, fmt.Errorf("%s: no usable rows of type %q", path, typ)
		}
		return nil, nil, fmt.Errorf("%s: no usable rows", path)
	}
	return kept, problems, nil
}

// openInput opens path for reading, standard input for "-"; the function
// returned closes it.
func openInput(env *Env, path string) (io.Reader, func(), error) {
	if path == "-" {
		return env.Stdin, func() {}, nil
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, nil, err
	}
	return f, func() { f.Close() }, nil
}
