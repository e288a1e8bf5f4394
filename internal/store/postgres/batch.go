package postgres

import (
	"context"

	"github.com/jackc/pgx/v5"

	"corvane/internal/domain"
	"corvane/internal/store/storekit"
)

// visible is the condition a measurement row must meet to be read: it
// belongs to no import batch, or to a committed one.
const visible = `(batch IS NULL OR batch IN (SELECT id FROM import_batches WHERE committed))`

// batchCols are the columns a staged row is copied into.
var batchCols = []string{"project_id", "hole_id", "depth", "alpha", "beta", "gamma", "type_code",
	"apparent_thickness", "comment", "logged_by", "logged_at", "version", "created_at", "updated_at", "batch", "global_id"}

// OpenBatch starts an import batch for the project, after dropping the
// batches left open for domain.StaleBatch.
func (s *Store) OpenBatch(ctx context.Context, projectID int64) (int64, error) {
	rows, err := s.read().Query(ctx, `SELECT id FROM import_batches WHERE NOT committed AND touched_at < $1`,
		storekit.Now().Add(-domain.StaleBatch))
	if err != nil {
		return 0, translate(err)
	}
	stale, err := pgx.CollectRows(rows, pgx.RowTo[int64])
	if err != nil {
		return 0, translate(err)
	}
	for _, id := range stale {
		if err := s.DropBatch(ctx, id); err != nil {
			return 0, err
		}
	}
	var id int64
	err = s.write(ctx, func(q querier) error {
		return translate(q.QueryRow(ctx, `INSERT INTO import_batches (project_id, touched_at) VALUES ($1, $2) RETURNING id`,
			projectID, storekit.Now()).Scan(&id))
	})
	return id, err
}

// StageMeasurements copies ms straight into measurements, marked with the
// batch, in one transaction of its own (COPY; it does not set the IDs), and
// widens the batch's id range: below the sequence's next value before the
// copy, up to the last value it gave this session.
func (s *Store) StageMeasurements(ctx context.Context, batch int64, ms []domain.Measurement) (int, error) {
	if len(ms) == 0 {
		return 0, nil
	}
	t := storekit.Now()
	var n int64
	err := s.write(ctx, func(q querier) error {
		var lo, hi int64
		if err := q.QueryRow(ctx, `SELECT nextval(pg_get_serial_sequence('measurements', 'id'))`).Scan(&lo); err != nil {
			return translate(err)
		}
		var err error
		if n, err = copyMeasurements(ctx, q, ms, t, &batch); err != nil {
			return err
		}
		if err := q.QueryRow(ctx, `SELECT currval(pg_get_serial_sequence('measurements', 'id'))`).Scan(&hi); err != nil {
			return translate(err)
		}
		tag, err := q.Exec(ctx, `UPDATE import_batches SET lo_id = LEAST(lo_id, $1), hi_id = GREATEST(hi_id, $2), touched_at = $3
			WHERE id = $4 AND NOT committed`, lo, hi, t, batch)
		if err != nil {
			return translate(err)
		}
		if tag.RowsAffected() == 0 {
			return batchGone(batch)
		}
		return nil
	})
	if err != nil {
		return 0, err
	}
	return int(n), nil
}

func batchGone(batch int64) error {
	return domain.Errorf(domain.NotFound, "import batch %d is gone (dropped, or open too long without a write)", batch)
}

// CommitBatch shows the batch's rows and leaves all of them to be logged
// (LogBatch); the rows themselves are not written again.
func (s *Store) CommitBatch(ctx context.Context, batch int64) error {
	return s.write(ctx, func(q querier) error {
		tag, err := q.Exec(ctx, `UPDATE import_batches SET committed = TRUE, logged_to = lo_id - 1 WHERE id = $1 AND NOT committed`, batch)
		if err != nil {
			return translate(err)
		}
		if tag.RowsAffected() == 0 {
			return batchGone(batch)
		}
		return nil
	})
}

// LogBatch writes the change log entries of the next rows (at most rows)
// of a committed batch in a transaction of its own (corvane_log_batch,
// migration 000019) and reports whether rows are left.
func (s *Store) LogBatch(ctx context.Context, batch int64, rows int) (more bool, err error) {
	err = s.write(ctx, func(q querier) error {
		return translate(q.QueryRow(ctx, `SELECT corvane_log_batch($1, $2)`, batch, rows).Scan(&more))
	})
	return more, err
}

// unloggedBatchesSQL lists the committed batches of project $1 (all for 0)
// whose change log is still owed, through the partial index
// import_batches_unlogged (migration 000021).
const unloggedBatchesSQL = `SELECT id FROM import_batches WHERE committed AND logged_to IS NOT NULL
		AND ($1 = 0 OR project_id = $1) ORDER BY id`

// UnloggedBatches lists the committed batches of the project (all projects
// for 0) whose rows are not all in the change log yet.
func (s *Store) UnloggedBatches(ctx context.Context, projectID int64) ([]int64, error) {
	rows, err := s.read().Query(ctx, unloggedBatchesSQL, projectID)
	if err != nil {
		return nil, translate(err)
	}
	ids, err := pgx.CollectRows(rows, pgx.RowTo[int64])
	return ids, translate(err)
}

// DropBatch deletes the batch's rows (by the primary key over its id
// range) and the batch, in one transaction: PostgreSQL's row locks keep
// other writers waiting only for rows of the batch, which no one else sees.
func (s *Store) DropBatch(ctx context.Context, batch int64) error {
	return s.write(ctx, func(q querier) error {
		var lo, hi *int64
		err := q.QueryRow(ctx, `SELECT lo_id, hi_id FROM import_batches WHERE id = $1 AND NOT committed FOR UPDATE`, batch).Scan(&lo, &hi)
		if err == pgx.ErrNoRows {
			return nil
		}
		if err != nil {
			return translate(err)
		}
		if lo != nil {
			if _, err := q.Exec(ctx, `DELETE FROM measurements WHERE id BETWEEN $1 AND $2 AND batch = $3`, *lo, *hi, batch); err != nil {
				return translate(err)
			}
		}
		_, err = q.Exec(ctx, `DELETE FROM import_batches WHERE id = $1`, batch)
		return translate(err)
	})
}
