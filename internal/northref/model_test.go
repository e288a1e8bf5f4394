package northref

import (
	"errors"
	"strings"
	"testing"
	"time"

	"corvane/internal/igrf"
	"corvane/internal/wmm"
)

// Under auto, a 2023 survey is computed with IGRF-14 and a 2026 survey with
// the WMM; the result says which model and year, and equals the chosen
// model's own value.
func TestModelChoice(t *testing.T) {
	const e, n, elev = 391250.0, 6465480.0, 312.0 // fictional collar, zone 50S
	old := time.Date(2023, 8, 1, 0, 0, 0, 0, time.UTC)
	r, err := Corrections("EPSG:32750", e, n, elev, old, true, false)
	if err != nil {
		t.Fatal(err)
	}
	f, _ := igrf.Default().At(r.Lat, r.Lon, elev/1000, DecimalYear(old))
	if r.Model != "IGRF-14" || r.Declination != f.Declination || r.SourceNote() != "IGRF-14 at 2023.5808" {
		t.Errorf("2023 under auto: model %q D %v note %q; IGRF gives %v", r.Model, r.Declination, r.SourceNote(), f.Declination)
	}
	if got := r.ComputedSource(); got != "computed (IGRF-14 at 2023.5808)" {
		t.Errorf("ComputedSource = %q", got)
	}
	recent := time.Date(2026, 3, 1, 0, 0, 0, 0, time.UTC)
	for _, c := range []struct {
		m    MagneticModel
		name string
	}{{ModelAuto, "WMM-2025"}, {"", "WMM-2025"}, {ModelWMM, "WMM-2025"}, {ModelIGRF, "IGRF-14"}} {
		r, err := CorrectionsModel(c.m, "EPSG:32750", e, n, elev, recent, true, false)
		if err != nil || r.Model != c.name {
			t.Errorf("model %q in 2026: %q %v, want %s", c.m, r.Model, err, c.name)
		}
		var want wmm.Field
		if c.name == "IGRF-14" {
			want, _ = igrf.Default().At(r.Lat, r.Lon, elev/1000, r.Year)
		} else {
			want, _ = wmm.Default().At(r.Lat, r.Lon, elev/1000, r.Year)
		}
		if r.Declination != want.Declination {
			t.Errorf("model %q: D %v, the model gives %v", c.m, r.Declination, want.Declination)
		}
	}
	_, err = CorrectionsModel(ModelIGRF, "EPSG:32750", e, n, elev, time.Date(2030, 6, 1, 0, 0, 0, 0, time.UTC), true, false)
	var re *RangeError
	if !errors.As(err, &re) || !strings.Contains(err.Error(), "IGRF-14 (1900.0 to 2030.0); WMM-2025 covers 2025.0 to 2030.0: choose model wmm or auto") {
		t.Errorf("2030.4 with IGRF: %v", err)
	}
	if _, _, err := FieldAt("chaos", 0, 0, 0, 2026); err == nil || !strings.Contains(err.Error(), "auto, wmm, igrf") {
		t.Errorf("unknown model: %v", err)
	}
}

func TestParseMagneticModel(t *testing.T) {
	for in, want := range map[string]MagneticModel{"": ModelAuto, " AUTO ": ModelAuto, "Wmm": ModelWMM, "igrf": ModelIGRF} {
		if got, err := ParseMagneticModel(in); err != nil || got != want {
			t.Errorf("%q: %q %v", in, got, err)
		}
	}
	if _, err := ParseMagneticModel("emm"); err == nil {
		t.Error("emm accepted")
	}
}
