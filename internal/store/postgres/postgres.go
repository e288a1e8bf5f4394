// Package postgres implements the [domain.Store] contract on PostgreSQL
// through a pgx/v5 connection pool, for deployments shared by a whole team.
// Bulk measurement loads COPY straight into measurements (a long import in
// import batches, see [Store.OpenBatch]).
package postgres

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"net"
	"strings"
	"syscall"
	"time"

	"github.com/golang-migrate/migrate/v4"
	mpgx "github.com/golang-migrate/migrate/v4/database/pgx/v5"
	"github.com/golang-migrate/migrate/v4/source/iofs"
	"github.com/jackc/pgx/v5"
	"github.com/jackc/pgx/v5/pgconn"
	"github.com/jackc/pgx/v5/pgxpool"
	"github.com/jackc/pgx/v5/stdlib"

	"corvane/internal/domain"
	"corvane/internal/store/dburl"
	"corvane/internal/store/storekit"
	"corvane/migrations"
)

// querier is what the pool and a transaction have in common.
type querier interface {
	Exec(ctx context.Context, sql string, args ...any) (pgconn.CommandTag, error)
	Query(ctx context.Context, sql string, args ...any) (pgx.Rows, error)
	QueryRow(ctx context.Context, sql string, args ...any) pgx.Row
	CopyFrom(ctx context.Context, table pgx.Identifier, cols []string, src pgx.CopyFromSource) (int64, error)
	SendBatch(ctx context.Context, b *pgx.Batch) pgx.BatchResults
}

// Store is the PostgreSQL store. It is safe for concurrent use; one bound to
// a transaction (inside [Store.InTx]) is not.
type Store struct {
	pool *pgxpool.Pool
	tx   querier // the bound transaction: a *lazyTx (InTx) or a pgx.Tx (Snapshot)
}

var _ domain.Store = (*Store)(nil)

// Open connects a pool to the database at addr (a postgres:// URL or a
// libpq key=value string). It does not migrate; call [Migrate] first.
func Open(ctx context.Context, addr string) (*Store, error) { return OpenPool(ctx, addr, 0) }

// DefaultPoolSize is the most connections a Store keeps open unless told
// otherwise (serve --db-pool). While a writing transaction held its
// project's change log lock from its first logged write, 16 connections
// beat 4 (the reads of other requests had queued behind the waiting
// writers; p99 42-47 ms against 57-60 ms, e2e TestLoad on two cores). Since
// the lock is taken at commit (migration 000020) the service and the
// database are bound by CPU under that load, and fewer backends contending
// for it make a shorter tail: p99 lower with 8 than with 16 in 10 of 12
// interleaved pairs of 10 s runs on the loaded two-core machine (9 of
// corvane-load, medians about 47 and 62 ms; 3 of e2e TestLoad, 28-45 ms
// and 31-51 ms), at the same throughput; an import's median rose from
// 14-17 to 21-25 ms (it takes a connection several times).
const DefaultPoolSize = 8

// OpenPool is [Open] with at most size connections; 0 takes the address's
// pool_max_conns when it has one, else DefaultPoolSize.
func OpenPool(ctx context.Context, addr string, size int) (*Store, error) {
	cfg, err := pgxpool.ParseConfig(addr)
	if err != nil {
		return nil, fmt.Errorf("database address %s: %s", dburl.Redact(addr), dburl.RedactIn(err.Error(), addr))
	}
	switch {
	case size > 0:
		cfg.MaxConns = int32(min(size, math.MaxInt32))
	case !dburl.Sets(addr, "pool_max_conns"):
		cfg.MaxConns = DefaultPoolSize
	}
	pool, err := pgxpool.NewWithConfig(ctx, cfg)
	if err != nil {
		return nil, fmt.Errorf("connecting to PostgreSQL: %s", dburl.RedactIn(err.Error(), addr))
	}
	pctx, cancel := context.WithTimeout(ctx, 10*time.Second)
	defer cancel()
	if err := pool.Ping(pctx); err != nil {
		pool.Close()
		return nil, fmt.Errorf("connecting to PostgreSQL at %s: %s", dburl.Redact(addr), dburl.RedactIn(err.Error(), addr))
	}
	return &Store{pool: pool}, nil
}

// schema is the migrator of the database at addr (a postgres:// URL or a
// key=value string): golang-migrate's pgx driver on a connection of our own,
// so both address forms work. The driver holds a PostgreSQL advisory lock
// while it migrates, so replicas starting together take turns.
func schema(addr string) storekit.Schema {
	return storekit.Schema{FS: migrations.Postgres, Dir: "postgres", Open: func() (*migrate.Migrate, error) {
		// Parsed as the pool parses it, so that the pool's own settings
		// (pool_max_conns, ...) are not sent to the server as parameters.
		pc, err := pgxpool.ParseConfig(addr)
		if err != nil {
			return nil, fmt.Errorf("database address %s: %s", dburl.Redact(addr), dburl.RedactIn(err.Error(), addr))
		}
		cc := pc.ConnConfig
		src, err := iofs.New(migrations.Postgres, "postgres")
		if err != nil {
			return nil, err
		}
		db := stdlib.OpenDB(*cc)
		drv, err := mpgx.WithInstance(db, &mpgx.Config{})
		if err != nil {
			db.Close()
			return nil, fmt.Errorf("migrating %s: %s", dburl.Redact(addr), dburl.RedactIn(err.Error(), addr))
		}
		m, err := migrate.NewWithInstance("iofs", src, "pgx5", drv)
		if err != nil {
			drv.Close()
			return nil, fmt.Errorf("migrating %s: %w", dburl.Redact(addr), err)
		}
		return m, nil
	}}
}

