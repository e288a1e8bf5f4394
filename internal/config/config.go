// Package config builds corvane's service configuration from command-line flags
// and CORVANE_* environment variables.
//
// A Config is a plain value: no globals, no package state. Flags win over the
// environment, the environment wins over the defaults. String redacts secrets,
// so a Config may be logged.
package config

import (
	"errors"
	"flag"
	"fmt"
	"strconv"
	"strings"
	"time"

	"corvane/internal/domain"
	"corvane/internal/store/dburl"
)

// Defaults.
const (
	DefaultAddr            = "127.0.0.1:8080"
	DefaultDatabase        = "./corvane.db"
	DefaultMaxBodyBytes    = 1 << 20             // 1 MiB for JSON bodies
	DefaultMaxImportBytes  = 256 << 20           // 256 MiB for CSV imports
	DefaultPageSize        = domain.DefaultLimit // the store's own default and cap
	DefaultMaxPageSize     = domain.MaxLimit
	DefaultShutdownTimeout = 30 * time.Second
	DefaultReadTimeout     = 5 * time.Minute // large CSV uploads
	DefaultWriteTimeout    = 5 * time.Minute // large CSV exports
)

// Config is the service configuration.
type Config struct {
	// Addr is the TCP address to listen on, host:port. Port 0 picks a free port.
	Addr string
	// DatabaseURL is a postgres:// (or postgresql://) URL, a libpq key=value
	// string, or a SQLite file path.
	DatabaseURL string
	// Demo loads the fictional demo programme at start when it is not there yet.
	Demo bool
	// DBPool is the most PostgreSQL connections the service keeps open; 0
	// leaves it to the store (postgres.DefaultPoolSize); ignored for
	// SQLite. Replicas times DBPool must stay under the server's
	// max_connections.
	DBPool int
	// MaxBodyBytes limits JSON request bodies.
	MaxBodyBytes int64
	// MaxImportBytes limits CSV import bodies.
	MaxImportBytes int64
	// MaxHeavy bounds the expensive requests (QA, statistics, nets, rose,
	// convert) served at once; more are answered 503 with Retry-After. 0
	// means twice the number of CPUs.
	MaxHeavy int
	// DefaultPageSize and MaxPageSize bound list pages (?limit=).
	DefaultPageSize int
	MaxPageSize     int
	// ReadTimeout and WriteTimeout bound one request on the HTTP server.
	ReadTimeout  time.Duration
	WriteTimeout time.Duration
	// ShutdownTimeout bounds the wait for in-flight requests on SIGINT/SIGTERM.
	ShutdownTimeout time.Duration
	// LogFormat is "text" or "json"; LogLevel is debug, info, warn or error.
	LogFormat string
	LogLevel  string
	// ProfileAddr, when set, serves Go's runtime profiles (net/http/pprof:
	// CPU, heap, goroutines, blocking, locks) on a listener of its own at
	// this host:port, without tokens: keep it on loopback. Empty: off.
	ProfileAddr string
}

// Default returns the configuration used when nothing is set.
func Default() Config {
	return Config{
		Addr:            DefaultAddr,
		DatabaseURL:     DefaultDatabase,
		MaxBodyBytes:    DefaultMaxBodyBytes,
		MaxImportBytes:  DefaultMaxImportBytes,
		DefaultPageSize: DefaultPageSize,
		MaxPageSize:     DefaultMaxPageSize,
		ReadTimeout:     DefaultReadTimeout,
		WriteTimeout:    DefaultWriteTimeout,
		ShutdownTimeout: DefaultShutdownTimeout,
		LogFormat:       "text",
		LogLevel:        "info",
	}
}

// Environment variable names, each matching a flag.
const (
	EnvAddr            = "CORVANE_ADDR"
	EnvDatabaseURL     = "CORVANE_DATABASE_URL"
	EnvDemo            = "CORVANE_DEMO"
	EnvDBPool          = "CORVANE_DB_POOL"
	EnvMaxBodyBytes    = "CORVANE_MAX_BODY_BYTES"
	EnvMaxImportBytes  = "CORVANE_MAX_IMPORT_BYTES"
	EnvMaxHeavy        = "CORVANE_MAX_HEAVY"
	EnvPageSize        = "CORVANE_PAGE_SIZE"
	EnvMaxPageSize     = "CORVANE_MAX_PAGE_SIZE"
	EnvReadTimeout     = "CORVANE_READ_TIMEOUT"
	EnvWriteTimeout    = "CORVANE_WRITE_TIMEOUT"
	EnvShutdownTimeout = "CORVANE_SHUTDOWN_TIMEOUT"
	EnvLogFormat       = "CORVANE_LOG_FORMAT"
	EnvLogLevel        = "CORVANE_LOG_LEVEL"
	EnvProfileAddr     = "CORVANE_PROFILE_ADDR"
)

