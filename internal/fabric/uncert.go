package fabric

import (
	"fmt"
	"math"
	"strconv"

	"corvane/internal/coreangle"
	"corvane/internal/uncertainty"
)

// Errors are what the set statistics need to carry a row's measurement
// errors into its set's cone: the standard errors of its sources and the
// keys of the errors it shares. Build them with [RowErrors].
type Errors struct {
	Sigma uncertainty.Sigmas
	// HoleID keys the survey error: every measurement of a hole shares one
	// survey azimuth and dip error in the set statistics ("" is an error of
	// the row's own).
	HoleID string
	// RunFrom, with HoleID, keys the mark error: measurements of a hole
	// with the same run start share one; NaN (no run known) is an error of
	// the row's own.
	RunFrom float64
}

// RowErrors returns a row's errors under the error model em: the survey
// instrument of its hole (any text uncertainty.ParseInstrument reads; an
// unreadable one is unknown), the rating, logged mismatch (NaN: none) and
// start depth (NaN: no run known) of the orientation run holding it. Every
// door builds its rows' errors here.
func RowErrors(em uncertainty.Model, holeID, instrument, confidence string, mismatch, runFrom float64) *Errors {
	k, err := uncertainty.ParseInstrument(instrument)
	if err != nil {
		k = uncertainty.UnknownSurvey
	}
	return &Errors{Sigma: em.Sigmas(k, confidence, mismatch, 0), HoleID: holeID, RunFrom: runFrom}
}

// Set uncertainty settings: the Monte Carlo trials of each set and their
// seed (fixed, so every door gives the same figures), and the poles one
// report may carry through them in all (sets in report order: all, then
// each set), which bounds its time to a few seconds of CPU (about a quarter
// of a microsecond per pole and trial); a set past the budget says so.
const (
	SetDraws            = 1000
	SetSeed             = 12
	MaxUncertaintyPoles = 5000 // poles and lines
)

// SetUncertaintyMethod describes the measurement uncertainty of the sets.
const SetUncertaintyMethod = "Monte Carlo over each set's poles or lines (uncertainty.SetMean, SetMeanLines): per trial, alpha and beta " +
	"readings drawn per measurement, one mark error per orientation run (measurements of a hole with the same " +
	"run_from) and one survey azimuth and dip error per hole, shared by their measurements; the errors of the " +
	"error model below, by the row's survey_instrument, run_confidence and run_mismatch. measurement_cone95: the " +
	"95% cone of the mean moved by the measurement errors; fisher_cone95: the classical exact cone of Fisher (1953) " +
	"from the scatter; combined_cone95: both, without counting twice what the scatter already shows; dominant says " +
	"which of fisher_cone95 and measurement_cone95 is larger. Unweighted; for sets of lines the gamma reading is drawn " +
	"too, and a line needs its plane (a line logged alone has no core angles to perturb)"

// ParseUncertainty reads the uncertainty option: "" (the default) or a
// true value (strconv.ParseBool: the set statistics carry the measurement
// errors), or a false one.
func ParseUncertainty(s string) (bool, error) {
	if s == "" {
		return true, nil
	}
	b, err := strconv.ParseBool(s)
	if err != nil {
		return false, optErr("uncertainty", s, "want true or false")
	}
	return b, nil
}

// SetUncertainty is the measurement uncertainty of one set's mean pole.
type SetUncertainty struct {
	// N counts the poles (or lines) with their errors (a hole direction and
	// Errors; a line its plane too); Left those without, left out of it.
	N             int    `json:"n"`
	Left          int    `json:"left_out,omitempty"`
	Fisher95      Num    `json:"fisher_cone95"`
	Measurement95 Num    `json:"measurement_cone95"`
	Shared95      Num    `json:"shared_cone95"`
	Combined95    Num    `json:"combined_cone95"`
	Dominant      string `json:"dominant,omitempty"`
	Note          string `json:"note,omitempty"`
}

// UncertaintyNote says how the sets' measurement uncertainty was found.
type UncertaintyNote struct {
	Method     string               `json:"method"`
	Draws      int                  `json:"draws"`
	Seed       uint64               `json:"seed"`
	ErrorModel []uncertainty.Source `json:"error_model"`
	Caution    string               `json:"caution"`
}

// UncertaintyCaution is shown with every figure of measurement uncertainty.
const UncertaintyCaution = "Uncertainty figures depend on the error model chosen; they are no substitute for the " +
	"reviewer's judgement or local practice."

