package sqlite

import (
	"context"
)

// ModelStamp returns the project's model stamp (kept by triggers, migration 000014).
func (s *Store) ModelStamp(ctx context.Context, projectID int64) (int64, error) {
	var n int64
	err := s.read().QueryRowContext(ctx, `SELECT stamp FROM model_stamps WHERE project_id = ?`, projectID).Scan(&n)
	return n, one(err, "project", projectID)
}
