package sqlite

import (
	"context"
	"database/sql"

	"corvane/internal/domain"
	"corvane/internal/store/storekit"
)

const runCols = `id, hole_id, from_depth, to_depth, confidence, mismatch, comment, version, created_at, updated_at, global_id`

const (
	insertRun = `INSERT INTO runs (hole_id, from_depth, to_depth, confidence, mismatch, comment, version, created_at, updated_at, global_id)
	VALUES (?, ?, ?, ?, ?, ?, 1, ?, ?, ?) RETURNING id`
	selectRun = `SELECT ` + runCols + ` FROM runs WHERE id = ?`
	listRuns  = `SELECT ` + runCols + ` FROM runs WHERE hole_id = ? ORDER BY from_depth, id`
	updateRun = `UPDATE runs SET from_depth = ?, to_depth = ?, confidence = ?, mismatch = ?, comment = ?,
	version = version + 1, updated_at = ? WHERE id = ? AND version = ? RETURNING version`
	deleteRun = `DELETE FROM runs WHERE id = ? AND version = ?`
)

func scanRun(r scanner) (domain.Run, error) {
	var run domain.Run
	var mm sql.NullFloat64
	var c, u int64
	err := r.Scan(&run.ID, &run.HoleID, &run.From, &run.To, &run.Confidence, &mm, &run.Comment, &run.Version, &c, &u, &run.GlobalID)
	run.Mismatch, run.CreatedAt, run.UpdatedAt = floatPtr(mm), fromMicro(c), fromMicro(u)
	return run, err
}

// CreateRun inserts r and sets its ID, version and timestamps.
func (s *Store) CreateRun(ctx context.Context, r *domain.Run) error {
	t := storekit.Now()
	r.GlobalID = storekit.GlobalID(r.GlobalID)
	return s.write(ctx, func(q querier) error {
		err := q.QueryRowContext(ctx, insertRun, r.HoleID, r.From, r.To, r.Confidence, storekit.NullFloat(r.Mismatch), r.Comment,
			micro(t), micro(t), r.GlobalID).Scan(&r.ID)
		if err != nil {
			return translate(err)
		}
		r.Version, r.CreatedAt, r.UpdatedAt = 1, t, t
		return nil
	})
}

// GetRun returns the run with the given ID.
func (s *Store) GetRun(ctx context.Context, id int64) (domain.Run, error) {
	r, err := scanRun(s.read().QueryRowContext(ctx, selectRun, id))
	return r, one(err, "run", id)
}

// ListRuns lists the hole's runs by from depth.
func (s *Store) ListRuns(ctx context.Context, holeID int64) ([]domain.Run, error) {
	rows, err := s.read().QueryContext(ctx, listRuns, holeID)
	if err != nil {
		return nil, translate(err)
	}
	return collect(rows, scanRun)
}

// UpdateRun writes r over the row at version ifVersion.
func (s *Store) UpdateRun(ctx context.Context, r *domain.Run, ifVersion int64) error {
	t := storekit.Now()
	return s.write(ctx, func(q querier) error {
		err := q.QueryRowContext(ctx, updateRun, r.From, r.To, r.Confidence, storekit.NullFloat(r.Mismatch), r.Comment,
			micro(t), r.ID, ifVersion).Scan(&r.Version)
		if err == sql.ErrNoRows {
			return versionGone(ctx, q, "runs", "run", r.ID, ifVersion)
		}
		if err != nil {
			return translate(err)
		}
		r.UpdatedAt = t
		return nil
	})
}

// DeleteRun deletes the run.
func (s *Store) DeleteRun(ctx context.Context, id, ifVersion int64) error {
	return s.write(ctx, func(q querier) error {
		return deleteVersioned(ctx, q, deleteRun, "runs", "run", id, ifVersion)
	})
}