// runKey is the key of a row's shared mark error, "" for its own.
func (e *Errors) runKey() string {
	if math.IsNaN(e.RunFrom) || e.HoleID == "" {
		return ""
	}
	return e.HoleID + "\x00" + strconv.FormatFloat(e.RunFrom, 'g', -1, 64)
}

// member is the uncertainty member of a used row with a plane (and, for
// lines, a lineation on it), ok false when it has no reading.
func member(r Row, lines bool) (uncertainty.Member, bool) {
	rd, ok := reading(r, lines)
	if !ok || lines && math.IsNaN(rd.Gamma) {
		return uncertainty.Member{}, false
	}
	return uncertainty.Member{Reading: rd, Run: r.Errors.runKey(), Survey: r.Errors.HoleID}, true
}

// reading returns the reading of a used row with a plane (and its line
// when it has one and withLine), ok false when the row lacks a hole
// direction or errors, or lies in a vertical hole. The core angles are
// those the plane (and line) make with the hole, under one fixed
// convention: the errors act the same whatever convention was logged (a
// turn about the core axis, a change of the angle to it, a turn on the
// plane, a turn of the hole), so the figures do not depend on it.
func reading(r Row, withLine bool) (uncertainty.Reading, bool) {
	if r.Errors == nil || !r.HasHole || !r.HasPlane {
		return uncertainty.Reading{}, false
	}
	h := r.Hole.Unit()
	a, b, w := coreangle.Angles(h, r.Plane, coreangle.Convention{})
	if w.Has(coreangle.Vertical) || math.IsNaN(b) {
		return uncertainty.Reading{}, false
	}
	rd := uncertainty.Reading{Hole: h, Alpha: a, Beta: b, Gamma: math.NaN(), Sigma: r.Errors.Sigma}
	if withLine && r.HasLine {
		if g, err := coreangle.Gamma(h, r.Plane, r.Line, coreangle.Convention{}); err == nil {
			rd.Gamma = g
		}
	}
	return rd, true
}

// setUncertainty returns the measurement uncertainty of the poles (or, with
// lines, the lineations) of the used rows idx; budget is the axes the
// report may still carry, reduced by this set's.
func setUncertainty(rows []Row, idx []int, lines bool, budget *int) *SetUncertainty {
	if len(idx) > *budget {
		nan := Num(math.NaN())
		return &SetUncertainty{N: 0, Left: len(idx), Fisher95: nan, Measurement95: nan, Shared95: nan, Combined95: nan,
			Note: fmt.Sprintf("not computed: a report carries the measurement errors of at most %d poles in all (narrow the selection, or ask for uncertainty=false)", MaxUncertaintyPoles)}
	}
	*budget -= len(idx)
	var ms []uncertainty.Member
	left := 0
	for _, i := range idx {
		if m, ok := member(rows[i], lines); ok {
			ms = append(ms, m)
		} else {
			left++
		}
	}
	su := &SetUncertainty{N: len(ms), Left: left}
	nan := Num(math.NaN())
	su.Fisher95, su.Measurement95, su.Shared95, su.Combined95 = nan, nan, nan, nan
	if left > 0 {
		what := "poles without a hole direction or errors"
		if lines {
			what = "lines without a plane, a hole direction or errors"
		}
		su.Note = fmt.Sprintf("%d of %d %s left out", left, len(idx), what)
	}
	if len(ms) < 2 {
		if su.Note != "" {
			su.Note += "; "
		}
		su.Note += "fewer than 2 with their errors"
		return su
	}
	mean := uncertainty.SetMean
	if lines {
		mean = uncertainty.SetMeanLines
	}
	res, err := mean(ms, uncertainty.MC{Draws: SetDraws, Seed: SetSeed})
	if err != nil {
		su.Note = err.Error()
		return su
	}
	su.Fisher95, su.Measurement95, su.Shared95, su.Combined95 = Num(res.Fisher95), Num(res.Measurement95), Num(res.Shared95), Num(res.Combined95)
	su.Dominant = res.Dominant
	return su
}

func uncertaintyNote(em uncertainty.Model) *UncertaintyNote {
	return &UncertaintyNote{Method: SetUncertaintyMethod, Draws: SetDraws, Seed: SetSeed, ErrorModel: em.Sources(), Caution: UncertaintyCaution}
}
