package sqlite

import (
	"context"
	"database/sql/driver"

	"modernc.org/sqlite"
)

// The driver prepares (parses and plans) every query it is given, and the
// store's queries are a few dozen texts run over and over: under load the
// parsing was a sixth of the service's time. stmtConn keeps the prepared
// statements of one connection by their text and runs each query on its
// statement; database/sql sees an ordinary connection.

// maxCachedStmts bounds the statements one connection keeps; queries beyond
// it are prepared each time, as before.
const maxCachedStmts = 256

// maxCachedQuery is the longest query text kept: long texts are the
// multi-row INSERTs of varying length, run once each.
const maxCachedQuery = 2048

// connector opens the driver's connections (with the DSN's pragmas) and
// wraps each in a stmtConn.
type connector struct{ driver.Connector }

// newConnector returns the connector of dsn.
func newConnector(dsn string) (connector, error) {
	c, err := sqlite.NewConnector(dsn)
	return connector{c}, err
}

func (c connector) Connect(ctx context.Context) (driver.Conn, error) {
	cn, err := c.Connector.Connect(ctx)
	if err != nil {
		return nil, err
	}
	return &stmtConn{Conn: cn, stmts: map[string]*cachedStmt{}}, nil
}

// stmtConn is a driver connection with a statement cache. Like any driver
// connection it is used by one goroutine at a time.
type stmtConn struct {
	driver.Conn
	stmts map[string]*cachedStmt
}

type cachedStmt struct {
	st   driver.Stmt
	busy bool // its rows are open
}

// stmt returns the cached statement of query, preparing it, or nil when the
// query is not to be cached or its statement is busy.
func (c *stmtConn) stmt(ctx context.Context, query string) (*cachedStmt, error) {
	if cs, ok := c.stmts[query]; ok {
		if cs.busy {
			return nil, nil
		}
		return cs, nil
	}
	if len(c.stmts) >= maxCachedStmts || len(query) > maxCachedQuery {
		return nil, nil
	}
	st, err := c.Conn.(driver.ConnPrepareContext).PrepareContext(ctx, query)
	if err != nil {
		return nil, err
	}
	cs := &cachedStmt{st: st}
	c.stmts[query] = cs
	return cs, nil
}

// QueryContext runs query on its cached statement.
func (c *stmtConn) QueryContext(ctx context.Context, query string, args []driver.NamedValue) (driver.Rows, error) {
	cs, err := c.stmt(ctx, query)
	if err != nil {
		return nil, err
	}
	if cs == nil {
		return c.Conn.(driver.QueryerContext).QueryContext(ctx, query, args)
	}
	rows, err := cs.st.(driver.StmtQueryContext).QueryContext(ctx, args)
	if err != nil {
		return nil, err
	}
	cs.busy = true
	return &stmtRows{Rows: rows, cs: cs}, nil
}

// ExecContext runs query on its cached statement.
func (c *stmtConn) ExecContext(ctx context.Context, query string, args []driver.NamedValue) (driver.Result, error) {
	cs, err := c.stmt(ctx, query)
	if err != nil {
		return nil, err
	}
	if cs == nil {
		return c.Conn.(driver.ExecerContext).ExecContext(ctx, query, args)
	}
	return cs.st.(driver.StmtExecContext).ExecContext(ctx, args)
}

// Close closes the cached statements, then the connection.
func (c *stmtConn) Close() error {
	for _, cs := range c.stmts {
		cs.st.Close()
	}
	c.stmts = nil
	return c.Conn.Close()
}

// The rest of the connection's interfaces, passed through.

func (c *stmtConn) BeginTx(ctx context.Context, opts driver.TxOptions) (driver.Tx, error) {
	return c.Conn.(driver.ConnBeginTx).BeginTx(ctx, opts)
}

func (c *stmtConn) PrepareContext(ctx context.Context, query string) (driver.Stmt, error) {
	return c.Conn.(driver.ConnPrepareContext).PrepareContext(ctx, query)
}

func (c *stmtConn) Ping(ctx context.Context) error { return c.Conn.(driver.Pinger).Ping(ctx) }

func (c *stmtConn) ResetSession(ctx context.Context) error {
	return c.Conn.(driver.SessionResetter).ResetSession(ctx)
}

func (c *stmtConn) IsValid() bool { return c.Conn.(driver.Validator).IsValid() }

// stmtRows frees its statement for the next query when closed.
type stmtRows struct {
	driver.Rows
	cs *cachedStmt
}

func (r *stmtRows) Close() error {
	err := r.Rows.Close()
	r.cs.busy = false
	return err
}
