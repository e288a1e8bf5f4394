package fabric

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"corvane/internal/dirstat"
	"corvane/internal/geom"
)

// OptionError is a bad option value. Option is the option's name as the
// HTTP routes spell it (sets_on); the CLI spells it with hyphens (--sets-on).
type OptionError struct {
	Option, Value, Msg string
}

func (e *OptionError) Error() string {
	return fmt.Sprintf("%s %q: %s", e.Option, e.Value, e.Msg)
}

func optErr(option, value, format string, args ...any) *OptionError {
	return &OptionError{Option: option, Value: value, Msg: fmt.Sprintf(format, args...)}
}

// Weighting says whether planes are Terzaghi weighted and with what cap.
type Weighting struct {
	On  bool
	Cap float64
}

// ParseWeighting reads the weighting option: "" or "none", "terzaghi"
// (cap dirstat.DefaultTerzaghiCap) or "terzaghi:CAP" with CAP >= 1.
func ParseWeighting(s string) (Weighting, error) {
	if s == "" || s == "none" {
		return Weighting{}, nil
	}
	name, capStr, hasCap := strings.Cut(s, ":")
	if !strings.EqualFold(name, "terzaghi") {
		return Weighting{}, optErr("weighting", s, "want none, terzaghi or terzaghi:CAP")
	}
	w := Weighting{On: true, Cap: dirstat.DefaultTerzaghiCap}
	if hasCap {
		c, err := strconv.ParseFloat(capStr, 64)
		if err != nil || !(c >= 1) || math.IsInf(c, 0) {
			return Weighting{}, optErr("weighting", s, "cap %q must be a number >= 1", capStr)
		}
		w.Cap = c
	}
	return w, nil
}

// MaxAutoSets bounds the number of automatic sets.
const MaxAutoSets = 20

// AutoSetName is the label of the automatic set with index j (from 0): A, B,
// C, ... Letters, not S1, S2, ..., which the trade reads as bedding and
// foliations. The CLI, the API and the page all show these labels.
func AutoSetName(j int) string {
	if j < 0 || j >= MaxAutoSets || MaxAutoSets > 26 {
		panic(fmt.Sprintf("fabric: automatic set index %d out of range", j))
	}
	return string(rune('A' + j))
}

// Sets says how measurements are grouped into sets.
type Sets struct {
	Auto    int              // > 0: that many sets by k-means on axes
	ByType  bool             // one set per type code
	Windows []dirstat.Window // user windows
	Seed    uint64           // seed of the k-means starts
	// On is what sets apply to: "planes", "lines" or "both"; "" means the
	// planes (their poles), or the lines when no row has a plane.
	On string
}

func (s Sets) any() bool { return s.Auto > 0 || s.ByType || len(s.Windows) > 0 }

// DefaultSeed is the k-means seed when none is given.
const DefaultSeed = 1

// ParseSets reads the sets option: "" or "none" (no sets), "type" (one set
// per type code) or "auto:N" (N sets by k-means, 1 <= N <= MaxAutoSets), and
// the sets_on option ("", "planes", "lines" or "both"). windows are the set
// windows already parsed with [ParseWindow]; they exclude the other methods.
func ParseSets(spec, on string, windows []dirstat.Window, seed uint64) (Sets, error) {
	s := Sets{Windows: windows, Seed: seed}
	switch spec {
	case "", "none":
	case "type":
		s.ByType = true
	default:
		v, ok := strings.CutPrefix(spec, "auto:")
		n, err := strconv.Atoi(v)
		if !ok || err != nil || n < 1 || n > MaxAutoSets {
			return Sets{}, optErr("sets", spec, "want none, type or auto:N with N from 1 to %d", MaxAutoSets)
		}
		s.Auto = n
	}
	if (s.Auto > 0 || s.ByType) && len(windows) > 0 {
		return Sets{}, optErr("sets", spec, "give either sets or set windows, not both")
	}
	switch on {
	case "", "planes", "lines", "both":
		s.On = on
	default:
		return Sets{}, optErr("sets_on", on, "want planes, lines or both")
	}
	return s, nil
}

// MaxWindows bounds the set windows of one request (each measurement is
// tested against every window).
const MaxWindows = 50

// ParseWindow reads a set window NAME:TREND/PLUNGE:CONE (for planes the
// centre is the pole); names must differ from those in before, of which
// there are fewer than MaxWindows.
func ParseWindow(s string, before []dirstat.Window) (dirstat.Window, error) {
	if len(before) >= MaxWindows {
		return dirstat.Window{}, optErr("set", s, "at most %d set windows", MaxWindows)
	}
	parts := strings.Split(s, ":")
	if len(parts) != 3 || strings.TrimSpace(parts[0]) == "" {
		return dirstat.Window{}, optErr("set", s, "want NAME:TREND/PLUNGE:CONE, e.g. J1:135/20:25")
	}
	tp := strings.Split(parts[1], "/")
	if len(tp) != 2 {
		return dirstat.Window{}, optErr("set", s, "centre %q: want TREND/PLUNGE", parts[1])
	}
	tr, err1 := strconv.ParseFloat(strings.TrimSpace(tp[0]), 64)
	pl, err2 := strconv.ParseFloat(strings.TrimSpace(tp[1]), 64)
	cone, err3 := strconv.ParseFloat(strings.TrimSpace(parts[2]), 64)
	switch {
	case err1 != nil || !(tr >= 0 && tr <= 360):
		return dirstat.Window{}, optErr("set", s, "trend %q must be a number in [0, 360]", tp[0])
	case err2 != nil || !(pl >= 0 && pl <= 90):
		return dirstat.Window{}, optErr("set", s, "plunge %q must be a number in [0, 90]", tp[1])
	case err3 != nil || !(cone > 0 && cone <= 90):
		return dirstat.Window{}, optErr("set", s, "cone %q must be a number in (0, 90]", parts[2])
	}
	name := strings.TrimSpace(parts[0])
	for _, x := range before {
		if x.Name == name {
			return dirstat.Window{}, optErr("set", s, "set name %q used twice", name)
		}
	}
	return dirstat.Window{Name: name, Centre: geom.FromTrendPlunge(tr, pl), Cone: cone}, nil
}

// Kinds of axes.
const (
	kindPlanes = "planes"
	kindLines  = "lines"
)

// ParseOf reads which kinds a report covers: "" or "both", "planes", "lines".
func ParseOf(s string) (string, error) {
	switch s {
	case "", "both":
		return "both", nil
	case kindPlanes, kindLines:
		return s, nil
	}
	return "", optErr("of", s, "want planes, lines or both")
}