// FromEnv returns the defaults overridden by the CORVANE_* variables that getenv
// reports as non-empty. A value that cannot be parsed is an error naming the variable.
func FromEnv(getenv func(string) string) (Config, error) {
	c := Default()
	if getenv == nil {
		return c, nil
	}
	var errs []error
	str := func(name string, dst *string) {
		if v := strings.TrimSpace(getenv(name)); v != "" {
			*dst = v
		}
	}
	i64 := func(name string, dst *int64) {
		if v := strings.TrimSpace(getenv(name)); v != "" {
			n, err := strconv.ParseInt(v, 10, 64)
			if err != nil {
				errs = append(errs, fmt.Errorf("environment %s=%q: not an integer", name, v))
				return
			}
			*dst = n
		}
	}
	inum := func(name string, dst *int) {
		var n int64 = int64(*dst)
		i64(name, &n)
		*dst = int(n)
	}
	dur := func(name string, dst *time.Duration) {
		if v := strings.TrimSpace(getenv(name)); v != "" {
			d, err := time.ParseDuration(v)
			if err != nil {
				errs = append(errs, fmt.Errorf("environment %s=%q: not a duration such as 30s", name, v))
				return
			}
			*dst = d
		}
	}
	str(EnvAddr, &c.Addr)
	str(EnvDatabaseURL, &c.DatabaseURL)
	if v := strings.TrimSpace(getenv(EnvDemo)); v != "" {
		b, err := strconv.ParseBool(v)
		if err != nil {
			errs = append(errs, fmt.Errorf("environment %s=%q: not true or false", EnvDemo, v))
		}
		c.Demo = b
	}
	inum(EnvDBPool, &c.DBPool)
	i64(EnvMaxBodyBytes, &c.MaxBodyBytes)
	i64(EnvMaxImportBytes, &c.MaxImportBytes)
	inum(EnvMaxHeavy, &c.MaxHeavy)
	inum(EnvPageSize, &c.DefaultPageSize)
	inum(EnvMaxPageSize, &c.MaxPageSize)
	dur(EnvReadTimeout, &c.ReadTimeout)
	dur(EnvWriteTimeout, &c.WriteTimeout)
	dur(EnvShutdownTimeout, &c.ShutdownTimeout)
	str(EnvLogFormat, &c.LogFormat)
	str(EnvLogLevel, &c.LogLevel)
	str(EnvProfileAddr, &c.ProfileAddr)
	return c, errors.Join(errs...)
}

// Bind adds the service flags to fs, with c's current values as defaults, so
// that parsing fs overrides c. Call it on a Config built by [FromEnv].
func (c *Config) Bind(fs *flag.FlagSet) {
	fs.StringVar(&c.Addr, "addr", c.Addr, "listen address host:port (env "+EnvAddr+")")
	fs.StringVar(&c.DatabaseURL, "db", c.DatabaseURL, "postgres:// URL or SQLite file path (env "+EnvDatabaseURL+")")
	fs.IntVar(&c.DBPool, "db-pool", c.DBPool, "most PostgreSQL connections kept open, 0: the store's default (8); replicas times this must stay under the server's max_connections (env "+EnvDBPool+")")
	fs.BoolVar(&c.Demo, "demo", c.Demo, "load the fictional demo programme if it is not there (env "+EnvDemo+")")
	fs.Int64Var(&c.MaxBodyBytes, "max-body-bytes", c.MaxBodyBytes, "largest JSON request body (env "+EnvMaxBodyBytes+")")
	fs.Int64Var(&c.MaxImportBytes, "max-import-bytes", c.MaxImportBytes, "largest CSV import body (env "+EnvMaxImportBytes+")")
	fs.IntVar(&c.MaxHeavy, "max-heavy", c.MaxHeavy, "expensive requests (QA, statistics, nets, convert) served at once, more get 503; 0: twice the CPUs (env "+EnvMaxHeavy+")")
	fs.IntVar(&c.DefaultPageSize, "page-size", c.DefaultPageSize, "default list page size (env "+EnvPageSize+")")
	fs.IntVar(&c.MaxPageSize, "max-page-size", c.MaxPageSize, "largest list page size (env "+EnvMaxPageSize+")")
	fs.DurationVar(&c.ReadTimeout, "read-timeout", c.ReadTimeout, "longest time to read one request (env "+EnvReadTimeout+")")
	fs.DurationVar(&c.WriteTimeout, "write-timeout", c.WriteTimeout, "longest time to write one response (env "+EnvWriteTimeout+")")
	fs.DurationVar(&c.ShutdownTimeout, "shutdown-timeout", c.ShutdownTimeout, "longest wait for in-flight requests at shutdown (env "+EnvShutdownTimeout+")")
	fs.StringVar(&c.LogFormat, "log-format", c.LogFormat, "text or json (env "+EnvLogFormat+")")
	fs.StringVar(&c.LogLevel, "log-level", c.LogLevel, "debug, info, warn or error (env "+EnvLogLevel+")")
	fs.StringVar(&c.ProfileAddr, "profile-addr", c.ProfileAddr, "serve runtime profiles (pprof) on this host:port, no token asked: keep it on loopback; empty: off (env "+EnvProfileAddr+")")
}

