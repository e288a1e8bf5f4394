package netsvg

import (
	"bytes"
	"flag"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"corvane/internal/geom"
	"corvane/internal/projection"
	"corvane/internal/visual"
)

var update = flag.Bool("update", false, "rewrite the golden files")

// legendNet has three sets: two by type code with their own styles (one with
// a long name) and one without, which takes the default of its index.
func legendNet() Net {
	return Net{
		Projection: projection.EqualArea,
		Title:      "Legend sheet",
		Poles:      []Mark{{Axis: geom.FromTrendPlunge(10, 40), Set: 0}, {Axis: geom.FromTrendPlunge(200, 30), Set: 1}},
		Sets: []SetMark{
			{Name: "bedding", Mean: geom.FromTrendPlunge(298, 52), Cone: 4.14, Count: 112, Style: visual.Style{Colour: "#CC79A7", Mark: "star"}},
			{Name: "a-very-long-type-code-name (lines)", Mean: geom.FromTrendPlunge(30, 20), Cone: 12.5, Count: 7, Lines: true, Style: visual.Style{Colour: "#009E73", Mark: "hexagon"}},
			{Name: "joint", Mean: geom.FromTrendPlunge(120, 10), Count: 3},
		},
		Notes:   []string{"426 rows; 12 left out: no dip direction (the hole is vertical at the measurement)"},
		Caution: "For review only.",
	}
}

// TestSetLegendGolden pins the set legend of the net sheet: marks, colours
// and wrapped text. Rewrite with go test ./internal/netsvg -run Golden -update
// after a deliberate change, and look at the sheet.
func TestSetLegendGolden(t *testing.T) {
	var b bytes.Buffer
	if err := WriteNet(&b, legendNet()); err != nil {
		t.Fatal(err)
	}
	wellFormed(t, b.Bytes())
	m := regexp.MustCompile(`(?s)<g id="set-legend">.*?</g>\n</g>\n`).Find(b.Bytes())
	if m == nil {
		t.Fatal("no set legend in the sheet")
	}
	path := filepath.Join("testdata", "set-legend.golden.svg")
	if *update {
		if err := os.WriteFile(path, m, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(m, want) {
		t.Errorf("set legend differs from %s:\n%s", path, m)
	}
}

// TestSetStyles: a set with a style is drawn in it (legend and mean marker);
// a set without takes the default pair of its index.
func TestSetStyles(t *testing.T) {
	var b bytes.Buffer
	if err := WriteNet(&b, legendNet()); err != nil {
		t.Fatal(err)
	}
	s := b.String()
	for _, want := range []string{
		`data-name="bedding" data-colour="#CC79A7" data-mark="star"`,
		`data-name="joint" data-colour="` + visual.Pair(2).Colour + `" data-mark="` + visual.Pair(2).Mark + `"`,
		`d="` + visual.MarkPath("star", panelX+7, 0, 5.5)[:1], // marks are paths of package visual
	} {
		if !strings.Contains(s, want) {
			t.Errorf("sheet lacks %q", want)
		}
	}
}

// TestPanelTextInsideSheet: every text line of the side panel, at an
// estimated 0.62 em per character, ends inside the sheet, and every line
// lies above its bottom edge.
func TestPanelTextInsideSheet(t *testing.T) {
	n := legendNet()
	n.Notes = append(n.Notes, strings.Repeat("weighting-note-without-spaces ", 4))
	for i := 0; i < 14; i++ { // enough sets to push the panel past the default height
		n.Sets = append(n.Sets, SetMark{Name: "set" + strconv.Itoa(i), Mean: geom.FromTrendPlunge(float64(i*20), 30), Count: i})
	}
	var b bytes.Buffer
	if err := WriteNet(&b, n); err != nil {
		t.Fatal(err)
	}
	height := panelInside(t, b.String())
	if height <= sheetH {
		t.Fatalf("sheet height %v: the long panel should have grown it", height)
	}
	// The rose's panel wraps alike.
	b.Reset()
	if err := WriteRose(&b, Rose{Title: "Rose", Azimuths: []float64{10, 20, 200}, Notes: []string{strings.Repeat("a note of the rose that is long ", 5)}}); err != nil {
		t.Fatal(err)
	}
	panelInside(t, b.String())
}

// panelInside checks every text line of a sheet's side panel, at an
// estimated 0.62 em per character, ends inside the sheet and lies above its
// bottom edge; it returns the sheet's height.
func panelInside(t *testing.T, doc string) float64 {
	t.Helper()
	hm := regexp.MustCompile(`<svg [^>]*height="([0-9.]+)"`).FindStringSubmatch(doc)
	height, _ := strconv.ParseFloat(hm[1], 64)
	re := regexp.MustCompile(`<text x="([0-9.]+)" y="([0-9.]+)" font-size="([0-9.]+)"[^>]*>([^<]*)</text>`)
	n := 0
	for _, m := range re.FindAllStringSubmatch(doc, -1) {
		x, _ := strconv.ParseFloat(m[1], 64)
		y, _ := strconv.ParseFloat(m[2], 64)
		size, _ := strconv.ParseFloat(m[3], 64)
		text := strings.NewReplacer("&amp;", "&", "&lt;", "<", "&gt;", ">", "&#34;", `"`).Replace(m[4])
		if x < panelX {
			continue
		}
		n++
		// A word longer than a line cannot be broken; the tests' notes have
		// none longer than the panel.
		if end := x + float64(len([]rune(text)))*0.62*size; end > sheetW {
			t.Errorf("panel text %q ends at %.0f, past the sheet's width %.0f", text, end, sheetW)
		}
		if y > height {
			t.Errorf("panel text %q at y %.0f, below the sheet (%.0f)", text, y, height)
		}
	}
	if n < 5 {
		t.Fatalf("only %d panel lines found", n)
	}
	return height
}
