package fabric

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"sync"

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

	run string // the key of the mark error (runKey), made once by RowErrors
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
	e := &Errors{Sigma: em.Sigmas(k, confidence, mismatch, 0), HoleID: holeID, RunFrom: runFrom}
	e.run = e.runKey()
	return e
}

// Set uncertainty settings of the Monte Carlo method: the trials of each
// set and their seed (fixed, so every door gives the same figures), and the
// poles one report may carry through them in all (sets in report order:
// all, then each set), which bounds its time to a few seconds of CPU (about
// a quarter of a microsecond per pole and trial); a set past the budget
// says so. The first-order method, the default, has no budget: it costs a
// few microseconds per pole.
const (
	SetDraws            = 1000
	SetSeed             = 12
	MaxUncertaintyPoles = 5000 // poles and lines
)

// Values of the set_uncertainty option: how each set's measurement cones
// are found, or not at all.
const (
	SetUncertaintyFirstOrder = uncertainty.SetFirstOrder // the default
	SetUncertaintyMonteCarlo = uncertainty.SetMonteCarlo
	SetUncertaintyOff        = "off"
)

// setUncertaintyShared is the part of the method's description both methods
// share.
const setUncertaintyShared = "the errors of the error model below, by the row's survey_instrument, run_confidence and " +
	"run_mismatch: alpha and beta readings per measurement, one mark error per orientation run (measurements of a hole " +
	"with the same run_from) and one survey azimuth and dip error per hole, shared by their measurements. " +
	"measurement_cone95: the 95% cone of the mean moved by the measurement errors; shared_cone95: by the shared ones " +
	"alone; fisher_cone95: the classical exact cone of Fisher (1953) from the scatter; combined_cone95: both, without " +
	"counting twice what the scatter already shows; dominant says which of fisher_cone95 and measurement_cone95 is " +
	"larger. Unweighted; for sets of lines the gamma reading is an error too, and a line needs its plane (a line logged " +
	"alone has no core angles to perturb)"

// SetUncertaintyMethods describes each method of the sets' measurement
// uncertainty.
var SetUncertaintyMethods = map[string]string{
	SetUncertaintyFirstOrder: "first-order propagation over each set's poles or lines (uncertainty.SetMeanFirstOrder, " +
		"SetMeanLinesFirstOrder): each error source's derivative of the members' directions, summed over the members " +
		"sharing it, divided by the resultant length and projected on the tangent plane at the mean; covariance the sum " +
		"of J J^T sigma^2; each cone the circle about the mean holding 95% of that bivariate normal (the combined cone " +
		"adds the Fisher cone as an isotropic normal with the same 95% circle). " + setUncertaintyShared,
	SetUncertaintyMonteCarlo: "Monte Carlo over each set's poles or lines (uncertainty.SetMean, SetMeanLines): per trial, " +
		"every error drawn (shared ones once per run or hole); each cone the 95% quantile of the angle to the mean. " +
		setUncertaintyShared,
}