// Validate reports every field that cannot be used, naming each.
func (c Config) Validate() error {
	var errs []error
	if c.Addr == "" {
		errs = append(errs, errors.New("addr: empty"))
	} else if _, port, ok := strings.Cut(c.Addr, ":"); !ok || port == "" {
		errs = append(errs, fmt.Errorf("addr %q: want host:port", c.Addr))
	}
	if c.ProfileAddr != "" {
		if _, port, ok := strings.Cut(c.ProfileAddr, ":"); !ok || port == "" {
			errs = append(errs, fmt.Errorf("profile-addr %q: want host:port", c.ProfileAddr))
		} else if c.ProfileAddr == c.Addr {
			errs = append(errs, fmt.Errorf("profile-addr %q: must differ from addr", c.ProfileAddr))
		}
	}
	if strings.TrimSpace(c.DatabaseURL) == "" {
		errs = append(errs, errors.New("db: empty"))
	} else if err := dburl.Check(c.DatabaseURL); err != nil {
		errs = append(errs, fmt.Errorf("db: %w", err))
	}
	if c.DBPool < 0 {
		errs = append(errs, fmt.Errorf("db-pool %d: must be 0 (the store's default) or positive", c.DBPool))
	}
	if c.MaxBodyBytes <= 0 {
		errs = append(errs, fmt.Errorf("max-body-bytes %d: must be positive", c.MaxBodyBytes))
	}
	if c.MaxImportBytes <= 0 {
		errs = append(errs, fmt.Errorf("max-import-bytes %d: must be positive", c.MaxImportBytes))
	}
	if c.MaxHeavy < 0 {
		errs = append(errs, fmt.Errorf("max-heavy %d: must be 0 (twice the CPUs) or positive", c.MaxHeavy))
	}
	if c.MaxPageSize <= 0 {
		errs = append(errs, fmt.Errorf("max-page-size %d: must be positive", c.MaxPageSize))
	}
	if c.DefaultPageSize <= 0 || c.DefaultPageSize > c.MaxPageSize {
		errs = append(errs, fmt.Errorf("page-size %d: must be in 1..max-page-size (%d)", c.DefaultPageSize, c.MaxPageSize))
	}
	if c.ShutdownTimeout <= 0 {
		errs = append(errs, fmt.Errorf("shutdown-timeout %s: must be positive", c.ShutdownTimeout))
	}
	switch c.LogFormat {
	case "text", "json":
	default:
		errs = append(errs, fmt.Errorf("log-format %q: want text or json", c.LogFormat))
	}
	switch strings.ToLower(c.LogLevel) {
	case "debug", "info", "warn", "error":
	default:
		errs = append(errs, fmt.Errorf("log-level %q: want debug, info, warn or error", c.LogLevel))
	}
	return errors.Join(errs...)
}

// IsPostgres reports whether DatabaseURL names a PostgreSQL server rather than a
// SQLite file.
func (c Config) IsPostgres() bool { return IsPostgresURL(c.DatabaseURL) }

// IsPostgresURL reports whether s names a PostgreSQL server: a postgres://
// or postgresql:// URL, or a libpq key=value string (package dburl decides).
func IsPostgresURL(s string) bool { return dburl.IsPostgres(s) }

// String describes c with the database password (in the user information or a
// password= query parameter) replaced by "xxxxx".
func (c Config) String() string {
	return fmt.Sprintf("addr=%s db=%s db-pool=%d demo=%t max-body-bytes=%d max-import-bytes=%d page-size=%d max-page-size=%d read-timeout=%s write-timeout=%s shutdown-timeout=%s log-format=%s log-level=%s profile-addr=%s",
		c.Addr, RedactDatabaseURL(c.DatabaseURL), c.DBPool, c.Demo, c.MaxBodyBytes, c.MaxImportBytes,
		c.DefaultPageSize, c.MaxPageSize, c.ReadTimeout, c.WriteTimeout, c.ShutdownTimeout, c.LogFormat, c.LogLevel, c.ProfileAddr)
}

// RedactDatabaseURL returns s with any password hidden (package dburl).
func RedactDatabaseURL(s string) string { return dburl.Redact(s) }
