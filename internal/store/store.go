// Package store opens the store named by a database address: a postgres://
// (or postgresql://) URL or a libpq key=value string opens the PostgreSQL
// store, anything else is taken as the path of an SQLite file (optionally
// written sqlite://path). Package dburl tells the two apart.
// It is for the composition root; the service sees only domain.Store.
package store

import (
	"context"

	"corvane/internal/domain"
	"corvane/internal/store/dburl"
	"corvane/internal/store/postgres"
	"corvane/internal/store/sqlite"
)

// Options tune how a store is opened.
type Options struct {
	// PoolSize is the most connections a PostgreSQL store keeps open (0:
	// postgres.DefaultPoolSize); the SQLite store has its own rule.
	PoolSize int
}

// Open opens the store at url. It does not migrate.
func Open(ctx context.Context, url string) (domain.Store, error) {
	return OpenWith(ctx, url, Options{})
}

// OpenWith opens the store at url with o. It does not migrate.
func OpenWith(ctx context.Context, url string, o Options) (domain.Store, error) {
	if dburl.IsPostgres(url) {
		return postgres.OpenPool(ctx, url, o.PoolSize)
	}
	return sqlite.Open(ctx, url)
}

// Migrate applies all up migrations (steps == 0), or steps up (> 0) or down
// (< 0) migrations.
func Migrate(url string, steps int) error {
	if dburl.IsPostgres(url) {
		return postgres.Migrate(url, steps)
	}
	return sqlite.Migrate(url, steps)
}

// MigrateDownAll rolls back every migration.
func MigrateDownAll(url string) error {
	if dburl.IsPostgres(url) {
		return postgres.MigrateDownAll(url)
	}
	return sqlite.MigrateDownAll(url)
}

// Force marks the schema clean at version v (0: none applied) without
// running a migration: the way out of a dirty schema repaired by hand.
func Force(url string, v uint) error {
	if dburl.IsPostgres(url) {
		return postgres.Force(url, v)
	}
	return sqlite.Force(url, v)
}

// Version reports the schema version and the dirty flag.
func Version(url string) (uint, bool, error) {
	if dburl.IsPostgres(url) {
		return postgres.Version(url)
	}
	return sqlite.Version(url)
}

// OpenMigrated migrates the database at url to the latest schema and opens it.
func OpenMigrated(ctx context.Context, url string) (domain.Store, error) {
	return OpenMigratedWith(ctx, url, Options{})
}

// OpenMigratedWith migrates the database at url to the latest schema and
// opens it with o.
func OpenMigratedWith(ctx context.Context, url string, o Options) (domain.Store, error) {
	if err := Migrate(url, 0); err != nil {
		return nil, err
	}
	return OpenWith(ctx, url, o)
}

// Redact returns url safe to print: a PostgreSQL password, in the user
// information, a query parameter or a key=value pair, is masked.
func Redact(url string) string { return dburl.Redact(url) }

// RedactIn masks in text every password of the address url (driver messages
// may quote it).
func RedactIn(text, url string) string { return dburl.RedactIn(text, url) }
