package cli

import (
	"context"
	"fmt"
	"net/http"
	"strings"

	"corvane/internal/domain"
	"corvane/internal/service"
	"corvane/internal/store"
	"corvane/internal/syncremote"
)

func init() {
	register(command{name: "sync", summary: "sync this database with a central corvane service (push local changes, pull remote ones)", run: runSync})
}

// EnvSyncToken names the environment variable --token defaults to (a
// token on the command line shows in the process list).
const EnvSyncToken = "CORVANE_SYNC_TOKEN"

const syncUsage = `Usage:
  corvane sync --remote URL --token T [--project P] [--holes H1,H2] [--db URL]
  corvane sync --conflicts [--project P] [--all] [--db URL]
  corvane sync --resolve ID --keep local|remote --remote URL --token T [--project P] [--db URL]

Sync pushes the changes made in this database (creations, edits, deletions of type codes,
holes, survey sets (also by kind), runs and measurements) to the project on the remote service, then pulls
the remote's changes (of the holes named with --holes, or all). Only what changed since the
last sync on each side travels; each batch is applied with its cursor in one transaction,
so a sync cut off resumes where it stopped, and a sync with nothing new changes nothing.
The project is named by the remote's id or name (--project may be left out when the token
sees one project); the local project of the same name is made on the first sync.

A record changed on both sides since they last agreed is never resolved silently: both
versions are kept as a conflict, listed by --conflicts (the two versions field by field,
* marking the fields that differ) and resolved by a person with --resolve ID --keep local
(write this database's version over the remote's) or --keep remote (take the remote's).
The remote's audit trail records who chose what. A change the token may not make (a log
token creating a hole, say) or that the remote finds invalid is refused with the reason,
stays here and is listed with the conflicts; --resolve ID --keep remote replaces it with
the remote's record, --keep local closes it and keeps it here unpushed.

Exit status 1 when this sync met conflicts or refusals.

Options:
`

func runSync(ctx context.Context, env *Env, args []string) int {
	fs := newFlagSet(env, "sync", syncUsage)
	db := dbFlag(fs, env)
	remote := fs.String("remote", "", "address of the central service, e.g. https://core.example:8080")
	token := fs.String("token", env.Getenv(EnvSyncToken), "API token of the remote project (env "+EnvSyncToken+")")
	project := fs.String("project", "", "the remote project's id or name")
	holes := fs.String("holes", "", "hole names to pull, separated by commas (default all)")
	conflicts := fs.Bool("conflicts", false, "list the open conflicts and refused changes of this database")
	all := fs.Bool("all", false, "with --conflicts: list resolved ones too")
	resolve := fs.String("resolve", "", "id of a conflict to resolve (with --keep)")
	keep := fs.String("keep", "", "local or remote (with --resolve)")
	as := fs.String("as", "", "who syncs or resolves, for this database's audit log (default: the operating-system user)")
	if code, done := parseFlags(fs, args); done {
		return code
	}
	fail := func(code int, format string, a ...any) int {
		fmt.Fprintf(env.Stderr, "corvane sync: %s\n", fmt.Sprintf(format, a...))
		return code
	}
	if fs.NArg() > 0 {
		return fail(ExitUsage, "unexpected argument %q", fs.Arg(0))
	}
	if !*conflicts && (*remote == "" || *token == "") {
		return fail(ExitUsage, "--remote URL and --token T (or %s) are required", EnvSyncToken)
	}
	if *resolve != "" && *keep != domain.KeepLocal && *keep != domain.KeepRemote {
		return fail(ExitUsage, "--resolve needs --keep local or --keep remote")
	}
	st, err := store.OpenMigrated(ctx, *db)
	if err != nil {
		return fail(ExitRows, "%s", store.RedactIn(err.Error(), *db))
	}
	defer st.Close()
	ctx = service.WithActor(ctx, localActor(env, *as))
	svc := service.New(st, nil)
	if *conflicts {
		return listSyncConflicts(ctx, env, svc, *project, *all, fail)
	}
	rc, err := syncremote.New(*remote, *token, &http.Client{})
	if err != nil {
		return fail(ExitUsage, "%s", domain.Public(err))
	}
	opt := service.SyncOptions{Remote: *remote, Project: *project}
	for _, h := range strings.Split(*holes, ",") {
		if h = strings.TrimSpace(h); h != "" {
			opt.Holes = append(opt.Holes, h)
		}
	}
	if *resolve != "" {
		v, err := svc.ResolveSynced(ctx, rc, opt, *resolve, *keep)
		if err != nil {
			return fail(ExitRows, "%s", domain.Public(err))
		}
		fmt.Fprint(env.Stdout, service.SyncConflictText(v))
		return ExitOK
	}
	rep, err := svc.Sync(ctx, rc, opt)
	if err != nil {
		return fail(ExitRows, "%s (run it again to resume)", domain.Public(err))
	}
	fmt.Fprintf(env.Stdout, "project %s: pushed %d (applied %d, unchanged %d, conflicts %d, refused %d); pulled %d, held %d; conflicts resolved on the remote %d\n",
		rep.Project, rep.Pushed, rep.Applied, rep.Unchanged, rep.Conflicts, rep.Refused, rep.Pulled, rep.Held, rep.Resolved)
	for _, p := range rep.Problems {
		fmt.Fprintf(env.Stderr, "corvane sync: %s\n", p)
	}
	if rep.Conflicts+rep.Refused > 0 {
		fmt.Fprintln(env.Stderr, "corvane sync: conflicts or refused changes: see corvane sync --conflicts")
		return ExitRows
	}
	return ExitOK
}

// listSyncConflicts prints the conflicts of the project named (all projects
// when none).
func listSyncConflicts(ctx context.Context, env *Env, svc *service.Service, project string, all bool, fail func(int, string, ...any) int) int {
	status := domain.ConflictOpen
	if all {
		status = ""
	}
	var ps []domain.Project
	if project != "" {
		p, err := svc.Store().GetProjectByName(ctx, project)
		if err != nil {
			return fail(ExitRows, "no project %q in this database", project)
		}
		ps = append(ps, p)
	} else {
		l, err := svc.ListProjects(ctx, domain.Page{Limit: domain.MaxLimit})
		if err != nil {
			return fail(ExitRows, "%s", domain.Public(err))
		}
		ps = l.Items
	}
	n := 0
	for _, p := range ps {
		cs, err := svc.ListConflicts(ctx, p.ID, status)
		if err != nil {
			return fail(ExitRows, "%s", domain.Public(err))
		}
		for _, c := range cs {
			fmt.Fprintf(env.Stdout, "project %s: %s\n", p.Name, service.SyncConflictText(c))
			n++
		}
	}
	if n == 0 {
		fmt.Fprintln(env.Stdout, "no conflicts")
	}
	return ExitOK
}
