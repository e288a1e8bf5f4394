package postgres

import (
	"context"
	"errors"
	"fmt"
	"strings"
	"time"

	"github.com/jackc/pgx/v5"

	"corvane/internal/domain"
	"corvane/internal/store/storekit"
)

const (
	changeCols = `seq, COALESCE(project_id, 0), COALESCE(hole_id, 0), tbl, global_id, op, version, origin, actor, at`
	// The settings are local to the transaction: they end with it.
	setChangeSource = `SELECT set_config('corvane.origin', $1, true), set_config('corvane.actor', $2, true)`
	recordChanges   = `SELECT ` + changeCols + ` FROM change_log WHERE tbl = $1 AND global_id = $2 ORDER BY seq`
	lastChangeSeq   = `SELECT COALESCE(MAX(seq), 0) FROM change_log`

	selectCursor = `SELECT remote, project, holes, pulled, pushed, replica FROM sync_cursors WHERE remote = $1 AND project = $2`
	upsertCursor = `INSERT INTO sync_cursors (remote, project, holes, pulled, pushed, replica) VALUES ($1, $2, $3, $4, $5, $6)
	ON CONFLICT (remote, project) DO UPDATE SET holes = excluded.holes, pulled = excluded.pulled,
	pushed = excluded.pushed, replica = excluded.replica`
	selectBase = `SELECT version FROM sync_bases WHERE remote = $1 AND tbl = $2 AND global_id = $3`
	upsertBase = `INSERT INTO sync_bases (remote, tbl, global_id, version) VALUES ($1, $2, $3, $4)
	ON CONFLICT (remote, tbl, global_id) DO UPDATE SET version = excluded.version`
	deleteBase = `DELETE FROM sync_bases WHERE remote = $1 AND tbl = $2 AND global_id = $3`

	conflictCols = `id, project_id, kind, tbl, global_id, replica, actor, base_version, local_version, remote_version,
	local_data, remote_data, reason, status, kept, resolved_by, created_at, resolved_at`
	upsertConflict = `INSERT INTO sync_conflicts (` + conflictCols + `) VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10, $11, $12, $13, $14, $15, $16, $17, $18)
	ON CONFLICT (id) DO UPDATE SET project_id = excluded.project_id, kind = excluded.kind, tbl = excluded.tbl,
	global_id = excluded.global_id, replica = excluded.replica, actor = excluded.actor,
	base_version = excluded.base_version, local_version = excluded.local_version,
	remote_version = excluded.remote_version, local_data = excluded.local_data, remote_data = excluded.remote_data,
	reason = excluded.reason, status = excluded.status, kept = excluded.kept, resolved_by = excluded.resolved_by,
	resolved_at = excluded.resolved_at`
	selectConflict = `SELECT ` + conflictCols + ` FROM sync_conflicts WHERE id = $1`
)

func dollar(n int) string { return fmt.Sprintf("$%d", n) }

// SetChangeSource marks the change log entries of the rest of the
// transaction (transaction-local settings the triggers read).
func (s *Store) SetChangeSource(ctx context.Context, origin, actor string) error {
	if s.tx == nil {
		return domain.Errorf(domain.Internal, "postgres: SetChangeSource outside a transaction")
	}
	_, err := s.tx.Exec(ctx, setChangeSource, origin, actor)
	return translate(err)
}

func scanChange(r scanner) (domain.Change, error) {
	var c domain.Change
	err := r.Scan(&c.Seq, &c.ProjectID, &c.HoleID, &c.Table, &c.GlobalID, &c.Op, &c.Version, &c.Origin, &c.Actor, &c.At)
	c.At = c.At.UTC()
	return c, err
}

// ownChanges moves the change log entries the bound transaction still owes
// into change_log (they are written at its commit, migration 000020), so
// that a read of the log inside a writing transaction sees its own changes
// as it did when they were written at once. It then holds its projects'
// log locks until it ends. Outside a transaction it does nothing.
func (s *Store) ownChanges(ctx context.Context) error {
	if s.tx == nil {
		return nil
	}
	_, err := s.tx.Exec(ctx, `SELECT corvane_log_flush()`)
	return translate(err)
}

