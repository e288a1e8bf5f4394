// Package migrations embeds corvane's database schema as golang-migrate
// migration files: postgres/ for PostgreSQL and sqlite/ for the embedded
// store. Both directories carry the same version numbers, so a version means
// the same schema on either store.
package migrations

import (
	"embed"
	"fmt"
	"io/fs"
)

// Postgres holds the PostgreSQL migrations under the directory "postgres".
//
//go:embed postgres/*.sql
var Postgres embed.FS

// SQLite holds the SQLite migrations under the directory "sqlite".
//
//go:embed sqlite/*.sql
var SQLite embed.FS

// Versions lists the version numbers of the migrations in SQLite (the same
// on both stores), ascending: the last is the schema a fresh database gets.
func Versions() []uint {
	ents, err := fs.ReadDir(SQLite, "sqlite")
	if err != nil {
		panic(err) // embedded at build time: cannot fail
	}
	var out []uint
	for _, e := range ents {
		var v uint
		if _, err := fmt.Sscanf(e.Name(), "%d_", &v); err == nil && (len(out) == 0 || out[len(out)-1] != v) {
			out = append(out, v)
		}
	}
	return out
}
