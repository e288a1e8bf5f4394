// Package pgtest gives tests a throwaway PostgreSQL server.
//
// A test package calls [Main] from TestMain: it starts one server for the
// whole package (initdb and pg_ctl in a fresh temporary directory, on a free
// loopback port, as the postgres user when running as root, with fsync,
// synchronous_commit and full_page_writes off), prepares a template database
// with the given function (usually: run the migrations), runs the tests and
// stops the server. Each test then takes a fresh database cloned from the
// template with [DB].
//
// When CORVANE_TEST_DATABASE_URL is set, no server is started: databases are
// created on that server instead (the role needs CREATEDB).
//
// Without PostgreSQL binaries the tests that need a database skip loudly; with
// CORVANE_REQUIRE_POSTGRES=1 they fail instead.
package pgtest

import (
	"context"
	"errors"
	"fmt"
	"net"
	"net/url"
	"os"
	"os/exec"
	"os/user"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"sync/atomic"
	"syscall"
	"testing"
	"time"

	"github.com/jackc/pgx/v5"
)

// Environment variables.
const (
	EnvURL     = "CORVANE_TEST_DATABASE_URL"
	EnvRequire = "CORVANE_REQUIRE_POSTGRES"
)

var (
	baseURL string // admin URL of the server (database postgres), "" when none
	whyNot  string // why there is no server
	counter atomic.Int64
	prefix  = fmt.Sprintf("t%d_", os.Getpid())
	// templateName is per process: test packages run in parallel and may
	// share one server given by CORVANE_TEST_DATABASE_URL.
	templateName = fmt.Sprintf("corvane_tpl_%d", os.Getpid())
)

// Required reports whether CORVANE_REQUIRE_POSTGRES=1.
func Required() bool { return os.Getenv(EnvRequire) == "1" }

// Main starts the server (or uses CORVANE_TEST_DATABASE_URL), builds the
// template database with prepare(url), runs m and returns the exit code for
// os.Exit. prepare may be nil.
func Main(m *testing.M, prepare func(url string) error) int {
	var stop func()
	if u := os.Getenv(EnvURL); u != "" {
		baseURL = u
	} else {
		u, s, err := start()
		if err != nil {
			whyNot = err.Error()
			if Required() {
				fmt.Fprintf(os.Stderr, "pgtest: %s=1 but no PostgreSQL: %v\n", EnvRequire, err)
				return 1
			}
			fmt.Fprintf(os.Stderr, "pgtest: SKIPPING PostgreSQL tests: %v\n", err)
		}
		baseURL, stop = u, s
	}
	if baseURL != "" {
		if err := makeTemplate(prepare); err != nil {
			fmt.Fprintf(os.Stderr, "pgtest: preparing the template database: %v\n", err)
			if stop != nil {
				stop()
			}
			return 1
		}
	}
	code := m.Run()
	if stop != nil {
		stop()
	} else if baseURL != "" {
		exec1(context.Background(), baseURL, "DROP DATABASE IF EXISTS "+pgx.Identifier{templateName}.Sanitize()+" WITH (FORCE)")
	}
	return code
}

// URL returns the admin URL of the server, skipping (or failing, when
// required) when there is none.
func URL(t testing.TB) string {
	t.Helper()
	if baseURL == "" {
		if Required() {
			t.Fatalf("PostgreSQL required (%s=1) but unavailable: %s", EnvRequire, whyNot)
		}
		t.Skipf("SKIP: no PostgreSQL for this test: %s (set %s or install PostgreSQL)", whyNot, EnvURL)
	}
	return baseURL
}

// DB creates a fresh database cloned from the template and returns its URL.
// It is dropped when the test ends.
func DB(t testing.TB) string {
	t.Helper()
	admin := URL(t)
	name := fmt.Sprintf("%s%d", prefix, counter.Add(1))
	ctx := context.Background()
	if err := exec1(ctx, admin, "CREATE DATABASE "+pgx.Identifier{name}.Sanitize()+" TEMPLATE "+templateName); err != nil {
		t.Fatalf("pgtest: creating database: %v", err)
	}
	t.Cleanup(func() {
		exec1(context.Background(), admin, "DROP DATABASE IF EXISTS "+pgx.Identifier{name}.Sanitize()+" WITH (FORCE)")
	})
	return withDB(admin, name)
}

