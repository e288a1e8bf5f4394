package cli

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"os/user"
	"path/filepath"
	"slices"
	"strings"

	"corvane/internal/domain"
	"corvane/internal/progress"
	"corvane/internal/service"
	"corvane/internal/words"
)

func init() {
	register(command{name: "import", summary: "load a CSV (or AGS4) file into a project's database, all or nothing", run: runImport})
}

const importUsage = `Usage:
  corvane import --project ID|NAME --kind KIND [--dry-run] [--duplicates refuse|skip|keep]
                 [--as NAME] [--format text|json] [--idempotency-key KEY] [--db URL] FILE

Loads FILE (- for standard input) into the project's database: the same import as
POST /v1/projects/{project}/imports/{kind}, one engine and one set of rules, with the
route's options under the same names (dry_run is --dry-run). KIND is one of
  collars          hole_id, easting, northing, elevation, azimuth, dip, depth [...]
                   (holes of the same name are updated)
  surveys          hole_id, depth, azimuth, dip [...] (replaces each named hole's set)
  runs             hole_id, from, to, confidence [, mismatch]
  measurements     hole_id, depth, alpha, beta, type [, gamma, apparent_thickness,
                   comment, logged_by, logged_at]
  intervals        hole_id, from, to [, recovered, solid, sound, pieces, ...]
  discontinuities  an AGS4 file whose DISC rows become measurements
All or nothing: when any row is bad nothing is stored, and every problem is listed on
standard error with file, line and column (identical problems once, with their count and
lines); the exit status is then 1. A measurement of a plane type with gamma, or of a
line type without it, is refused at its gamma column, as at every other door.
Measurement rows repeating a stored one or an earlier row are refused unless
--duplicates says skip or keep. The import is recorded in the project's audit log under
the --as name (default: the operating-system user), which is also the logger of
measurement rows without logged_by. On a terminal, progress (rows, rows per second,
share done, time left) shows on standard error after the first second; piped or
redirected, only the result is printed.

Options:
`

// importFormats are the outputs of a successful import.
var importFormats = []string{"text", "json"}

func runImport(ctx context.Context, env *Env, args []string) int {
	fs := newFlagSet(env, "import", importUsage)
	db := dbFlag(fs, env)
	project := fs.String("project", "", "project id or name (required)")
	kind := fs.String("kind", "", "what FILE holds: collars, surveys, runs, measurements, intervals or discontinuities (required)")
	dry := fs.Bool("dry-run", false, "check everything, including holes and type codes in the database, and store nothing")
	dups := fs.String("duplicates", "", "measurement rows repeating a stored row or an earlier row: refuse (default), skip or keep")
	as := fs.String("as", "", "who imports, for the audit log and as logger of rows without logged_by (default: the operating-system user)")
	format := fs.String("format", "text", "the result on standard output: text, or json (the route's answer)")
	key := fs.String("idempotency-key", "", "a retry with the same key returns the first result and stores nothing again (the route's Idempotency-Key)")
	var files []string
	for {
		if code, done := parseFlags(fs, args); done {
			return code
		}
		if fs.NArg() == 0 {
			break
		}
		files = append(files, fs.Arg(0))
		args = fs.Args()[1:]
	}
	fail := func(code int, format string, a ...any) int {
		fmt.Fprintf(env.Stderr, "corvane import: %s\n", fmt.Sprintf(format, a...))
		return code
	}
	switch {
	case *project == "" || *kind == "" || len(files) == 0:
		fs.Usage()
		return ExitUsage
	case len(files) > 1:
		return fail(ExitUsage, "one FILE per import, got %d: %s", len(files), strings.Join(files, " "))
	case !slices.Contains(importFormats, words.Option(*format)):
		return fail(ExitUsage, "--format %q: want text or json", *format)
	}
	if _, err := service.ImportRole(*kind); err != nil {
		return fail(ExitUsage, "--kind: %s", domain.Public(err))
	}
	in, name, size, err := openImportFile(env, files[0], *kind)
	if err != nil {
		return fail(ExitUsage, "%v", err)
	}
	defer in.Close()

	st, code := openStore(ctx, env, "import", *db)
	if st == nil {
		return code
	}
	defer st.Close()
	pid, err := findProject(ctx, st, *project)
	if err != nil {
		return fail(ExitRows, "%s", domain.Public(err))
	}
	ctx = service.WithActor(ctx, localActor(env, *as))
	meter := progress.New(env.Stderr, "import "+*kind, size)
	svc := service.New(st, nil)
	res, err := svc.Import(ctx, pid, service.ImportRequest{
		Kind: *kind, File: name, Body: meter.Reader(in),
		DryRun: *dry, Duplicates: *dups, IdempotencyKey: *key,
	})
	meter.Done()
	// The rows' change log entries (for sync) are written after the import
	// commits; the command ends when they are.
	svc.WaitLogging()
	if err != nil {
		if errors.Is(err, context.Canceled) || errors.Is(ctx.Err(), context.Canceled) {
			return fail(ExitRows, "%s: interrupted; nothing was imported", name)
		}
		if domain.KindOf(err) == domain.Internal {
			return fail(ExitRows, "%s: %v", name, err)
		}
		reportAll(env, "import", err)
		return ExitRows
	}
	if words.Option(*format) == "json" {
		b, _ := json.Marshal(res)
		fmt.Fprintln(env.Stdout, string(b))
		return ExitOK
	}
	fmt.Fprintln(env.Stdout, importSummary(res))
	return ExitOK
}

