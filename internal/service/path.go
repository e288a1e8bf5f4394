package service

import (
	"context"
	"math"
	"sort"

	"corvane/internal/domain"
)

// Path step bounds (in the project's length unit) and the default step.
const (
	MinPathStep     = 0.5
	MaxPathStep     = 100
	DefaultPathStep = 5
	// MaxPathPoints bounds the regular points of one path; a longer hole
	// needs a larger step.
	MaxPathPoints = 100000
)

// PathPoint is one point of a desurveyed hole path. Azimuths are relative to
// the project's output azimuth reference, with the same declination and grid
// convergence as the derived values of measurements.
type PathPoint struct {
	Depth     float64 `json:"depth"`
	East      float64 `json:"easting"`
	North     float64 `json:"northing"`
	Elevation float64 `json:"elevation"`
	// Azimuth and Dip are the hole direction at the depth (dip negative down).
	Azimuth float64 `json:"azimuth"`
	Dip     float64 `json:"dip"`
	// Extrapolated is true below the last survey station.
	Extrapolated bool `json:"extrapolated"`
	// DoglegSeverity is the dogleg severity (degrees per 30 m, or per 100 ft
	// in a project in feet) of the survey interval the point lies in (a point
	// at a station belongs to the interval below it; the last station closes
	// the last interval); null below the last station, where the path runs
	// straight on.
	DoglegSeverity *float64 `json:"dogleg_severity"`
}

// HolePath returns the hole's desurveyed path (read): points every step from
// the collar to the final depth, plus one at every survey station and at the
// final depth, in depth order. A step of 0 means DefaultPathStep; otherwise it
// must lie within MinPathStep..MaxPathStep. The path is built from the store's
// current collar and survey on every call, by the hole model the derived
// values use, so it is never stale. The hole's corrections come back with it,
// from the same read of the collar and survey set as the path. output is
// the north of the path's azimuths and coordinates when not the project's
// (grid, true or local, as the measurements' output_reference; "" is the
// project's).
func (s *Service) HolePath(ctx context.Context, projectID, holeID int64, step float64, output string) ([]PathPoint, HoleCorrections, error) {
	pts, m, err := s.holePath(ctx, projectID, holeID, step, output)
	if err != nil {
		return nil, HoleCorrections{}, err
	}
	return pts, m.corrections(), nil
}

func (s *Service) holePath(ctx context.Context, projectID, holeID int64, step float64, output string) ([]PathPoint, *holeModel, error) {
	if step == 0 {
		step = DefaultPathStep
	}
	if math.IsNaN(step) || step < MinPathStep || step > MaxPathStep {
		return nil, nil, domain.FieldErr("step", "step %v is out of range; want %v to %v", step, MinPathStep, MaxPathStep)
	}
	p, _, err := s.project(ctx, s.store, projectID, domain.RoleRead)
	if err != nil {
		return nil, nil, err
	}
	if err := (MeasurementQuery{Output: output}).withOutput(&p); err != nil {
		return nil, nil, err
	}
	if _, err := hole(ctx, s.store, projectID, holeID); err != nil {
		return nil, nil, err
	}
	m, err := s.deriver(s.store, p).model(ctx, holeID)
	if err != nil {
		return nil, nil, err
	}
	if m.Err != nil {
		return nil, nil, domain.Errorf(domain.Invalid, "%s", m.Err.Msg)
	}
	final := m.Path.Depth()
	if final/step > MaxPathPoints {
		return nil, nil, domain.FieldErr("step", "step %v gives more than %d points over the %v of hole %s; use a larger step", step, MaxPathPoints, final, m.name)
	}
	ivs := m.Path.Intervals()
	depths := make([]float64, 0, int(final/step)+len(ivs)+2)
	for i := 0; ; i++ {
		d := float64(i) * step
		if d >= final {
			break
		}
		depths = append(depths, d)
	}
	depths = append(depths, final)
	for _, iv := range ivs {
		depths = append(depths, iv.From, iv.To)
	}
	sort.Float64s(depths)
	out := make([]PathPoint, 0, len(depths))
	last := math.Inf(-1)
	iv := 0
	for _, d := range depths {
		if d == last || d > final {
			continue
		}
		last = d
		pt, err := m.Path.At(d)
		if err != nil {
			return nil, nil, domain.Errorf(domain.Invalid, "hole %s at depth %v: %v", m.name, d, err)
		}
		az, dip := pt.Dir.AzimuthDip()
		if !math.IsNaN(az) {
			az = m.OutputAzimuth(az) // the path is in the projected grid for output local
		}
		e, n := m.OutputXY(pt.Pos.X, pt.Pos.Y)
		pp := PathPoint{Depth: d, East: e, North: n, Elevation: pt.Pos.Z, Azimuth: az, Dip: dip, Extrapolated: pt.Extrapolated}
		// The interval a point lies in: the one with From <= d < To; a point
		// at the last station closes the last interval. Depths ascend, so
		// the interval index only moves forward.
		for iv < len(ivs) && d >= ivs[iv].To && !(iv == len(ivs)-1 && d == ivs[iv].To) {
			iv++
		}
		if iv < len(ivs) && d >= ivs[iv].From {
			sev := ivs[iv].Severity
			pp.DoglegSeverity = &sev
		}
		if math.IsNaN(pp.Azimuth) {
			pp.Azimuth = 0 // vertical hole: azimuth undefined, report 0
		}
		out = append(out, pp)
	}
	return out, m, nil
}