func withDB(u, name string) string {
	p, err := url.Parse(u)
	if err != nil {
		return u
	}
	p.Path = "/" + name
	return p.String()
}

func exec1(ctx context.Context, u, sql string) error {
	ctx, cancel := context.WithTimeout(ctx, 30*time.Second)
	defer cancel()
	c, err := pgx.Connect(ctx, u)
	if err != nil {
		return err
	}
	defer c.Close(context.Background())
	_, err = c.Exec(ctx, sql)
	return err
}

func makeTemplate(prepare func(string) error) error {
	ctx := context.Background()
	tpl := pgx.Identifier{templateName}.Sanitize()
	exec1(ctx, baseURL, "DROP DATABASE IF EXISTS "+tpl+" WITH (FORCE)")
	if err := exec1(ctx, baseURL, "CREATE DATABASE "+tpl); err != nil {
		return err
	}
	if prepare != nil {
		if err := prepare(withDB(baseURL, templateName)); err != nil {
			return err
		}
	}
	return nil
}

// binDir finds the directory of initdb and pg_ctl: PATH first, then the
// highest /usr/lib/postgresql/N/bin.
func binDir() (string, error) {
	if p, err := exec.LookPath("initdb"); err == nil {
		if _, err := exec.LookPath("pg_ctl"); err == nil {
			return filepath.Dir(p), nil
		}
	}
	ds, _ := filepath.Glob("/usr/lib/postgresql/*/bin")
	sort.Slice(ds, func(i, j int) bool { return version(ds[i]) > version(ds[j]) })
	for _, d := range ds {
		if _, err := os.Stat(filepath.Join(d, "initdb")); err == nil {
			return d, nil
		}
	}
	return "", errors.New("initdb and pg_ctl not found on PATH or under /usr/lib/postgresql/N/bin")
}

func version(dir string) int {
	n, _ := strconv.Atoi(filepath.Base(filepath.Dir(dir)))
	return n
}

func freePort() (int, error) {
	l, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		return 0, err
	}
	defer l.Close()
	return l.Addr().(*net.TCPAddr).Port, nil
}

// start runs initdb and the server; it returns the admin URL and a stop function.
func start() (string, func(), error) {
	srv, err := newServer(false)
	if err != nil {
		return "", nil, err
	}
	return srv.URL, srv.remove, nil
}

// Server is a PostgreSQL server of its own, for a test that stops and
// starts it (the package's shared server must stay up for the others). Its
// commits are durable (synchronous_commit on): an immediate stop loses no
// acknowledged write. fsync stays off: only the server process stops, never
// the machine.
type Server struct {
	URL     string // admin URL (database postgres)
	run     func(name string, args ...string) ([]byte, error)
	data    string
	opts    string
	logFile string
	cleanup func()
}

// NewServer starts a server of the test's own on a free loopback port and
// removes it when the test ends. Without PostgreSQL binaries it skips (or
// fails, when required).
func NewServer(t testing.TB) *Server {
	t.Helper()
	URL(t) // skip or fail like every PostgreSQL test when there is none
	if os.Getenv(EnvURL) != "" {
		t.Skipf("SKIP: %s names an outside server; this test needs a server it can stop", EnvURL)
	}
	srv, err := newServer(true)
	if err != nil {
		t.Fatalf("pgtest: starting a server: %v", err)
	}
	t.Cleanup(srv.remove)
	return srv
}

// Stop stops the server at once, as a crash would (immediate mode).
func (s *Server) Stop() error {
	out, err := s.run("pg_ctl", "-D", s.data, "-m", "immediate", "-w", "stop")
	if err != nil {
		return fmt.Errorf("pg_ctl stop: %v\n%s", err, tail(out))
	}
	return nil
}

