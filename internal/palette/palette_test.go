package palette

import (
	"math"
	"testing"

	"corvane/internal/visual"
)

// A vocabulary known only by its codes takes the visual language's default
// styles in sorted code order, so a 3D scene colours a type as the nets do.
func TestNewFollowsTheVisualDefaults(t *testing.T) {
	s := New([]string{"VN", "jn", "BD", "JN", "FLT"})
	// Sorted distinct codes: BD, FLT, JN, VN.
	for i, code := range []string{"BD", "flt", " JN ", "VN"} {
		want, _ := ParseHex(visual.Pair(i).Colour)
		if got := s.Colour(code); got != want {
			t.Errorf("Colour(%q) = %v, want %v (visual.Pair(%d))", code, got, want, i)
		}
	}
	if got := s.Colour("SH"); got != Unknown {
		t.Errorf("a code outside the vocabulary gets %v, want Unknown", got)
	}
}

// Stored styles win: a project that chose a colour sees it in 3D too.
func TestFromStyles(t *testing.T) {
	s := FromStyles(map[string]visual.Style{"JN": {Colour: "#123456", Mark: "circle"}, "BD": {Colour: "bad"}})
	if got := s.Colour("jn"); got != (RGB{0x12, 0x34, 0x56}) {
		t.Errorf("stored colour: %v", got)
	}
	if got := s.Colour("BD"); got != Unknown {
		t.Errorf("unreadable colour: %v, want Unknown", got)
	}
}

func TestHex(t *testing.T) {
	if got := (RGB{0xE6, 0x9F, 0x00}).Hex(); got != "#e69f00" {
		t.Errorf("Hex = %s", got)
	}
	if c, ok := ParseHex("#E69F00"); !ok || c != (RGB{0xE6, 0x9F, 0x00}) {
		t.Errorf("ParseHex = %v %v", c, ok)
	}
	for _, bad := range []string{"", "E69F00", "#E69F0", "#GGGGGG"} {
		if _, ok := ParseHex(bad); ok {
			t.Errorf("ParseHex(%q) accepted", bad)
		}
	}
}

func TestLinear(t *testing.T) {
	// sRGB transfer function (IEC 61966-2-1): 128/255 -> 0.2158605 (the
	// commonly tabulated value), 10/255 (below the 0.04045 knee) -> 10/255/12.92.
	got := RGB{128, 10, 255}.Linear()
	want := [3]float64{0.2158605, 10.0 / 255 / 12.92, 1}
	for i := range got {
		if math.Abs(got[i]-want[i]) > 1e-6 {
			t.Errorf("component %d = %.7f, want %.7f", i, got[i], want[i])
		}
	}
}
