package service

import (
	"context"
	"encoding/json"
	"fmt"
	"slices"
	"strconv"
	"strings"

	"corvane/internal/convert"
	"corvane/internal/domain"
	"corvane/internal/holemodel"
)

// MaxConvertMeasurements bounds one stateless conversion request.
const MaxConvertMeasurements = 100000

// ConvertRequest is a whole small programme to convert without storing
// anything: conventions, collars, surveys and measurements.
type ConvertRequest struct {
	Conventions  Conventions          `json:"conventions"`
	Collars      []ConvertCollar      `json:"collars"`
	Surveys      []ConvertSurvey      `json:"surveys"`
	Measurements []ConvertMeasurement `json:"measurements"`
	// MonteCarlo runs the Monte Carlo of every measurement's region (as
	// corvane convert --monte-carlo); by default it runs only where first
	// order is known to be unreliable.
	MonteCarlo bool `json:"monte_carlo"`
}

// ConvertCollar is a hole's collar (dip negative down).
type ConvertCollar struct {
	HoleID     string  `json:"hole_id"`
	East       float64 `json:"easting"`
	North      float64 `json:"northing"`
	Elevation  float64 `json:"elevation"`
	Azimuth    float64 `json:"azimuth"`
	Dip        float64 `json:"dip"`
	FinalDepth float64 `json:"final_depth"`
	// AzimuthRef of the collar azimuth: true, grid or magnetic; default the
	// output reference.
	AzimuthRef string `json:"azimuth_ref"`
	// CRS labels the collar coordinates (e.g. EPSG:32750) so a magnetic
	// survey's declination and the grid convergence can be computed when
	// none is given.
	CRS string `json:"crs"`
	// Declination and GridConvergence given for the hole (null: not given);
	// SurveyDate the date of its survey (YYYY-MM-DD), as in the collars file.
	Declination     *float64 `json:"declination"`
	GridConvergence *float64 `json:"grid_convergence"`
	SurveyDate      string   `json:"survey_date"`
	// LocalGrid is the hole's own local grid (the form of
	// conventions.local_grid), null when none: it wins over the
	// conventions' for this hole, as a collars file's local_grid column.
	LocalGrid json.RawMessage `json:"local_grid,omitempty"`
}

// ConvertSurvey is a survey set of one hole: its survey set (no kind), or
// its set of a kind (gyro, magnetic, planned, other), at most one of each
// per hole, as the rows of a surveys file with a kind column. The set the
// hole is built from follows domain.UsedSurvey: the preferred one (at most
// one per hole), else the first kind of conventions.survey_priority the
// hole has, else its survey set, else its first kind.
type ConvertSurvey struct {
	HoleID      string           `json:"hole_id"`
	Kind        string           `json:"kind,omitempty"`
	Preferred   bool             `json:"preferred,omitempty"`
	AzimuthRef  string           `json:"azimuth_ref"` // true, grid or magnetic; default the output reference
	Declination *float64         `json:"declination"` // given with the set: wins over the hole's and the conventions' declination
	SurveyDate  string           `json:"survey_date"` // YYYY-MM-DD; with the collar's crs gives a magnetic survey its declination
	Instrument  string           `json:"instrument"`  // magnetic, gyro or unknown (default), for the uncertainty
	Stations    []domain.Station `json:"stations"`
}

// ConvertMeasurement is one core-angle measurement.
type ConvertMeasurement struct {
	HoleID            string   `json:"hole_id"`
	Depth             float64  `json:"depth"`
	Alpha             float64  `json:"alpha"`
	Beta              *float64 `json:"beta"` // null or absent: unoriented
	Gamma             *float64 `json:"gamma"`
	Type              string   `json:"type"`
	ApparentThickness *float64 `json:"apparent_thickness"`
	// RunConfidence and RunMismatch describe the orientation run holding
	// the measurement (good, fair, poor or none; 0..180 degrees), as the
	// structures file's run_confidence and run_mismatch columns: they set
	// the mark's error of the uncertainty and the run's warning. Absent:
	// no run is known (an unrated mark).
	RunConfidence string   `json:"run_confidence"`
	RunMismatch   *float64 `json:"run_mismatch"`
}

// ConvertResult is one converted measurement, in request order.
type ConvertResult struct {
	HoleID  string  `json:"hole_id"`
	Depth   float64 `json:"depth"`
	Type    string  `json:"type"`
	Derived Derived `json:"derived"`
}

