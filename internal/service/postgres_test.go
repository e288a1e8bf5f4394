package service_test

import (
	"context"
	"os"
	"testing"

	"corvane/internal/pgtest"
	"corvane/internal/service"
	"corvane/internal/store/postgres"
)

func TestMain(m *testing.M) {
	os.Exit(pgtest.Main(m, func(url string) error { return postgres.Migrate(url, 0) }))
}

// The use cases whose store paths differ most (COPY bulk loads, racing
// transactions) run on PostgreSQL too.
func TestOnPostgres(t *testing.T) {
	open := func(t *testing.T) (*service.Service, context.Context) {
		st, err := postgres.Open(context.Background(), pgtest.DB(t))
		if err != nil {
			t.Fatal(err)
		}
		t.Cleanup(func() { st.Close() })
		return service.New(st, nil), service.WithActor(context.Background(), service.System)
	}
	t.Run("ImportExport", func(t *testing.T) {
		s, ctx := open(t)
		checkImportExport(t, s, ctx)
	})
	t.Run("RowCacheNeverStale", func(t *testing.T) {
		s, ctx := open(t)
		checkRowCacheNeverStale(t, s, ctx)
	})
	t.Run("ImportChangeLogComplete", func(t *testing.T) {
		s, ctx := open(t)
		checkImportChangeLogComplete(t, s, ctx)
	})
	t.Run("ImportDuplicates", func(t *testing.T) {
		s, ctx := open(t)
		checkImportDuplicates(t, s, ctx)
	})
	t.Run("ConcurrentRetries", func(t *testing.T) {
		s, ctx := open(t)
		checkRetries(t, s, ctx)
	})
	t.Run("NoNegativeZero", func(t *testing.T) {
		s, ctx := open(t)
		checkNoNegativeZero(t, s, ctx)
	})
	t.Run("TextRules", func(t *testing.T) {
		s, ctx := open(t)
		checkTextRules(t, s, ctx)
	})
	t.Run("DepthRules", func(t *testing.T) {
		s, ctx := open(t)
		checkDepthRules(t, s, ctx)
	})
	t.Run("WriteDuringImport", func(t *testing.T) {
		s, ctx := open(t)
		checkWriteDuringImport(t, s, ctx)
	})
	t.Run("ExportDuringImport", func(t *testing.T) {
		s, ctx := open(t)
		checkExportDuringImport(t, s, ctx)
	})
	t.Run("RaceStatuses", func(t *testing.T) {
		s, ctx := open(t)
		checkRaceStatuses(t, s, ctx)
	})
	t.Run("Demo", func(t *testing.T) {
		s, ctx := open(t)
		checkDemo(t, s, ctx, true)
	})
}
