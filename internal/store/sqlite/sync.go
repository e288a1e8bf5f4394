package sqlite

import (
	"context"
	"database/sql"
	"strings"

	"corvane/internal/domain"
	"corvane/internal/store/storekit"
)

const (
	changeCols      = `seq, COALESCE(project_id, 0), COALESCE(hole_id, 0), tbl, global_id, op, version, origin, actor, at`
	setChangeSource = `UPDATE change_source SET origin = ?, actor = ? WHERE k = 1`
	recordChanges   = `SELECT ` + changeCols + ` FROM change_log WHERE tbl = ? AND global_id = ? ORDER BY seq`
	lastChangeSeq   = `SELECT COALESCE(MAX(seq), 0) FROM change_log`

	selectCursor = `SELECT remote, project, holes, pulled, pushed, replica FROM sync_cursors WHERE remote = ? AND project = ?`
	upsertCursor = `INSERT INTO sync_cursors (remote, project, holes, pulled, pushed, replica) VALUES (?, ?, ?, ?, ?, ?)
	ON CONFLICT (remote, project) DO UPDATE SET holes = excluded.holes, pulled = excluded.pulled,
	pushed = excluded.pushed, replica = excluded.replica`
	selectBase = `SELECT version FROM sync_bases WHERE remote = ? AND tbl = ? AND global_id = ?`
	upsertBase = `INSERT INTO sync_bases (remote, tbl, global_id, version) VALUES (?, ?, ?, ?)
	ON CONFLICT (remote, tbl, global_id) DO UPDATE SET version = excluded.version`
	deleteBase = `DELETE FROM sync_bases WHERE remote = ? AND tbl = ? AND global_id = ?`

	conflictCols = `id, project_id, kind, tbl, global_id, replica, actor, base_version, local_version, remote_version,
	local_data, remote_data, reason, status, kept, resolved_by, created_at, resolved_at`
	upsertConflict = `INSERT INTO sync_conflicts (` + conflictCols + `) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)
	ON CONFLICT (id) DO UPDATE SET project_id = excluded.project_id, kind = excluded.kind, tbl = excluded.tbl,
	global_id = excluded.global_id, replica = excluded.replica, actor = excluded.actor,
	base_version = excluded.base_version, local_version = excluded.local_version,
	remote_version = excluded.remote_version, local_data = excluded.local_data, remote_data = excluded.remote_data,
	reason = excluded.reason, status = excluded.status, kept = excluded.kept, resolved_by = excluded.resolved_by,
	resolved_at = excluded.resolved_at`
	selectConflict = `SELECT ` + conflictCols + ` FROM sync_conflicts WHERE id = ?`
)

// SetChangeSource marks the change log entries of the rest of the
// transaction; InTx resets the mark before it commits.
func (s *Store) SetChangeSource(ctx context.Context, origin, actor string) error {
	if s.tx == nil || s.readOnly {
		return domain.Errorf(domain.Internal, "sqlite: SetChangeSource outside a transaction")
	}
	_, err := s.tx.ExecContext(ctx, setChangeSource, origin, actor)
	if err == nil {
		s.sourced = true
	}
	return translate(err)
}

func scanChange(r scanner) (domain.Change, error) {
	var c domain.Change
	var at int64
	err := r.Scan(&c.Seq, &c.ProjectID, &c.HoleID, &c.Table, &c.GlobalID, &c.Op, &c.Version, &c.Origin, &c.Actor, &at)
	c.At = fromMicro(at)
	return c, err
}

