package service

import (
	"context"
	"strconv"

	"corvane/internal/domain"
)

// MaxPreviewMeasurements bounds one preview request.
const MaxPreviewMeasurements = 1000

// PreviewMeasurement is an unsaved core-angle measurement on a stored hole.
type PreviewMeasurement struct {
	Depth             float64  `json:"depth"`
	Alpha             float64  `json:"alpha"`
	Beta              *float64 `json:"beta"` // null or absent: unoriented
	Gamma             *float64 `json:"gamma"`
	ApparentThickness *float64 `json:"apparent_thickness"`
}

// PreviewRequest holds the unsaved measurements to orient.
type PreviewRequest struct {
	Measurements []PreviewMeasurement `json:"measurements"`
}

// PreviewResult is the derived values of one unsaved measurement, in
// request order.
type PreviewResult struct {
	Depth   float64 `json:"depth"`
	Derived Derived `json:"derived"`
}

// Preview orients unsaved measurements against the stored hole (read):
// the hole model, corrections, runs and conventions are exactly those of
// the derived values of a saved measurement at the same depth, and nothing
// is written. A measurement whose angles are out of range, or whose depth
// is outside the hole, gets its own Derived.Error.
func (s *Service) Preview(ctx context.Context, projectID, holeID int64, req PreviewRequest) ([]PreviewResult, error) {
	if len(req.Measurements) > MaxPreviewMeasurements {
		return nil, domain.FieldErr("measurements", "at most %d measurements per preview, got %d", MaxPreviewMeasurements, len(req.Measurements))
	}
	p, _, err := s.project(ctx, s.store, projectID, domain.RoleRead)
	if err != nil {
		return nil, err
	}
	if _, err := hole(ctx, s.store, projectID, holeID); err != nil {
		return nil, err
	}
	m, err := s.deriver(s.store, p).model(ctx, holeID)
	if err != nil {
		return nil, err
	}
	out := make([]PreviewResult, len(req.Measurements))
	for i, pm := range req.Measurements {
		dm := domain.Measurement{Depth: pm.Depth, Alpha: pm.Alpha, Beta: pm.Beta, Gamma: pm.Gamma, ApparentThickness: pm.ApparentThickness, TypeCode: "x"}
		if err := dm.Normalize(); err != nil {
			return nil, prefixField(err, "measurements["+strconv.Itoa(i)+"].")
		}
		out[i] = PreviewResult{Depth: dm.Depth, Derived: m.derive(dm.Depth, dm.Alpha, dm.Beta, dm.Gamma, dm.ApparentThickness)}
	}
	return out, nil
}