// importSummary is the one-line result of an import for people.
func importSummary(res service.ImportResult) string {
	var b strings.Builder
	fmt.Fprintf(&b, "%s: %s read, %d created, %d updated", res.File, words.Plural(res.Rows, "row"), res.Created, res.Updated)
	if res.Kind == service.ImportMeasurements {
		fmt.Fprintf(&b, ", %s, %d skipped", words.Plural(res.Duplicates, "duplicate"), res.Skipped)
	}
	switch {
	case res.DryRun:
		b.WriteString(" (dry run: nothing was stored)")
	case res.Replayed:
		b.WriteString(" (already imported with this idempotency key: nothing was stored again)")
	}
	return b.String()
}

// openImportFile opens the file an import reads: path, or standard input
// for "-". name is the file name the import's messages use (the base name, as
// a browser sends it; the kind's usual name for standard input), size its
// length in bytes when known (0 otherwise), for the progress line.
func openImportFile(env *Env, path, kind string) (in io.ReadCloser, name string, size int64, err error) {
	if path == "-" {
		return io.NopCloser(env.Stdin), "", 0, nil
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, "", 0, err
	}
	fi, err := f.Stat()
	if err != nil {
		f.Close()
		return nil, "", 0, err
	}
	if fi.IsDir() {
		f.Close()
		return nil, "", 0, fmt.Errorf("%s is a directory", path)
	}
	if fi.Mode().IsRegular() {
		size = fi.Size()
	}
	return f, filepath.Base(path), size, nil
}

// localActor is the caller of a command that writes to the database
// directly: admin of every project (whoever can open the database can do
// anything in it), with no token (token id 0 marks the local command line in
// the audit log), named by --as, else by the operating-system user, else
// "command line".
func localActor(env *Env, as string) service.Actor {
	name := strings.TrimSpace(as)
	for _, v := range []string{"USER", "LOGNAME"} {
		if name == "" {
			name = strings.TrimSpace(env.Getenv(v))
		}
	}
	if name == "" {
		if u, err := user.Current(); err == nil {
			name = u.Username
		}
	}
	if name == "" {
		name = "command line"
	}
	return service.Actor{Name: name, ProjectID: domain.AllProjects, Role: domain.RoleAdmin}
}
