package service

import (
	"context"
	"strconv"
	"strings"

	"corvane/internal/domain"
)

// CreateHole adds a hole to a project (admin). An empty collar azimuth
// reference means the project's output reference.
func (s *Service) CreateHole(ctx context.Context, projectID int64, h domain.Hole) (domain.Hole, error) {
	h.ProjectID = projectID
	err := s.store.InTx(ctx, func(ctx context.Context, st domain.Store) error {
		p, a, err := s.project(ctx, st, projectID, domain.RoleAdmin)
		if err != nil {
			return err
		}
		h.AzimuthRef = orDefault(h.AzimuthRef, p.OutputAzimuthRef)
		if err := h.Normalize(); err != nil {
			return err
		}
		if err := checkHoleLocalGrid(p, &h); err != nil {
			return err
		}
		if err := st.CreateHole(ctx, &h); err != nil {
			if domain.IsKind(err, domain.Conflict) {
				return domain.Errorf(domain.Conflict, "hole %q already exists in project %d", h.Name, projectID)
			}
			return err
		}
		return audit(ctx, st, a, projectID, "hole", h.ID, domain.ActionCreate, nil, h)
	})
	return h, err
}

// GetHole returns a hole of the project (read).
func (s *Service) GetHole(ctx context.Context, projectID, holeID int64) (domain.Hole, error) {
	if _, err := allow(ctx, projectID, domain.RoleRead); err != nil {
		return domain.Hole{}, err
	}
	return hole(ctx, s.store, projectID, holeID)
}

// HoleNamePrefix marks a hole reference as a name even when it is all digits.
const HoleNamePrefix = "name:"

// ResolveHole finds the id of the hole that ref names in the project (read):
// a reference of digits only is the hole's id; "name:" followed by anything
// is the hole of that name (for names made of digits); anything else is the
// hole's name. This is the one rule for a hole in a route.
func (s *Service) ResolveHole(ctx context.Context, projectID int64, ref string) (int64, error) {
	if _, err := allow(ctx, projectID, domain.RoleRead); err != nil {
		return 0, err
	}
	name, byName := strings.CutPrefix(ref, HoleNamePrefix)
	if !byName {
		if id, err := strconv.ParseInt(ref, 10, 64); err == nil {
			if id < 1 {
				return 0, domain.Errorf(domain.NotFound, "hole %q: no such hole (ids are positive)", ref)
			}
			return id, nil
		}
	}
	h, err := s.store.GetHoleByName(ctx, projectID, name)
	if domain.IsKind(err, domain.NotFound) {
		return 0, domain.Errorf(domain.NotFound, "no hole named %q in project %d", name, projectID)
	}
	return h.ID, err
}

// ListHoles returns one page of the project's holes (read).
func (s *Service) ListHoles(ctx context.Context, projectID int64, pg domain.Page) (List[domain.Hole], error) {
	if _, _, err := s.project(ctx, s.store, projectID, domain.RoleRead); err != nil {
		return List[domain.Hole]{}, err
	}
	hs, err := s.store.ListHoles(ctx, projectID, pg)
	if err != nil {
		return List[domain.Hole]{}, err
	}
	return page(hs, pg, func(h domain.Hole) int64 { return h.ID }), nil
}

// UpdateHole replaces a hole's collar (admin).
func (s *Service) UpdateHole(ctx context.Context, projectID, holeID, ifVersion int64, h domain.Hole) (domain.Hole, error) {
	h.ProjectID, h.ID = projectID, holeID
	err := s.store.InTx(ctx, func(ctx context.Context, st domain.Store) error {
		p, a, err := s.project(ctx, st, projectID, domain.RoleAdmin)
		if err != nil {
			return err
		}
		h.AzimuthRef = orDefault(h.AzimuthRef, p.OutputAzimuthRef)
		if err := h.Normalize(); err != nil {
			return err
		}
		if err := checkHoleLocalGrid(p, &h); err != nil {
			return err
		}
		before, err := hole(ctx, st, projectID, holeID)
		if err != nil {
			return err
		}
		if err := checkFinalDepth(ctx, st, before, h.FinalDepth); err != nil {
			return err
		}
		h.CreatedAt = before.CreatedAt
		if err := st.UpdateHole(ctx, &h, ifVersion); err != nil {
			if domain.IsKind(err, domain.Conflict) {
				return domain.Errorf(domain.Conflict, "hole %q already exists in project %d", h.Name, projectID)
			}
			return err
		}
		return audit(ctx, st, a, projectID, "hole", holeID, domain.ActionUpdate, before, h)
	})
	return h, err
}

// DeleteHole deletes a hole with its survey, runs and measurements (admin).
func (s *Service) DeleteHole(ctx context.Context, projectID, holeID, ifVersion int64) error {
	return deleteAudited(ctx, s.store, domain.RoleAdmin, "hole", projectID, holeID, ifVersion, hole, domain.Store.DeleteHole)
}

// GetSurvey returns the hole's survey set (read); NotFound when it has none.
func (s *Service) GetSurvey(ctx context.Context, projectID, holeID int64) (domain.SurveySet, error) {
	if _, err := allow(ctx, projectID, domain.RoleRead); err != nil {
		return domain.SurveySet{}, err
	}
	if _, err := hole(ctx, s.store, projectID, holeID); err != nil {
		return domain.SurveySet{}, err
	}
	return s.store.GetSurvey(ctx, holeID)
}

