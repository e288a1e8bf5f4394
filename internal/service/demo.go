package service

import (
	"context"
	"math"
	"time"

	"corvane/internal/demo"
	"corvane/internal/domain"
)

// LoadDemo loads the fictional demonstration programme of package demo
// (collars, magnetic surveys, orientation runs, structure measurements) as a
// new project, in one transaction, as the caller (site admin). When a project
// of that name already exists it is returned unchanged and loaded is false.
//
// Each hole's grid convergence is computed from its collar on every read;
// the project's default (used only for collars that cannot be placed) is
// set to their mean. Each survey set's declination is computed for its
// collar and survey date.
func (s *Service) LoadDemo(ctx context.Context) (p domain.Project, loaded bool, err error) {
	a, err := allow(ctx, domain.AllProjects, domain.RoleAdmin)
	if err != nil {
		return p, false, err
	}
	if a.ProjectID != domain.AllProjects {
		return p, false, domain.Errorf(domain.Forbidden, "only a site token may load the demo")
	}
	d := demo.Programme()
	if p, err := s.store.GetProjectByName(ctx, d.Name); err == nil {
		return p, false, nil
	} else if !domain.IsKind(err, domain.NotFound) {
		return p, false, err
	}
	p = domain.Project{Name: d.Name, Description: d.Description, RefLine: d.RefLine, BetaApex: d.BetaApex,
		GammaSense: d.GammaSense, LengthUnit: d.LengthUnit, OutputAzimuthRef: d.OutputReference, PersistentFabric: d.PersistentFabric}
	holes := make([]domain.Hole, len(d.Collars))
	for i, c := range d.Collars {
		holes[i] = domain.Hole{Name: c.HoleID, East: c.East, North: c.North, Elevation: c.Elevation, Azimuth: c.Azimuth,
			AzimuthRef: c.AzimuthRef, Dip: c.Dip, FinalDepth: c.Depth, CRS: c.CRS}
	}
	if err := p.Normalize(); err != nil {
		return p, false, err
	}
	err = s.store.InTx(ctx, func(ctx context.Context, st domain.Store) error {
		if err := st.CreateProject(ctx, &p); err != nil {
			return err
		}
		types := map[string]domain.TypeCode{}
		for _, m := range d.Structures {
			if _, ok := types[m.Type]; !ok {
				tc := domain.TypeCode{ProjectID: p.ID, Code: m.Type, Description: m.Type, Kind: demo.Kind(m.Type)}
				if err := tc.Normalize(); err != nil {
					return err
				}
				if err := st.PutTypeCode(ctx, tc); err != nil {
					return err
				}
				types[m.Type] = tc
			}
		}
		byName := map[string]*domain.Hole{}
		for i := range holes {
			h := &holes[i]
			h.ProjectID = p.ID
			if err := h.Normalize(); err != nil {
				return err
			}
			if err := st.CreateHole(ctx, h); err != nil {
				return err
			}
			byName[h.Name] = h
		}
		sets := map[string]*domain.SurveySet{}
		var order []string
		logged := map[string]time.Time{}
		for _, sv := range d.Surveys {
			ss := sets[sv.HoleID]
			if ss == nil {
				ss = &domain.SurveySet{HoleID: byName[sv.HoleID].ID, AzimuthRef: sv.AzimuthRef, SurveyDate: sv.Date}
				sets[sv.HoleID] = ss
				order = append(order, sv.HoleID)
				if t, err := time.Parse(time.DateOnly, sv.Date); err == nil {
					logged[sv.HoleID] = t.Add(14 * time.Hour)
				}
			}
			ss.Stations = append(ss.Stations, domain.Station{Depth: sv.Depth, Azimuth: sv.Azimuth, Dip: sv.Dip})
		}
		for _, id := range order {
			ss := sets[id]
			if err := ss.Normalize(); err != nil {
				return err
			}
			if err := st.PutSurvey(ctx, ss, 0); err != nil {
				return err
			}
		}
		for _, r := range d.Runs {
			run := domain.Run{HoleID: byName[r.HoleID].ID, From: r.From, To: r.To, Confidence: r.Confidence}
			if !math.IsNaN(r.Mismatch) {
				mm := r.Mismatch
				run.Mismatch = &mm
			}
			if err := run.Normalize(); err != nil {
				return err
			}
			if err := st.CreateRun(ctx, &run); err != nil {
				return err
			}
		}
		ms := make([]domain.Measurement, 0, len(d.Structures))
		for _, m := range d.Structures {
			dm := domain.Measurement{ProjectID: p.ID, HoleID: byName[m.HoleID].ID, Depth: m.Depth, Alpha: m.Alpha, Beta: &m.Beta,
				TypeCode: m.Type, Comment: m.Comment, LoggedBy: m.LoggedBy, LoggedAt: logged[m.HoleID]}
			if !math.IsNaN(m.Gamma) {
				g := m.Gamma
				dm.Gamma = &g
			}
			if !math.IsNaN(m.ApparentThk) {
				th := m.ApparentThk
				dm.ApparentThickness = &th
			}
			if err := dm.Normalize(); err != nil {
				return err
			}
			if err := domain.CheckKind(dm, types[m.Type]); err != nil {
				return err
			}
			ms = append(ms, dm)
		}
		if _, err := st.CreateMeasurements(ctx, ms); err != nil {
			return err
		}
		return audit(ctx, st, a, p.ID, "import", "demo", domain.ActionCreate, nil,
			map[string]int{"holes": len(holes), "runs": len(d.Runs), "measurements": len(ms)})
	})
	if err != nil {
		return domain.Project{}, false, err
	}
	return p, true, nil
}