// Migrate moves the schema: steps > 0 applies that many up migrations, steps
// < 0 rolls that many back, steps == 0 applies all up migrations. It refuses,
// touching nothing, more steps than there are, a dirty schema, and a schema
// newer than this binary.
func Migrate(addr string, steps int) error {
	if steps == 0 {
		return schema(addr).Up()
	}
	return schema(addr).Steps(steps)
}

// MigrateDownAll rolls back every migration.
func MigrateDownAll(addr string) error { return schema(addr).DownAll() }

// Force marks the schema clean at version v without running a migration.
func Force(addr string, v uint) error { return schema(addr).Force(v) }

// Version reports the schema version and whether a failed migration left it
// dirty; 0 when no migration has run.
func Version(addr string) (version uint, dirty bool, err error) { return schema(addr).Version() }

// Ping checks the database answers.
func (s *Store) Ping(ctx context.Context) error { return s.pool.Ping(ctx) }

// Close closes the pool. Closing a transaction-bound Store does nothing.
func (s *Store) Close() error {
	if s.tx == nil {
		s.pool.Close()
	}
	return nil
}

// InTx runs fn in one transaction (read committed) with a Store bound to it.
func (s *Store) InTx(ctx context.Context, fn func(ctx context.Context, tx domain.Store) error) error {
	if s.tx != nil {
		return fn(ctx, s)
	}
	tx := &lazyTx{pool: s.pool}
	if err := fn(ctx, &Store{pool: s.pool, tx: tx}); err != nil {
		tx.rollback(context.WithoutCancel(ctx))
		return err
	}
	return translate(tx.commit(ctx))
}

// lazyTx is the transaction of InTx. It begins with its first statement,
// so that a batch sent first carries the BEGIN (pgx's Batch.BeginTx): one
// round trip fewer (logging one measurement starts with LogInputs). A
// transaction that ran no statement begins and commits nothing.
type lazyTx struct {
	pool *pgxpool.Pool
	tx   pgx.Tx // nil until the first statement
}

func (t *lazyTx) begun(ctx context.Context) (pgx.Tx, error) {
	if t.tx == nil {
		tx, err := t.pool.Begin(ctx)
		if err != nil {
			return nil, err
		}
		t.tx = tx
	}
	return t.tx, nil
}

func (t *lazyTx) Exec(ctx context.Context, sql string, args ...any) (pgconn.CommandTag, error) {
	tx, err := t.begun(ctx)
	if err != nil {
		return pgconn.CommandTag{}, err
	}
	return tx.Exec(ctx, sql, args...)
}

func (t *lazyTx) Query(ctx context.Context, sql string, args ...any) (pgx.Rows, error) {
	tx, err := t.begun(ctx)
	if err != nil {
		return nil, err
	}
	return tx.Query(ctx, sql, args...)
}

func (t *lazyTx) QueryRow(ctx context.Context, sql string, args ...any) pgx.Row {
	tx, err := t.begun(ctx)
	if err != nil {
		return errRow{err}
	}
	return tx.QueryRow(ctx, sql, args...)
}

func (t *lazyTx) CopyFrom(ctx context.Context, table pgx.Identifier, cols []string, src pgx.CopyFromSource) (int64, error) {
	tx, err := t.begun(ctx)
	if err != nil {
		return 0, err
	}
	return tx.CopyFrom(ctx, table, cols, src)
}

func (t *lazyTx) SendBatch(ctx context.Context, b *pgx.Batch) pgx.BatchResults {
	if t.tx != nil {
		return t.tx.SendBatch(ctx, b)
	}
	withBegin := &pgx.Batch{}
	withBegin.BeginTx(pgx.TxOptions{})
	withBegin.QueuedQueries = append(withBegin.QueuedQueries, b.QueuedQueries...)
	br := t.pool.SendBatch(ctx, withBegin)
	t.tx = br.Tx()
	// The BEGIN's result; a failure shows in the results that follow too.
	_, _ = br.Exec()
	return br
}

func (t *lazyTx) commit(ctx context.Context) error {
	if t.tx == nil {
		return nil
	}
	return t.tx.Commit(ctx)
}

func (t *lazyTx) rollback(ctx context.Context) {
	if t.tx != nil {
		t.tx.Rollback(ctx)
	}
}

// errRow is a row that reports err.
type errRow struct{ err error }

func (r errRow) Scan(...any) error { return r.err }

