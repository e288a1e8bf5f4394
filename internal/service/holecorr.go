package service

import (
	"context"
	"time"

	"corvane/internal/domain"
	"corvane/internal/northref"
)

// HoleCorrections are the north-reference corrections the hole model applies
// to a hole's azimuths: the same values and source words as the derived
// values of its measurements and its path. They are computed on every read
// from the hole's current collar and survey set and the project's
// conventions, never stored, so they are never stale.
type HoleCorrections struct {
	// OutputAzimuthRef is the project's output reference, "grid" or "true".
	OutputAzimuthRef string `json:"output_azimuth_ref"`
	// CollarAzimuthRef is the reference of the collar azimuth.
	CollarAzimuthRef string `json:"collar_azimuth_ref"`
	// SurveyAzimuthRef is the survey set's reference, null when the hole has
	// no survey set; SurveyDate its date, null when none is recorded.
	SurveyAzimuthRef *string `json:"survey_azimuth_ref"`
	SurveyDate       *string `json:"survey_date"`
	// Declination applied to magnetic azimuths, degrees (true = magnetic +
	// D), null when no magnetic azimuth is involved; DeclinationSource is
	// "given" (a number sent with the survey set), "computed" (from the
	// magnetic model when the survey set was stored) or "project" (the
	// project's default), null when none applies.
	Declination       *float64 `json:"declination"`
	DeclinationSource *string  `json:"declination_source"`
	// GridConvergence used, degrees (grid = true - C); ConvergenceSource is
	// "computed" (from the collar's crs label and position) or "project".
	GridConvergence   float64 `json:"grid_convergence"`
	ConvergenceSource string  `json:"convergence_source"`
	// Cautions about the corrections: a collar near a magnetic pole, or a
	// magnetic survey whose declination could not be computed.
	Cautions []string `json:"cautions"`
}

// HoleView is a hole with its corrections (read-only, computed on read).
type HoleView struct {
	domain.Hole
	Corrections HoleCorrections `json:"corrections"`
}

// holeCorrectionsOf builds the corrections of h with survey set ss (nil when
// none) by the hole model's rules (holeCorrections).
func holeCorrectionsOf(c Conventions, h domain.Hole, ss *domain.SurveySet) HoleCorrections {
	gc, convSrc, decl, declSrc, href := holeCorrections(c, h, ss)
	hc := HoleCorrections{OutputAzimuthRef: c.OutputAzimuthRef, CollarAzimuthRef: href,
		GridConvergence: gc, ConvergenceSource: convSrc, Cautions: []string{}}
	if ss != nil {
		ref := ss.AzimuthRef
		hc.SurveyAzimuthRef = &ref
		if ss.SurveyDate != "" {
			d := ss.SurveyDate
			hc.SurveyDate = &d
		}
	}
	if declSrc == "" {
		return hc
	}
	hc.Declination, hc.DeclinationSource = &decl, &declSrc
	// Magnetic azimuths are involved: say when the collar is near a magnetic
	// pole, or why the declination could not be computed for it.
	var date time.Time
	if ss != nil && ss.SurveyDate != "" {
		date, _ = time.Parse(time.DateOnly, ss.SurveyDate)
	}
	r, err := northref.Corrections(h.CRS, h.East, h.North, h.Elevation, date, true, false)
	switch {
	case err == nil:
		if s := r.Caution(); s != "" {
			hc.Cautions = append(hc.Cautions, s)
		}
	case declSrc == "project":
		hc.Cautions = append(hc.Cautions, "magnetic azimuths use the project's default declination: it cannot be computed for this hole ("+err.Error()+")")
	}
	return hc
}

// holeViews attaches to each hole its corrections, reading each hole's
// survey set from st.
func holeViews(ctx context.Context, st domain.Store, p domain.Project, hs []domain.Hole) ([]HoleView, error) {
	c := ConventionsOf(p)
	out := make([]HoleView, len(hs))
	for i, h := range hs {
		ss, err := surveyOf(ctx, st, h.ID)
		if err != nil {
			return nil, err
		}
		out[i] = HoleView{Hole: h, Corrections: holeCorrectionsOf(c, h, ss)}
	}
	return out, nil
}

// GetHoleView returns a hole of the project with its corrections (read).
func (s *Service) GetHoleView(ctx context.Context, projectID, holeID int64) (HoleView, error) {
	p, _, err := s.project(ctx, s.store, projectID, domain.RoleRead)
	if err != nil {
		return HoleView{}, err
	}
	h, err := hole(ctx, s.store, projectID, holeID)
	if err != nil {
		return HoleView{}, err
	}
	vs, err := holeViews(ctx, s.store, p, []domain.Hole{h})
	if err != nil {
		return HoleView{}, err
	}
	return vs[0], nil
}

// ListHoleViews returns one page of the project's holes with their
// corrections (read).
func (s *Service) ListHoleViews(ctx context.Context, projectID int64, pg domain.Page) (List[HoleView], error) {
	p, _, err := s.project(ctx, s.store, projectID, domain.RoleRead)
	if err != nil {
		return List[HoleView]{}, err
	}
	hs, err := s.store.ListHoles(ctx, projectID, pg)
	if err != nil {
		return List[HoleView]{}, err
	}
	l := page(hs, pg, func(h domain.Hole) int64 { return h.ID })
	vs, err := holeViews(ctx, s.store, p, l.Items)
	if err != nil {
		return List[HoleView]{}, err
	}
	return List[HoleView]{Items: vs, Next: l.Next}, nil
}
