package palette

import (
	"math"
	"testing"
)

func TestColourByVocabularyOrder(t *testing.T) {
	s := New([]string{"VN", "jn", "BD", "JN", "FLT"})
	// Sorted distinct codes: BD, FLT, JN, VN.
	want := map[string]RGB{"BD": Colours[0], "flt": Colours[1], " JN ": Colours[2], "VN": Colours[3]}
	for code, c := range want {
		if got := s.Colour(code); got != c {
			t.Errorf("Colour(%q) = %v, want %v", code, got, c)
		}
	}
	if got := s.Colour("SH"); got != Unknown {
		t.Errorf("a code outside the vocabulary gets %v, want Unknown", got)
	}
	// Past the palette's length the colours repeat.
	many := make([]string, len(Colours)+1)
	for i := range many {
		many[i] = string(rune('A' + i))
	}
	if got := New(many).Colour(many[len(Colours)]); got != Colours[0] {
		t.Errorf("colour %d = %v, want the first colour again", len(Colours), got)
	}
}

func TestHex(t *testing.T) {
	if got := (RGB{0xE6, 0x9F, 0x00}).Hex(); got != "#e69f00" {
		t.Errorf("Hex = %s", got)
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
