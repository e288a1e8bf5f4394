package domain

import (
	"corvane/internal/uncertainty"
	"math"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"time"
	"unicode"
	"unicode/utf8"

	"corvane/internal/visual"
	"corvane/internal/words"
)

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// checkAzimuth validates an azimuth in [0, 360] and folds 360 to 0.
func checkAzimuth(field string, a *float64) *Error {
	if !finite(*a) || *a < 0 || *a > 360 {
		return FieldErr(field, "%s must be an azimuth in [0, 360], got %v", field, *a)
	}
	if *a == 360 || *a == 0 {
		*a = 0 // 360 and -0 are stored as 0
	}
	return nil
}

func checkRange(field string, x, lo, hi float64) *Error {
	if !finite(x) || x < lo || x > hi {
		return FieldErr(field, "%s must be in [%v, %v], got %v", field, lo, hi, x)
	}
	return nil
}

func checkFinite(field string, x float64) *Error {
	if !finite(x) {
		return FieldErr(field, "%s must be a finite number, got %v", field, x)
	}
	return nil
}

func checkOneOf(field, v string, allowed ...string) *Error {
	if !slices.Contains(allowed, v) {
		return FieldErr(field, "%s must be one of %s, got %q", field, strings.Join(allowed, ", "), v)
	}
	return nil
}

// CheckDate validates an optional calendar date in YYYY-MM-DD form.
func CheckDate(field, s string) *Error {
	if s == "" {
		return nil
	}
	if _, err := time.Parse(time.DateOnly, s); err != nil {
		return FieldErr(field, "%s must be a date YYYY-MM-DD, got %q", field, s)
	}
	return nil
}

// Text limits, in characters, of every free-text field. Text must be valid
// UTF-8 without NUL or other control characters; tab is allowed in comments
// and descriptions only. See [CheckText].
const (
	MaxNameLen        = 200  // project name, token name
	MaxHoleNameLen    = 64   // hole name (the hole id of the files)
	MaxDescriptionLen = 2000 // project and type code descriptions
	MaxCommentLen     = 2000 // run and measurement comments
	MaxLoggedByLen    = 100  // a measurement's logged_by
	MaxCRSLen         = 100  // a collar's coordinate system label
	MaxFileNameLen    = 200  // the file name an import is recorded under
	MaxKeyLen         = 200  // an idempotency key
)

// CheckText is THE rule for text: s must be valid UTF-8 of at most max
// characters without NUL or control characters (tab allowed when allowTab:
// comments and descriptions). The error is Invalid and names field; it never
// repeats the text itself.
func CheckText(field, s string, max int, allowTab bool) *Error {
	if !utf8.ValidString(s) {
		for i := 0; i < len(s); {
			r, n := utf8.DecodeRuneInString(s[i:])
			if r == utf8.RuneError && n <= 1 {
				return FieldErr(field, "%s is not valid UTF-8 (byte %d)", field, i+1)
			}
			i += n
		}
	}
	chars := 0
	for _, r := range s {
		chars++
		if r == '\t' && allowTab {
			continue
		}
		if r == 0 {
			return FieldErr(field, "%s contains a NUL character (character %d)", field, chars)
		}
		if unicode.IsControl(r) {
			return FieldErr(field, "%s contains the control character U+%04X (character %d)", field, r, chars)
		}
	}
	if chars > max {
		return FieldErr(field, "%s must be at most %d characters, got %d", field, max, chars)
	}
	return nil
}

// checkTexts returns the first error of CheckText over the fields.
func checkTexts(fs ...textField) *Error {
	for _, f := range fs {
		if e := CheckText(f.name, f.v, f.max, f.tab); e != nil {
			return e
		}
	}
	return nil
}

type textField struct {
	name string
	v    string
	max  int
	tab  bool
}

var codeRe = regexp.MustCompile(`^[A-Za-z0-9_.\-]{1,32}$`)

