// Package sqlite implements the [domain.Store] contract on an embedded SQLite
// database file (modernc.org/sqlite, pure Go, through database/sql), so the
// service runs on a fresh machine with nothing else installed.
//
// The file is opened in WAL mode with foreign keys on and a busy timeout.
// Writers are serialised in the process: all writes go through one connection
// that starts IMMEDIATE transactions, while reads use a pool of connections
// that see the last committed state. Times are stored as microseconds since
// the Unix epoch, UTC.
package sqlite

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"io/fs"
	"net/url"
	"os"
	"runtime"
	"strings"
	"sync"
	"time"

	"github.com/golang-migrate/migrate/v4"
	msqlite "github.com/golang-migrate/migrate/v4/database/sqlite"
	"github.com/golang-migrate/migrate/v4/source/iofs"
	"modernc.org/sqlite"
	sqlite3 "modernc.org/sqlite/lib"

	"corvane/internal/domain"
	"corvane/internal/store/storekit"
	"corvane/migrations"
)

// querier is what *sql.DB and *sql.Tx have in common.
type querier interface {
	ExecContext(ctx context.Context, query string, args ...any) (sql.Result, error)
	QueryContext(ctx context.Context, query string, args ...any) (*sql.Rows, error)
	QueryRowContext(ctx context.Context, query string, args ...any) *sql.Row
}

// Store is the SQLite store. The zero value is not usable; call [Open].
// A Store is safe for concurrent use; one bound to a transaction (inside
// [Store.InTx]) is not, like the transaction itself.
type Store struct {
	w *sql.DB // one connection, IMMEDIATE transactions: the single writer
	// turn hands the writer to those who wait for it in the order they
	// came (see [Store.takeTurn]); shared by the Stores bound to a
	// transaction, which never take it.
	turn chan struct{}
	r    *sql.DB // readers
	tx   *sql.Tx // set when bound to a transaction
	// readOnly marks a Store bound to a [Store.Snapshot]: its writes fail.
	readOnly bool
	// sourced is set when [Store.SetChangeSource] marked the transaction's
	// change log entries; InTx resets the mark before it commits.
	sourced bool
}

var _ domain.Store = (*Store)(nil)

// busyTimeoutMS is how long a connection waits for a lock another process
// holds before the store reports itself unavailable (503).
var busyTimeoutMS = 10000

// dsn builds the driver DSN for path with the pragmas every connection needs.
func dsn(path string, immediate bool) string {
	v := url.Values{}
	v.Add("_pragma", fmt.Sprintf("busy_timeout(%d)", busyTimeoutMS))
	v.Add("_pragma", "journal_mode(WAL)")
	v.Add("_pragma", "foreign_keys(1)")
	v.Add("_pragma", "synchronous(NORMAL)")
	// Statement journals (a multi-row INSERT keeps one) and temporary
	// b-trees in memory rather than in temporary files.
	v.Add("_pragma", "temp_store(MEMORY)")
	if immediate {
		v.Add("_txlock", "immediate")
		// The writer keeps up to 32 MB of pages (default 2 MB), so a bulk
		// import's inserts into the indexes find their pages in memory.
		v.Add("_pragma", "cache_size(-32768)")
	}
	if strings.HasPrefix(path, "file:") {
		if strings.Contains(path, "?") {
			return path + "&" + v.Encode()
		}
		return path + "?" + v.Encode()
	}
	return "file:" + path + "?" + v.Encode()
}

// Path returns the file path of a database URL: "sqlite://path", "sqlite:path",
// "file:path" or a plain path.
func Path(databaseURL string) string {
	for _, p := range []string{"sqlite://", "sqlite3://", "sqlite:"} {
		if strings.HasPrefix(databaseURL, p) {
			return strings.TrimPrefix(databaseURL, p)
		}
	}
	return databaseURL
}

// Open opens (creating if needed) the database file at path. It does not
// migrate; call [Migrate] first.
func Open(ctx context.Context, path string) (*Store, error) {
	path = Path(path)
	wc, err := newConnector(dsn(path, true))
	if err != nil {
		return nil, fmt.Errorf("opening %s: %w", path, err)
	}
	rc, err := newConnector(dsn(path, false))
	if err != nil {
		return nil, fmt.Errorf("opening %s: %w", path, err)
	}
	w := sql.OpenDB(wc)
	w.SetMaxOpenConns(1)
	w.SetMaxIdleConns(1)
	w.SetConnMaxLifetime(0)
	r := sql.OpenDB(rc)
	n := max(4, runtime.GOMAXPROCS(0))
	r.SetMaxOpenConns(n)
	r.SetMaxIdleConns(n)
	s := &Store{w: w, r: r, turn: make(chan struct{}, 1)}
	if err := s.Ping(ctx); err != nil {
		s.Close()
		return nil, fmt.Errorf("opening %s: %w", path, err)
	}
	return s, nil
}