// Snapshot runs fn in one REPEATABLE READ, READ ONLY transaction: every
// read of fn sees the snapshot taken by its first statement.
func (s *Store) Snapshot(ctx context.Context, fn func(ctx context.Context, st domain.Store) error) error {
	if s.tx != nil {
		return fn(ctx, s)
	}
	tx, err := s.pool.BeginTx(ctx, pgx.TxOptions{IsoLevel: pgx.RepeatableRead, AccessMode: pgx.ReadOnly})
	if err != nil {
		return translate(err)
	}
	// Nothing to keep: a read-only transaction ends by rolling back.
	defer tx.Rollback(context.WithoutCancel(ctx))
	return fn(ctx, &Store{pool: s.pool, tx: tx})
}

// Exclusive runs fn holding a session advisory lock named after name, on a
// connection of its own opened outside the pool (a waiter holding a pooled
// connection could starve the holder's work of connections): replicas on
// one database take turns. Closing that connection releases the lock.
func (s *Store) Exclusive(ctx context.Context, name string, fn func(ctx context.Context) error) error {
	conn, err := pgx.ConnectConfig(ctx, s.pool.Config().ConnConfig.Copy())
	if err != nil {
		return translate(err)
	}
	defer conn.Close(context.WithoutCancel(ctx))
	if _, err := conn.Exec(ctx, `SELECT pg_advisory_lock(hashtextextended('corvane:' || $1, 0))`, name); err != nil {
		return translate(err)
	}
	return fn(ctx)
}

func (s *Store) read() querier {
	if s.tx != nil {
		return s.tx
	}
	return s.pool
}

// write runs fn in the bound transaction or in a new one.
func (s *Store) write(ctx context.Context, fn func(q querier) error) error {
	if s.tx != nil {
		return fn(s.tx)
	}
	tx, err := s.pool.Begin(ctx)
	if err != nil {
		return translate(err)
	}
	if err := fn(tx); err != nil {
		tx.Rollback(context.WithoutCancel(ctx))
		return err
	}
	return translate(tx.Commit(ctx))
}

// translate turns driver errors into *domain.Error once.
func translate(err error) error {
	return storekit.Translate(err, "postgres", pgx.ErrNoRows, violation)
}

// violation classes the SQLSTATE of a PostgreSQL error, and tells a
// database that cannot be reached from other failures.
func violation(err error) storekit.Violation {
	var pe *pgconn.PgError
	if !errors.As(err, &pe) {
		if unreachable(err) {
			return storekit.Down
		}
		return storekit.None
	}
	switch {
	case pe.Code == "23505":
		return storekit.Unique
	case pe.Code == "23503":
		return storekit.ForeignKey
	case pe.Code == "23514", pe.Code == "23502", pe.Code == "22P02", pe.Code == "22003":
		return storekit.Rule
	case pe.Code == "40001", pe.Code == "40P01", pe.Code == "55P03":
		// serialization failure, deadlock, lock not available
		return storekit.Clash
	case strings.HasPrefix(pe.Code, "08"), // connection exception
		pe.Code == "57P01", pe.Code == "57P02", pe.Code == "57P03", // shutdown, crash, starting up
		pe.Code == "53100", pe.Code == "53200", pe.Code == "53300": // disk full, out of memory, too many connections
		return storekit.Down
	}
	return storekit.None
}

// unreachable reports whether err (not from the server itself) means the
// connection to the database failed or broke: the server is down or
// restarting. A cancelled or timed-out request is not that.
func unreachable(err error) bool {
	if errors.Is(err, context.Canceled) || errors.Is(err, context.DeadlineExceeded) {
		return false
	}
	var ce *pgconn.ConnectError
	var ne net.Error
	switch {
	case errors.As(err, &ce), errors.As(err, &ne),
		errors.Is(err, io.EOF), errors.Is(err, io.ErrUnexpectedEOF),
		errors.Is(err, syscall.ECONNREFUSED), errors.Is(err, syscall.ECONNRESET), errors.Is(err, syscall.EPIPE),
		pgconn.SafeToRetry(err):
		return true
	}
	// pgx reports a connection it already found broken as "conn closed".
	return strings.Contains(err.Error(), "conn closed")
}

// one translates the error of a single-row read, naming what was missing.
func one(err error, entity string, key any) error {
	if errors.Is(err, pgx.ErrNoRows) {
		return storekit.NotFound(entity, key)
	}
	return translate(err)
}

// versionGone explains why a version-checked update or delete touched no
// row: the row is missing (NotFound) or has another version.
func versionGone(ctx context.Context, q querier, table, entity string, id any, ifVersion int64) error {
	var v int64
	err := q.QueryRow(ctx, "SELECT version FROM "+table+" WHERE "+storekit.KeyCol(table)+" = $1", id).Scan(&v)
	if err != nil {
		return one(err, entity, id)
	}
	return storekit.Stale(entity, id, v, ifVersion)
}

func derefID(p *int64) int64 {
	if p == nil {
		return domain.AllProjects
	}
	return *p
}
