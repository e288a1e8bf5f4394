package cli

import (
	"context"
	"flag"
	"fmt"
	"strconv"
	"strings"

	"corvane/internal/domain"
	"corvane/internal/service"
	"corvane/internal/store"
)

func init() {
	register(command{name: "token", summary: "create an API token for a project (printed once)", run: runToken})
}

func runToken(ctx context.Context, env *Env, args []string) int {
	fs := flag.NewFlagSet("token", flag.ContinueOnError)
	fs.SetOutput(env.Stderr)
	fs.Usage = func() {
		fmt.Fprintln(env.Stderr, "Usage: corvane token create --project ID|NAME|all --role read|log|admin [--name NAME] [--db URL]")
		fmt.Fprintln(env.Stderr, "Prints the new token's secret once on standard output; only its SHA-256 is stored.")
		fmt.Fprintln(env.Stderr, "--project all makes a site token, valid in every project (a site admin may create projects).")
		fs.PrintDefaults()
	}
	if len(args) == 0 || args[0] != "create" {
		fs.Usage()
		return ExitUsage
	}
	db := dbFlag(fs, env)
	project := fs.String("project", "", "project id or name, or all for a site token")
	role := fs.String("role", "", "read, log or admin")
	name := fs.String("name", "", "who or what the token is for, e.g. \"rig 2 logger\" (shown in the audit trail)")
	if err := fs.Parse(args[1:]); err != nil {
		return ExitUsage
	}
	if *project == "" || *role == "" || fs.NArg() > 0 {
		fs.Usage()
		return ExitUsage
	}
	r := domain.Role(strings.ToLower(*role))
	if r.Rank() == 0 {
		fmt.Fprintf(env.Stderr, "corvane token: --role must be read, log or admin, got %q\n", *role)
		return ExitUsage
	}
	if v, _, err := store.Version(*db); err != nil || v == 0 {
		fmt.Fprintf(env.Stderr, "corvane token: the database %s has no schema yet: run corvane migrate up first\n", store.Redact(*db))
		return ExitRows
	}
	st, err := store.Open(ctx, *db)
	if err != nil {
		fmt.Fprintf(env.Stderr, "corvane token: %v\n", err)
		return ExitRows
	}
	defer st.Close()
	ctx = service.WithActor(ctx, service.Actor{Name: "command line", ProjectID: domain.AllProjects, Role: domain.RoleAdmin})
	svc := service.New(st, nil)
	pid := domain.AllProjects
	if *project != "all" {
		if id, err := strconv.ParseInt(*project, 10, 64); err == nil && id > 0 {
			pid = id
		} else {
			p, err := st.GetProjectByName(ctx, *project)
			if err != nil {
				fmt.Fprintf(env.Stderr, "corvane token: no project with id or name %q\n", *project)
				return ExitRows
			}
			pid = p.ID
		}
	}
	secret, t, err := svc.CreateToken(ctx, pid, r, *name)
	if err != nil {
		fmt.Fprintf(env.Stderr, "corvane token: %s\n", domain.Public(err))
		return ExitRows
	}
	scope := "every project (site token)"
	if pid != domain.AllProjects {
		scope = "project " + strconv.FormatInt(pid, 10)
	}
	fmt.Fprintf(env.Stderr, "token %d %q, role %s, for %s. Keep the secret below: it is not shown again.\n", t.ID, t.Name, t.Role, scope)
	fmt.Fprintln(env.Stdout, secret)
	return ExitOK
}
