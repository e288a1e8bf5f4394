package postgres

import (
	"context"
	"fmt"
	"github.com/jackc/pgx/v5"
	"strings"
	"time"

	"corvane/internal/domain"
	"corvane/internal/store/storekit"
)

const measurementCols = `id, project_id, hole_id, depth, alpha, beta, gamma, type_code, apparent_thickness,
	comment, logged_by, logged_at, version, created_at, updated_at, global_id`

const (
	insertMeasurement = `INSERT INTO measurements (project_id, hole_id, depth, alpha, beta, gamma, type_code,
	apparent_thickness, comment, logged_by, logged_at, version, created_at, updated_at, global_id)
	VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10, $11, 1, $12, $13, $14) RETURNING id`
	selectMeasurement = `SELECT ` + measurementCols + ` FROM measurements WHERE id = $1 AND ` + visible
	updateMeasurement = `UPDATE measurements SET hole_id = $1, depth = $2, alpha = $3, beta = $4, gamma = $5,
	type_code = $6, apparent_thickness = $7, comment = $8, logged_by = $9, logged_at = $10,
	version = version + 1, updated_at = $11 WHERE id = $12 AND version = $13 AND ` + visible + ` RETURNING version`
	deleteMeasurement = `DELETE FROM measurements WHERE id = $1 AND version = $2 AND ` + visible
)

func scanMeasurement(r scanner) (domain.Measurement, error) {
	var m domain.Measurement
	var g, th *float64
	var l, c, u time.Time
	err := r.Scan(&m.ID, &m.ProjectID, &m.HoleID, &m.Depth, &m.Alpha, &m.Beta, &g, &m.TypeCode, &th,
		&m.Comment, &m.LoggedBy, &l, &m.Version, &c, &u, &m.GlobalID)
	m.Gamma, m.ApparentThickness = g, th
	m.LoggedAt, m.CreatedAt, m.UpdatedAt = l.UTC(), c.UTC(), u.UTC()
	return m, err
}

// where builds the WHERE clause of a measurement filter with $n
// placeholders; lists go in as array parameters.
func where(f domain.MeasurementFilter) (string, []any) {
	var b strings.Builder
	args := []any{f.ProjectID}
	b.WriteString(" WHERE project_id = $1 AND " + visible)
	add := func(cond string, v any) {
		args = append(args, v)
		fmt.Fprintf(&b, cond, len(args))
	}
	if len(f.HoleIDs) > 0 {
		add(" AND hole_id = ANY($%d)", f.HoleIDs)
	}
	if f.MinDepth != nil {
		add(" AND depth >= $%d", *f.MinDepth)
	}
	if f.MaxDepth != nil {
		add(" AND depth <= $%d", *f.MaxDepth)
	}
	if len(f.TypeCodes) > 0 {
		add(" AND type_code = ANY($%d)", f.TypeCodes)
	}
	if f.LoggedFrom != nil {
		add(" AND logged_at >= $%d", *f.LoggedFrom)
	}
	if f.LoggedTo != nil {
		add(" AND logged_at <= $%d", *f.LoggedTo)
	}
	return b.String(), args
}

func insertOne(ctx context.Context, q querier, m *domain.Measurement, t time.Time) error {
	m.LoggedAt = m.LoggedAt.UTC().Truncate(time.Microsecond)
	m.GlobalID = storekit.GlobalID(m.GlobalID)
	err := q.QueryRow(ctx, insertMeasurement, m.ProjectID, m.HoleID, m.Depth, m.Alpha, storekit.NullFloat(m.Beta), storekit.NullFloat(m.Gamma),
		m.TypeCode, storekit.NullFloat(m.ApparentThickness), m.Comment, m.LoggedBy, m.LoggedAt, t, t, m.GlobalID).Scan(&m.ID)
	if err != nil {
		return translate(err)
	}
	m.Version, m.CreatedAt, m.UpdatedAt = 1, t, t
	return nil
}

// CreateMeasurement inserts m and sets its ID, version and timestamps.
func (s *Store) CreateMeasurement(ctx context.Context, m *domain.Measurement) error {
	t := storekit.Now()
	return s.write(ctx, func(q querier) error { return insertOne(ctx, q, m, t) })
}

// CreateMeasurements bulk-loads ms by COPY straight into measurements (IDs
// follow the order of ms, as on SQLite), in one transaction. It does not set
// the IDs.
func (s *Store) CreateMeasurements(ctx context.Context, ms []domain.Measurement) (int, error) {
	if len(ms) == 0 {
		return 0, nil
	}
	t := storekit.Now()
	var n int64
	err := s.write(ctx, func(q querier) error {
		var err error
		n, err = copyMeasurements(ctx, q, ms, t, nil)
		return err
	})
	if err != nil {
		return 0, err
	}
	return int(n), nil
}

// copyMeasurements COPYs ms into measurements at time t, in import batch
// batch (nil: none, seen at once), and sets their versions and times.
func copyMeasurements(ctx context.Context, q querier, ms []domain.Measurement, t time.Time, batch *int64) (int64, error) {
	i := 0
	src := pgx.CopyFromFunc(func() ([]any, error) {
		if i == len(ms) {
			return nil, nil
		}
		m := &ms[i]
		i++
		m.LoggedAt = m.LoggedAt.UTC().Truncate(time.Microsecond)
		m.GlobalID = storekit.GlobalID(m.GlobalID)
		return []any{m.ProjectID, m.HoleID, m.Depth, m.Alpha, m.Beta, m.Gamma, m.TypeCode,
			m.ApparentThickness, m.Comment, m.LoggedBy, m.LoggedAt, int64(1), t, t, batch, m.GlobalID}, nil
	})
	n, err := q.CopyFrom(ctx, pgx.Identifier{"measurements"}, batchCols, src)
	if err != nil {
		return 0, translate(err)
	}
	for i := range ms {
		ms[i].Version, ms[i].CreatedAt, ms[i].UpdatedAt = 1, t, t
	}
	return n, nil
}

