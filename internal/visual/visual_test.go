package visual

import (
	"strings"
	"testing"
)

func TestPairsDiffer(t *testing.T) {
	seen := map[Style]int{}
	for k := 0; k < len(Palette)*len(Marks); k++ {
		p := Pair(k)
		if j, ok := seen[p]; ok {
			t.Fatalf("pair %d repeats pair %d: %+v", k, j, p)
		}
		seen[p] = k
	}
	// The first eight types differ in colour AND in mark, so neither a
	// colour-blind reader nor a greyscale print loses them.
	cols, marks := map[string]bool{}, map[string]bool{}
	for k := 0; k < 8; k++ {
		cols[Pair(k).Colour] = true
		marks[Pair(k).Mark] = true
	}
	if len(cols) != 8 || len(marks) != 8 {
		t.Fatalf("first eight pairs: %d colours, %d marks; want 8 and 8", len(cols), len(marks))
	}
}

func TestFillKeepsChosenAndSkipsUsed(t *testing.T) {
	in := []Style{{}, {Colour: "#0072B2", Mark: "circle"}, {Mark: "star"}, {}}
	out := Fill(in)
	if out[1] != (Style{Colour: "#0072B2", Mark: "circle"}) {
		t.Fatalf("a chosen style changed: %+v", out[1])
	}
	if out[0] == out[1] || out[0] == out[3] || out[3] == out[1] {
		t.Fatalf("filled styles clash: %+v", out)
	}
	if out[0] != Pair(1) {
		t.Fatalf("first empty got %+v, want the first free default %+v", out[0], Pair(1))
	}
	if out[2].Mark != "star" || out[2].Colour == "" {
		t.Fatalf("half-set style: %+v", out[2])
	}
}

func TestChecks(t *testing.T) {
	for _, c := range []string{"", "#0072b2", "#FFFFFF"} {
		if err := CheckColour(c); err != nil {
			t.Errorf("CheckColour(%q): %v", c, err)
		}
	}
	for _, c := range []string{"red", "#fff", "#12345g", "0072B2"} {
		if err := CheckColour(c); err == nil {
			t.Errorf("CheckColour(%q) accepted", c)
		}
	}
	if err := CheckMark("pentagon"); err == nil || !strings.Contains(err.Error(), "circle") {
		t.Errorf("CheckMark(pentagon): %v", err)
	}
}

func TestMarkPaths(t *testing.T) {
	// Exact geometry of two marks: a square of half-side 0.89 r, and a
	// triangle with its apex straight up at 1.3 r.
	if got, want := MarkPath("square", 10, 20, 10), "M1.1 11.1L18.9 11.1L18.9 28.9L1.1 28.9Z"; got != want {
		t.Errorf("square: %s, want %s", got, want)
	}
	if got := MarkPath("triangle", 0, 0, 10); !strings.HasPrefix(got, "M0 -13L") {
		t.Errorf("triangle: %s", got)
	}
	paths := map[string]bool{}
	for _, m := range Marks {
		p := MarkPath(m, 0, 0, 5)
		if paths[p] {
			t.Errorf("mark %s draws like another mark", m)
		}
		paths[p] = true
	}
}

func TestConfidenceAndSeverity(t *testing.T) {
	if FillOf("good") != "#0072B2" || FillOf(" Fair ") != "url(#conf-fair)" || FillOf("whatever") != "url(#conf-none)" {
		t.Fatalf("fills: %s %s %s", FillOf("good"), FillOf(" Fair "), FillOf("whatever"))
	}
	defs := PatternDefs()
	for _, id := range []string{"conf-fair", "conf-poor", "conf-none"} {
		if !strings.Contains(defs, `id="`+id+`"`) {
			t.Errorf("pattern %s missing", id)
		}
	}
	marks := map[string]bool{}
	for _, s := range Severities {
		marks[s.Mark] = true
	}
	if len(marks) != len(Severities) {
		t.Fatal("two severities share a mark")
	}
	if SeverityOf("info").Word != "note" || SeverityOf("nope").Code != "info" {
		t.Fatal("severity lookup")
	}
}

// Defaults is the one rule for codes with no stored style: the default
// pairs in sorted code order, repeats ignored, as Fill gives a vocabulary.
func TestDefaults(t *testing.T) {
	m := Defaults([]string{"JN", "BD", "JN", "FLT"})
	if len(m) != 3 {
		t.Fatalf("%d styles, want 3: %v", len(m), m)
	}
	for i, code := range []string{"BD", "FLT", "JN"} {
		if m[code] != Pair(i) {
			t.Errorf("%s: %v, want Pair(%d) %v", code, m[code], i, Pair(i))
		}
	}
}
