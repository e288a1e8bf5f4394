package postgres

import (
	"context"
	"errors"
	"time"

	"github.com/jackc/pgx/v5"

	"corvane/internal/domain"
	"corvane/internal/store/storekit"
)

const (
	selectIdempotency = `SELECT project_id, key, request_hash, result, created_at FROM idempotency_keys WHERE project_id = $1 AND key = $2`
	insertIdempotency = `INSERT INTO idempotency_keys (project_id, key, request_hash, result, created_at) VALUES ($1, $2, $3, $4, $5)`
)

// GetIdempotency returns the remembered result for (projectID, key).
func (s *Store) GetIdempotency(ctx context.Context, projectID int64, key string) (domain.Idempotency, error) {
	r, err := scanIdempotency(s.read().QueryRow(ctx, selectIdempotency, projectID, key))
	if err != nil {
		return r, one(err, "idempotency key", key)
	}
	return r, nil
}

// scanIdempotency scans a row of selectIdempotency.
func scanIdempotency(row pgx.Row) (domain.Idempotency, error) {
	var r domain.Idempotency
	var res []byte
	var c time.Time
	if err := row.Scan(&r.ProjectID, &r.Key, &r.RequestHash, &res, &c); err != nil {
		return r, err
	}
	r.Result, r.CreatedAt = res, c.UTC()
	return r, nil
}

// ImportInputs sends the key, project and vocabulary reads in one batch
// (one round trip) and reports their errors in the contract's order.
func (s *Store) ImportInputs(ctx context.Context, projectID int64, key string) (domain.ImportInputs, error) {
	var in domain.ImportInputs
	b := &pgx.Batch{}
	if key != "" {
		b.Queue(selectIdempotency, projectID, key)
	}
	b.Queue(selectProject, projectID)
	b.Queue(listTypeCodes, projectID)
	br := s.read().SendBatch(ctx, b)
	var keyErr, projectErr, typesErr error
	if key != "" {
		var r domain.Idempotency
		if r, keyErr = scanIdempotency(br.QueryRow()); keyErr == nil {
			in.Key = &r
		} else if errors.Is(keyErr, pgx.ErrNoRows) {
			keyErr = nil
		}
	}
	in.Project, projectErr = scanProject(br.QueryRow())
	in.Types, typesErr = batchTypeCodes(br)
	closeErr := br.Close()
	switch {
	case keyErr != nil:
		return in, translate(keyErr)
	case projectErr != nil:
		return in, one(projectErr, "project", projectID)
	case typesErr != nil:
		return in, typesErr
	case closeErr != nil && !errors.Is(closeErr, pgx.ErrNoRows):
		return in, translate(closeErr)
	}
	return in, nil
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
