package sqlite

import (
	"context"
	"database/sql"
	"time"

	"corvane/internal/domain"
	"corvane/internal/store/storekit"
)

const (
	insertAudit = `INSERT INTO audit_log (project_id, actor, token_id, entity, entity_id, action, at, before, after)
	VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?) RETURNING id`
	auditCols    = `SELECT id, project_id, actor, token_id, entity, entity_id, action, at, before, after FROM audit_log `
	listAudit    = auditCols + `WHERE project_id = ? AND id > ? ORDER BY id LIMIT ?`
	listAuditAll = auditCols + `WHERE id > ? ORDER BY id LIMIT ?`
)

func nullJSON(b []byte) any {
	if len(b) == 0 {
		return nil
	}
	return string(b)
}

// AppendAudit records e and sets its ID (and its time when zero).
func (s *Store) AppendAudit(ctx context.Context, e *domain.AuditEntry) error {
	if e.At.IsZero() {
		e.At = storekit.Now()
	}
	e.At = e.At.UTC().Truncate(time.Microsecond)
	return s.write(ctx, func(q querier) error {
		return translate(q.QueryRowContext(ctx, insertAudit, e.ProjectID, e.ActorName, e.TokenID, e.Entity, e.EntityID,
			e.Action, micro(e.At), nullJSON(e.Before), nullJSON(e.After)).Scan(&e.ID))
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
	rows, err := s.read().QueryContext(ctx, query, args...)
	if err != nil {
		return nil, translate(err)
	}
	return collect(rows, func(r scanner) (domain.AuditEntry, error) {
		var e domain.AuditEntry
		var at int64
		var before, after sql.NullString
		err := r.Scan(&e.ID, &e.ProjectID, &e.ActorName, &e.TokenID, &e.Entity, &e.EntityID, &e.Action, &at, &before, &after)
		e.At = fromMicro(at)
		if before.Valid {
			e.Before = []byte(before.String)
		}
		if after.Valid {
			e.After = []byte(after.String)
		}
		return e, err
	})
}
