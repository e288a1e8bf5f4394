package postgres

import (
	"context"
	"time"

	"corvane/internal/domain"
	"corvane/internal/store/storekit"
)

const (
	selectIdempotency = `SELECT project_id, key, request_hash, result, created_at FROM idempotency_keys WHERE project_id = $1 AND key = $2`
	insertIdempotency = `INSERT INTO idempotency_keys (project_id, key, request_hash, result, created_at) VALUES ($1, $2, $3, $4, $5)`
)

// GetIdempotency returns the remembered result for (projectID, key).
func (s *Store) GetIdempotency(ctx context.Context, projectID int64, key string) (domain.Idempotency, error) {
	var r domain.Idempotency
	var res []byte
	var c time.Time
	err := s.read().QueryRow(ctx, selectIdempotency, projectID, key).Scan(&r.ProjectID, &r.Key, &r.RequestHash, &res, &c)
	if err != nil {
		return r, one(err, "idempotency key", key)
	}
	r.Result, r.CreatedAt = res, c.UTC()
	return r, nil
}

// PutIdempotency remembers r; Conflict when the key is taken.
func (s *Store) PutIdempotency(ctx context.Context, r domain.Idempotency) error {
	if r.CreatedAt.IsZero() {
		r.CreatedAt = storekit.Now()
	}
	return s.write(ctx, func(q querier) error {
		_, err := q.Exec(ctx, insertIdempotency, r.ProjectID, r.Key, r.RequestHash, []byte(r.Result), r.CreatedAt)
		return translate(err)
	})
}