// ListChanges lists the project's change log entries after f.After by seq.
func (s *Store) ListChanges(ctx context.Context, f domain.ChangeFilter) ([]domain.Change, error) {
	if err := s.ownChanges(ctx); err != nil {
		return nil, err
	}
	var b strings.Builder
	args := []any{f.ProjectID, f.After}
	b.WriteString(`SELECT ` + changeCols + ` FROM change_log WHERE project_id = $1 AND seq > $2`)
	if len(f.HoleIDs) > 0 {
		args = append(args, f.HoleIDs)
		fmt.Fprintf(&b, " AND (hole_id IS NULL OR hole_id = ANY($%d))", len(args))
	}
	if f.LocalOnly {
		b.WriteString(" AND origin = ''")
	}
	args = append(args, domain.Page{Limit: f.Limit}.Norm().Limit)
	fmt.Fprintf(&b, " ORDER BY seq LIMIT $%d", len(args))
	rows, err := s.read().Query(ctx, b.String(), args...)
	if err != nil {
		return nil, translate(err)
	}
	return collect(rows, scanChange)
}

// RecordChanges lists the change log entries of one record.
func (s *Store) RecordChanges(ctx context.Context, table, globalID string) ([]domain.Change, error) {
	if err := s.ownChanges(ctx); err != nil {
		return nil, err
	}
	rows, err := s.read().Query(ctx, recordChanges, table, globalID)
	if err != nil {
		return nil, translate(err)
	}
	return collect(rows, scanChange)
}

// LastChangeSeq returns the highest seq of the change log.
func (s *Store) LastChangeSeq(ctx context.Context) (int64, error) {
	if err := s.ownChanges(ctx); err != nil {
		return 0, err
	}
	var n int64
	err := s.read().QueryRow(ctx, lastChangeSeq).Scan(&n)
	return n, translate(err)
}

// FindGlobal returns the row id and version of a synced record.
func (s *Store) FindGlobal(ctx context.Context, projectID int64, table, globalID string) (int64, int64, error) {
	q, args, err := storekit.FindGlobalSQL(table, projectID, globalID, dollar)
	if err != nil {
		return 0, 0, err
	}
	var id, v int64
	err = s.read().QueryRow(ctx, q, args...).Scan(&id, &v)
	return id, v, one(err, table, globalID)
}

// Restamp sets the version of a synced record.
func (s *Store) Restamp(ctx context.Context, projectID int64, table, globalID string, version int64) error {
	q, args, err := storekit.RestampSQL(table, projectID, globalID, version, dollar)
	if err != nil {
		return err
	}
	return s.write(ctx, func(qr querier) error {
		tag, err := qr.Exec(ctx, q, args...)
		if err != nil {
			return translate(err)
		}
		if tag.RowsAffected() == 0 {
			return storekit.NotFound(table, globalID)
		}
		return nil
	})
}

// GetSyncCursor returns the cursor of (remote, project).
func (s *Store) GetSyncCursor(ctx context.Context, remote, project string) (domain.SyncCursor, error) {
	var c domain.SyncCursor
	err := s.read().QueryRow(ctx, selectCursor, remote, project).Scan(&c.Remote, &c.Project, &c.Holes, &c.Pulled, &c.Pushed, &c.Replica)
	return c, one(err, "sync cursor", remote+" "+project)
}

// PutSyncCursor creates or replaces the cursor of (c.Remote, c.Project).
func (s *Store) PutSyncCursor(ctx context.Context, c domain.SyncCursor) error {
	return s.write(ctx, func(q querier) error {
		_, err := q.Exec(ctx, upsertCursor, c.Remote, c.Project, c.Holes, c.Pulled, c.Pushed, c.Replica)
		return translate(err)
	})
}