// PutSurvey replaces the hole's whole survey set in one transaction (admin).
// An empty azimuth reference means the project's output reference.
// ifVersion is the version last seen, or 0 when the hole has no survey yet.
// The stations must lie within the hole's final depth.
func (s *Service) PutSurvey(ctx context.Context, projectID, holeID, ifVersion int64, ss domain.SurveySet) (domain.SurveySet, error) {
	ss.HoleID = holeID
	err := s.store.InTx(ctx, func(ctx context.Context, st domain.Store) error {
		p, a, err := s.project(ctx, st, projectID, domain.RoleAdmin)
		if err != nil {
			return err
		}
		ss.AzimuthRef = orDefault(ss.AzimuthRef, p.OutputAzimuthRef)
		if err := ss.Normalize(); err != nil {
			return err
		}
		h, err := hole(ctx, st, projectID, holeID)
		if err != nil {
			return err
		}
		if n := len(ss.Stations); n > 0 && ss.Stations[n-1].Depth > h.FinalDepth {
			return domain.FieldErr("stations["+strconv.Itoa(n-1)+"].depth", "station depth %v is past the final depth %v of hole %s",
				ss.Stations[n-1].Depth, h.FinalDepth, h.Name)
		}
		before, err := st.GetSurvey(ctx, holeID)
		if err != nil && !domain.IsKind(err, domain.NotFound) {
			return err
		}
		if err := st.PutSurvey(ctx, &ss, ifVersion); err != nil {
			return err
		}
		action, prev := domain.ActionUpdate, any(before)
		if ifVersion == 0 {
			action, prev = domain.ActionCreate, nil
		}
		return audit(ctx, st, a, projectID, "survey", holeID, action, prev, ss)
	})
	return ss, err
}

// CreateRun adds an orientation run to a hole (log).
func (s *Service) CreateRun(ctx context.Context, projectID, holeID int64, r domain.Run) (domain.Run, error) {
	r.HoleID = holeID
	if err := r.Normalize(); err != nil {
		return r, err
	}
	err := s.store.InTx(ctx, func(ctx context.Context, st domain.Store) error {
		a, err := allow(ctx, projectID, domain.RoleLog)
		if err != nil {
			return err
		}
		h, err := hole(ctx, st, projectID, holeID)
		if err != nil {
			return err
		}
		if err := checkRunInHole(r, h); err != nil {
			return err
		}
		if err := st.CreateRun(ctx, &r); err != nil {
			return err
		}
		return audit(ctx, st, a, projectID, "run", r.ID, domain.ActionCreate, nil, r)
	})
	return r, err
}

// run loads a run and checks it belongs to the project.
func run(ctx context.Context, st domain.Store, projectID, runID int64) (domain.Run, error) {
	r, err := st.GetRun(ctx, runID)
	if err != nil {
		return r, err
	}
	if _, err := hole(ctx, st, projectID, r.HoleID); err != nil {
		return domain.Run{}, domain.Errorf(domain.NotFound, "run %d not found in project %d", runID, projectID)
	}
	return r, nil
}

// GetRun returns a run (read).
func (s *Service) GetRun(ctx context.Context, projectID, runID int64) (domain.Run, error) {
	if _, err := allow(ctx, projectID, domain.RoleRead); err != nil {
		return domain.Run{}, err
	}
	return run(ctx, s.store, projectID, runID)
}

// ListRuns returns all of a hole's runs by depth (read).
func (s *Service) ListRuns(ctx context.Context, projectID, holeID int64) ([]domain.Run, error) {
	if _, err := allow(ctx, projectID, domain.RoleRead); err != nil {
		return nil, err
	}
	if _, err := hole(ctx, s.store, projectID, holeID); err != nil {
		return nil, err
	}
	return s.store.ListRuns(ctx, holeID)
}

// UpdateRun replaces a run's fields (log). The run stays on its hole.
func (s *Service) UpdateRun(ctx context.Context, projectID, runID, ifVersion int64, r domain.Run) (domain.Run, error) {
	err := s.store.InTx(ctx, func(ctx context.Context, st domain.Store) error {
		a, err := allow(ctx, projectID, domain.RoleLog)
		if err != nil {
			return err
		}
		before, err := run(ctx, st, projectID, runID)
		if err != nil {
			return err
		}
		r.ID, r.HoleID, r.CreatedAt = runID, before.HoleID, before.CreatedAt
		if err := r.Normalize(); err != nil {
			return err
		}
		h, err := st.GetHole(ctx, before.HoleID)
		if err != nil {
			return err
		}
		if err := checkRunInHole(r, h); err != nil {
			return err
		}
		if err := st.UpdateRun(ctx, &r, ifVersion); err != nil {
			return err
		}
		return audit(ctx, st, a, projectID, "run", runID, domain.ActionUpdate, before, r)
	})
	return r, err
}

// DeleteRun deletes a run (log).
func (s *Service) DeleteRun(ctx context.Context, projectID, runID, ifVersion int64) error {
	return deleteAudited(ctx, s.store, domain.RoleLog, "run", projectID, runID, ifVersion, run, domain.Store.DeleteRun)
}
