package service

import (
	"context"

	"corvane/internal/domain"
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
	// D), null when none is applied; DeclinationSource is "given" (sent with
	// the survey set or the hole), "project" (the project's default),
	// "computed" (from the magnetic model at the collar on the survey date),
	// null when none applies.
	Declination       *float64 `json:"declination"`
	DeclinationSource *string  `json:"declination_source"`
	// GridConvergence applied, degrees (grid = true - C), null when none is
	// applied; ConvergenceSource is "given", "project", "computed" or "none".
	GridConvergence   *float64 `json:"grid_convergence"`
	ConvergenceSource string   `json:"convergence_source"`
	// SurveySet names the survey the corrections apply to (see
	// Derived.SurveySet), absent when the hole has none.
	SurveySet string `json:"survey_set,omitempty"`
	// Cautions about the corrections, e.g. a collar near a magnetic pole.
	Cautions []string `json:"cautions"`
	// Error is the hole's problem (a correction it needs and cannot have, a
	// survey the path cannot be built from); every derived value of the hole
	// carries it. Empty when none.
	Error string `json:"error,omitempty"`
}

// HoleView is a hole with its corrections (read-only, computed on read).
type HoleView struct {
	domain.Hole
	Corrections HoleCorrections `json:"corrections"`
}

// corrections returns what the hole model applies to the hole.
func (m *holeModel) corrections() HoleCorrections {
	hc := HoleCorrections{OutputAzimuthRef: m.Output, CollarAzimuthRef: m.hole.AzimuthRef, SurveySet: m.set,
		GridConvergence: opt(m.Convergence.Value), ConvergenceSource: string(m.Convergence.Source), Cautions: append([]string{}, m.Cautions...)}
	if hc.CollarAzimuthRef == "" {
		hc.CollarAzimuthRef = m.Output
	}
	if ss := m.survey; ss != nil {
		ref := ss.AzimuthRef
		hc.SurveyAzimuthRef = &ref
		if ss.SurveyDate != "" {
			d := ss.SurveyDate
			hc.SurveyDate = &d
		}
	}
	if d := m.Declination(0); d.Source != "none" {
		src := string(d.Source)
		hc.Declination, hc.DeclinationSource = opt(d.Value), &src
	}
	if m.Err != nil {
		hc.Error = m.Err.Msg
	}
	return hc
}

// holeViews attaches to each hole its corrections, reading each hole's
// survey set from st.
func holeViews(ctx context.Context, st domain.Store, p domain.Project, hs []domain.Hole) ([]HoleView, error) {
	c := ConventionsOf(p)
	out := make([]HoleView, len(hs))
	for i, h := range hs {
		ss, set, _, err := usedSurvey(ctx, st, h.ID, p.SurveyPriority)
		if err != nil {
			return nil, err
		}
		m := newHoleModel(c, h, ss, set, nil)
		out[i] = HoleView{Hole: h, Corrections: m.corrections()}
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