// ListChanges lists the project's change log entries after f.After by seq.
func (s *Store) ListChanges(ctx context.Context, f domain.ChangeFilter) ([]domain.Change, error) {
	var b strings.Builder
	args := []any{f.ProjectID, f.After}
	b.WriteString(`SELECT ` + changeCols + ` FROM change_log WHERE project_id = ? AND seq > ?`)
	if len(f.HoleIDs) > 0 {
		b.WriteString(" AND (hole_id IS NULL OR hole_id IN (?" + strings.Repeat(", ?", len(f.HoleIDs)-1) + "))")
		for _, id := range f.HoleIDs {
			args = append(args, id)
		}
	}
	if f.LocalOnly {
		b.WriteString(" AND origin = ''")
	}
	b.WriteString(" ORDER BY seq LIMIT ?")
	args = append(args, domain.Page{Limit: f.Limit}.Norm().Limit)
	rows, err := s.read().QueryContext(ctx, b.String(), args...)
	if err != nil {
		return nil, translate(err)
	}
	return collect(rows, scanChange)
}

// RecordChanges lists the change log entries of one record.
func (s *Store) RecordChanges(ctx context.Context, table, globalID string) ([]domain.Change, error) {
	rows, err := s.read().QueryContext(ctx, recordChanges, table, globalID)
	if err != nil {
		return nil, translate(err)
	}
	return collect(rows, scanChange)
}

// LastChangeSeq returns the highest seq of the change log.
func (s *Store) LastChangeSeq(ctx context.Context) (int64, error) {
	var n int64
	err := s.read().QueryRowContext(ctx, lastChangeSeq).Scan(&n)
	return n, translate(err)
}

// FindGlobal returns the row id and version of a synced record.
func (s *Store) FindGlobal(ctx context.Context, projectID int64, table, globalID string) (int64, int64, error) {
	q, args, err := storekit.FindGlobalSQL(table, projectID, globalID, func(int) string { return "?" })
	if err != nil {
		return 0, 0, err
	}
	var id, v int64
	err = s.read().QueryRowContext(ctx, q, args...).Scan(&id, &v)
	return id, v, one(err, table, globalID)
}

// Restamp sets the version of a synced record.
func (s *Store) Restamp(ctx context.Context, projectID int64, table, globalID string, version int64) error {
	q, args, err := storekit.RestampSQL(table, projectID, globalID, version, func(int) string { return "?" })
	if err != nil {
		return err
	}
	return s.write(ctx, func(qr querier) error {
		res, err := qr.ExecContext(ctx, q, args...)
		if err != nil {
			return translate(err)
		}
		if n, _ := res.RowsAffected(); n == 0 {
			return storekit.NotFound(table, globalID)
		}
		return nil
	})
}

// GetSyncCursor returns the cursor of (remote, project).
func (s *Store) GetSyncCursor(ctx context.Context, remote, project string) (domain.SyncCursor, error) {
	var c domain.SyncCursor
	err := s.read().QueryRowContext(ctx, selectCursor, remote, project).Scan(&c.Remote, &c.Project, &c.Holes, &c.Pulled, &c.Pushed, &c.Replica)
	return c, one(err, "sync cursor", remote+" "+project)
}

// PutSyncCursor creates or replaces the cursor of (c.Remote, c.Project).
func (s *Store) PutSyncCursor(ctx context.Context, c domain.SyncCursor) error {
	return s.write(ctx, func(q querier) error {
		_, err := q.ExecContext(ctx, upsertCursor, c.Remote, c.Project, c.Holes, c.Pulled, c.Pushed, c.Replica)
		return translate(err)
	})
}

// SyncBase returns the version last agreed with remote, 0 when none.
func (s *Store) SyncBase(ctx context.Context, remote, table, globalID string) (int64, error) {
	var v int64
	err := s.read().QueryRowContext(ctx, selectBase, remote, table, globalID).Scan(&v)
	if err == sql.ErrNoRows {
		return 0, nil
	}
	return v, translate(err)
}

