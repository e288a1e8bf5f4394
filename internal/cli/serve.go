package cli

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"log/slog"
	"net"
	"net/http"
	"net/http/pprof"
	"strings"
	"time"

	"corvane/internal/config"
	"corvane/internal/domain"
	"corvane/internal/httpapi"
	"corvane/internal/service"
	"corvane/internal/store"
	"corvane/internal/web"
)

func init() {
	register(command{name: "serve", summary: "run the HTTP service (add --demo for a demonstration programme)", run: runServe})
}

const serveUsage = `Usage: corvane serve [--addr host:port] [--db postgres://...|file.db] [--demo] [options]

Runs the HTTP service: the API under /v1 (every request needs a token), the web page
at /, and /healthz, /readyz, /metrics. It applies pending schema migrations at start,
prints the URL it listens on, and stops cleanly on Ctrl-C or SIGTERM.

--demo loads the fictional demonstration programme and prints a fresh admin token
for it. Without --demo, make a token first with corvane token create (see README,
"First hour"). Every option can also be set by the environment variable named
beside it; flags win.

Options:
`

func runServe(ctx context.Context, env *Env, args []string) int {
	cfg, err := config.FromEnv(env.Getenv)
	if err != nil {
		fmt.Fprintln(env.Stderr, "corvane serve:", err)
		return ExitUsage
	}
	fs := newFlagSet(env, "serve", serveUsage)
	cfg.Bind(fs)
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return ExitOK
		}
		return ExitUsage
	}
	if fs.NArg() > 0 {
		fmt.Fprintf(env.Stderr, "corvane serve: unexpected argument %q\n", fs.Arg(0))
		return ExitUsage
	}
	if err := cfg.Validate(); err != nil {
		fmt.Fprintln(env.Stderr, "corvane serve:", err)
		return ExitUsage
	}
	log := newLogger(env.Stderr, cfg)
	if err := serve(ctx, env, cfg, log); err != nil {
		log.Error("serve failed", "error", err)
		fmt.Fprintln(env.Stderr, "corvane serve:", err)
		return 1
	}
	return ExitOK
}

func newLogger(w io.Writer, cfg config.Config) *slog.Logger {
	var level slog.Level
	_ = level.UnmarshalText([]byte(strings.ToUpper(cfg.LogLevel)))
	opts := &slog.HandlerOptions{Level: level}
	if cfg.LogFormat == "json" {
		return slog.New(slog.NewJSONHandler(w, opts))
	}
	return slog.New(slog.NewTextHandler(w, opts))
}

// serveOn serves h on the bound listener ln until ctx is done, then stops
// taking new connections and waits (at most cfg.ShutdownTimeout) for the
// requests in flight to finish. ready is called with the listening URL.
func serveOn(ctx context.Context, ln net.Listener, cfg config.Config, h http.Handler, log *slog.Logger, ready func(url string)) error {
	srv := &http.Server{
		Handler:           h,
		ReadHeaderTimeout: 10 * time.Second,
		ReadTimeout:       cfg.ReadTimeout,
		WriteTimeout:      cfg.WriteTimeout,
		IdleTimeout:       2 * time.Minute,
		MaxHeaderBytes:    64 << 10,
		ErrorLog:          slog.NewLogLogger(log.Handler(), slog.LevelWarn),
		// Requests keep a context of their own: a shutdown signal must not
		// cancel the work of requests already in flight.
		BaseContext: func(net.Listener) context.Context { return context.WithoutCancel(ctx) },
	}
	errc := make(chan error, 1)
	go func() { errc <- srv.Serve(ln) }()
	url := "http://" + ln.Addr().String()
	log.Info("listening", "url", url, "config", cfg.String())
	ready(url)
	select {
	case err := <-errc:
		return err
	case <-ctx.Done():
	}
	log.Info("shutting down: finishing requests in flight", "timeout", cfg.ShutdownTimeout)
	sctx, cancel := context.WithTimeout(context.WithoutCancel(ctx), cfg.ShutdownTimeout)
	defer cancel()
	if err := srv.Shutdown(sctx); err != nil {
		_ = srv.Close()
		return fmt.Errorf("shutdown: %w", err)
	}
	if err := <-errc; err != nil && !errors.Is(err, http.ErrServerClosed) {
		return err
	}
	log.Info("stopped")
	return nil
}

