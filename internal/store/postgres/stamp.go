package postgres

import "context"

// ModelStamp returns the project's model stamp (kept by triggers, migration 000014).
func (s *Store) ModelStamp(ctx context.Context, projectID int64) (int64, error) {
	var n int64
	err := s.read().QueryRow(ctx, `SELECT stamp FROM model_stamps WHERE project_id = $1`, projectID).Scan(&n)
	return n, one(err, "project", projectID)
}

// MeasurementStamp returns the project's measurement stamp, the sum of the
// counters triggers move (migration 000018).
func (s *Store) MeasurementStamp(ctx context.Context, projectID int64) (int64, error) {
	var n int64
	err := s.read().QueryRow(ctx, `SELECT COALESCE(SUM(stamp), 0)::BIGINT FROM measurement_stamps WHERE project_id = $1`, projectID).Scan(&n)
	return n, translate(err)
}