// Normalize fills p's empty conventions with the defaults (bottom, downhole,
// clockwise, m, grid) and validates it.
func (p *Project) Normalize() error {
	p.Name = strings.TrimSpace(p.Name)
	def := func(s *string, d string) {
		if *s == "" {
			*s = d
		}
	}
	def(&p.RefLine, RefLineBottom)
	def(&p.BetaApex, BetaApexDownHole)
	def(&p.GammaSense, GammaClockwise)
	def(&p.LengthUnit, UnitMetre)
	def(&p.OutputAzimuthRef, AzimuthGrid)
	def(&p.MagneticModel, MagneticAuto)
	pr, e := ParseSurveyPriority(p.SurveyPriority)
	if e != nil {
		return e
	}
	p.SurveyPriority = pr
	if string(p.LocalGrid) == "null" {
		p.LocalGrid = nil
	}
	if p.Name == "" {
		return FieldErr("name", "name must be 1 to %d characters", MaxNameLen)
	}
	if e := checkTexts(textField{"name", p.Name, MaxNameLen, false}, textField{"description", p.Description, MaxDescriptionLen, true}); e != nil {
		return e
	}
	for _, e := range []*Error{
		checkOneOf("ref_line", p.RefLine, RefLineBottom, RefLineTop),
		checkOneOf("beta_apex", p.BetaApex, BetaApexDownHole, BetaApexUpHole),
		checkOneOf("gamma_sense", p.GammaSense, GammaClockwise, GammaAnticlockwise),
		checkOneOf("length_unit", p.LengthUnit, UnitMetre, UnitFoot),
		checkOneOf("output_azimuth_ref", p.OutputAzimuthRef, AzimuthGrid, AzimuthTrue),
		checkOneOf("magnetic_model", p.MagneticModel, MagneticAuto, MagneticWMM, MagneticIGRF),
		checkOptRange("declination", p.Declination, -180, 180),
		checkOptRange("convergence", p.Convergence, -90, 90),
	} {
		if e != nil {
			return e
		}
	}
	if err := p.ErrorModel.Check(); err != nil {
		return FieldErr("error_model", "%v", err)
	}
	p.PersistentFabric = strings.TrimSpace(p.PersistentFabric)
	if e := checkTexts(textField{"persistent_fabric", p.PersistentFabric, MaxNameLen, false}); e != nil {
		return e
	}
	return nil
}

// checkOptRange checks an optional number like checkRange; nil passes.
func checkOptRange(field string, v *float64, lo, hi float64) *Error {
	if v == nil {
		return nil
	}
	return checkRange(field, *v, lo, hi)
}

// FindTypeCode finds code in a project's vocabulary. Type codes are matched
// without regard to case, everywhere (imports, the API, filters, the
// commands): "jn" is the vocabulary's "JN", and the vocabulary's spelling is
// the one stored and shown. A project cannot hold two codes that differ only
// in case.
func FindTypeCode(vocab []TypeCode, code string) (TypeCode, bool) {
	for _, tc := range vocab {
		if words.SameCode(tc.Code, code) {
			return tc, true
		}
	}
	return TypeCode{}, false
}

// UnknownTypeCode is the error for a code not in vocab, naming the codes
// there are; field is the field or column that gave it.
func UnknownTypeCode(field, code string, vocab []TypeCode) *Error {
	if len(vocab) == 0 {
		return FieldErr(field, "type %q is not in the project's vocabulary, which is empty: add the project's type codes first (PUT .../types/{code})", code)
	}
	codes := make([]string, len(vocab))
	for i, tc := range vocab {
		codes[i] = tc.Code
	}
	return FieldErr(field, "type %q is not in the project's vocabulary (%s)", code, strings.Join(codes, ", "))
}

// Normalize validates tc; Kind defaults to "plane".
func (tc *TypeCode) Normalize() error {
	tc.Code = strings.TrimSpace(tc.Code)
	if !codeRe.MatchString(tc.Code) {
		return FieldErr("code", "code must be 1 to 32 letters, digits or _ . -, got %q", tc.Code)
	}
	if e := CheckText("description", tc.Description, MaxDescriptionLen, true); e != nil {
		return e
	}
	if tc.Kind == "" {
		tc.Kind = "plane"
	}
	if e := checkOneOf("kind", tc.Kind, "plane", "line"); e != nil {
		return e
	}
	if err := visual.CheckColour(tc.Colour); err != nil {
		return FieldErr("colour", "%v", err)
	}
	if err := visual.CheckMark(tc.Mark); err != nil {
		return FieldErr("mark", "%v", err)
	}
	tc.Colour = strings.ToUpper(tc.Colour)
	return nil
}