// Start starts the stopped server again on the same port and waits until it
// answers.
func (s *Server) Start() error {
	if out, err := s.run("pg_ctl", "-D", s.data, "-l", s.logFile, "-o", s.opts, "-w", "-t", "60", "start"); err != nil {
		log, _ := os.ReadFile(s.logFile)
		return fmt.Errorf("pg_ctl start: %v\n%s\n%s", err, tail(out), tail(log))
	}
	return s.wait()
}

// DB creates an empty database on the server and returns its URL.
func (s *Server) DB(t testing.TB, name string) string {
	t.Helper()
	if err := exec1(context.Background(), s.URL, "CREATE DATABASE "+pgx.Identifier{name}.Sanitize()); err != nil {
		t.Fatalf("pgtest: creating database: %v", err)
	}
	return withDB(s.URL, name)
}

func (s *Server) remove() {
	s.run("pg_ctl", "-D", s.data, "-m", "immediate", "-w", "stop")
	s.cleanup()
}

func (s *Server) wait() error {
	ctx, cancel := context.WithTimeout(context.Background(), 20*time.Second)
	defer cancel()
	for {
		c, err := pgx.Connect(ctx, s.URL)
		if err == nil {
			c.Close(ctx)
			return nil
		}
		if ctx.Err() != nil {
			log, _ := os.ReadFile(s.logFile)
			return fmt.Errorf("server did not answer: %v\n%s", err, tail(log))
		}
		time.Sleep(100 * time.Millisecond)
	}
}

// newServer starts a server. A durable one keeps synchronous_commit on, so
// a commit it acknowledged survives the server being stopped at once (the
// shared one trades that for speed).
func newServer(durable bool) (*Server, error) {
	bin, err := binDir()
	if err != nil {
		return nil, err
	}
	// A short directory (not t.TempDir: the Unix socket path is limited to
	// about 107 bytes, and its parents may be closed to the postgres user).
	dir, err := os.MkdirTemp("", "cvpg")
	if err != nil {
		return nil, err
	}
	cleanup := func() { os.RemoveAll(dir) }
	var cred *syscall.Credential
	if os.Geteuid() == 0 {
		u, err := user.Lookup("postgres")
		if err != nil {
			cleanup()
			return nil, fmt.Errorf("running as root and no postgres user to run the server: %w", err)
		}
		uid, _ := strconv.Atoi(u.Uid)
		gid, _ := strconv.Atoi(u.Gid)
		cred = &syscall.Credential{Uid: uint32(uid), Gid: uint32(gid)}
		if err := os.Chown(dir, uid, gid); err != nil {
			cleanup()
			return nil, err
		}
	}
	run := func(name string, args ...string) ([]byte, error) {
		cmd := exec.Command(filepath.Join(bin, name), args...)
		cmd.Dir = dir
		cmd.Env = append(os.Environ(), "LC_ALL=C.UTF-8")
		if cred != nil {
			cmd.SysProcAttr = &syscall.SysProcAttr{Credential: cred}
		}
		return cmd.CombinedOutput()
	}
	data := filepath.Join(dir, "data")
	if out, err := run("initdb", "--no-sync", "-U", "postgres", "-A", "trust", "-E", "UTF8", "--locale=C.UTF-8", "-D", data); err != nil {
		cleanup()
		return nil, fmt.Errorf("initdb: %v\n%s", err, tail(out))
	}
	port, err := freePort()
	if err != nil {
		cleanup()
		return nil, err
	}
	s := &Server{
		URL:  fmt.Sprintf("postgres://postgres@127.0.0.1:%d/postgres?sslmode=disable", port),
		run:  run,
		data: data,
		opts: fmt.Sprintf("-p %d -k %s -c listen_addresses=127.0.0.1 -c fsync=off -c synchronous_commit=%s -c full_page_writes=off -c max_connections=200",
			port, dir, map[bool]string{true: "on", false: "off"}[durable]),
		logFile: filepath.Join(dir, "server.log"),
		cleanup: cleanup,
	}
	if err := s.Start(); err != nil {
		s.remove()
		return nil, err
	}
	return s, nil
}

func tail(b []byte) string {
	lines := strings.Split(strings.TrimSpace(string(b)), "\n")
	if len(lines) > 20 {
		lines = lines[len(lines)-20:]
	}
	return strings.Join(lines, "\n")
}
