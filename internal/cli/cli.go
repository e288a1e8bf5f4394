// Package cli is corvane's composition root: it parses the command line, builds
// the configuration and wires the packages together for each subcommand.
//
// Each subcommand lives in its own file and adds itself to the command table
// with register in an init function.
package cli

import (
	"context"
	"fmt"
	"io"
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
	if len(args) == 0 || args[0] == "help" || args[0] == "-h" || args[0] == "--help" {
		usage(stdout)
		if len(args) == 0 {
			return ExitUsage
		}
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
	fmt.Fprintln(w, "\nUsage: corvane COMMAND [options]   (corvane COMMAND -h for its options)")
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