// CheckKind is the one rule tying a measurement to its type's kind: a line
// type needs gamma (the lineation on the plane) and a plane type refuses it.
func CheckKind(m Measurement, tc TypeCode) error {
	if tc.Kind == "line" && m.Gamma == nil {
		return FieldErr("gamma", "type %s is a line type: gamma (the lineation angle) is required", tc.Code)
	}
	if tc.Kind != "line" && m.Gamma != nil {
		return FieldErr("gamma", "type %s is a plane type: leave gamma empty (it is for lineations), or choose a line type", tc.Code)
	}
	return nil
}

// Normalize validates h and folds azimuth 360 to 0.
func (h *Hole) Normalize() error {
	h.Name = strings.TrimSpace(h.Name)
	if h.Name == "" {
		return FieldErr("name", "hole name must be 1 to %d characters", MaxHoleNameLen)
	}
	if e := checkTexts(textField{"name", h.Name, MaxHoleNameLen, false}, textField{"crs", h.CRS, MaxCRSLen, false}); e != nil {
		return e
	}
	if h.AzimuthRef == "" {
		h.AzimuthRef = AzimuthGrid
	}
	if e := checkOneOf("azimuth_ref", h.AzimuthRef, AzimuthGrid, AzimuthTrue, AzimuthMagnetic); e != nil {
		return e
	}
	for _, e := range []*Error{
		checkFinite("easting", h.East),
		checkFinite("northing", h.North),
		checkFinite("elevation", h.Elevation),
		checkAzimuth("azimuth", &h.Azimuth),
		checkRange("dip", h.Dip, -90, 90),
		checkRange("final_depth", h.FinalDepth, 0, 1e5),
		CheckDate("started", h.Started),
		CheckDate("finished", h.Finished),
		CheckDate("survey_date", h.SurveyDate),
		checkOptRange("declination", h.Declination, -180, 180),
		checkOptRange("grid_convergence", h.GridConvergence, -90, 90),
	} {
		if e != nil {
			return e
		}
	}
	if string(h.LocalGrid) == "null" {
		h.LocalGrid = nil
	}
	if h.Started != "" && h.Finished != "" && h.Finished < h.Started {
		return FieldErr("finished", "finished %s is before started %s", h.Finished, h.Started)
	}
	return nil
}

// Normalize validates s: a known azimuth reference, finite stations with
// strictly increasing depths from 0, azimuths in [0, 360], dips in [-90, 90].
// Field names locate the bad station, e.g. "stations[3].dip".
func (s *SurveySet) Normalize() error {
	if s.AzimuthRef == "" {
		s.AzimuthRef = AzimuthTrue
	}
	if e := checkOneOf("azimuth_ref", s.AzimuthRef, AzimuthTrue, AzimuthGrid, AzimuthMagnetic); e != nil {
		return e
	}
	if e := CheckDate("survey_date", s.SurveyDate); e != nil {
		return e
	}
	k, err := uncertainty.ParseInstrument(s.Instrument)
	if err != nil {
		return FieldErr("instrument", "%v", err)
	}
	s.Instrument = string(k)
	s.DeclinationSource = ""
	if s.Declination != nil {
		if e := checkRange("declination", *s.Declination, -180, 180); e != nil {
			return e
		}
		s.DeclinationSource = SourceGiven
	}
	for i := range s.Stations {
		st := &s.Stations[i]
		f := func(name string) string { return "stations[" + strconv.Itoa(i) + "]." + name }
		if e := checkRange(f("depth"), st.Depth, 0, 1e5); e != nil {
			return e
		}
		if e := checkAzimuth(f("azimuth"), &st.Azimuth); e != nil {
			return e
		}
		if e := checkRange(f("dip"), st.Dip, -90, 90); e != nil {
			return e
		}
		if i > 0 && st.Depth <= s.Stations[i-1].Depth {
			return FieldErr(f("depth"), "station depths must strictly increase: %v follows %v", st.Depth, s.Stations[i-1].Depth)
		}
	}
	return nil
}

