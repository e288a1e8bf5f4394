package service

import (
	"context"
	"strconv"

	"corvane/internal/domain"
)

// SetSurvey names the hole's survey set (the survey route's single set) in
// derived values; a set by kind is named by its kind.
const SetSurvey = domain.SurveyOfHole

// KindSets is a hole's survey sets by kind and the set its derived values
// use ("survey", a kind, or "" when the hole has no survey at all).
type KindSets struct {
	Sets []domain.KindSet `json:"sets"`
	Used string           `json:"used"`
	// UsedBecause is the step of the rule that chose Used
	// (domain.UsedSurveyWhy): preferred, priority, survey-set or
	// kind-order; "" with no survey.
	UsedBecause string `json:"used_because"`
}

// usedSurvey returns the survey a hole's derived values, path and
// corrections are built from and its name, by the rule of
// [domain.UsedSurvey]; nil and "" when the hole has no survey at all. sets are the hole's
// sets by kind, as read.
func usedSurvey(ctx context.Context, st domain.Store, holeID int64, priority string) (*domain.SurveySet, string, []domain.KindSet, error) {
	ss, used, _, sets, err := usedSurveyWhy(ctx, st, holeID, priority)
	return ss, used, sets, err
}

// usedSurveyWhy is usedSurvey with the step of the rule that chose
// (domain.UsedSurveyWhy).
func usedSurveyWhy(ctx context.Context, st domain.Store, holeID int64, priority string) (*domain.SurveySet, string, string, []domain.KindSet, error) {
	sets, err := st.ListKindSets(ctx, holeID)
	if err != nil {
		return nil, "", "", nil, err
	}
	ss, err := st.GetSurvey(ctx, holeID)
	if err != nil && !domain.IsKind(err, domain.NotFound) {
		return nil, "", "", nil, err
	}
	kinds, preferred := make([]string, len(sets)), ""
	for i, k := range sets {
		kinds[i] = k.Kind
		if k.Preferred {
			preferred = k.Kind
		}
	}
	used, why := domain.UsedSurveyWhy(kinds, preferred, priority, err == nil)
	switch used {
	case "":
		return nil, "", "", sets, nil
	case SetSurvey:
		return &ss, used, why, sets, nil
	}
	for _, k := range sets {
		if k.Kind == used {
			ks := k.Survey()
			return &ks, used, why, sets, nil
		}
	}
	return nil, "", "", sets, nil
}

// ListKindSets returns the hole's survey sets by kind and the set in use
// (read).
func (s *Service) ListKindSets(ctx context.Context, projectID, holeID int64) (KindSets, error) {
	p, _, err := s.project(ctx, s.store, projectID, domain.RoleRead)
	if err != nil {
		return KindSets{}, err
	}
	if _, err := hole(ctx, s.store, projectID, holeID); err != nil {
		return KindSets{}, err
	}
	_, used, why, sets, err := usedSurveyWhy(ctx, s.store, holeID, p.SurveyPriority)
	if err != nil {
		return KindSets{}, err
	}
	return KindSets{Sets: sets, Used: used, UsedBecause: why}, nil
}

// PutKindSet replaces the hole's survey set of a kind whole (admin), as
// PutSurvey does for the hole's survey set: an empty azimuth reference is
// the project's output reference, ifVersion 0 creates, stations lie within
// the final depth. Setting it preferred makes the hole's other sets not.
func (s *Service) PutKindSet(ctx context.Context, projectID, holeID int64, kind string, ifVersion int64, k domain.KindSet) (domain.KindSet, error) {
	k.HoleID, k.Kind = holeID, kind
	err := s.store.InTx(ctx, func(ctx context.Context, st domain.Store) error {
		p, a, err := s.project(ctx, st, projectID, domain.RoleAdmin)
		if err != nil {
			return err
		}
		k.AzimuthRef = orDefault(k.AzimuthRef, p.OutputAzimuthRef)
		if err := k.Normalize(); err != nil {
			return err
		}
		h, err := hole(ctx, st, projectID, holeID)
		if err != nil {
			return err
		}
		if n := len(k.Stations); n > 0 && k.Stations[n-1].Depth > h.FinalDepth {
			return domain.FieldErr("stations["+strconv.Itoa(n-1)+"].depth", "station depth %v is past the final depth %v of hole %s",
				k.Stations[n-1].Depth, h.FinalDepth, h.Name)
		}
		if err := st.PutKindSet(ctx, &k, ifVersion); err != nil {
			return err
		}
		action := domain.ActionUpdate
		if ifVersion == 0 {
			action = domain.ActionCreate
		}
		return audit(ctx, st, a, projectID, "survey "+k.Kind, holeID, action, nil, k)
	})
	return k, err
}

// DeleteKindSet removes the hole's survey set of a kind (admin).
func (s *Service) DeleteKindSet(ctx context.Context, projectID, holeID int64, kind string, ifVersion int64) error {
	return s.store.InTx(ctx, func(ctx context.Context, st domain.Store) error {
		_, a, err := s.project(ctx, st, projectID, domain.RoleAdmin)
		if err != nil {
			return err
		}
		if _, err := hole(ctx, st, projectID, holeID); err != nil {
			return err
		}
		k := domain.KindSet{Kind: kind, AzimuthRef: domain.AzimuthTrue}
		if err := k.Normalize(); err != nil {
			return err
		}
		if err := st.DeleteKindSet(ctx, holeID, k.Kind, ifVersion); err != nil {
			return err
		}
		return audit(ctx, st, a, projectID, "survey "+k.Kind, holeID, domain.ActionDelete, nil, nil)
	})
}
