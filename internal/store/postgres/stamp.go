package postgres

import (
	"context"
	"errors"

	"github.com/jackc/pgx/v5"

	"corvane/internal/domain"
)

// selectModelStamp reads a project's model stamp.
const selectModelStamp = `SELECT stamp FROM model_stamps WHERE project_id = $1`

// ModelStamp returns the project's model stamp (kept by triggers, migration 000014).
func (s *Store) ModelStamp(ctx context.Context, projectID int64) (int64, error) {
	var n int64
	err := s.read().QueryRow(ctx, selectModelStamp, projectID).Scan(&n)
	return n, one(err, "project", projectID)
}

// MeasurementStamp returns the project's measurement stamp, the sum of the
// counters triggers move (migration 000018).
func (s *Store) MeasurementStamp(ctx context.Context, projectID int64) (int64, error) {
	var n int64
	err := s.read().QueryRow(ctx, `SELECT COALESCE(SUM(stamp), 0)::BIGINT FROM measurement_stamps WHERE project_id = $1`, projectID).Scan(&n)
	return n, translate(err)
}

// LogInputs sends the stamp, project, hole and vocabulary reads in one
// batch (one round trip) and reports their errors in the contract's order.
func (s *Store) LogInputs(ctx context.Context, projectID, holeID int64) (domain.LogInputs, error) {
	var in domain.LogInputs
	b := &pgx.Batch{}
	b.Queue(selectModelStamp, projectID)
	b.Queue(selectProject, projectID)
	b.Queue(selectHole, holeID)
	b.Queue(listTypeCodes, projectID)
	br := s.read().SendBatch(ctx, b)
	stampErr := br.QueryRow().Scan(&in.ModelStamp)
	var projectErr, holeErr, typesErr error
	in.Project, projectErr = scanProject(br.QueryRow())
	in.Hole, holeErr = scanHole(br.QueryRow())
	in.Types, typesErr = batchTypeCodes(br)
	closeErr := br.Close()
	switch {
	case projectErr != nil:
		return in, one(projectErr, "project", projectID)
	case holeErr != nil:
		return in, one(holeErr, "hole", holeID)
	case typesErr != nil:
		return in, typesErr
	case stampErr != nil:
		return in, one(stampErr, "project", projectID)
	case closeErr != nil && !errors.Is(closeErr, pgx.ErrNoRows):
		return in, translate(closeErr)
	}
	return in, nil
}
