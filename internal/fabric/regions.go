package fabric

import (
	"fmt"
	"strconv"
	"strings"

	"corvane/internal/netsvg"
	"corvane/internal/uncertainty"
	"corvane/internal/words"
)

// Regions selects the measurements whose 95% uncertainty regions a net
// draws (see [ParseRegions]).
type Regions struct {
	All  bool
	Type string  // a type code: the measurements of that type
	Cone float64 // > 0: the measurements whose 95% cone is at least this, degrees
}

func (r Regions) any() bool { return r.All || r.Type != "" || r.Cone > 0 }

// MaxRegions bounds the regions one net draws; the sheet says when more
// were selected.
const MaxRegions = 500

// regionPoints is the number of points of a drawn region's outline.
const regionPoints = 72

// ParseRegions reads the regions option: "" or "none" (no regions), "all",
// "type:CODE" (the measurements of that type code, compared as codes are
// everywhere) or "cone:DEG" (the measurements whose 95% cone is at least DEG
// degrees, 0 < DEG <= 90: those least sure).
func ParseRegions(s string) (Regions, error) {
	switch s {
	case "", "none":
		return Regions{}, nil
	case "all":
		return Regions{All: true}, nil
	}
	if code, ok := strings.CutPrefix(s, "type:"); ok && strings.TrimSpace(code) != "" {
		return Regions{Type: strings.TrimSpace(code)}, nil
	}
	if v, ok := strings.CutPrefix(s, "cone:"); ok {
		d, err := strconv.ParseFloat(v, 64)
		if err == nil && d > 0 && d <= 90 {
			return Regions{Cone: d}, nil
		}
	}
	return Regions{}, optErr("regions", s, "want none, all, type:CODE or cone:DEG with DEG in (0, 90]")
}

// regionMarks returns the 95% regions of the poles (and of the lines on
// them) of the selected used rows drawn (planes and lines are the groups
// drawn: a part's only), in the set colours of their markers (setOf(g, i,
// k): the set of member i of group g, k 0 for poles and 1 for lines), and
// the side panel's note.
func regionMarks(used []Row, planes, lines *group, sel Regions, show Show, setOf func(g *group, i, k int) int) ([]netsvg.RegionMark, string) {
	if !sel.any() {
		return nil, ""
	}
	ms := uncertainty.NewMeasurer(uncertainty.PerMeasurement)
	lineAt := map[int]int{} // used row -> index in the lines group
	for i, r := range lines.rows {
		lineAt[r] = i
	}
	var marks []netsvg.RegionMark
	selected, without, over := 0, 0, 0
	for i, ri := range planes.rows {
		row := used[ri]
		if sel.Type != "" && !words.SameCode(row.Type, sel.Type) {
			continue
		}
		li, hasLine := lineAt[ri]
		rd, ok := reading(row, hasLine && show.Lines)
		if !ok {
			selected++
			without++
			continue
		}
		res, err := ms.Measure(rd)
		if err != nil {
			selected++
			without++
			continue
		}
		if sel.Cone > 0 && res.Pole.Region().Cone95 < sel.Cone && (res.Line == nil || res.Line.Region().Cone95 < sel.Cone) {
			continue
		}
		selected++
		if len(marks) >= MaxRegions {
			over++
			continue
		}
		add := func(e *uncertainty.Estimate, what string, set int) {
			g := e.Region()
			marks = append(marks, netsvg.RegionMark{Outline: e.Outline(regionPoints), Set: set,
				Label: fmt.Sprintf("%s %03.0f/%02.0f: 95%% region %.1f x %.1f deg, cone %.1f deg (%s)", what, e.Trend, e.Plunge, g.Long95, g.Short95, g.Cone95, e.Used)})
		}
		add(&res.Pole, "pole", setOf(planes, i, 0))
		if res.Line != nil {
			add(res.Line, "line", setOf(lines, li, 1))
		}
	}
	what := "all measurements"
	switch {
	case sel.Type != "":
		what = "type " + sel.Type
	case sel.Cone > 0:
		what = fmt.Sprintf("cone of %g deg or more", sel.Cone)
	}
	note := fmt.Sprintf("95%% regions of %s (%s): first order, Monte Carlo where first order is unreliable", words.Plural(selected-without-over, "measurement"), what)
	if without > 0 {
		note += fmt.Sprintf("; %d without a hole direction not drawn", without)
	}
	if over > 0 {
		note += fmt.Sprintf("; %d more not drawn (at most %d)", over, MaxRegions)
	}
	return marks, note
}
