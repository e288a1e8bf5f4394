package cli

import (
	"context"
	"flag"
	"fmt"
	"strconv"
	"strings"

	"corvane/internal/config"
	"corvane/internal/store"
)

func init() {
	register(command{name: "migrate", summary: "move the database schema: up, down, force or version", run: runMigrate})
}

// dbFlag binds --db with its default from CORVANE_DATABASE_URL, else the
// default SQLite file.
func dbFlag(fs *flag.FlagSet, env *Env) *string {
	def := config.DefaultDatabase
	if v := strings.TrimSpace(env.Getenv(config.EnvDatabaseURL)); v != "" {
		def = v
	}
	return fs.String("db", def, "postgres:// URL, key=value PostgreSQL string or SQLite file path (env "+config.EnvDatabaseURL+")")
}

const migrateUsage = `Usage: corvane migrate up|down|force VERSION|version [--db URL] [--steps N] [--all --yes]

Moves the database schema (corvane serve applies pending migrations itself at start).
  up             apply every pending migration
  down           roll back one migration (--steps N for N; --all --yes for every one,
                 which drops every table and all data)
  force VERSION  mark a dirty schema, repaired by hand, as clean at VERSION (0: none)
  version        print the schema version

Options:
`

func runMigrate(ctx context.Context, env *Env, args []string) int {
	fs := newFlagSet(env, "migrate", migrateUsage)
	action := ""
	if len(args) > 0 && !strings.HasPrefix(args[0], "-") {
		action, args = args[0], args[1:]
	}
	db := dbFlag(fs, env)
	all := fs.Bool("all", false, "down: roll back every migration (needs --yes)")
	yes := fs.Bool("yes", false, "down --all: yes, drop every table and all data")
	steps := fs.Int("steps", 1, "down: number of migrations to roll back")
	rest := args
	var force uint64
	if action == "force" {
		if len(rest) == 0 || strings.HasPrefix(rest[0], "-") {
			fmt.Fprintln(env.Stderr, "corvane migrate force: give the VERSION the repaired schema is at (0 for none)")
			return ExitUsage
		}
		n, err := strconv.ParseUint(rest[0], 10, 32)
		if err != nil {
			fmt.Fprintf(env.Stderr, "corvane migrate force: VERSION %q is not a whole number\n", rest[0])
			return ExitUsage
		}
		force, rest = n, rest[1:]
	}
	if code, done := parseFlags(fs, rest); done {
		return code
	}
	if action == "" {
		fs.Usage()
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
		case *all && !*yes:
			fmt.Fprintln(env.Stderr, "corvane migrate down --all drops every table and all data: add --yes to do it")
			return ExitUsage
		case *all:
			err = store.MigrateDownAll(*db)
		case *steps < 1:
			fmt.Fprintln(env.Stderr, "corvane migrate: --steps must be at least 1")
			return ExitUsage
		default:
			err = store.Migrate(*db, -*steps)
		}
	case "force":
		err = store.Force(*db, uint(force))
	case "version":
	default:
		fmt.Fprintf(env.Stderr, "corvane migrate: unknown action %q (up, down, force or version)\n", action)
		return ExitUsage
	}
	if err != nil {
		fmt.Fprintf(env.Stderr, "corvane migrate %s on %s: %s\n", action, store.Redact(*db), store.RedactIn(err.Error(), *db))
		return ExitRows
	}
	v, dirty, err := store.Version(*db)
	if err != nil {
		fmt.Fprintf(env.Stderr, "corvane migrate: reading the version of %s: %s\n", store.Redact(*db), store.RedactIn(err.Error(), *db))
		return ExitRows
	}
	state := ""
	if dirty {
		state = " (dirty: a migration failed half way; repair the schema by hand, then run corvane migrate force VERSION)"
	}
	fmt.Fprintf(env.Stdout, "schema version %d%s\n", v, state)
	return ExitOK
}
