package sqlite

import (
	"context"
	"database/sql"

	"corvane/internal/domain"
	"corvane/internal/store/storekit"
)

// visible is the condition a measurement row must meet to be read: it
// belongs to no import batch, or to a committed one.
const visible = `(batch IS NULL OR batch IN (SELECT id FROM import_batches WHERE committed = 1))`

// dropRows is the number of rows one transaction of DropBatch deletes.
const dropRows = 5000

// OpenBatch starts an import batch for the project, after dropping the
// batches left open for domain.StaleBatch.
func (s *Store) OpenBatch(ctx context.Context, projectID int64) (int64, error) {
	stale, err := s.batchIDs(ctx, `SELECT id FROM import_batches WHERE committed = 0 AND touched_at < ?`,
		micro(storekit.Now().Add(-domain.StaleBatch)))
	if err != nil {
		return 0, err
	}
	for _, id := range stale {
		if err := s.DropBatch(ctx, id); err != nil {
			return 0, err
		}
	}
	var id int64
	err = s.write(ctx, func(q querier) error {
		return translate(q.QueryRowContext(ctx, `INSERT INTO import_batches (project_id, touched_at) VALUES (?, ?) RETURNING id`,
			projectID, micro(storekit.Now())).Scan(&id))
	})
	return id, err
}

// StageMeasurements writes ms into the batch in one transaction of its
// own (multi-row INSERTs), setting their IDs, and widens the batch's id
// range.
func (s *Store) StageMeasurements(ctx context.Context, batch int64, ms []domain.Measurement) (int, error) {
	if len(ms) == 0 {
		return 0, nil
	}
	t := storekit.Now()
	err := s.write(ctx, func(q querier) error {
		lo, hi, err := insertMany(ctx, q.(*sql.Tx), ms, t, batch)
		if err != nil {
			return err
		}
		res, err := q.ExecContext(ctx, `UPDATE import_batches SET lo_id = coalesce(min(lo_id, ?), ?), hi_id = coalesce(max(hi_id, ?), ?),
			touched_at = ? WHERE id = ? AND committed = 0`, lo, lo, hi, hi, micro(t), batch)
		return batchGone(res, err, batch)
	})
	if err != nil {
		return 0, err
	}
	return len(ms), nil
}

// batchGone turns an update of no batch row into NotFound.
func batchGone(res sql.Result, err error, batch int64) error {
	if err != nil {
		return translate(err)
	}
	if n, err := res.RowsAffected(); err != nil {
		return translate(err)
	} else if n == 0 {
		return domain.Errorf(domain.NotFound, "import batch %d is gone (dropped, or open too long without a write)", batch)
	}
	return nil
}

// CommitBatch shows the batch's rows and leaves all of them to be logged
// (LogBatch); the rows themselves are not written again.
func (s *Store) CommitBatch(ctx context.Context, batch int64) error {
	return s.write(ctx, func(q querier) error {
		res, err := q.ExecContext(ctx, `UPDATE import_batches SET committed = 1, logged_to = lo_id - 1 WHERE id = ? AND committed = 0`, batch)
		return batchGone(res, err, batch)
	})
}

