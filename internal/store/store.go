// Package store opens the store named by a database URL: a postgres:// (or
// postgresql://) URL opens the PostgreSQL store, anything else is taken as
// the path of an SQLite file (optionally written sqlite://path).
// It is for the composition root; the service sees only domain.Store.
package store

import (
	"context"

	"corvane/internal/config"
	"corvane/internal/domain"
	"corvane/internal/store/postgres"
	"corvane/internal/store/sqlite"
)

// Open opens the store at url. It does not migrate.
func Open(ctx context.Context, url string) (domain.Store, error) {
	if config.IsPostgresURL(url) {
		return postgres.Open(ctx, url)
	}
	return sqlite.Open(ctx, url)
}

// Migrate applies all up migrations (steps == 0), or steps up (> 0) or down
// (< 0) migrations.
func Migrate(url string, steps int) error {
	if config.IsPostgresURL(url) {
		return postgres.Migrate(url, steps)
	}
	return sqlite.Migrate(url, steps)
}

// MigrateDownAll rolls back every migration.
func MigrateDownAll(url string) error {
	if config.IsPostgresURL(url) {
		return postgres.MigrateDownAll(url)
	}
	return sqlite.MigrateDownAll(url)
}

// Version reports the schema version and the dirty flag.
func Version(url string) (uint, bool, error) {
	if config.IsPostgresURL(url) {
		return postgres.Version(url)
	}
	return sqlite.Version(url)
}

// OpenMigrated migrates the database at url to the latest schema and opens it.
func OpenMigrated(ctx context.Context, url string) (domain.Store, error) {
	if err := Migrate(url, 0); err != nil {
		return nil, err
	}
	return Open(ctx, url)
}

// Redact returns url safe to print: a PostgreSQL password, in the user
// information or a query parameter, is masked.
func Redact(url string) string { return config.RedactDatabaseURL(url) }
