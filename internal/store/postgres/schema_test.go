package postgres_test

import (
	"context"
	"testing"
	"time"

	"github.com/golang-migrate/migrate/v4"
	"github.com/golang-migrate/migrate/v4/database"
	"github.com/jackc/pgx/v5"

	"corvane/internal/pgtest"
	"corvane/internal/store/postgres"
)

// Replicas starting together: replica B has opened its migrator when
// replica A takes the migration lock and starts migrating, so the schema
// reads dirty to B. B waits for the lock and, once A is done, finds the
// schema clean and migrates (here: nothing to do) instead of refusing it as
// dirty.
func TestUpWaitsForAMigrationInProgress(t *testing.T) {
	addr := pgtest.DB(t)
	if err := postgres.Migrate(addr, 0); err != nil {
		t.Fatal(err)
	}
	ctx := context.Background()
	a, err := pgx.Connect(ctx, addr) // replica A's session
	if err != nil {
		t.Fatal(err)
	}
	defer a.Close(ctx)
	exec := func(q string) {
		if _, err := a.Exec(ctx, q); err != nil {
			t.Error(err)
		}
	}
	var dbName, schemaName string
	if err := a.QueryRow(ctx, "SELECT current_database(), current_schema()").Scan(&dbName, &schemaName); err != nil {
		t.Fatal(err)
	}
	// The lock golang-migrate's pgx driver holds around a migration.
	id, err := database.GenerateAdvisoryLockId(dbName, schemaName, "schema_migrations")
	if err != nil {
		t.Fatal(err)
	}
	released := make(chan struct{})
	b := postgres.SchemaOf(addr)
	open, opened := b.Open, 0
	b.Open = func() (*migrate.Migrate, error) {
		m, err := open()
		if opened++; opened == 1 && err == nil {
			exec("SELECT pg_advisory_lock(" + id + ")")
			exec("UPDATE schema_migrations SET dirty = true")
			go func() {
				defer close(released)
				time.Sleep(500 * time.Millisecond)
				exec("UPDATE schema_migrations SET dirty = false")
				exec("SELECT pg_advisory_unlock(" + id + ")")
			}()
		}
		return m, err
	}
	err = b.Up()
	<-released
	if err != nil {
		t.Fatalf("migrate while another replica migrates: %v", err)
	}
}
