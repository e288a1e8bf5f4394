package sqlite

import (
	"context"
	"database/sql"

	"corvane/internal/domain"
	"corvane/internal/store/storekit"
)

const holeCols = `id, project_id, name, easting, northing, elevation, azimuth, azimuth_ref, dip, final_depth,
	crs, started, finished, declination, grid_convergence, survey_date, local_grid, version, created_at, updated_at, global_id`

const (
	insertHole = `INSERT INTO holes (project_id, name, easting, northing, elevation, azimuth, azimuth_ref, dip,
	final_depth, crs, started, finished, declination, grid_convergence, survey_date, local_grid, version, created_at, updated_at, global_id)
	VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, 1, ?, ?, ?) RETURNING id`
	selectHole       = `SELECT ` + holeCols + ` FROM holes WHERE id = ?`
	selectHoleByName = `SELECT ` + holeCols + ` FROM holes WHERE project_id = ? AND name = ?`
	listHoles        = `SELECT ` + holeCols + ` FROM holes WHERE project_id = ? AND id > ? ORDER BY id LIMIT ?`
	updateHole       = `UPDATE holes SET name = ?, easting = ?, northing = ?, elevation = ?, azimuth = ?,
	azimuth_ref = ?, dip = ?, final_depth = ?, crs = ?, started = ?, finished = ?,
	declination = ?, grid_convergence = ?, survey_date = ?, local_grid = ?, version = version + 1, updated_at = ?
	WHERE id = ? AND version = ? RETURNING version`
	deleteHole = `DELETE FROM holes WHERE id = ? AND version = ?`
)

func scanHole(r scanner) (domain.Hole, error) {
	var h domain.Hole
	var grid string
	var c, u int64
	err := r.Scan(&h.ID, &h.ProjectID, &h.Name, &h.East, &h.North, &h.Elevation, &h.Azimuth, &h.AzimuthRef, &h.Dip,
		&h.FinalDepth, &h.CRS, &h.Started, &h.Finished, &h.Declination, &h.GridConvergence, &h.SurveyDate, &grid, &h.Version, &c, &u, &h.GlobalID)
	h.LocalGrid = storekit.JSONFromText(grid)
	h.CreatedAt, h.UpdatedAt = fromMicro(c), fromMicro(u)
	return h, err
}

// CreateHole inserts h and sets its ID, version and timestamps.
func (s *Store) CreateHole(ctx context.Context, h *domain.Hole) error {
	t := storekit.Now()
	h.GlobalID = storekit.GlobalID(h.GlobalID)
	return s.write(ctx, func(q querier) error {
		err := q.QueryRowContext(ctx, insertHole, h.ProjectID, h.Name, h.East, h.North, h.Elevation, h.Azimuth,
			h.AzimuthRef, h.Dip, h.FinalDepth, h.CRS, h.Started, h.Finished,
			storekit.NullFloat(h.Declination), storekit.NullFloat(h.GridConvergence), h.SurveyDate, storekit.JSONText(h.LocalGrid), micro(t), micro(t), h.GlobalID).Scan(&h.ID)
		if err != nil {
			return translate(err)
		}
		h.Version, h.CreatedAt, h.UpdatedAt = 1, t, t
		return nil
	})
}

// GetHole returns the hole with the given ID.
func (s *Store) GetHole(ctx context.Context, id int64) (domain.Hole, error) {
	h, err := scanHole(s.read().QueryRowContext(ctx, selectHole, id))
	return h, one(err, "hole", id)
}

// GetHoleByName returns the project's hole with the given name.
func (s *Store) GetHoleByName(ctx context.Context, projectID int64, name string) (domain.Hole, error) {
	h, err := scanHole(s.read().QueryRowContext(ctx, selectHoleByName, projectID, name))
	return h, one(err, "hole", name)
}

// ListHoles returns one page of the project's holes.
func (s *Store) ListHoles(ctx context.Context, projectID int64, page domain.Page) ([]domain.Hole, error) {
	page = page.Norm()
	rows, err := s.read().QueryContext(ctx, listHoles, projectID, page.After, page.Limit)
	if err != nil {
		return nil, translate(err)
	}
	return collect(rows, scanHole)
}

// UpdateHole writes h over the row at version ifVersion.
func (s *Store) UpdateHole(ctx context.Context, h *domain.Hole, ifVersion int64) error {
	t := storekit.Now()
	return s.write(ctx, func(q querier) error {
		err := q.QueryRowContext(ctx, updateHole, h.Name, h.East, h.North, h.Elevation, h.Azimuth, h.AzimuthRef, h.Dip,
			h.FinalDepth, h.CRS, h.Started, h.Finished,
			storekit.NullFloat(h.Declination), storekit.NullFloat(h.GridConvergence), h.SurveyDate, storekit.JSONText(h.LocalGrid), micro(t), h.ID, ifVersion).Scan(&h.Version)
		if err == sql.ErrNoRows {
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
