package sqlite

import (
	"context"
	"database/sql"
	"slices"
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
	VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, 1, ?, ?, ?) RETURNING id`
	selectMeasurement = `SELECT ` + measurementCols + ` FROM measurements WHERE id = ? AND ` + visible
	updateMeasurement = `UPDATE measurements SET hole_id = ?, depth = ?, alpha = ?, beta = ?, gamma = ?,
	type_code = ?, apparent_thickness = ?, comment = ?, logged_by = ?, logged_at = ?,
	version = version + 1, updated_at = ? WHERE id = ? AND version = ? AND ` + visible + ` RETURNING version`
	deleteMeasurement = `DELETE FROM measurements WHERE id = ? AND version = ? AND ` + visible
)

func scanMeasurement(r scanner) (domain.Measurement, error) {
	var m domain.Measurement
	var b, g, th sql.NullFloat64
	var l, c, u int64
	err := r.Scan(&m.ID, &m.ProjectID, &m.HoleID, &m.Depth, &m.Alpha, &b, &g, &m.TypeCode, &th,
		&m.Comment, &m.LoggedBy, &l, &m.Version, &c, &u, &m.GlobalID)
	m.Beta, m.Gamma, m.ApparentThickness = floatPtr(b), floatPtr(g), floatPtr(th)
	m.LoggedAt, m.CreatedAt, m.UpdatedAt = fromMicro(l), fromMicro(c), fromMicro(u)
	return m, err
}

// where builds the WHERE clause of a measurement filter with ? placeholders.
func where(f domain.MeasurementFilter) (string, []any) {
	var b strings.Builder
	args := []any{f.ProjectID}
	b.WriteString(" WHERE project_id = ? AND " + visible)
	if len(f.HoleIDs) > 0 {
		b.WriteString(" AND hole_id IN (?" + strings.Repeat(", ?", len(f.HoleIDs)-1) + ")")
		for _, id := range f.HoleIDs {
			args = append(args, id)
		}
	}
	if f.MinDepth != nil {
		b.WriteString(" AND depth >= ?")
		args = append(args, *f.MinDepth)
	}
	if f.MaxDepth != nil {
		b.WriteString(" AND depth <= ?")
		args = append(args, *f.MaxDepth)
	}
	if len(f.TypeCodes) > 0 {
		b.WriteString(" AND type_code IN (?" + strings.Repeat(", ?", len(f.TypeCodes)-1) + ")")
		for _, c := range f.TypeCodes {
			args = append(args, c)
		}
	}
	if f.LoggedFrom != nil {
		b.WriteString(" AND logged_at >= ?")
		args = append(args, micro(*f.LoggedFrom))
	}
	if f.LoggedTo != nil {
		b.WriteString(" AND logged_at <= ?")
		args = append(args, micro(*f.LoggedTo))
	}
	return b.String(), args
}

func insertOne(ctx context.Context, q querier, m *domain.Measurement, t time.Time) error {
	m.LoggedAt = m.LoggedAt.UTC().Truncate(time.Microsecond)
	m.GlobalID = storekit.GlobalID(m.GlobalID)
	err := q.QueryRowContext(ctx, insertMeasurement, m.ProjectID, m.HoleID, m.Depth, m.Alpha, storekit.NullFloat(m.Beta), storekit.NullFloat(m.Gamma),
		m.TypeCode, storekit.NullFloat(m.ApparentThickness), m.Comment, m.LoggedBy, micro(m.LoggedAt), micro(t), micro(t), m.GlobalID).Scan(&m.ID)
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

// CreateMeasurements inserts all of ms in one transaction, setting their
// IDs (in the order of ms). Rows go in by multi-row INSERT statements of
// insertRows rows, prepared once per call: one statement per row spent most
// of its time in the driver's per-statement work.
func (s *Store) CreateMeasurements(ctx context.Context, ms []domain.Measurement) (int, error) {
	t := storekit.Now()
	err := s.write(ctx, func(q querier) error { _, _, err := insertMany(ctx, q.(*sql.Tx), ms, t, 0); return err })
	if err != nil {
		return 0, err
	}
	return len(ms), nil
}

// insertRows is the number of rows of one multi-row INSERT (16 values
// each, well under SQLite's limit of 32,766 variables). 512 rather than 128:
// a 1e6-row import 9.5-9.9 s against 10.2-10.4 s (interleaved runs,
// service.BenchmarkImportMeasurements); 1,024 gained nothing more.
const insertRows = 512

// insertValues is the VALUES list of n measurement rows.
func insertValues(n int) string {
	const row = "(?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, 1, ?, ?, ?, ?)"
	return strings.Repeat(row+", ", n-1) + row
}

const insertManyHead = `INSERT INTO measurements (project_id, hole_id, depth, alpha, beta, gamma, type_code,
	apparent_thickness, comment, logged_by, logged_at, version, created_at, updated_at, batch, global_id) VALUES `

var insertManyFull = insertManyHead + insertValues(insertRows) + ` RETURNING id`

// insertMany inserts ms in tx at time t by multi-row INSERTs, in import
// batch batch (0: none, visible at once), sets their IDs, versions and
// times, and returns the least and greatest ID. SQLite hands out the
// AUTOINCREMENT ids of one statement in increasing order as it inserts the
// rows of its VALUES list in order, so the returned ids, sorted, belong to
// the rows in order.
func insertMany(ctx context.Context, tx *sql.Tx, ms []domain.Measurement, t time.Time, batch int64) (lo, hi int64, err error) {
	var full *sql.Stmt
	var bv any // NULL without a batch
	if batch != 0 {
		bv = batch
	}
	args := make([]any, 0, 14*insertRows)
	ids := make([]int64, 0, insertRows)
	ct := micro(t)
	for len(ms) > 0 {
		n := min(len(ms), insertRows)
		chunk := ms[:n]
		ms = ms[n:]
		args = args[:0]
		for i := range chunk {
			m := &chunk[i]
			m.LoggedAt = m.LoggedAt.UTC().Truncate(time.Microsecond)
			m.GlobalID = storekit.GlobalID(m.GlobalID)
			args = append(args, m.ProjectID, m.HoleID, m.Depth, m.Alpha, storekit.NullFloat(m.Beta), storekit.NullFloat(m.Gamma),
				m.TypeCode, storekit.NullFloat(m.ApparentThickness), m.Comment, m.LoggedBy, micro(m.LoggedAt), ct, ct, bv, m.GlobalID)
		}
		var rows *sql.Rows
		if n == insertRows {
			if full == nil {
				if full, err = tx.PrepareContext(ctx, insertManyFull); err != nil {
					return 0, 0, translate(err)
				}
				defer full.Close()
			}
			rows, err = full.QueryContext(ctx, args...)
		} else {
			rows, err = tx.QueryContext(ctx, insertManyHead+insertValues(n)+` RETURNING id`, args...)
		}
		if err != nil {
			return 0, 0, translate(err)
		}
		ids = ids[:0]
		for rows.Next() {
			var id int64
			if err := rows.Scan(&id); err != nil {
				rows.Close()
				return 0, 0, translate(err)
			}
			ids = append(ids, id)
		}
		if err := rows.Close(); err != nil {
			return 0, 0, translate(err)
		}
		if err := rows.Err(); err != nil {
			return 0, 0, translate(err)
		}
		if len(ids) != n {
			return 0, 0, domain.Errorf(domain.Internal, "sqlite: %d ids returned for %d rows", len(ids), n)
		}
		slices.Sort(ids)
		for i := range chunk {
			chunk[i].ID, chunk[i].Version, chunk[i].CreatedAt, chunk[i].UpdatedAt = ids[i], 1, t, t
		}
		if lo == 0 {
			lo = ids[0]
		}
		hi = ids[n-1]
	}
	return lo, hi, nil
}

// MeasurementsByGlobalID returns the measurements with the global ids, by
// the unique index alone.
func (s *Store) MeasurementsByGlobalID(ctx context.Context, globalIDs []string) ([]domain.Measurement, error) {
	var out []domain.Measurement
	for start := 0; start < len(globalIDs); start += domain.MaxLimit {
		part := globalIDs[start:min(len(globalIDs), start+domain.MaxLimit)]
		args := make([]any, len(part))
		for i, g := range part {
			args[i] = g
		}
		rows, err := s.read().QueryContext(ctx, `SELECT `+measurementCols+` FROM measurements WHERE global_id IN (?`+strings.Repeat(", ?", len(part)-1)+`) AND `+visible, args...)
		if err != nil {
			return nil, translate(err)
		}
		ms, err := collect(rows, scanMeasurement)
		if err != nil {
			return nil, err
		}
		out = append(out, ms...)
	}
	return out, nil
}

// MeasurementKeys returns the duplicate keys of the measurements that pass
// f, reading only the key's columns.
func (s *Store) MeasurementKeys(ctx context.Context, f domain.MeasurementFilter) ([]domain.MeasurementKey, error) {
	w, args := where(f)
	rows, err := s.read().QueryContext(ctx, `SELECT hole_id, depth, alpha, beta, gamma, type_code FROM measurements`+w, args...)
	if err != nil {
		return nil, translate(err)
	}
	return collect(rows, func(r scanner) (domain.MeasurementKey, error) {
		var m domain.Measurement
		var b, g sql.NullFloat64
		err := r.Scan(&m.HoleID, &m.Depth, &m.Alpha, &b, &g, &m.TypeCode)
		m.Beta, m.Gamma = floatPtr(b), floatPtr(g)
		return domain.KeyOf(m), err
	})
}

// GetMeasurement returns the measurement with the given ID.
func (s *Store) GetMeasurement(ctx context.Context, id int64) (domain.Measurement, error) {
	m, err := scanMeasurement(s.read().QueryRowContext(ctx, selectMeasurement, id))
	return m, one(err, "measurement", id)
}

// ListMeasurements returns one page of the measurements that pass f, by ID.
func (s *Store) ListMeasurements(ctx context.Context, f domain.MeasurementFilter, page domain.Page) ([]domain.Measurement, error) {
	page = page.Norm()
	w, args := where(f)
	args = append(args, page.After, page.Limit)
	rows, err := s.read().QueryContext(ctx, `SELECT `+measurementCols+` FROM measurements`+w+` AND id > ? ORDER BY id LIMIT ?`, args...)
	if err != nil {
		return nil, translate(err)
	}
	return collectCap(rows, scanMeasurement, page.Limit)
}

// ListMeasurementsByDepth lists the measurements that pass f in (depth, id)
// order after the row (afterDepth, page.After) when page.After > 0.
func (s *Store) ListMeasurementsByDepth(ctx context.Context, f domain.MeasurementFilter, afterDepth float64, page domain.Page) ([]domain.Measurement, error) {
	page = page.Norm()
	w, args := where(f)
	if page.After > 0 {
		w += ` AND (depth > ? OR (depth = ? AND id > ?))`
		args = append(args, afterDepth, afterDepth, page.After)
	}
	args = append(args, page.Limit)
	rows, err := s.read().QueryContext(ctx, `SELECT `+measurementCols+` FROM measurements`+w+` ORDER BY depth, id LIMIT ?`, args...)
	if err != nil {
		return nil, translate(err)
	}
	return collectCap(rows, scanMeasurement, page.Limit)
}

// CountMeasurements counts the measurements that pass f.
func (s *Store) CountMeasurements(ctx context.Context, f domain.MeasurementFilter) (int64, error) {
	w, args := where(f)
	var n int64
	err := s.read().QueryRowContext(ctx, `SELECT count(*) FROM measurements`+w, args...).Scan(&n)
	return n, translate(err)
}

// UpdateMeasurement writes m over the row at version ifVersion.
func (s *Store) UpdateMeasurement(ctx context.Context, m *domain.Measurement, ifVersion int64) error {
	t := storekit.Now()
	m.LoggedAt = m.LoggedAt.UTC().Truncate(time.Microsecond)
	return s.write(ctx, func(q querier) error {
		err := q.QueryRowContext(ctx, updateMeasurement, m.HoleID, m.Depth, m.Alpha, storekit.NullFloat(m.Beta), storekit.NullFloat(m.Gamma),
			m.TypeCode, storekit.NullFloat(m.ApparentThickness), m.Comment, m.LoggedBy, micro(m.LoggedAt),
			micro(t), m.ID, ifVersion).Scan(&m.Version)
		if err == sql.ErrNoRows {
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
