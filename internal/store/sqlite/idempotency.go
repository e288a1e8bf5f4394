package sqlite

import (
	"context"

	"corvane/internal/domain"
	"corvane/internal/store/storekit"
)

const (
	selectIdempotency = `SELECT project_id, key, request_hash, result, created_at FROM idempotency_keys WHERE project_id = ? AND key = ?`
	insertIdempotency = `INSERT INTO idempotency_keys (project_id, key, request_hash, result, created_at) VALUES (?, ?, ?, ?, ?)`
)

// GetIdempotency returns the remembered result for (projectID, key).
func (s *Store) GetIdempotency(ctx context.Context, projectID int64, key string) (domain.Idempotency, error) {
	var r domain.Idempotency
	var res string
	var c int64
	err := s.read().QueryRowContext(ctx, selectIdempotency, projectID, key).Scan(&r.ProjectID, &r.Key, &r.RequestHash, &res, &c)
	if err != nil {
		return r, one(err, "idempotency key", key)
	}
	r.Result, r.CreatedAt = []byte(res), fromMicro(c)
	return r, nil
}

// PutIdempotency remembers r; Conflict when the key is taken.
func (s *Store) PutIdempotency(ctx context.Context, r domain.Idempotency) error {
	if r.CreatedAt.IsZero() {
		r.CreatedAt = storekit.Now()
	}
	return s.write(ctx, func(q querier) error {
		_, err := q.ExecContext(ctx, insertIdempotency, r.ProjectID, r.Key, r.RequestHash, string(r.Result), micro(r.CreatedAt))
		return translate(err)
	})
}

// ImportInputs reads the key, project and vocabulary one after the other
// and reports their errors in the contract's order.
func (s *Store) ImportInputs(ctx context.Context, projectID int64, key string) (domain.ImportInputs, error) {
	var in domain.ImportInputs
	if key != "" {
		r, err := s.GetIdempotency(ctx, projectID, key)
		switch {
		case err == nil:
			in.Key = &r
		case !domain.IsKind(err, domain.NotFound):
			return in, err
		}
	}
	var err error
	if in.Project, err = s.GetProject(ctx, projectID); err != nil {
		return in, err
	}
	in.Types, err = s.ListTypeCodes(ctx, projectID)
	return in, err
}
