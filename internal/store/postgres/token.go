package postgres

import (
	"context"
	"github.com/jackc/pgx/v5"
	"time"

	"corvane/internal/domain"
	"corvane/internal/store/storekit"
)

const (
	insertToken    = `INSERT INTO api_tokens (project_id, name, role, hash, created_at) VALUES ($1, $2, $3, $4, $5) RETURNING id`
	tokenCols      = `id, project_id, name, role, hash, created_at`
	tokenByHash    = `SELECT ` + tokenCols + ` FROM api_tokens WHERE hash = $1`
	tokenByID      = `SELECT ` + tokenCols + ` FROM api_tokens WHERE id = $1`
	listTokens     = `SELECT ` + tokenCols + ` FROM api_tokens WHERE project_id = $1 ORDER BY id`
	listSiteTokens = `SELECT ` + tokenCols + ` FROM api_tokens WHERE project_id IS NULL ORDER BY id`
	deleteToken    = `DELETE FROM api_tokens WHERE id = $1`
)

func scanToken(r scanner) (domain.Token, error) {
	var t domain.Token
	var pid *int64
	var c time.Time
	err := r.Scan(&t.ID, &pid, &t.Name, &t.Role, &t.Hash, &c)
	t.ProjectID, t.CreatedAt = derefID(pid), c.UTC()
	return t, err
}

// CreateToken stores t (whose Hash is already set) and sets its ID and time.
func (s *Store) CreateToken(ctx context.Context, t *domain.Token) error {
	c := storekit.Now()
	return s.write(ctx, func(q querier) error {
		if err := q.QueryRow(ctx, insertToken, storekit.ProjectArg(t.ProjectID), t.Name, string(t.Role), t.Hash, c).Scan(&t.ID); err != nil {
			return translate(err)
		}
		t.CreatedAt = c
		return nil
	})
}

// TokenByHash finds a token by the hex SHA-256 of its secret.
func (s *Store) TokenByHash(ctx context.Context, hash string) (domain.Token, error) {
	t, err := scanToken(s.read().QueryRow(ctx, tokenByHash, hash))
	if err == pgx.ErrNoRows {
		return t, domain.Errorf(domain.NotFound, "token not found")
	}
	return t, translate(err)
}

// GetToken returns the token with the given id.
func (s *Store) GetToken(ctx context.Context, id int64) (domain.Token, error) {
	t, err := scanToken(s.read().QueryRow(ctx, tokenByID, id))
	if err == pgx.ErrNoRows {
		return t, storekit.NotFound("token", id)
	}
	return t, translate(err)
}

// ListTokens lists the project's tokens (site tokens for AllProjects).
func (s *Store) ListTokens(ctx context.Context, projectID int64) ([]domain.Token, error) {
	var rows pgx.Rows
	var err error
	if projectID == domain.AllProjects {
		rows, err = s.read().Query(ctx, listSiteTokens)
	} else {
		rows, err = s.read().Query(ctx, listTokens, projectID)
	}
	if err != nil {
		return nil, translate(err)
	}
	return collect(rows, scanToken)
}

// DeleteToken revokes a token.
func (s *Store) DeleteToken(ctx context.Context, id int64) error {
	return s.write(ctx, func(q querier) error {
		res, err := q.Exec(ctx, deleteToken, id)
		if err != nil {
			return translate(err)
		}
		if res.RowsAffected() == 0 {
			return storekit.NotFound("token", id)
		}
		return nil
	})
}