// SyncBase returns the version last agreed with remote, 0 when none.
func (s *Store) SyncBase(ctx context.Context, remote, table, globalID string) (int64, error) {
	var v int64
	err := s.read().QueryRow(ctx, selectBase, remote, table, globalID).Scan(&v)
	if errors.Is(err, pgx.ErrNoRows) {
		return 0, nil
	}
	return v, translate(err)
}

// SyncBases returns the agreed versions of many records of one table.
func (s *Store) SyncBases(ctx context.Context, remote, table string, globalIDs []string) (map[string]int64, error) {
	out := make(map[string]int64, len(globalIDs))
	if len(globalIDs) == 0 {
		return out, nil
	}
	rows, err := s.read().Query(ctx, `SELECT global_id, version FROM sync_bases WHERE remote = $1 AND tbl = $2 AND global_id = ANY($3)`, remote, table, globalIDs)
	if err != nil {
		return nil, translate(err)
	}
	defer rows.Close()
	for rows.Next() {
		var g string
		var v int64
		if err := rows.Scan(&g, &v); err != nil {
			return nil, translate(err)
		}
		out[g] = v
	}
	return out, translate(rows.Err())
}

// PutSyncBase records the version last agreed with remote (0 forgets it).
func (s *Store) PutSyncBase(ctx context.Context, remote, table, globalID string, version int64) error {
	return s.write(ctx, func(q querier) error {
		var err error
		if version == 0 {
			_, err = q.Exec(ctx, deleteBase, remote, table, globalID)
		} else {
			_, err = q.Exec(ctx, upsertBase, remote, table, globalID, version)
		}
		return translate(err)
	})
}

func scanConflict(r scanner) (domain.SyncConflict, error) {
	var c domain.SyncConflict
	var local, remote string
	var resolved *time.Time
	err := r.Scan(&c.ID, &c.ProjectID, &c.Kind, &c.Table, &c.GlobalID, &c.Replica, &c.Actor, &c.BaseVersion,
		&c.LocalVersion, &c.RemoteVersion, &local, &remote, &c.Reason, &c.Status, &c.Kept, &c.ResolvedBy, &c.CreatedAt, &resolved)
	c.LocalData, c.RemoteData = storekit.JSONFromText(local), storekit.JSONFromText(remote)
	c.CreatedAt = c.CreatedAt.UTC()
	if resolved != nil {
		t := resolved.UTC()
		c.ResolvedAt = &t
	}
	return c, err
}

// PutConflict creates or replaces a conflict.
func (s *Store) PutConflict(ctx context.Context, c domain.SyncConflict) error {
	if c.CreatedAt.IsZero() {
		c.CreatedAt = storekit.Now()
	}
	return s.write(ctx, func(q querier) error {
		_, err := q.Exec(ctx, upsertConflict, c.ID, c.ProjectID, c.Kind, c.Table, c.GlobalID, c.Replica, c.Actor,
			c.BaseVersion, c.LocalVersion, c.RemoteVersion, storekit.JSONText(c.LocalData), storekit.JSONText(c.RemoteData),
			c.Reason, c.Status, c.Kept, c.ResolvedBy, c.CreatedAt, c.ResolvedAt)
		return translate(err)
	})
}

// GetConflict returns the conflict with the given id.
func (s *Store) GetConflict(ctx context.Context, id string) (domain.SyncConflict, error) {
	c, err := scanConflict(s.read().QueryRow(ctx, selectConflict, id))
	return c, one(err, "conflict", id)
}

// ListConflicts lists the project's conflicts, oldest first.
func (s *Store) ListConflicts(ctx context.Context, projectID int64, status string) ([]domain.SyncConflict, error) {
	q := `SELECT ` + conflictCols + ` FROM sync_conflicts WHERE project_id = $1`
	args := []any{projectID}
	if status != "" {
		q += ` AND status = $2`
		args = append(args, status)
	}
	rows, err := s.read().Query(ctx, q+` ORDER BY created_at, id`, args...)
	if err != nil {
		return nil, translate(err)
	}
	return collect(rows, scanConflict)
}