// Normalize validates k: a known kind and the rules of a [SurveySet]
// (reference, date, instrument, declination, stations).
func (k *KindSet) Normalize() error {
	k.Kind = strings.ToLower(strings.TrimSpace(k.Kind))
	if e := checkOneOf("kind", k.Kind, SurveyKinds...); e != nil {
		return e
	}
	ss := k.Survey()
	if e := ss.Normalize(); e != nil {
		return e
	}
	k.AzimuthRef = ss.AzimuthRef
	k.Instrument = ss.Instrument
	return nil
}

// ParseSurveyPriority reads a survey priority: kinds separated by commas,
// each at most once, in any case; "" is none. It returns the canonical text.
func ParseSurveyPriority(s string) (string, *Error) {
	if strings.TrimSpace(s) == "" {
		return "", nil
	}
	var out []string
	for _, w := range strings.Split(s, ",") {
		k := strings.ToLower(strings.TrimSpace(w))
		if !slices.Contains(SurveyKinds, k) {
			return "", FieldErr("survey_priority", "survey_priority: %q is not a survey set kind (want kinds among %s, separated by commas)", w, strings.Join(SurveyKinds, ", "))
		}
		if slices.Contains(out, k) {
			return "", FieldErr("survey_priority", "survey_priority: %s is named twice", k)
		}
		out = append(out, k)
	}
	return strings.Join(out, ","), nil
}

// Normalize validates r: 0 <= From < To, a known confidence, mismatch in [0, 180].
func (r *Run) Normalize() error {
	if r.Confidence == "" {
		r.Confidence = "good"
	}
	for _, e := range []*Error{
		checkRange("from", r.From, 0, 1e5),
		checkRange("to", r.To, 0, 1e5),
		checkOneOf("confidence", r.Confidence, Confidences...),
	} {
		if e != nil {
			return e
		}
	}
	if e := CheckText("comment", r.Comment, MaxCommentLen, true); e != nil {
		return e
	}
	if r.To <= r.From {
		return FieldErr("to", "to (%v) must be greater than from (%v)", r.To, r.From)
	}
	if r.Mismatch != nil {
		if e := checkRange("mismatch", *r.Mismatch, 0, 180); e != nil {
			return e
		}
	}
	return nil
}

// Normalize validates m: depth >= 0, alpha in [0, 90], beta (nil for an
// unoriented measurement) and gamma in [0, 360] (360 folded to 0), no gamma
// without beta, a type code, apparent thickness >= 0.
func (m *Measurement) Normalize() error {
	m.TypeCode = strings.TrimSpace(m.TypeCode)
	for _, e := range []*Error{
		checkRange("depth", m.Depth, 0, 1e5),
		checkRange("alpha", m.Alpha, 0, 90),
	} {
		if e != nil {
			return e
		}
	}
	if m.Beta != nil {
		if e := checkAzimuth("beta", m.Beta); e != nil {
			return e
		}
	} else if m.Gamma != nil {
		return FieldErr("gamma", "gamma needs beta: a lineation cannot be placed on an unoriented measurement")
	}
	if m.Gamma != nil {
		if e := checkAzimuth("gamma", m.Gamma); e != nil {
			return e
		}
	}
	if m.TypeCode == "" {
		return FieldErr("type", "type is required (a code of the project's vocabulary)")
	}
	if m.ApparentThickness != nil {
		if e := checkRange("apparent_thickness", *m.ApparentThickness, 0, 1e5); e != nil {
			return e
		}
	}
	if e := checkTexts(textField{"comment", m.Comment, MaxCommentLen, true}, textField{"logged_by", m.LoggedBy, MaxLoggedByLen, false}); e != nil {
		return e // not the typed nil of a *Error
	}
	return nil
}