// serve binds the listening address first (a start that cannot listen
// changes nothing: it neither migrates nor touches the demo tokens), opens
// and migrates the store, loads the demo when asked, and serves the API
// until ctx is done.
func serve(ctx context.Context, env *Env, cfg config.Config, log *slog.Logger) error {
	ln, err := net.Listen("tcp", cfg.Addr)
	if err != nil {
		return fmt.Errorf("listening on %s: %w", cfg.Addr, err)
	}
	defer ln.Close()
	if cfg.ProfileAddr != "" {
		stop, err := serveProfiles(cfg.ProfileAddr, log)
		if err != nil {
			return err
		}
		defer stop()
	}
	// Applies pending migrations first; on PostgreSQL under migrate's
	// advisory lock, so replicas starting together take turns. A schema
	// newer than this binary stops here with one sentence saying so.
	st, err := store.OpenMigratedWith(ctx, cfg.DatabaseURL, store.Options{PoolSize: cfg.DBPool})
	if err != nil {
		return fmt.Errorf("store: %s", store.RedactIn(err.Error(), cfg.DatabaseURL))
	}
	defer st.Close()
	svc := service.New(st, log)
	// Change log entries an import still owed when a process stopped.
	go func() {
		if err := svc.LogPending(context.WithoutCancel(ctx), 0); err != nil {
			log.Error("writing the change log still owed by imports (the next reader of the change log finishes it)", "error", err)
		}
	}()
	var demoLine string
	if cfg.Demo {
		// Replicas starting together load the demo one at a time: the first
		// loads it, the others find it.
		err := st.Exclusive(ctx, "demo", func(ctx context.Context) error {
			var err error
			demoLine, err = loadDemo(ctx, svc, log)
			return err
		})
		if err != nil {
			return err
		}
	} else if empty, err := svc.Unconfigured(ctx); err != nil {
		return fmt.Errorf("store: %w", err)
	} else if empty {
		demoLine = firstTokenHint(cfg.DatabaseURL)
	}
	h := httpapi.New(httpapi.Options{
		Service:         svc,
		Logger:          log,
		MaxBodyBytes:    cfg.MaxBodyBytes,
		MaxImportBytes:  cfg.MaxImportBytes,
		MaxHeavy:        cfg.MaxHeavy,
		DefaultPageSize: cfg.DefaultPageSize,
		MaxPageSize:     cfg.MaxPageSize,
		Web:             web.Handler(),
	})
	return serveOn(ctx, ln, cfg, h, log, func(url string) {
		// These two lines are stable: scripts and tests read them.
		fmt.Fprintf(env.Stdout, "corvane: listening on %s\n", url)
		if demoLine != "" {
			fmt.Fprintln(env.Stdout, demoLine)
		}
	})
}

// serveProfiles serves Go's runtime profiles (net/http/pprof) on a
// listener of its own at addr, apart from the API and its tokens, so that a
// server can be profiled where people wait: e.g. under the load generator,
// go tool pprof http://ADDR/debug/pprof/profile?seconds=10. stop closes it.
func serveProfiles(addr string, log *slog.Logger) (stop func(), err error) {
	ln, err := net.Listen("tcp", addr)
	if err != nil {
		return nil, fmt.Errorf("listening on %s (profile-addr): %w", addr, err)
	}
	mux := http.NewServeMux()
	mux.HandleFunc("/debug/pprof/", pprof.Index)
	mux.HandleFunc("/debug/pprof/cmdline", pprof.Cmdline)
	mux.HandleFunc("/debug/pprof/profile", pprof.Profile)
	mux.HandleFunc("/debug/pprof/symbol", pprof.Symbol)
	mux.HandleFunc("/debug/pprof/trace", pprof.Trace)
	srv := &http.Server{Handler: mux, ReadHeaderTimeout: 10 * time.Second}
	go func() { _ = srv.Serve(ln) }()
	log.Info("serving runtime profiles", "url", "http://"+ln.Addr().String()+"/debug/pprof/")
	return func() { _ = srv.Close() }, nil
}

// firstTokenHint is what serve prints on a database with no project and no
// site token: how to make the first token.
func firstTokenHint(db string) string {
	dbArg := ""
	if db != config.DefaultDatabase {
		dbArg = " --db " + store.Redact(db)
	}
	return "corvane: the database is empty; make the first (site admin) token with\n" +
		"  corvane token create --project all --role admin --name \"first admin\"" + dbArg + "\n" +
		"then create a project (POST /v1/projects), or start with --demo to try the demonstration programme"
}

// DemoTokenName is the name of the admin token serve --demo prints.
const DemoTokenName = "demo-serve"

// loadDemo loads the demonstration programme unless it is there, makes a new
// admin token for it, and then revokes the demo tokens printed by earlier
// starts (and those of older versions, named "serve --demo <time>"). It
// returns the line to print. serve calls it once it holds its address, so a
// start that cannot listen leaves the running server's token alone.
func loadDemo(ctx context.Context, svc *service.Service, log *slog.Logger) (string, error) {
	sys := service.WithActor(ctx, service.System)
	p, loaded, err := svc.LoadDemo(sys)
	if err != nil {
		return "", fmt.Errorf("loading the demo programme: %w", err)
	}
	secret, tok, err := svc.CreateToken(sys, p.ID, domain.RoleAdmin, DemoTokenName)
	if err != nil {
		return "", fmt.Errorf("making the demo token: %w", err)
	}
	ts, err := svc.ListTokens(sys, p.ID)
	if err != nil {
		return "", fmt.Errorf("listing the demo tokens: %w", err)
	}
	for _, t := range ts {
		if t.ID == tok.ID || (t.Name != DemoTokenName && !strings.HasPrefix(t.Name, "serve --demo ")) {
			continue
		}
		if _, err := svc.RevokeToken(sys, p.ID, t.ID); err != nil && !domain.IsKind(err, domain.NotFound) {
			return "", fmt.Errorf("revoking the earlier demo token %d: %w", t.ID, err)
		}
		log.Info("revoked an earlier demo token", "token", t.ID, "name", t.Name)
	}
	log.Info("demo programme", "project", p.ID, "name", p.Name, "loaded_now", loaded)
	return fmt.Sprintf("corvane: demo project %d %q; demo admin token: %s", p.ID, p.Name, secret), nil
}