func schema(path string) storekit.Schema {
	return storekit.Schema{FS: migrations.SQLite, Dir: "sqlite", Open: func() (*migrate.Migrate, error) { return newMigrate(path) }}
}

// Migrate moves the schema of the database file at path: steps > 0 applies
// that many up migrations, steps < 0 rolls that many back, steps == 0 applies
// all up migrations. It refuses, touching nothing, more steps than there
// are, a dirty schema, and a schema newer than this binary. It gives migrate
// its own handle (migrate closes it).
func Migrate(path string, steps int) error {
	if steps == 0 {
		return schema(Path(path)).Up()
	}
	return schema(Path(path)).Steps(steps)
}

// MigrateDownAll rolls back every migration.
func MigrateDownAll(path string) error { return schema(Path(path)).DownAll() }

// Force marks the schema clean at version v without running a migration.
func Force(path string, v uint) error { return schema(Path(path)).Force(v) }

// Version reports the schema version of the database file and whether a
// failed migration left it dirty. A database with no migrations has version 0,
// and so has a file that does not exist: asking does not create it.
func Version(path string) (version uint, dirty bool, err error) {
	path = Path(path)
	if !strings.HasPrefix(path, "file:") {
		if _, err := os.Stat(path); errors.Is(err, fs.ErrNotExist) {
			return 0, false, nil
		}
	}
	return schema(path).Version()
}

func newMigrate(path string) (*migrate.Migrate, error) {
	src, err := iofs.New(migrations.SQLite, "sqlite")
	if err != nil {
		return nil, err
	}
	db, err := sql.Open("sqlite", dsn(path, false))
	if err != nil {
		return nil, err
	}
	drv, err := msqlite.WithInstance(db, &msqlite.Config{})
	if err != nil {
		db.Close()
		return nil, fmt.Errorf("migrating %s: %w", path, err)
	}
	m, err := migrate.NewWithInstance("iofs", src, "sqlite", drv)
	if err != nil {
		drv.Close()
		return nil, fmt.Errorf("migrating %s: %w", path, err)
	}
	return m, nil
}

// Ping checks both handles.
func (s *Store) Ping(ctx context.Context) error {
	if err := s.w.PingContext(ctx); err != nil {
		return err
	}
	return s.r.PingContext(ctx)
}

// Close closes the database. Closing a transaction-bound Store does nothing.
func (s *Store) Close() error {
	if s.tx != nil {
		return nil
	}
	return errors.Join(s.r.Close(), s.w.Close())
}

// InTx runs fn in one IMMEDIATE transaction on the writer connection.
func (s *Store) InTx(ctx context.Context, fn func(ctx context.Context, tx domain.Store) error) error {
	if s.tx != nil {
		return fn(ctx, s)
	}
	if err := s.takeTurn(ctx); err != nil {
		return err
	}
	defer s.endTurn()
	tx, err := s.w.BeginTx(ctx, nil)
	if err != nil {
		return translate(err)
	}
	bound := &Store{w: s.w, r: s.r, turn: s.turn, tx: tx}
	if err := fn(ctx, bound); err != nil {
		tx.Rollback()
		return err
	}
	if bound.sourced {
		if _, err := tx.ExecContext(ctx, setChangeSource, "", ""); err != nil {
			tx.Rollback()
			return translate(err)
		}
	}
	if err := tx.Commit(); err != nil {
		return translate(err)
	}
	return nil
}

// Snapshot runs fn in one read transaction on a reader connection. In WAL
// mode SQLite gives such a transaction the snapshot of its first read until
// it ends; writes through it fail (it is not the writer, and read-only).
func (s *Store) Snapshot(ctx context.Context, fn func(ctx context.Context, st domain.Store) error) error {
	if s.tx != nil {
		return fn(ctx, s)
	}
	tx, err := s.r.BeginTx(ctx, &sql.TxOptions{ReadOnly: true})
	if err != nil {
		return translate(err)
	}
	defer tx.Rollback()
	return fn(ctx, &Store{w: s.w, r: s.r, turn: s.turn, tx: tx, readOnly: true})
}

