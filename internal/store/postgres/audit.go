package postgres

import (
	"context"
	"time"

	"corvane/internal/domain"
	"corvane/internal/store/storekit"
)

const (
	insertAudit = `INSERT INTO audit_log (project_id, actor, token_id, entity, entity_id, action, at, before, after)
	VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9) RETURNING id`
	auditCols    = `SELECT id, project_id, actor, token_id, entity, entity_id, action, at, before, after FROM audit_log `
	listAudit    = auditCols + `WHERE project_id = $1 AND id > $2 ORDER BY id LIMIT $3`
	listAuditAll = auditCols + `WHERE id > $1 ORDER BY id LIMIT $2`
)

func nullJSON(b []byte) any {
	if len(b) == 0 {
		return nil
	}
	return []byte(b)
}

// AppendAudit records e and sets its ID (and its time when zero).
func (s *Store) AppendAudit(ctx context.Context, e *domain.AuditEntry) error {
	if e.At.IsZero() {
		e.At = storekit.Now()
	}
	e.At = e.At.UTC().Truncate(time.Microsecond)
	return s.write(ctx, func(q querier) error {
		return translate(q.QueryRow(ctx, insertAudit, e.ProjectID, e.ActorName, e.TokenID, e.Entity, e.EntityID,
			e.Action, e.At, nullJSON(e.Before), nullJSON(e.After)).Scan(&e.ID))
	})
}

// ListAudit returns one page of the project's audit trail, oldest first.
func (s *Store) ListAudit(ctx context.Context, projectID int64, page domain.Page) ([]domain.AuditEntry, error) {
	page = page.Norm()
	return s.listAudit(ctx, listAudit, projectID, page.After, page.Limit)
}

// ListAuditAll returns one page of the whole audit trail, every project's
// (deleted ones too) and the site's, oldest first.
func (s *Store) ListAuditAll(ctx context.Context, page domain.Page) ([]domain.AuditEntry, error) {
	page = page.Norm()
	return s.listAudit(ctx, listAuditAll, page.After, page.Limit)
}

func (s *Store) listAudit(ctx context.Context, query string, args ...any) ([]domain.AuditEntry, error) {
	rows, err := s.read().Query(ctx, query, args...)
	if err != nil {
		return nil, translate(err)
	}
	return collect(rows, func(r scanner) (domain.AuditEntry, error) {
		var e domain.AuditEntry
		var at time.Time
		var before, after []byte
		err := r.Scan(&e.ID, &e.ProjectID, &e.ActorName, &e.TokenID, &e.Entity, &e.EntityID, &e.Action, &at, &before, &after)
		e.At = at.UTC()
		e.Before = before
		e.After = after
		return e, err
	})
}