// ConvertResponse holds the results in request order; Conventions echoes the
// conventions used, defaults filled in.
type ConvertResponse struct {
	Conventions Conventions     `json:"conventions"`
	Results     []ConvertResult `json:"results"`
}

// Convert converts measurements without storing anything, with the hole
// model every other door uses. Any authenticated caller may use it. Collars
// and surveys must be valid as a whole (Invalid, naming the field, e.g.
// "collars[2].dip"); a problem of one hole (a station past its final depth,
// a correction it needs and cannot have) is an error on that hole's
// measurements, and a measurement that cannot be converted (unknown hole,
// depth past the end, angle out of range) gets its own Derived.Error; the
// others are still converted. An azimuth without azimuth_ref is in the
// output reference, as in the CSV files. What Derived reports as applied is
// what was applied.
func (s *Service) Convert(ctx context.Context, req ConvertRequest) (ConvertResponse, error) {
	var resp ConvertResponse
	if err := Authenticated(ctx); err != nil {
		return resp, err
	}
	if len(req.Measurements) > MaxConvertMeasurements {
		return resp, domain.FieldErr("measurements", "at most %d measurements per request, got %d", MaxConvertMeasurements, len(req.Measurements))
	}
	c := req.Conventions
	if err := c.normalize(); err != nil {
		return resp, prefixField(err, "conventions.")
	}
	resp.Conventions = c
	// A hole's sets by kind ("" for its survey set) and its preferred kind.
	type holeSets struct {
		sets      map[string]*domain.SurveySet
		preferred string
	}
	surveys := map[string]*holeSets{}
	for i, sv := range req.Surveys {
		at := "surveys[" + strconv.Itoa(i) + "]."
		ss := domain.SurveySet{AzimuthRef: absentRef(sv.AzimuthRef, c.OutputAzimuthRef), Declination: sv.Declination, SurveyDate: sv.SurveyDate, Instrument: sv.Instrument, Stations: sv.Stations}
		if err := ss.Normalize(); err != nil {
			return resp, prefixField(err, at)
		}
		ss.AzimuthRef = localRef(sv.AzimuthRef, ss.AzimuthRef, c.OutputAzimuthRef)
		kind := strings.ToLower(strings.TrimSpace(sv.Kind))
		if kind != "" && !slices.Contains(domain.SurveyKinds, kind) {
			return resp, domain.FieldErr(at+"kind", "kind %q is not one of %s (or empty for the hole's survey set)", sv.Kind, strings.Join(domain.SurveyKinds, ", "))
		}
		hs := surveys[sv.HoleID]
		if hs == nil {
			hs = &holeSets{sets: map[string]*domain.SurveySet{}}
			surveys[sv.HoleID] = hs
		}
		if _, dup := hs.sets[kind]; dup {
			if kind == "" {
				return resp, domain.FieldErr(at+"hole_id", "a second survey for hole %q", sv.HoleID)
			}
			return resp, domain.FieldErr(at+"kind", "a second %s survey set for hole %q", kind, sv.HoleID)
		}
		if sv.Preferred {
			switch {
			case kind == "":
				return resp, domain.FieldErr(at+"preferred", "the survey set of hole %q has no kind and cannot be preferred", sv.HoleID)
			case hs.preferred != "":
				return resp, domain.FieldErr(at+"preferred", "hole %q has two preferred survey sets: %s and %s", sv.HoleID, hs.preferred, kind)
			}
			hs.preferred = kind
		}
		hs.sets[kind] = &ss
	}
	models := map[string]*holeModel{}
	ms := perMeasurement.Fork()
	if req.MonteCarlo {
		ms = convert.NewMeasurer(true)
	}
	for i, cl := range req.Collars {
		h := domain.Hole{Name: cl.HoleID, East: cl.East, North: cl.North, Elevation: cl.Elevation,
			Azimuth: cl.Azimuth, AzimuthRef: absentRef(cl.AzimuthRef, c.OutputAzimuthRef), Dip: cl.Dip, FinalDepth: cl.FinalDepth, CRS: cl.CRS,
			Declination: cl.Declination, GridConvergence: cl.GridConvergence, SurveyDate: cl.SurveyDate, LocalGrid: cl.LocalGrid}
		if err := h.Normalize(); err != nil {
			return resp, prefixField(err, "collars["+strconv.Itoa(i)+"].")
		}
		if err := checkHoleLocalGrid(domain.Project{LengthUnit: c.LengthUnit}, &h); err != nil {
			return resp, prefixField(err, "collars["+strconv.Itoa(i)+"].")
		}
		h.AzimuthRef = localRef(cl.AzimuthRef, h.AzimuthRef, c.OutputAzimuthRef)
		if _, dup := models[h.Name]; dup {
			return resp, domain.FieldErr("collars["+strconv.Itoa(i)+"].hole_id", "hole %q appears twice", h.Name)
		}
		var ss *domain.SurveySet
		set := ""
		if hs := surveys[h.Name]; hs != nil {
			var kinds []string
			for _, k := range domain.SurveyKinds {
				if hs.sets[k] != nil {
					kinds = append(kinds, k)
				}
			}
			set = domain.UsedSurvey(kinds, hs.preferred, c.SurveyPriority, hs.sets[""] != nil)
			if set == SetSurvey {
				ss = hs.sets[""]
			} else {
				ss = hs.sets[set]
			}
		}
		models[h.Name] = newHoleModel(c, h, ss, set, nil)
		models[h.Name].ms = ms
	}
	for id := range surveys {
		if models[id] == nil {
			return resp, domain.FieldErr("surveys", "survey for hole %q, which is not in the collars", id)
		}
	}
	resp.Results = make([]ConvertResult, len(req.Measurements))
	for i, m := range req.Measurements {
		if i%1024 == 0 && ctx.Err() != nil {
			return ConvertResponse{}, ctx.Err()
		}
		r := ConvertResult{HoleID: m.HoleID, Depth: m.Depth, Type: m.Type}
		dm := domain.Measurement{Depth: m.Depth, Alpha: m.Alpha, Beta: m.Beta, Gamma: m.Gamma, ApparentThickness: m.ApparentThickness, TypeCode: "x"}
		hm := models[m.HoleID]
		switch err := dm.Normalize(); {
		case hm == nil:
			r.Derived = Derived{AzimuthRef: c.OutputAzimuthRef, Warnings: []string{}, Error: fmt.Sprintf("unknown hole %q (not in the collars)", m.HoleID)}
		case err != nil:
			r.Derived = Derived{AzimuthRef: c.OutputAzimuthRef, Warnings: []string{}, Error: err.Error()}
		default:
			// The run as the request describes it: one run covering the
			// measurement, so the hole model's run rules apply as at the
			// store's doors.
			hm.runs = hm.runs[:0]
			if m.RunConfidence != "" || m.RunMismatch != nil {
				run := domain.Run{HoleID: 1, From: dm.Depth, To: dm.Depth + 1, Confidence: strings.ToLower(m.RunConfidence), Mismatch: m.RunMismatch}
				if err := run.Normalize(); err != nil {
					r.Derived = Derived{AzimuthRef: c.OutputAzimuthRef, Warnings: []string{}, Error: prefixField(err, "measurements["+strconv.Itoa(i)+"].run_").Error()}
					break
				}
				run.Confidence = strings.ToLower(m.RunConfidence) // a mismatch alone: an unrated run, as in the files
				hm.runs = append(hm.runs, run)
			}
			r.Derived = hm.derive(dm.Depth, dm.Alpha, dm.Beta, dm.Gamma, dm.ApparentThickness)
			r.Derived.RunFrom = nil // the request names no run start
		}
		resp.Results[i] = r
	}
	return resp, nil
}

// absentRef is the reference of a request's azimuth given as ref: an
// absent one is the output reference, as in the files; with output in the
// local grid it is checked as grid (see localRef).
func absentRef(ref, out string) string {
	if out == holemodel.Local {
		out = domain.AzimuthGrid
	}
	return orDefault(ref, out)
}

// localRef gives the hole model an azimuth that was given without a
// reference ("", the output reference) as "" when the output is the local
// grid: a local-grid azimuth, which no stored hole or set can name.
func localRef(given, checked, out string) string {
	if given == "" && out == holemodel.Local {
		return ""
	}
	return checked
}

// prefixField prefixes the field of an Invalid *domain.Error.
func prefixField(err error, prefix string) error {
	if e, ok := err.(*domain.Error); ok {
		c := *e
		c.Loc.Field = prefix + c.Loc.Field
		c.Msg = prefix + c.Msg
		return &c
	}
	return err
}