// exclusive serialises [Store.Exclusive] in the process: an SQLite file
// is served by one process.
var exclusive sync.Mutex

// Exclusive runs fn holding the process's lock (name is not needed: one
// lock for all).
func (s *Store) Exclusive(ctx context.Context, name string, fn func(ctx context.Context) error) error {
	exclusive.Lock()
	defer exclusive.Unlock()
	return fn(ctx)
}

// read returns the querier for reads: the transaction when bound, else the
// reader pool.
func (s *Store) read() querier {
	if s.tx != nil {
		return s.tx
	}
	return s.r
}

// write runs fn in the bound transaction or in a new one on the writer.
func (s *Store) write(ctx context.Context, fn func(q querier) error) error {
	if s.readOnly {
		return domain.Errorf(domain.Internal, "sqlite: a write inside a read-only snapshot")
	}
	if s.tx != nil {
		return fn(s.tx)
	}
	if err := s.takeTurn(ctx); err != nil {
		return err
	}
	defer s.endTurn()
	tx, err := s.w.BeginTx(ctx, nil)
	if err != nil {
		return translate(err)
	}
	if err := fn(tx); err != nil {
		tx.Rollback()
		return err
	}
	return translate(tx.Commit())
}

// takeTurn waits until the writer is free or ctx ends, first come first
// served: the goroutines blocked sending on a channel are woken in the order
// they came, while database/sql hands a freed connection to a waiter picked
// at random, so that under load a write could wait behind many that came
// after it (the load generator's 99th percentile).
func (s *Store) takeTurn(ctx context.Context) error {
	select {
	case s.turn <- struct{}{}:
		return nil
	case <-ctx.Done():
		return translate(ctx.Err())
	}
}

// endTurn lets the next in line have the writer.
func (s *Store) endTurn() { <-s.turn }

// translate turns driver errors into *domain.Error once: constraint
// violations become Conflict or Invalid, sql.ErrNoRows NotFound, the rest
// Internal.
func translate(err error) error {
	return storekit.Translate(err, "sqlite", sql.ErrNoRows, violation)
}

// violation classes the extended result code of an SQLite error.
func violation(err error) storekit.Violation {
	var se *sqlite.Error
	if !errors.As(err, &se) {
		return storekit.None
	}
	switch se.Code() {
	case sqlite3.SQLITE_CONSTRAINT_UNIQUE, sqlite3.SQLITE_CONSTRAINT_PRIMARYKEY:
		return storekit.Unique
	case sqlite3.SQLITE_CONSTRAINT_FOREIGNKEY:
		return storekit.ForeignKey
	case sqlite3.SQLITE_CONSTRAINT_CHECK, sqlite3.SQLITE_CONSTRAINT_NOTNULL:
		return storekit.Rule
	}
	// The primary result code (the low byte): a file still locked after the
	// busy timeout, a full disk or a failing file is the store being
	// unavailable, not a bug.
	switch se.Code() & 0xff {
	case sqlite3.SQLITE_BUSY, sqlite3.SQLITE_LOCKED, sqlite3.SQLITE_FULL, sqlite3.SQLITE_IOERR, sqlite3.SQLITE_CANTOPEN:
		return storekit.Down
	}
	return storekit.None
}

// one translates the error of a single-row read, naming what was missing.
func one(err error, entity string, key any) error {
	if errors.Is(err, sql.ErrNoRows) {
		return storekit.NotFound(entity, key)
	}
	return translate(err)
}

// versionGone explains why a version-checked update or delete touched no
// row: the row is missing (NotFound) or has another version.
func versionGone(ctx context.Context, q querier, table, entity string, id any, ifVersion int64) error {
	var v int64
	err := q.QueryRowContext(ctx, "SELECT version FROM "+table+" WHERE "+storekit.KeyCol(table)+" = ?", id).Scan(&v)
	if err != nil {
		return one(err, entity, id)
	}
	return storekit.Stale(entity, id, v, ifVersion)
}

func micro(t time.Time) int64 { return t.UnixMicro() }

func fromMicro(us int64) time.Time { return time.UnixMicro(us).UTC() }

func floatPtr(n sql.NullFloat64) *float64 {
	if !n.Valid {
		return nil
	}
	v := n.Float64
	return &v
}
