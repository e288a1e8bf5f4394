package sqlite

import (
	"context"

	"corvane/internal/domain"
)

// ModelStamp returns the project's model stamp (kept by triggers, migration 000014).
func (s *Store) ModelStamp(ctx context.Context, projectID int64) (int64, error) {
	var n int64
	err := s.read().QueryRowContext(ctx, `SELECT stamp FROM model_stamps WHERE project_id = ?`, projectID).Scan(&n)
	return n, one(err, "project", projectID)
}

// MeasurementStamp returns the project's measurement stamp, the sum of the
// counters triggers move (migration 000018).
func (s *Store) MeasurementStamp(ctx context.Context, projectID int64) (int64, error) {
	var n int64
	err := s.read().QueryRowContext(ctx, `SELECT COALESCE(SUM(stamp), 0) FROM measurement_stamps WHERE project_id = ?`, projectID).Scan(&n)
	return n, translate(err)
}

// LogInputs reads the stamp, project, hole and vocabulary one after the
// other and reports their errors in the contract's order.
func (s *Store) LogInputs(ctx context.Context, projectID, holeID int64) (domain.LogInputs, error) {
	var in domain.LogInputs
	stamp, stampErr := s.ModelStamp(ctx, projectID)
	var err error
	if in.Project, err = s.GetProject(ctx, projectID); err != nil {
		return in, err
	}
	if in.Hole, err = s.GetHole(ctx, holeID); err != nil {
		return in, err
	}
	if in.Types, err = s.ListTypeCodes(ctx, projectID); err != nil {
		return in, err
	}
	in.ModelStamp = stamp
	return in, stampErr
}