// LogBatch writes the change log entries of the next rows (at most rows)
// of a committed batch, in id order, in a transaction of its own, and
// reports whether rows are left. The writer's turn orders callers on one
// batch.
func (s *Store) LogBatch(ctx context.Context, batch int64, rows int) (more bool, err error) {
	err = s.write(ctx, func(q querier) error {
		var from, hi sql.NullInt64
		err := q.QueryRowContext(ctx, `SELECT logged_to, hi_id FROM import_batches WHERE id = ? AND committed = 1`, batch).Scan(&from, &hi)
		if err == sql.ErrNoRows || (err == nil && !from.Valid) {
			return nil
		}
		if err != nil {
			return translate(err)
		}
		var upto sql.NullInt64
		if err := q.QueryRowContext(ctx, `SELECT max(id) FROM (SELECT id FROM measurements WHERE id > ? AND id <= ? AND +batch = ? ORDER BY id LIMIT ?)`,
			from.Int64, hi.Int64, batch, rows).Scan(&upto); err != nil {
			return translate(err)
		}
		if upto.Valid {
			if _, err := q.ExecContext(ctx, logBatchRows, from.Int64, upto.Int64, batch); err != nil {
				return translate(err)
			}
		}
		more = upto.Valid && upto.Int64 < hi.Int64
		var next any // NULL: nothing left
		if more {
			next = upto.Int64
		}
		_, err = q.ExecContext(ctx, `UPDATE import_batches SET logged_to = ? WHERE id = ?`, next, batch)
		return translate(err)
	})
	return more, err
}

// logBatchRows logs the rows of a batch in an id range, as the trigger on
// measurements logs an insert (migration 000019). The rows are found by
// the primary key range alone: "+m.batch" keeps SQLite from building an
// index on batch over the whole table for every chunk (it did: a chunk's
// cost grew with the table, 26 s to log a million rows).
const logBatchRows = `INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version, origin, actor, at)
	SELECT m.project_id, m.hole_id, 'measurements', m.global_id, 'create', m.version,
		(SELECT origin FROM change_source), (SELECT actor FROM change_source), CAST((julianday('now') - 2440587.5) * 86400000000 AS INTEGER)
	FROM measurements m WHERE m.id > ? AND m.id <= ? AND +m.batch = ? ORDER BY m.id`

// unloggedBatchesSQL lists the committed batches of a project (all for 0,
// the project id given twice) whose change log is still owed, through the
// partial index import_batches_unlogged (migration 000021).
const unloggedBatchesSQL = `SELECT id FROM import_batches WHERE committed = 1 AND logged_to IS NOT NULL
		AND (? = 0 OR project_id = ?) ORDER BY id`

// UnloggedBatches lists the committed batches of the project (all projects
// for 0) whose rows are not all in the change log yet.
func (s *Store) UnloggedBatches(ctx context.Context, projectID int64) ([]int64, error) {
	return s.batchIDs(ctx, unloggedBatchesSQL, projectID, projectID)
}

// batchIDs lists the ids of the import batches query selects.
func (s *Store) batchIDs(ctx context.Context, query string, args ...any) ([]int64, error) {
	rows, err := s.read().QueryContext(ctx, query, args...)
	if err != nil {
		return nil, translate(err)
	}
	return collect(rows, func(r scanner) (id int64, err error) { return id, r.Scan(&id) })
}

// DropBatch deletes the batch's rows, dropRows per transaction so that other
// writers wait little, then the batch.
func (s *Store) DropBatch(ctx context.Context, batch int64) error {
	var lo, hi sql.NullInt64
	err := s.read().QueryRowContext(ctx, `SELECT lo_id, hi_id FROM import_batches WHERE id = ? AND committed = 0`, batch).Scan(&lo, &hi)
	if err == sql.ErrNoRows {
		return nil
	}
	if err != nil {
		return translate(err)
	}
	for lo.Valid {
		var n int64
		err := s.write(ctx, func(q querier) error {
			res, err := q.ExecContext(ctx, `DELETE FROM measurements WHERE id IN
				(SELECT id FROM measurements WHERE id BETWEEN ? AND ? AND +batch = ? LIMIT ?)`, lo.Int64, hi.Int64, batch, dropRows)
			if err != nil {
				return translate(err)
			}
			n, err = res.RowsAffected()
			return translate(err)
		})
		if err != nil {
			return err
		}
		if n < dropRows {
			break
		}
	}
	return s.write(ctx, func(q querier) error {
		_, err := q.ExecContext(ctx, `DELETE FROM import_batches WHERE id = ? AND committed = 0`, batch)
		return translate(err)
	})
}
