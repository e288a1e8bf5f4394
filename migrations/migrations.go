// Package migrations embeds corvane's database schema as golang-migrate
// migration files: postgres/ for PostgreSQL and sqlite/ for the embedded
// store. Both directories carry the same version numbers, so a version means
// the same schema on either store.
package migrations

import "embed"

// Postgres holds the PostgreSQL migrations under the directory "postgres".
//
//go:embed postgres/*.sql
var Postgres embed.FS

// SQLite holds the SQLite migrations under the directory "sqlite".
//
//go:embed sqlite/*.sql
var SQLite embed.FS
