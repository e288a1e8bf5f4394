package transfer

import (
	"strings"
	"testing"
)

// The counts a GeoJSON hole carries and the grid the map is drawn through.
func TestCountAndInverse(t *testing.T) {
	p := Programme{Holes: []Hole{{Name: "A", CRS: "EPSG:32750"}, {Name: "B"}}}
	p.Count("A", true, false)
	p.Count("A", false, true)
	p.Count("B", true, true)
	p.Count("C", false, false) // not a hole of the selection: skipped only
	if a, b := p.Holes[0], p.Holes[1]; a.Measurements != 1 || a.QAFlags != 1 || b.Measurements != 1 || b.QAFlags != 1 || p.Skipped != 2 {
		t.Errorf("counts %+v %+v, skipped %d", a, b, p.Skipped)
	}
	if _, err := p.Inverse(""); err != nil {
		t.Errorf("one labelled system and an unlabelled collar: %v", err)
	}
	p.Holes[1].CRS = "EPSG:32751"
	if _, err := p.Inverse(""); err == nil || !strings.Contains(err.Error(), "EPSG:32751") {
		t.Errorf("two systems: %v", err)
	}
	if _, err := p.Inverse("EPSG:32750"); err != nil {
		t.Errorf("a system named overrides the labels: %v", err)
	}
	q := Programme{Holes: []Hole{{Name: "A"}}}
	if _, err := q.Inverse(""); err == nil {
		t.Error("no system at all: no error")
	}
}