// ParseSetUncertainty reads the set_uncertainty option ("" for the
// default, first-order; monte-carlo; off) with the older uncertainty option
// ("" or a true value of strconv.ParseBool: on; a false one: off, which a
// method other than off contradicts). It returns the method or
// SetUncertaintyOff.
func ParseSetUncertainty(method, uncertaintyOpt string) (string, error) {
	on := true
	if uncertaintyOpt != "" {
		b, err := strconv.ParseBool(uncertaintyOpt)
		if err != nil {
			return "", optErr("uncertainty", uncertaintyOpt, "want true or false")
		}
		on = b
	}
	switch method {
	case "":
		if !on {
			return SetUncertaintyOff, nil
		}
		return SetUncertaintyFirstOrder, nil
	case SetUncertaintyFirstOrder, SetUncertaintyMonteCarlo, SetUncertaintyOff:
	default:
		return "", optErr("set_uncertainty", method, "want first-order, monte-carlo or off")
	}
	if !on && method != SetUncertaintyOff {
		return "", optErr("set_uncertainty", method, "uncertainty=false leaves the measurement uncertainty out; give set_uncertainty=off or neither")
	}
	return method, nil
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
	// Used is the method of the cones: first-order (the default) or
	// monte-carlo (set_uncertainty=monte-carlo); Method describes it.
	Used   string `json:"used"`
	Method string `json:"method"`
	// Draws and Seed are the Monte Carlo trials per set and their seed
	// (absent for first order).
	Draws      int                  `json:"draws,omitempty"`
	Seed       uint64               `json:"seed,omitempty"`
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
	return uncertainty.Member{Reading: rd, Run: r.Errors.run, Survey: r.Errors.HoleID}, true
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

// members reads the uncertainty members of the used rows of a group for
// its sets: by first order each row once into the group's terms, so that a
// row of "all" and of its set is read once; by Monte Carlo (at most
// MaxUncertaintyPoles a report) the members of each set. It holds the
// buffers of one set at a time, reused from report to report (newMembers,
// done).
type members struct {
	lines  bool
	n      int // the rows of the group
	terms  *uncertainty.FirstOrderTerms
	termOf []int32 // by used row: 0 not read yet, -1 not a member, k+1 term k
	idx    []int   // the rows of the set at hand
	set    []int   // its terms
	ms     []uncertainty.Member
}

var membersPool = sync.Pool{New: func() any { return new(members) }}

// newMembers returns the members of rows for a group of about n of them.
func newMembers(rows []Row, lines bool, n int) *members {
	c := membersPool.Get().(*members)
	c.lines, c.terms, c.n = lines, nil, n
	c.termOf = slices.Grow(c.termOf[:0], len(rows))[:len(rows)]
	clear(c.termOf)
	return c
}

// done gives c's storage back for another report; c is not used after.
func (c *members) done() {
	if c.terms != nil {
		c.terms.Release()
	}
	clear(c.ms) // drop the strings the members point to
	c.terms, c.ms = nil, c.ms[:0]
	membersPool.Put(c)
}

// term returns the number of used row i's first-order terms, -1 when it is
// not a member.
func (c *members) term(rows []Row, i int) int {
	if c.termOf[i] == 0 {
		c.termOf[i] = -1
		if m, ok := member(rows[i], c.lines); ok {
			if c.terms == nil {
				c.terms = uncertainty.NewFirstOrderTerms(c.lines, c.n)
			}
			c.termOf[i] = int32(c.terms.Add(&m)) + 1
		}
	}
	return int(c.termOf[i]) - 1
}

// setUncertainty returns the measurement uncertainty of the poles (or, for
// members of lines, the lineations) of the used rows idx; budget is the axes the
// report may still carry, reduced by this set's.
func setUncertainty(c *members, rows []Row, idx []int, method string, budget *int) *SetUncertainty {
	lines := c.lines
	mc := method == SetUncertaintyMonteCarlo
	if mc && len(idx) > *budget {
		nan := Num(math.NaN())
		return &SetUncertainty{N: 0, Left: len(idx), Fisher95: nan, Measurement95: nan, Shared95: nan, Combined95: nan,
			Note: fmt.Sprintf("not computed: a report carries the measurement errors of at most %d poles in all by Monte Carlo (narrow the selection, or ask for set_uncertainty=first-order)", MaxUncertaintyPoles)}
	}
	if mc {
		*budget -= len(idx)
	}
	ms, set := c.ms[:0], c.set[:0]
	for _, i := range idx {
		if mc {
			if m, ok := member(rows[i], lines); ok {
				ms = append(ms, m)
			}
		} else if k := c.term(rows, i); k >= 0 {
			set = append(set, k)
		}
	}
	c.ms, c.set = ms, set
	n := len(ms) + len(set)
	left := len(idx) - n
	su := &SetUncertainty{N: n, Left: left}
	nan := Num(math.NaN())
	su.Fisher95, su.Measurement95, su.Shared95, su.Combined95 = nan, nan, nan, nan
	if left > 0 {
		what := "poles without a hole direction or errors"
		if lines {
			what = "lines without a plane, a hole direction or errors"
		}
		su.Note = fmt.Sprintf("%d of %d %s left out", left, len(idx), what)
	}
	if n < 2 {
		if su.Note != "" {
			su.Note += "; "
		}
		su.Note += "fewer than 2 with their errors"
		return su
	}
	var res uncertainty.SetResult
	var err error
	switch {
	case mc && lines:
		res, err = uncertainty.SetMeanLines(ms, uncertainty.MC{Draws: SetDraws, Seed: SetSeed})
	case mc:
		res, err = uncertainty.SetMean(ms, uncertainty.MC{Draws: SetDraws, Seed: SetSeed})
	default: // uncertainty.SetMeanFirstOrder or SetMeanLinesFirstOrder of the set's members
		res, err = c.terms.SetMean(set)
	}
	if err != nil {
		su.Note = err.Error()
		return su
	}
	su.Fisher95, su.Measurement95, su.Shared95, su.Combined95 = Num(res.Fisher95), Num(res.Measurement95), Num(res.Shared95), Num(res.Combined95)
	su.Dominant = res.Dominant
	return su
}

func uncertaintyNote(em uncertainty.Model, method string) *UncertaintyNote {
	n := &UncertaintyNote{Used: method, Method: SetUncertaintyMethods[method], ErrorModel: em.Sources(), Caution: UncertaintyCaution}
	if method == SetUncertaintyMonteCarlo {
		n.Draws, n.Seed = SetDraws, SetSeed
	}
	return n
}
