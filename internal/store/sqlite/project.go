package sqlite

import (
	"context"
	"database/sql"

	"corvane/internal/domain"
	"corvane/internal/store/storekit"
)

const projectCols = `id, name, description, ref_line, beta_apex, gamma_sense, length_unit,
	output_azimuth_ref, declination, convergence, magnetic_model, local_grid, error_model, persistent_fabric, survey_priority, version, created_at, updated_at`

const (
	insertProject = `INSERT INTO projects (name, description, ref_line, beta_apex, gamma_sense,
	length_unit, output_azimuth_ref, declination, convergence, magnetic_model, local_grid, error_model, persistent_fabric, survey_priority, version, created_at, updated_at)
	VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, 1, ?, ?) RETURNING id`
	selectProject       = `SELECT ` + projectCols + ` FROM projects WHERE id = ?`
	selectProjectByName = `SELECT ` + projectCols + ` FROM projects WHERE name = ?`
	listProjects        = `SELECT ` + projectCols + ` FROM projects WHERE id > ? ORDER BY id LIMIT ?`
	updateProject       = `UPDATE projects SET name = ?, description = ?, ref_line = ?, beta_apex = ?,
	gamma_sense = ?, length_unit = ?, output_azimuth_ref = ?, declination = ?, convergence = ?,
	magnetic_model = ?, local_grid = ?, error_model = ?, persistent_fabric = ?, survey_priority = ?,
	version = version + 1, updated_at = ? WHERE id = ? AND version = ? RETURNING version`
	deleteProject = `DELETE FROM projects WHERE id = ? AND version = ?`
	// Measurements go first: they refer to both holes and the vocabulary,
	// which the project's deletion cascades to in no guaranteed order.
	deleteProjectMeasurements = `DELETE FROM measurements WHERE project_id = ? AND EXISTS (SELECT 1 FROM projects WHERE id = ? AND version = ?)`
)

type scanner interface{ Scan(dest ...any) error }

func scanProject(r scanner) (domain.Project, error) {
	var p domain.Project
	var em string
	var c, u int64
	var grid string
	err := r.Scan(&p.ID, &p.Name, &p.Description, &p.RefLine, &p.BetaApex, &p.GammaSense, &p.LengthUnit,
		&p.OutputAzimuthRef, &p.Declination, &p.Convergence, &p.MagneticModel, &grid, &em, &p.PersistentFabric, &p.SurveyPriority, &p.Version, &c, &u)
	p.LocalGrid = storekit.JSONFromText(grid)
	if err == nil {
		p.ErrorModel, err = storekit.ModelOf(em)
	}
	p.CreatedAt, p.UpdatedAt = fromMicro(c), fromMicro(u)
	return p, err
}

// CreateProject inserts p and sets its ID, version and timestamps.
func (s *Store) CreateProject(ctx context.Context, p *domain.Project) error {
	t := storekit.Now()
	return s.write(ctx, func(q querier) error {
		err := q.QueryRowContext(ctx, insertProject, p.Name, p.Description, p.RefLine, p.BetaApex, p.GammaSense,
			p.LengthUnit, p.OutputAzimuthRef, storekit.NullFloat(p.Declination), storekit.NullFloat(p.Convergence), p.MagneticModel, storekit.JSONText(p.LocalGrid), storekit.ModelText(p.ErrorModel), p.PersistentFabric, p.SurveyPriority, micro(t), micro(t)).Scan(&p.ID)
		if err != nil {
			return translate(err)
		}
		p.Version, p.CreatedAt, p.UpdatedAt = 1, t, t
		return nil
	})
}

// GetProject returns the project with the given ID.
func (s *Store) GetProject(ctx context.Context, id int64) (domain.Project, error) {
	p, err := scanProject(s.read().QueryRowContext(ctx, selectProject, id))
	return p, one(err, "project", id)
}

// GetProjectByName returns the project with the given name.
func (s *Store) GetProjectByName(ctx context.Context, name string) (domain.Project, error) {
	p, err := scanProject(s.read().QueryRowContext(ctx, selectProjectByName, name))
	return p, one(err, "project", name)
}

// ListProjects returns one page of projects.
func (s *Store) ListProjects(ctx context.Context, page domain.Page) ([]domain.Project, error) {
	page = page.Norm()
	rows, err := s.read().QueryContext(ctx, listProjects, page.After, page.Limit)
	if err != nil {
		return nil, translate(err)
	}
	return collect(rows, scanProject)
}

// UpdateProject writes p over the row at version ifVersion.
func (s *Store) UpdateProject(ctx context.Context, p *domain.Project, ifVersion int64) error {
	t := storekit.Now()
	return s.write(ctx, func(q querier) error {
		err := q.QueryRowContext(ctx, updateProject, p.Name, p.Description, p.RefLine, p.BetaApex, p.GammaSense,
			p.LengthUnit, p.OutputAzimuthRef, storekit.NullFloat(p.Declination), storekit.NullFloat(p.Convergence), p.MagneticModel, storekit.JSONText(p.LocalGrid), storekit.ModelText(p.ErrorModel), p.PersistentFabric, p.SurveyPriority, micro(t), p.ID, ifVersion).Scan(&p.Version)
		if err == sql.ErrNoRows {
			return versionGone(ctx, q, "projects", "project", p.ID, ifVersion)
		}
		if err != nil {
			return translate(err)
		}
		p.UpdatedAt = t
		return nil
	})
}

// DeleteProject deletes the project and, by cascade, everything in it.
func (s *Store) DeleteProject(ctx context.Context, id, ifVersion int64) error {
	return s.write(ctx, func(q querier) error {
		_, err := q.ExecContext(ctx, deleteProjectMeasurements, id, id, ifVersion)
		if err != nil {
			return translate(err)
		}
		return deleteVersioned(ctx, q, deleteProject, "projects", "project", id, ifVersion)
	})
}

func deleteVersioned(ctx context.Context, q querier, stmt, table, entity string, id, ifVersion int64) error {
	res, err := q.ExecContext(ctx, stmt, id, ifVersion)
	if err != nil {
		return translate(err)
	}
	if n, _ := res.RowsAffected(); n == 0 {
		return versionGone(ctx, q, table, entity, id, ifVersion)
	}
	return nil
}

// collect scans every row with scan and closes rows. It never returns a nil
// slice, so empty lists encode as [].
func collect[T any](rows *sql.Rows, scan func(scanner) (T, error)) ([]T, error) {
	return collectCap(rows, scan, 0)
}

// collectCap is collect with room for n rows made at once (a page's limit).
func collectCap[T any](rows *sql.Rows, scan func(scanner) (T, error), n int) ([]T, error) {
	defer rows.Close()
	out := make([]T, 0, n)
	for rows.Next() {
		v, err := scan(rows)
		if err != nil {
			return nil, translate(err)
		}
		out = append(out, v)
	}
	return out, translate(rows.Err())
}
