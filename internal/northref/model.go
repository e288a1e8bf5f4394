package northref

import (
	"fmt"
	"strconv"
	"strings"

	"corvane/internal/igrf"
	"corvane/internal/wmm"
)

// MagneticModel is a choice of the model that computes declinations.
type MagneticModel string

// The magnetic model choices.
const (
	// ModelAuto uses the World Magnetic Model for dates it covers
	// (2025.0-2030.0) and IGRF-14 before (1900.0-2025.0): each date gets the
	// model made for it.
	ModelAuto MagneticModel = "auto"
	// ModelWMM uses WMM2025 only (2025.0-2030.0).
	ModelWMM MagneticModel = "wmm"
	// ModelIGRF uses IGRF-14 only (1900.0-2030.0).
	ModelIGRF MagneticModel = "igrf"
)

// MagneticModels lists the choices in the order help texts show them.
var MagneticModels = []MagneticModel{ModelAuto, ModelWMM, ModelIGRF}

// ParseMagneticModel reads a model choice; case and surrounding spaces are
// ignored and "" means [ModelAuto].
func ParseMagneticModel(s string) (MagneticModel, error) {
	t := MagneticModel(strings.ToLower(strings.TrimSpace(s)))
	if t == "" {
		return ModelAuto, nil
	}
	for _, m := range MagneticModels {
		if t == m {
			return m, nil
		}
	}
	return "", fmt.Errorf("magnetic model %q is not one of auto, wmm, igrf", s)
}

// Years returns the decimal years the choice covers.
func (m MagneticModel) Years() (from, to float64) {
	w, g := wmm.Default(), igrf.Default()
	switch m {
	case ModelWMM:
		return w.ValidFrom(), w.ValidTo()
	case ModelIGRF:
		return g.From, g.To
	}
	return min(g.From, w.ValidFrom()), max(g.To, w.ValidTo())
}

// RangeError reports a date outside the years of the chosen model. Its
// message leaves the date out: callers say it once, as the user typed it.
type RangeError struct {
	Year     float64
	Model    MagneticModel
	From, To float64
}

func (e *RangeError) Error() string {
	w, g := wmm.Default(), igrf.Default()
	yr := func(v float64) string { return strconv.FormatFloat(v, 'f', 1, 64) }
	wmmYears := fmt.Sprintf("%s covers %s to %s", w.Name, yr(w.ValidFrom()), yr(w.ValidTo()))
	igrfYears := fmt.Sprintf("%s covers %s to %s", g.Name, yr(g.From), yr(g.To))
	switch e.Model {
	case ModelWMM:
		return fmt.Sprintf("is outside the years of magnetic model %s (%s to %s); %s: choose model igrf or auto",
			w.Name, yr(e.From), yr(e.To), igrfYears)
	case ModelIGRF:
		return fmt.Sprintf("is outside the years of magnetic model %s (%s to %s); %s: choose model wmm or auto",
			g.Name, yr(e.From), yr(e.To), wmmYears)
	}
	return fmt.Sprintf("is outside the years of both magnetic models (%s; %s)", igrfYears, wmmYears)
}

// FieldAt evaluates the chosen model ("" is [ModelAuto]) at WGS 84
// latitude lat, longitude lon (degrees), height hKm above the ellipsoid and
// decimal year year. It returns the field and the name of the model that
// computed it ("WMM-2025" or "IGRF-14"). A date outside the choice's years
// gives a *RangeError; other bad input a plain error.
func FieldAt(model MagneticModel, lat, lon, hKm, year float64) (wmm.Field, string, error) {
	model, err := ParseMagneticModel(string(model))
	if err != nil {
		return wmm.Field{}, "", err
	}
	from, to := model.Years()
	if !(year >= from && year <= to) {
		return wmm.Field{}, "", &RangeError{Year: year, Model: model, From: from, To: to}
	}
	w := wmm.Default()
	if model == ModelWMM || model == ModelAuto && year >= w.ValidFrom() && year <= w.ValidTo() {
		f, err := w.At(lat, lon, hKm, year)
		return f, w.Name, err
	}
	g := igrf.Default()
	f, err := g.At(lat, lon, hKm, year)
	return f, g.Name, err
}

// SourceNote says which model computed the declination of r and for which
// decimal year, e.g. "IGRF-14 at 2023.5808"; "" when r has no declination.
func (r Result) SourceNote() string {
	if !r.HasDeclination {
		return ""
	}
	return r.Model + " at " + strconv.FormatFloat(r.Year, 'f', 4, 64)
}

// ComputedSource is the source of a declination computed by r: the word
// "computed" and [Result.SourceNote] in brackets, e.g.
// "computed (WMM-2025 at 2026.1671)".
func (r Result) ComputedSource() Source {
	return Source(string(SourceComputed) + " (" + r.SourceNote() + ")")
}
