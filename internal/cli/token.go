package cli

import (
	"context"
	"fmt"
	"strconv"
	"strings"
	"text/tabwriter"
	"time"

	"corvane/internal/domain"
	"corvane/internal/service"
	"corvane/internal/store"
)

func init() {
	register(command{name: "token", summary: "create, list or revoke API tokens of a project", run: runToken})
}

const tokenUsage = `Usage:
  corvane token create --project ID|NAME|all --role read|log|admin [--name NAME] [--db URL]
  corvane token list   --project ID|NAME|all [--db URL]
  corvane token revoke --id ID [--project ID|NAME|all] [--db URL]
  corvane token revoke --name NAME --project ID|NAME|all [--db URL]

create prints the new token's secret once on standard output; only its SHA-256 is stored.
--project all means the site tokens, valid in every project (a site admin may create projects).
list prints the project's tokens (id, role, created, name), never their secrets.
revoke deletes a token by id, or every token of the project with exactly that name;
a revoked token is refused (401) from the next request on.

Options:
`

func runToken(ctx context.Context, env *Env, args []string) int {
	action := ""
	if len(args) > 0 && !strings.HasPrefix(args[0], "-") {
		action, args = args[0], args[1:]
	}
	fs := newFlagSet(env, strings.TrimSpace("token "+action), tokenUsage)
	db := dbFlag(fs, env)
	project := fs.String("project", "", "project id or name, or all for the site tokens")
	role := fs.String("role", "", "read, log or admin (create)")
	name := fs.String("name", "", "who or what the token is for, e.g. \"rig 2 logger\" (create; revoke by name)")
	id := fs.Int64("id", 0, "token id, as token list shows it (revoke)")
	if code, done := parseFlags(fs, args); done {
		return code
	}
	switch action {
	case "create", "list", "revoke":
	case "":
		fs.Usage()
		return ExitUsage
	default:
		fmt.Fprintf(env.Stderr, "corvane token: unknown action %q (want create, list or revoke)\n", action)
		fs.Usage()
		return ExitUsage
	}
	fail := func(code int, format string, a ...any) int {
		fmt.Fprintf(env.Stderr, "corvane token %s: %s\n", action, fmt.Sprintf(format, a...))
		return code
	}
	if fs.NArg() > 0 {
		return fail(ExitUsage, "unexpected argument %q", fs.Arg(0))
	}
	var r domain.Role
	switch action {
	case "create":
		if *project == "" || *role == "" {
			fs.Usage()
			return ExitUsage
		}
		r = domain.Role(strings.ToLower(*role))
		if r.Rank() == 0 {
			return fail(ExitUsage, "--role must be read, log or admin, got %q", *role)
		}
	case "list":
		if *project == "" {
			return fail(ExitUsage, "--project ID|NAME|all is required")
		}
	case "revoke":
		switch {
		case (*id != 0) == (*name != ""):
			return fail(ExitUsage, "give either --id or --name")
		case *id < 0:
			return fail(ExitUsage, "--id %d: token ids are positive", *id)
		case *name != "" && *project == "":
			return fail(ExitUsage, "--name needs --project ID|NAME|all")
		}
	}
	st, code := openStore(ctx, env, "token "+action, *db)
	if st == nil {
		return code
	}
	defer st.Close()
	ctx = service.WithActor(ctx, localActor(env, ""))
	svc := service.New(st, nil)
	pid := domain.AllProjects
	if *project != "" && *project != "all" {
		var err error
		if pid, err = findProject(ctx, st, *project); err != nil {
			return fail(ExitRows, "%s", domain.Public(err))
		}
	}
	switch action {
	case "list":
		ts, err := svc.ListTokens(ctx, pid)
		if err != nil {
			return fail(ExitRows, "%s", domain.Public(err))
		}
		tw := tabwriter.NewWriter(env.Stdout, 0, 4, 2, ' ', 0)
		fmt.Fprintln(tw, "ID\tROLE\tCREATED\tNAME")
		for _, t := range ts {
			fmt.Fprintf(tw, "%d\t%s\t%s\t%s\n", t.ID, t.Role, t.CreatedAt.UTC().Format(time.RFC3339), t.Name)
		}
		if err := tw.Flush(); err != nil {
			return fail(ExitRows, "%v", err)
		}
		return ExitOK
	case "revoke":
		var gone []domain.Token
		if *id != 0 {
			if *project == "" {
				t, err := st.GetToken(ctx, *id)
				if err != nil {
					return fail(ExitRows, "no token with id %d", *id)
				}
				pid = t.ProjectID
			}
			t, err := svc.RevokeToken(ctx, pid, *id)
			if err != nil {
				return fail(ExitRows, "%s", domain.Public(err))
			}
			gone = append(gone, t)
		} else {
			var err error
			if gone, err = svc.RevokeTokensNamed(ctx, pid, *name); err != nil {
				return fail(ExitRows, "%s", domain.Public(err))
			}
		}
		for _, t := range gone {
			fmt.Fprintf(env.Stdout, "revoked token %d %q (role %s, %s)\n", t.ID, t.Name, t.Role, scopeOf(t.ProjectID))
		}
		return ExitOK
	}
	secret, t, err := svc.CreateToken(ctx, pid, r, *name)
	if err != nil {
		return fail(ExitRows, "%s", domain.Public(err))
	}
	fmt.Fprintf(env.Stderr, "token %d %q, role %s, for %s. Keep the secret below: it is not shown again.\n", t.ID, t.Name, t.Role, scopeOf(pid))
	fmt.Fprintln(env.Stdout, secret)
	return ExitOK
}

// openStore opens the database db for a command that works on it: a
// database without a schema yet is refused with the command that makes
// one. On failure the store is nil and code the exit status (the problem is
// on standard error, passwords masked).
func openStore(ctx context.Context, env *Env, cmd, db string) (st domain.Store, code int) {
	if v, _, err := store.Version(db); err != nil {
		fmt.Fprintf(env.Stderr, "corvane %s: reading the schema version of %s: %s\n", cmd, store.Redact(db), store.RedactIn(err.Error(), db))
		return nil, ExitRows
	} else if v == 0 {
		fmt.Fprintf(env.Stderr, "corvane %s: the database %s has no schema yet: run corvane migrate up first\n", cmd, store.Redact(db))
		return nil, ExitRows
	}
	st, err := store.Open(ctx, db)
	if err != nil {
		fmt.Fprintf(env.Stderr, "corvane %s: %s\n", cmd, store.RedactIn(err.Error(), db))
		return nil, ExitRows
	}
	return st, ExitOK
}

// findProject is the project a --project flag names: a positive whole number
// is its id (as in the routes), anything else its name.
func findProject(ctx context.Context, st domain.Store, ref string) (int64, error) {
	if n, err := strconv.ParseInt(ref, 10, 64); err == nil && n > 0 {
		return n, nil
	}
	p, err := st.GetProjectByName(ctx, ref)
	if err != nil {
		if domain.IsKind(err, domain.NotFound) {
			return 0, domain.Errorf(domain.NotFound, "no project with id or name %q", ref)
		}
		return 0, err
	}
	return p.ID, nil
}

func scopeOf(pid int64) string {
	if pid == domain.AllProjects {
		return "every project (site token)"
	}
	return "project " + strconv.FormatInt(pid, 10)
}
