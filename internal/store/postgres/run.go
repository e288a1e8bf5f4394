package postgres

import (
	"context"
	"time"

	"github.com/jackc/pgx/v5"

	"corvane/internal/domain"
	"corvane/internal/store/storekit"
)

const runCols = `id, hole_id, from_depth, to_depth, confidence, mismatch, comment, version, created_at, updated_at, global_id`

const (
	insertRun = `INSERT INTO runs (hole_id, from_depth, to_depth, confidence, mismatch, comment, version, created_at, updated_at, global_id)
	VALUES ($1, $2, $3, $4, $5, $6, 1, $7, $8, $9) RETURNING id`
	selectRun = `SELECT ` + runCols + ` FROM runs WHERE id = $1`
	listRuns  = `SELECT ` + runCols + ` FROM runs WHERE hole_id = $1 ORDER BY from_depth, id`
	updateRun = `UPDATE runs SET from_depth = $1, to_depth = $2, confidence = $3, mismatch = $4, comment = $5,
	version = version + 1, updated_at = $6 WHERE id = $7 AND version = $8 RETURNING version`
	deleteRun = `DELETE FROM runs WHERE id = $1 AND version = $2`
)

func scanRun(r scanner) (domain.Run, error) {
	var run domain.Run
	var mm *float64
	var c, u time.Time
	err := r.Scan(&run.ID, &run.HoleID, &run.From, &run.To, &run.Confidence, &mm, &run.Comment, &run.Version, &c, &u, &run.GlobalID)
	run.Mismatch, run.CreatedAt, run.UpdatedAt = mm, c.UTC(), u.UTC()
	return run, err
}

// CreateRun inserts r and sets its ID, version and timestamps.
func (s *Store) CreateRun(ctx context.Context, r *domain.Run) error {
	t := storekit.Now()
	r.GlobalID = storekit.GlobalID(r.GlobalID)
	return s.write(ctx, func(q querier) error {
		err := q.QueryRow(ctx, insertRun, r.HoleID, r.From, r.To, r.Confidence, storekit.NullFloat(r.Mismatch), r.Comment,
			t, t, r.GlobalID).Scan(&r.ID)
		if err != nil {
			return translate(err)
		}
		r.Version, r.CreatedAt, r.UpdatedAt = 1, t, t
		return nil
	})
}

// GetRun returns the run with the given ID.
func (s *Store) GetRun(ctx context.Context, id int64) (domain.Run, error) {
	r, err := scanRun(s.read().QueryRow(ctx, selectRun, id))
	return r, one(err, "run", id)
}

// ListRuns lists the hole's runs by from depth.
func (s *Store) ListRuns(ctx context.Context, holeID int64) ([]domain.Run, error) {
	rows, err := s.read().Query(ctx, listRuns, holeID)
	if err != nil {
		return nil, translate(err)
	}
	return collect(rows, scanRun)
}

// UpdateRun writes r over the row at version ifVersion.
func (s *Store) UpdateRun(ctx context.Context, r *domain.Run, ifVersion int64) error {
	t := storekit.Now()
	return s.write(ctx, func(q querier) error {
		err := q.QueryRow(ctx, updateRun, r.From, r.To, r.Confidence, storekit.NullFloat(r.Mismatch), r.Comment,
			t, r.ID, ifVersion).Scan(&r.Version)
		if err == pgx.ErrNoRows {
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
