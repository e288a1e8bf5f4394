package config

import (
	"flag"
	"strings"
	"testing"
	"time"

	"github.com/google/go-cmp/cmp"
)

func env(m map[string]string) func(string) string {
	return func(k string) string { return m[k] }
}

func TestDefaults(t *testing.T) {
	c, err := FromEnv(env(nil))
	if err != nil {
		t.Fatal(err)
	}
	if c.Addr != "127.0.0.1:8080" || c.DatabaseURL != "./corvane.db" || c.IsPostgres() {
		t.Errorf("defaults: %s", c)
	}
	if err := c.Validate(); err != nil {
		t.Errorf("defaults do not validate: %v", err)
	}
}

func TestEnvThenFlags(t *testing.T) {
	c, err := FromEnv(env(map[string]string{
		EnvAddr:            "0.0.0.0:9000",
		EnvDatabaseURL:     "postgres://corvane:s3cret@db:5432/corvane?sslmode=disable",
		EnvMaxPageSize:     "50",
		EnvPageSize:        "20",
		EnvShutdownTimeout: "5s",
		EnvDemo:            "true",
		EnvProfileAddr:     "127.0.0.1:6061",
		EnvDBPool:          "24",
	}))
	if err != nil {
		t.Fatal(err)
	}
	fs := flag.NewFlagSet("serve", flag.ContinueOnError)
	c.Bind(fs)
	if err := fs.Parse([]string{"--addr", "127.0.0.1:0"}); err != nil {
		t.Fatal(err)
	}
	want := Default()
	want.Addr = "127.0.0.1:0"
	want.DatabaseURL = "postgres://corvane:s3cret@db:5432/corvane?sslmode=disable"
	want.MaxPageSize = 50
	want.DefaultPageSize = 20
	want.ShutdownTimeout = 5 * time.Second
	want.Demo = true
	want.ProfileAddr = "127.0.0.1:6061"
	want.DBPool = 24
	if d := cmp.Diff(want, c); d != "" {
		t.Errorf("config (-want +got):\n%s", d)
	}
	if !c.IsPostgres() {
		t.Error("postgres URL not recognised")
	}
}

func TestBadEnvNamesVariable(t *testing.T) {
	_, err := FromEnv(env(map[string]string{EnvMaxBodyBytes: "lots", EnvReadTimeout: "soon"}))
	if err == nil {
		t.Fatal("no error for bad values")
	}
	for _, name := range []string{EnvMaxBodyBytes, EnvReadTimeout} {
		if !strings.Contains(err.Error(), name) {
			t.Errorf("error %q does not name %s", err, name)
		}
	}
}

func TestValidateNamesFields(t *testing.T) {
	c := Default()
	c.Addr = "nowhere"
	c.DefaultPageSize = 5000
	c.LogFormat = "xml"
	c.ProfileAddr = "6060"
	c.DBPool = -1
	err := c.Validate()
	if err == nil {
		t.Fatal("no error")
	}
	for _, s := range []string{"addr", "page-size", "log-format", "profile-addr", "db-pool"} {
		if !strings.Contains(err.Error(), s) {
			t.Errorf("error %q does not name %s", err, s)
		}
	}
}

func TestStringRedactsSecrets(t *testing.T) {
	for _, tc := range []struct{ in, hidden, kept string }{
		{"postgres://corvane:s3cret@db:5432/corvane", "s3cret", "corvane:xxxxx@db:5432"},
		{"postgresql://u@db/x?password=hunter2&sslmode=require", "hunter2", "sslmode=require"},
		{"postgres://u:p%40ss@db/x", "p%40ss", "u:xxxxx@db"},
		{"postgres://u:pa ss@db:bad port/x", "pa ss", "hidden"},
	} {
		c := Default()
		c.DatabaseURL = tc.in
		s := c.String()
		if strings.Contains(s, tc.hidden) {
			t.Errorf("String() leaks %q: %s", tc.hidden, s)
		}
		if !strings.Contains(s, tc.kept) {
			t.Errorf("String() lost %q: %s", tc.kept, s)
		}
		if err := c.Validate(); err != nil && strings.Contains(err.Error(), tc.hidden) {
			t.Errorf("Validate leaks %q: %v", tc.hidden, err)
		}
	}
	c := Default()
	c.DatabaseURL = "/var/lib/corvane/field.db"
	if !strings.Contains(c.String(), "/var/lib/corvane/field.db") {
		t.Errorf("SQLite path altered: %s", c)
	}
}
