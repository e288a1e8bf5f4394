package cli

import (
	"context"
	"flag"
	"fmt"
	"strings"

	"corvane/internal/config"
	"corvane/internal/store"
)

func init() {
	register(command{name: "migrate", summary: "move the database schema: up, down or version", run: runMigrate})
}

// dbFlag binds --db with its default from CORVANE_DATABASE_URL, else the
// default SQLite file.
func dbFlag(fs *flag.FlagSet, env *Env) *string {
	def := config.DefaultDatabase
	if v := strings.TrimSpace(env.Getenv(config.EnvDatabaseURL)); v != "" {
		def = v
	}
	return fs.String("db", def, "postgres:// URL or SQLite file path (env "+config.EnvDatabaseURL+")")
}

func runMigrate(ctx context.Context, env *Env, args []string) int {
	fs := flag.NewFlagSet("migrate", flag.ContinueOnError)
	fs.SetOutput(env.Stderr)
	fs.Usage = func() {
		fmt.Fprintln(env.Stderr, "Usage: corvane migrate up|down|version [--db URL] [--all] [--steps N]")
		fmt.Fprintln(env.Stderr, "  up       apply every pending migration")
		fmt.Fprintln(env.Stderr, "  down     roll back one migration (--steps N for N, --all for every one)")
		fmt.Fprintln(env.Stderr, "  version  print the schema version")
		fs.PrintDefaults()
	}
	if len(args) == 0 || strings.HasPrefix(args[0], "-") {
		fs.Usage()
		return ExitUsage
	}
	action := args[0]
	db := dbFlag(fs, env)
	all := fs.Bool("all", false, "down: roll back every migration")
	steps := fs.Int("steps", 1, "down: number of migrations to roll back")
	if err := fs.Parse(args[1:]); err != nil {
		return ExitUsage
	}
	if fs.NArg() > 0 {
		fmt.Fprintf(env.Stderr, "corvane migrate: unexpected argument %q\n", fs.Arg(0))
		return ExitUsage
	}
	var err error
	switch action {
	case "up":
		err = store.Migrate(*db, 0)
	case "down":
		switch {
		case *all:
			err = store.MigrateDownAll(*db)
		case *steps < 1:
			fmt.Fprintln(env.Stderr, "corvane migrate: --steps must be at least 1")
			return ExitUsage
		default:
			err = store.Migrate(*db, -*steps)
		}
	case "version":
	default:
		fmt.Fprintf(env.Stderr, "corvane migrate: unknown action %q (up, down or version)\n", action)
		return ExitUsage
	}
	if err != nil {
		fmt.Fprintf(env.Stderr, "corvane migrate %s on %s: %v\n", action, store.Redact(*db), err)
		return ExitRows
	}
	v, dirty, err := store.Version(*db)
	if err != nil {
		fmt.Fprintf(env.Stderr, "corvane migrate: reading the version of %s: %v\n", store.Redact(*db), err)
		return ExitRows
	}
	state := ""
	if dirty {
		state = " (dirty: a migration failed half way; fix the schema by hand, then force the version)"
	}
	fmt.Fprintf(env.Stdout, "schema version %d%s\n", v, state)
	return ExitOK
}
