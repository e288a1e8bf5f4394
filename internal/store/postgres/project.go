package postgres

import (
	"context"
	"time"

	"github.com/jackc/pgx/v5"

	"corvane/internal/domain"
	"corvane/internal/store/storekit"
)

const projectCols = `id, name, description, ref_line, beta_apex, gamma_sense, length_unit,
	output_azimuth_ref, declination, convergence, magnetic_model, local_grid, error_model, persistent_fabric, survey_priority, version, created_at, updated_at`

const (
	insertProject = `INSERT INTO projects (name, description, ref_line, beta_apex, gamma_sense,
	length_unit, output_azimuth_ref, declination, convergence, magnetic_model, local_grid, error_model, persistent_fabric, survey_priority, version, created_at, updated_at)
	VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10, $11, $12, $13, $14, 1, $15, $16) RETURNING id`
	selectProject       = `SELECT ` + projectCols + ` FROM projects WHERE id = $1`
	selectProjectByName = `SELECT ` + projectCols + ` FROM projects WHERE name = $1`
	listProjects        = `SELECT ` + projectCols + ` FROM projects WHERE id > $1 ORDER BY id LIMIT $2`
	updateProject       = `UPDATE projects SET name = $1, description = $2, ref_line = $3, beta_apex = $4,
	gamma_sense = $5, length_unit = $6, output_azimuth_ref = $7, declination = $8, convergence = $9,
	magnetic_model = $10, local_grid = $11, error_model = $12, persistent_fabric = $13, survey_priority = $14,
	version = version + 1, updated_at = $15 WHERE id = $16 AND version = $17 RETURNING version`
	deleteProject = `DELETE FROM projects WHERE id = $1 AND version = $2`
	// Measurements go first: they refer to both holes and the vocabulary,
	// which the project's deletion cascades to in no guaranteed order.
	deleteProjectMeasurements = `DELETE FROM measurements WHERE project_id = $1 AND EXISTS (SELECT 1 FROM projects WHERE id = $1 AND version = $2)`
)

type scanner interface{ Scan(dest ...any) error }

func scanProject(r scanner) (domain.Project, error) {
	var p domain.Project
	var em string
	var c, u time.Time
	var grid string
	err := r.Scan(&p.ID, &p.Name, &p.Description, &p.RefLine, &p.BetaApex, &p.GammaSense, &p.LengthUnit,
		&p.OutputAzimuthRef, &p.Declination, &p.Convergence, &p.MagneticModel, &grid, &em, &p.PersistentFabric, &p.SurveyPriority, &p.Version, &c, &u)
	p.LocalGrid = storekit.JSONFromText(grid)
	if err == nil {
		p.ErrorModel, err = storekit.ModelOf(em)
	}
	p.CreatedAt, p.UpdatedAt = c.UTC(), u.UTC()
	return p, err
}

// CreateProject inserts p and sets its ID, version and timestamps.
func (s *Store) CreateProject(ctx context.Context, p *domain.Project) error {
	t := storekit.Now()
	return s.write(ctx, func(q querier) error {
		err := q.QueryRow(ctx, insertProject, p.Name, p.Description, p.RefLine, p.BetaApex, p.GammaSense,
			p.LengthUnit, p.OutputAzimuthRef, storekit.NullFloat(p.Declination), storekit.NullFloat(p.Convergence), p.MagneticModel, storekit.JSONText(p.LocalGrid), storekit.ModelText(p.ErrorModel), p.PersistentFabric, p.SurveyPriority, t, t).Scan(&p.ID)
		if err != nil {
			return translate(err)
		}
		p.Version, p.CreatedAt, p.UpdatedAt = 1, t, t
		return nil
	})
}

// GetProject returns the project with the given ID.
func (s *Store) GetProject(ctx context.Context, id int64) (domain.Project, error) {
	p, err := scanProject(s.read().QueryRow(ctx, selectProject, id))
	return p, one(err, "project", id)
}

// GetProjectByName returns the project with the given name.
func (s *Store) GetProjectByName(ctx context.Context, name string) (domain.Project, error) {
	p, err := scanProject(s.read().QueryRow(ctx, selectProjectByName, name))
	return p, one(err, "project", name)
}

// ListProjects returns one page of projects.
func (s *Store) ListProjects(ctx context.Context, page domain.Page) ([]domain.Project, error) {
	page = page.Norm()
	rows, err := s.read().Query(ctx, listProjects, page.After, page.Limit)
	if err != nil {
		return nil, translate(err)
	}
	return collect(rows, scanProject)
}

// UpdateProject writes p over the row at version ifVersion.
func (s *Store) UpdateProject(ctx context.Context, p *domain.Project, ifVersion int64) error {
	t := storekit.Now()
	return s.write(ctx, func(q querier) error {
		err := q.QueryRow(ctx, updateProject, p.Name, p.Description, p.RefLine, p.BetaApex, p.GammaSense,
			p.LengthUnit, p.OutputAzimuthRef, storekit.NullFloat(p.Declination), storekit.NullFloat(p.Convergence), p.MagneticModel, storekit.JSONText(p.LocalGrid), storekit.ModelText(p.ErrorModel), p.PersistentFabric, p.SurveyPriority, t, p.ID, ifVersion).Scan(&p.Version)
		if err == pgx.ErrNoRows {
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
		_, err := q.Exec(ctx, deleteProjectMeasurements, id, ifVersion)
		if err != nil {
			return translate(err)
		}
		return deleteVersioned(ctx, q, deleteProject, "projects", "project", id, ifVersion)
	})
}

func deleteVersioned(ctx context.Context, q querier, stmt, table, entity string, id, ifVersion int64) error {
	res, err := q.Exec(ctx, stmt, id, ifVersion)
	if err != nil {
		return translate(err)
	}
	if res.RowsAffected() == 0 {
		return versionGone(ctx, q, table, entity, id, ifVersion)
	}
	return nil
}

// collect scans every row with scan and closes rows. It never returns a nil
// slice, so empty lists encode as [].
func collect[T any](rows pgx.Rows, scan func(scanner) (T, error)) ([]T, error) {
	defer rows.Close()
	out := []T{}
	for rows.Next() {
		v, err := scan(rows)
		if err != nil {
			return nil, translate(err)
		}
		out = append(out, v)
	}
	return out, translate(rows.Err())
}
