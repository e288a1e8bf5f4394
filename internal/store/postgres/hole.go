package postgres

import (
	"context"
	"time"

	"github.com/jackc/pgx/v5"

	"corvane/internal/domain"
	"corvane/internal/store/storekit"
)

const holeCols = `id, project_id, name, easting, northing, elevation, azimuth, azimuth_ref, dip, final_depth,
	crs, started, finished, declination, grid_convergence, survey_date, local_grid, version, created_at, updated_at, global_id`

const (
	insertHole = `INSERT INTO holes (project_id, name, easting, northing, elevation, azimuth, azimuth_ref, dip,
	final_depth, crs, started, finished, declination, grid_convergence, survey_date, local_grid, version, created_at, updated_at, global_id)
	VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10, $11, $12, $13, $14, $15, $16, 1, $17, $18, $19) RETURNING id`
	selectHole       = `SELECT ` + holeCols + ` FROM holes WHERE id = $1`
	selectHoleByName = `SELECT ` + holeCols + ` FROM holes WHERE project_id = $1 AND name = $2`
	listHoles        = `SELECT ` + holeCols + ` FROM holes WHERE project_id = $1 AND id > $2 ORDER BY id LIMIT $3`
	updateHole       = `UPDATE holes SET name = $1, easting = $2, northing = $3, elevation = $4, azimuth = $5,
	azimuth_ref = $6, dip = $7, final_depth = $8, crs = $9, started = $10, finished = $11,
	declination = $12, grid_convergence = $13, survey_date = $14, local_grid = $15, version = version + 1, updated_at = $16
	WHERE id = $17 AND version = $18 RETURNING version`
	deleteHole = `DELETE FROM holes WHERE id = $1 AND version = $2`
)

func scanHole(r scanner) (domain.Hole, error) {
	var h domain.Hole
	var grid string
	var c, u time.Time
	err := r.Scan(&h.ID, &h.ProjectID, &h.Name, &h.East, &h.North, &h.Elevation, &h.Azimuth, &h.AzimuthRef, &h.Dip,
		&h.FinalDepth, &h.CRS, &h.Started, &h.Finished, &h.Declination, &h.GridConvergence, &h.SurveyDate, &grid, &h.Version, &c, &u, &h.GlobalID)
	h.LocalGrid = storekit.JSONFromText(grid)
	h.CreatedAt, h.UpdatedAt = c.UTC(), u.UTC()
	return h, err
}

// CreateHole inserts h and sets its ID, version and timestamps.
func (s *Store) CreateHole(ctx context.Context, h *domain.Hole) error {
	t := storekit.Now()
	h.GlobalID = storekit.GlobalID(h.GlobalID)
	return s.write(ctx, func(q querier) error {
		err := q.QueryRow(ctx, insertHole, h.ProjectID, h.Name, h.East, h.North, h.Elevation, h.Azimuth,
			h.AzimuthRef, h.Dip, h.FinalDepth, h.CRS, h.Started, h.Finished,
			storekit.NullFloat(h.Declination), storekit.NullFloat(h.GridConvergence), h.SurveyDate, storekit.JSONText(h.LocalGrid), t, t, h.GlobalID).Scan(&h.ID)
		if err != nil {
			return translate(err)
		}
		h.Version, h.CreatedAt, h.UpdatedAt = 1, t, t
		return nil
	})
}

// GetHole returns the hole with the given ID.
func (s *Store) GetHole(ctx context.Context, id int64) (domain.Hole, error) {
	h, err := scanHole(s.read().QueryRow(ctx, selectHole, id))
	return h, one(err, "hole", id)
}

// GetHoleByName returns the project's hole with the given name.
func (s *Store) GetHoleByName(ctx context.Context, projectID int64, name string) (domain.Hole, error) {
	h, err := scanHole(s.read().QueryRow(ctx, selectHoleByName, projectID, name))
	return h, one(err, "hole", name)
}

// ListHoles returns one page of the project's holes.
func (s *Store) ListHoles(ctx context.Context, projectID int64, page domain.Page) ([]domain.Hole, error) {
	page = page.Norm()
	rows, err := s.read().Query(ctx, listHoles, projectID, page.After, page.Limit)
	if err != nil {
		return nil, translate(err)
	}
	return collect(rows, scanHole)
}

// UpdateHole writes h over the row at version ifVersion.
func (s *Store) UpdateHole(ctx context.Context, h *domain.Hole, ifVersion int64) error {
	t := storekit.Now()
	return s.write(ctx, func(q querier) error {
		err := q.QueryRow(ctx, updateHole, h.Name, h.East, h.North, h.Elevation, h.Azimuth, h.AzimuthRef, h.Dip,
			h.FinalDepth, h.CRS, h.Started, h.Finished,
			storekit.NullFloat(h.Declination), storekit.NullFloat(h.GridConvergence), h.SurveyDate, storekit.JSONText(h.LocalGrid), t, h.ID, ifVersion).Scan(&h.Version)
		if err == pgx.ErrNoRows {
			return versionGone(ctx, q, "holes", "hole", h.ID, ifVersion)
		}
		if err != nil {
			return translate(err)
		}
		h.UpdatedAt = t
		return nil
	})
}

// DeleteHole deletes the hole with its survey, runs and measurements.
func (s *Store) DeleteHole(ctx context.Context, id, ifVersion int64) error {
	return s.write(ctx, func(q querier) error {
		return deleteVersioned(ctx, q, deleteHole, "holes", "hole", id, ifVersion)
	})
}
