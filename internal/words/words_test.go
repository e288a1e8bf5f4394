package words

import "testing"

func TestPlural(t *testing.T) {
	for _, c := range []struct {
		n    int
		want string
	}{{0, "0 runs"}, {1, "1 run"}, {2, "2 runs"}} {
		if got := Plural(c.n, "run"); got != c.want {
			t.Errorf("Plural(%d) = %q, want %q", c.n, got, c.want)
		}
	}
	if Noun(1, "pole") != "pole" || Noun(7, "pole") != "poles" {
		t.Error("Noun")
	}
}

func TestOption(t *testing.T) {
	for _, s := range []string{"dip_direction", "dip-direction", " Dip_Direction "} {
		if Option(s) != "dip-direction" {
			t.Errorf("Option(%q) = %q", s, Option(s))
		}
	}
}

func TestSameCode(t *testing.T) {
	if !SameCode("Joint", " joint") || SameCode("joint", "joints") {
		t.Error("SameCode")
	}
}