// SyncBases returns the agreed versions of many records of one table.
func (s *Store) SyncBases(ctx context.Context, remote, table string, globalIDs []string) (map[string]int64, error) {
	out := make(map[string]int64, len(globalIDs))
	for start := 0; start < len(globalIDs); start += domain.MaxLimit {
		part := globalIDs[start:min(len(globalIDs), start+domain.MaxLimit)]
		args := []any{remote, table}
		for _, g := range part {
			args = append(args, g)
		}
		rows, err := s.read().QueryContext(ctx, `SELECT global_id, version FROM sync_bases WHERE remote = ? AND tbl = ? AND global_id IN (?`+
			strings.Repeat(", ?", len(part)-1)+`)`, args...)
		if err != nil {
			return nil, translate(err)
		}
		for rows.Next() {
			var g string
			var v int64
			if err := rows.Scan(&g, &v); err != nil {
				rows.Close()
				return nil, translate(err)
			}
			out[g] = v
		}
		if err := rows.Close(); err != nil {
			return nil, translate(err)
		}
		if err := rows.Err(); err != nil {
			return nil, translate(err)
		}
	}
	return out, nil
}

// PutSyncBase records the version last agreed with remote (0 forgets it).
func (s *Store) PutSyncBase(ctx context.Context, remote, table, globalID string, version int64) error {
	return s.write(ctx, func(q querier) error {
		var err error
		if version == 0 {
			_, err = q.ExecContext(ctx, deleteBase, remote, table, globalID)
		} else {
			_, err = q.ExecContext(ctx, upsertBase, remote, table, globalID, version)
		}
		return translate(err)
	})
}

func scanConflict(r scanner) (domain.SyncConflict, error) {
	var c domain.SyncConflict
	var local, remote string
	var created int64
	var resolved sql.NullInt64
	err := r.Scan(&c.ID, &c.ProjectID, &c.Kind, &c.Table, &c.GlobalID, &c.Replica, &c.Actor, &c.BaseVersion,
		&c.LocalVersion, &c.RemoteVersion, &local, &remote, &c.Reason, &c.Status, &c.Kept, &c.ResolvedBy, &created, &resolved)
	c.LocalData, c.RemoteData = storekit.JSONFromText(local), storekit.JSONFromText(remote)
	c.CreatedAt = fromMicro(created)
	if resolved.Valid {
		t := fromMicro(resolved.Int64)
		c.ResolvedAt = &t
	}
	return c, err
}

// PutConflict creates or replaces a conflict.
func (s *Store) PutConflict(ctx context.Context, c domain.SyncConflict) error {
	if c.CreatedAt.IsZero() {
		c.CreatedAt = storekit.Now()
	}
	var resolved any
	if c.ResolvedAt != nil {
		resolved = micro(*c.ResolvedAt)
	}
	return s.write(ctx, func(q querier) error {
		_, err := q.ExecContext(ctx, upsertConflict, c.ID, c.ProjectID, c.Kind, c.Table, c.GlobalID, c.Replica, c.Actor,
			c.BaseVersion, c.LocalVersion, c.RemoteVersion, storekit.JSONText(c.LocalData), storekit.JSONText(c.RemoteData),
			c.Reason, c.Status, c.Kept, c.ResolvedBy, micro(c.CreatedAt), resolved)
		return translate(err)
	})
}

// GetConflict returns the conflict with the given id.
func (s *Store) GetConflict(ctx context.Context, id string) (domain.SyncConflict, error) {
	c, err := scanConflict(s.read().QueryRowContext(ctx, selectConflict, id))
	return c, one(err, "conflict", id)
}

// ListConflicts lists the project's conflicts, oldest first.
func (s *Store) ListConflicts(ctx context.Context, projectID int64, status string) ([]domain.SyncConflict, error) {
	q := `SELECT ` + conflictCols + ` FROM sync_conflicts WHERE project_id = ?`
	args := []any{projectID}
	if status != "" {
		q += ` AND status = ?`
		args = append(args, status)
	}
	rows, err := s.read().QueryContext(ctx, q+` ORDER BY created_at, id`, args...)
	if err != nil {
		return nil, translate(err)
	}
	return collect(rows, scanConflict)
}