// MeasurementsByGlobalID returns the measurements with the global ids, by
// the unique index alone.
func (s *Store) MeasurementsByGlobalID(ctx context.Context, globalIDs []string) ([]domain.Measurement, error) {
	if len(globalIDs) == 0 {
		return nil, nil
	}
	rows, err := s.read().Query(ctx, `SELECT `+measurementCols+` FROM measurements WHERE global_id = ANY($1) AND `+visible, globalIDs)
	if err != nil {
		return nil, translate(err)
	}
	return collect(rows, scanMeasurement)
}

// GetMeasurement returns the measurement with the given ID.
func (s *Store) GetMeasurement(ctx context.Context, id int64) (domain.Measurement, error) {
	m, err := scanMeasurement(s.read().QueryRow(ctx, selectMeasurement, id))
	return m, one(err, "measurement", id)
}

// ListMeasurements returns one page of the measurements that pass f, by ID.
func (s *Store) ListMeasurements(ctx context.Context, f domain.MeasurementFilter, page domain.Page) ([]domain.Measurement, error) {
	page = page.Norm()
	w, args := where(f)
	args = append(args, page.After, page.Limit)
	rows, err := s.read().Query(ctx, `SELECT `+measurementCols+` FROM measurements`+w+
		fmt.Sprintf(` AND id > $%d ORDER BY id LIMIT $%d`, len(args)-1, len(args)), args...)
	if err != nil {
		return nil, translate(err)
	}
	return collect(rows, scanMeasurement)
}

// ListMeasurementsByDepth lists the measurements that pass f in (depth, id)
// order after the row (afterDepth, page.After) when page.After > 0.
func (s *Store) ListMeasurementsByDepth(ctx context.Context, f domain.MeasurementFilter, afterDepth float64, page domain.Page) ([]domain.Measurement, error) {
	page = page.Norm()
	w, args := where(f)
	if page.After > 0 {
		args = append(args, afterDepth, page.After)
		w += fmt.Sprintf(` AND (depth, id) > ($%d, $%d)`, len(args)-1, len(args))
	}
	args = append(args, page.Limit)
	rows, err := s.read().Query(ctx, `SELECT `+measurementCols+` FROM measurements`+w+
		fmt.Sprintf(` ORDER BY depth, id LIMIT $%d`, len(args)), args...)
	if err != nil {
		return nil, translate(err)
	}
	return collect(rows, scanMeasurement)
}

// CountMeasurements counts the measurements that pass f.
func (s *Store) CountMeasurements(ctx context.Context, f domain.MeasurementFilter) (int64, error) {
	w, args := where(f)
	var n int64
	err := s.read().QueryRow(ctx, `SELECT count(*) FROM measurements`+w, args...).Scan(&n)
	return n, translate(err)
}

// MeasurementKeys returns the duplicate keys of the measurements that pass
// f, reading only the key's columns.
func (s *Store) MeasurementKeys(ctx context.Context, f domain.MeasurementFilter) ([]domain.MeasurementKey, error) {
	w, args := where(f)
	rows, err := s.read().Query(ctx, `SELECT hole_id, depth, alpha, beta, gamma, type_code FROM measurements`+w, args...)
	if err != nil {
		return nil, translate(err)
	}
	return collect(rows, func(r scanner) (domain.MeasurementKey, error) {
		var m domain.Measurement
		err := r.Scan(&m.HoleID, &m.Depth, &m.Alpha, &m.Beta, &m.Gamma, &m.TypeCode)
		return domain.KeyOf(m), err
	})
}

// UpdateMeasurement writes m over the row at version ifVersion.
func (s *Store) UpdateMeasurement(ctx context.Context, m *domain.Measurement, ifVersion int64) error {
	t := storekit.Now()
	m.LoggedAt = m.LoggedAt.UTC().Truncate(time.Microsecond)
	return s.write(ctx, func(q querier) error {
		err := q.QueryRow(ctx, updateMeasurement, m.HoleID, m.Depth, m.Alpha, storekit.NullFloat(m.Beta), storekit.NullFloat(m.Gamma),
			m.TypeCode, storekit.NullFloat(m.ApparentThickness), m.Comment, m.LoggedBy, m.LoggedAt,
			t, m.ID, ifVersion).Scan(&m.Version)
		if err == pgx.ErrNoRows {
			return versionGone(ctx, q, "measurements", "measurement", m.ID, ifVersion)
		}
		if err != nil {
			return translate(err)
		}
		m.UpdatedAt = t
		return nil
	})
}

// DeleteMeasurement deletes the measurement.
func (s *Store) DeleteMeasurement(ctx context.Context, id, ifVersion int64) error {
	return s.write(ctx, func(q querier) error {
		return deleteVersioned(ctx, q, deleteMeasurement, "measurements", "measurement", id, ifVersion)
	})
}
