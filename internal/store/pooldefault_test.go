package store_test

import (
	"flag"
	"fmt"
	"os"
	"strings"
	"testing"

	"corvane/internal/config"
	"corvane/internal/store/postgres"
)

// The PostgreSQL pool's default lives in postgres.DefaultPoolSize; the
// --db-pool help (package config, which cannot import the store) and the
// README's table of settings state it too, and must say the same.
func TestPoolDefaultStatedAlike(t *testing.T) {
	c := config.Default()
	fs := flag.NewFlagSet("serve", flag.ContinueOnError)
	c.Bind(fs)
	f := fs.Lookup("db-pool")
	if f == nil {
		t.Fatal("no --db-pool flag")
	}
	if want := fmt.Sprintf("default (%d)", postgres.DefaultPoolSize); !strings.Contains(f.Usage, want) {
		t.Errorf("--db-pool help %q does not say %q", f.Usage, want)
	}
	readme, err := os.ReadFile("../../README.md")
	if err != nil {
		t.Fatal(err)
	}
	if want := fmt.Sprintf("| `--db-pool` | `CORVANE_DB_POOL` | %d |", postgres.DefaultPoolSize); !strings.Contains(string(readme), want) {
		t.Errorf("README's settings table lacks %q", want)
	}
}
