// Package cli is corvane's composition root: it parses the command line, builds
// the configuration and wires the packages together for each subcommand.
//
// Each subcommand lives in its own file and adds itself to the command table
// with register in an init function.
package cli

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"runtime/debug"
	"sort"
)

// Env is what a subcommand may touch of the outside world. Tests build one
// with buffers and a map-backed Getenv.
type Env struct {
	Stdin  io.Reader
	Stdout io.Writer
	Stderr io.Writer
	Getenv func(string) string
}

// Exit codes shared by the subcommands.
const (
	ExitOK    = 0 // success
	ExitRows  = 1 // the command ran but some input rows were rejected
	ExitUsage = 2 // bad flags or an input file that cannot be read as a whole
)

type command struct {
	name    string
	summary string
	run     func(ctx context.Context, env *Env, args []string) int
}

var commands = map[string]command{}

func register(c command) {
	if _, dup := commands[c.name]; dup {
		panic("cli: command registered twice: " + c.name)
	}
	commands[c.name] = c
}

// Main runs corvane with args (without the program name) and returns the
// process exit code.
func Main(ctx context.Context, args []string, stdin io.Reader, stdout, stderr io.Writer, getenv func(string) string) int {
	env := &Env{Stdin: stdin, Stdout: stdout, Stderr: stderr, Getenv: getenv}
	if len(args) == 0 || args[0] == "help" || isHelp(args[0]) {
		if len(args) == 2 && args[0] == "help" {
			if _, ok := commands[args[1]]; ok {
				return Main(ctx, []string{args[1], "--help"}, stdin, stdout, stderr, getenv)
			}
		}
		usage(stdout)
		if len(args) == 0 {
			return ExitUsage
		}
		return ExitOK
	}
	if args[0] == "--version" || args[0] == "-version" || args[0] == "version" {
		fmt.Fprintln(stdout, "corvane", Version())
		return ExitOK
	}
	c, ok := commands[args[0]]
	if !ok {
		fmt.Fprintf(stderr, "corvane: unknown command %q\n\n", args[0])
		usage(stderr)
		return ExitUsage
	}
	return c.run(ctx, env, args[1:])
}

func usage(w io.Writer) {
	fmt.Fprintln(w, "corvane: oriented drill core, from core angles to true orientations.")
	fmt.Fprintln(w, "\nUsage: corvane COMMAND [options]   (corvane COMMAND --help for its options)")
	fmt.Fprintln(w, "       corvane --version")
	fmt.Fprintln(w, "\nCommands:")
	names := make([]string, 0, len(commands))
	for n := range commands {
		names = append(names, n)
	}
	sort.Strings(names)
	for _, n := range names {
		fmt.Fprintf(w, "  %-12s %s\n", n, commands[n].summary)
	}
}

// version is the release, set at link time:
//
//	go build -ldflags "-X corvane/internal/cli.version=v1.4.0" ./cmd/corvane
var version string

// Version is the version corvane reports: the one set at link time, else the
// module version the binary was installed at (go install corvane/cmd/corvane@v...),
// else the source revision recorded by the build (builds with VCS stamping),
// else "devel".
func Version() string {
	if version != "" {
		return version
	}
	bi, ok := debug.ReadBuildInfo()
	if !ok {
		return "devel"
	}
	if v := bi.Main.Version; v != "" && v != "(devel)" {
		return v
	}
	var rev, modified string
	for _, s := range bi.Settings {
		switch s.Key {
		case "vcs.revision":
			rev = s.Value
		case "vcs.modified":
			modified = s.Value
		}
	}
	if rev != "" {
		if len(rev) > 12 {
			rev = rev[:12]
		}
		if modified == "true" {
			rev += "+modified"
		}
		return "devel " + rev
	}
	return "devel"
}

func isHelp(a string) bool { return a == "-h" || a == "-help" || a == "--help" }

// flagSetMade, when set (by tests), sees every flag set a subcommand makes,
// so a test can check that --help documents each flag of every command.
var flagSetMade func(*flag.FlagSet)

// newFlagSet is the flag set of a subcommand: errors are returned,
// messages go to the command's standard error, and --help prints usage
// followed by every flag's default and description.
func newFlagSet(env *Env, name, usage string) *flag.FlagSet {
	fs := flag.NewFlagSet(name, flag.ContinueOnError)
	fs.SetOutput(env.Stderr)
	fs.Usage = func() {
		fmt.Fprint(fs.Output(), usage)
		fs.PrintDefaults()
	}
	if flagSetMade != nil {
		flagSetMade(fs)
	}
	return fs
}

// parseFlags parses args into fs. done is true, with the exit code, when the
// command must stop: 0 after --help (the usage was printed), 2 after a bad flag.
func parseFlags(fs *flag.FlagSet, args []string) (code int, done bool) {
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return ExitOK, true
		}
		return ExitUsage, true
	}
	return ExitOK, false
}
