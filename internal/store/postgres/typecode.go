package postgres

import (
	"context"

	"github.com/jackc/pgx/v5"

	"corvane/internal/domain"
	"corvane/internal/store/storekit"
)

const (
	upsertTypeCode = `INSERT INTO type_codes (project_id, code, description, kind, colour, mark) VALUES ($1, $2, $3, $4, $5, $6)
	ON CONFLICT (project_id, code) DO UPDATE SET description = excluded.description, kind = excluded.kind,
	colour = excluded.colour, mark = excluded.mark, version = type_codes.version + 1`
	listTypeCodes  = `SELECT project_id, code, description, kind, colour, mark, version FROM type_codes WHERE project_id = $1 ORDER BY code`
	deleteTypeCode = `DELETE FROM type_codes WHERE project_id = $1 AND code = $2`
)

// PutTypeCode creates or replaces a vocabulary entry.
func (s *Store) PutTypeCode(ctx context.Context, tc domain.TypeCode) error {
	return s.write(ctx, func(q querier) error {
		_, err := q.Exec(ctx, upsertTypeCode, tc.ProjectID, tc.Code, tc.Description, tc.Kind, tc.Colour, tc.Mark)
		return translate(err)
	})
}

// ListTypeCodes lists the project's vocabulary ordered by code.
func (s *Store) ListTypeCodes(ctx context.Context, projectID int64) ([]domain.TypeCode, error) {
	rows, err := s.read().Query(ctx, listTypeCodes, projectID)
	if err != nil {
		return nil, translate(err)
	}
	return collectTypeCodes(rows)
}

// batchTypeCodes reads the vocabulary queued next in a batch (listTypeCodes).
func batchTypeCodes(br pgx.BatchResults) ([]domain.TypeCode, error) {
	rows, err := br.Query()
	if err != nil {
		return nil, translate(err)
	}
	return collectTypeCodes(rows)
}

func collectTypeCodes(rows pgx.Rows) ([]domain.TypeCode, error) {
	return collect(rows, func(r scanner) (domain.TypeCode, error) {
		var tc domain.TypeCode
		err := r.Scan(&tc.ProjectID, &tc.Code, &tc.Description, &tc.Kind, &tc.Colour, &tc.Mark, &tc.Version)
		return tc, err
	})
}

// DeleteTypeCode removes a vocabulary entry; Conflict while measurements use it.
func (s *Store) DeleteTypeCode(ctx context.Context, projectID int64, code string) error {
	return s.write(ctx, func(q querier) error {
		res, err := q.Exec(ctx, deleteTypeCode, projectID, code)
		if err != nil {
			if domain.IsKind(translate(err), domain.Conflict) {
				return domain.Errorf(domain.Conflict, "type code %q is still used by measurements", code)
			}
			return translate(err)
		}
		if res.RowsAffected() == 0 {
			return storekit.NotFound("type code", code)
		}
		return nil
	})
}
