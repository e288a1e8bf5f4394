package service

import (
	"time"

	"corvane/internal/domain"
	"corvane/internal/northref"
)

// fillDeclination gives a magnetic survey set without a declination of its
// own the declination the magnetic model computes for the hole's collar
// (its crs label, easting, northing, elevation) on the survey date. It
// changes nothing when the set is not magnetic, already has a declination,
// or the collar cannot be placed or the date is missing: the project's
// default declination then applies. The stored value is an input correction
// the caller can see and override, not a derived result.
//
// It also records where the set's declination came from, whatever a client
// sent as its source: "given" for a number sent with the set, "computed"
// for one the model supplied here, "" when the set has none.
func fillDeclination(ss *domain.SurveySet, h domain.Hole) {
	ss.DeclinationSource = ""
	if ss.Declination != nil {
		ss.DeclinationSource = domain.SourceGiven
	}
	if ss.AzimuthRef != domain.AzimuthMagnetic || ss.Declination != nil || h.CRS == "" || ss.SurveyDate == "" {
		return
	}
	date, err := time.Parse(time.DateOnly, ss.SurveyDate)
	if err != nil {
		return
	}
	r, err := northref.Corrections(h.CRS, h.East, h.North, h.Elevation, date, true, false)
	if err != nil || !r.HasDeclination {
		return
	}
	d := r.Declination
	ss.Declination, ss.DeclinationSource = &d, domain.SourceComputed
}

// convergenceAt returns the grid convergence at a collar, ok false when the
// collar cannot be placed.
func convergenceAt(h domain.Hole) (float64, bool) {
	r, err := northref.Corrections(h.CRS, h.East, h.North, h.Elevation, time.Time{}, false, true)
	if err != nil || !r.HasConvergence {
		return 0, false
	}
	return r.Convergence, true
}
