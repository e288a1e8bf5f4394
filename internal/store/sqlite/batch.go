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
	var stale []int64
	rows, err := s.read().QueryContext(ctx, `SELECT id FROM import_batches WHERE committed = 0 AND touched_at < ?`,
		micro(storekit.Now().Add(-domain.StaleBatch)))
	if err != nil {
		return 0, translate(err)
	}
	for rows.Next() {
		var id int64
		if err := rows.Scan(&id); err != nil {
			rows.Close()
			return 0, translate(err)
		}
		stale = append(stale, id)
	}
	if err := rows.Close(); err != nil {
		return 0, translate(err)
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

// CommitBatch shows the batch's rows. A trigger puts them in the change log
// as the batch commits (migration 000019), so sync carries them; the rows
// themselves are not written again.
func (s *Store) CommitBatch(ctx context.Context, batch int64) error {
	return s.write(ctx, func(q querier) error {
		res, err := q.ExecContext(ctx, `UPDATE import_batches SET committed = 1 WHERE id = ? AND committed = 0`, batch)
		return batchGone(res, err, batch)
	})
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
				(SELECT id FROM measurements WHERE id BETWEEN ? AND ? AND batch = ? LIMIT ?)`, lo.Int64, hi.Int64, batch, dropRows)
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
