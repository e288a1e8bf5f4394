package fabric

import (
	"fmt"
	"strings"

	"corvane/internal/density"
	"corvane/internal/dirstat"
	"corvane/internal/netsvg"
	"corvane/internal/projection"
	"corvane/internal/visual"
	"corvane/internal/words"
)

// Show says what a net draws.
type Show struct {
	Poles, Planes, Lines, Density, Sets bool
}

// DefaultShow is what a net draws when nothing is asked.
const DefaultShow = "poles,lines,density,sets"

// ParseShow reads a comma-separated list of poles, planes, lines, density
// and sets; "" means [DefaultShow], "none" nothing.
func ParseShow(s string) (Show, error) {
	if s == "" {
		s = DefaultShow
	}
	var sh Show
	for _, it := range strings.Split(s, ",") {
		switch strings.TrimSpace(it) {
		case "poles":
			sh.Poles = true
		case "planes":
			sh.Planes = true
		case "lines":
			sh.Lines = true
		case "density":
			sh.Density = true
		case "sets":
			sh.Sets = true
		case "", "none":
		default:
			return Show{}, optErr("show", s, "unknown item %q (want poles, planes, lines, density, sets)", strings.TrimSpace(it))
		}
	}
	return sh, nil
}

// Net grid sizes: nodes per side of the density grid.
const (
	DefaultGrid = 161
	MinGrid     = 40
	MaxGrid     = 600
)

// NetOptions are the options of [Net].
type NetOptions struct {
	Projection projection.Kind
	Show       Show
	Sets       Sets
	Weighting  Weighting
	Density    density.Method
	Sigma      bool // density in sigma units rather than multiples of uniform density
	Grid       int  // density grid nodes per side; 0 means DefaultGrid
	Title      string
	// Source names what was read (a file, a selection); AzimuthRef the north
	// the azimuths refer to, when known. Both go in the subtitle.
	Source, AzimuthRef string
	// TypeStyles draws the sets by type code in their type's colour and mark
	// (nil: the visual language's defaults over the rows' codes in code order).
	TypeStyles map[string]visual.Style
	// Part, when not nil, draws only part of the rows (a structural domain,
	// see package structdomain): Keep[i] says whether in.Rows[i] is drawn.
	// Sets are still formed on every row, so a set keeps its name and
	// members from the whole selection (as in the statistics and the
	// domains report); the net shows the kept members, their means and
	// cones, and their density.
	Part *Part
	// Regions selects the measurements whose 95% uncertainty regions are
	// drawn (their rows' Errors; see [ParseRegions]).
	Regions Regions
}

// Part is the part of a net's rows that is drawn (see [NetOptions].Part).
type Part struct {
	Name string // e.g. "domain North", said on the sheet
	Keep []bool // one per input row
}

// ParseDensity reads the density method and units: method "" (exponential),
// "exponential" or "kamb"; units "" (mud), "mud" or "sigma"; grid 0
// (DefaultGrid) or MinGrid..MaxGrid.
func ParseDensity(method, units string, grid int) (density.Method, bool, int, error) {
	if method == "" {
		method = "exponential"
	}
	m, err := density.Parse(method)
	if err != nil {
		return 0, false, 0, optErr("density", method, "%v", err)
	}
	var sigma bool
	switch units {
	case "", "mud":
	case "sigma":
		sigma = true
	default:
		return 0, false, 0, optErr("units", units, "want mud or sigma")
	}
	if grid == 0 {
		grid = DefaultGrid
	}
	if grid < MinGrid || grid > MaxGrid {
		return 0, false, 0, optErr("grid", fmt.Sprint(grid), "want %d to %d", MinGrid, MaxGrid)
	}
	return m, sigma, grid, nil
}

func subtitle(source, ref string) string {
	if ref != "" {
		return source + "; azimuths from " + ref + " north"
	}
	return source
}

// Net returns the net sheet of in: poles (filled markers), planes as great
// circles, lines (open markers), set means with their 95% cones of
// confidence, and filled density contours of the poles (of the lines when
// there are no planes). With sets shown and no set method, the mean of all
// poles and of all lines is drawn.
func Net(in Input, o NetOptions) (netsvg.Net, error) {
	if o.Part != nil && len(o.Part.Keep) != len(in.Rows) {
		return netsvg.Net{}, fmt.Errorf("fabric: part %q has %d flags for %d rows", o.Part.Name, len(o.Part.Keep), len(in.Rows))
	}
	used, skipped := usable(in.Rows)
	planes, lines, err := groups(used, o.Weighting, o.Sets, "both")
	if err != nil {
		return netsvg.Net{}, err
	}
	kept := len(in.Rows)
	if o.Part != nil {
		// keepUsed[k]: whether used row k is in the part (usable keeps the
		// rows in order).
		var keepUsed []bool
		kept = 0
		for i, r := range in.Rows {
			if o.Part.Keep[i] {
				kept++
			}
			if skipReason(r) == "" {
				keepUsed = append(keepUsed, o.Part.Keep[i])
			}
		}
		planes, lines = planes.only(keepUsed), lines.only(keepUsed)
	}
	hasSets := o.Sets.any()
	styles := o.TypeStyles
	if styles == nil && o.Sets.ByType {
		codes := make([]string, len(in.Rows))
		for i, r := range in.Rows {
			codes[i] = r.Type
		}
		styles = visual.Defaults(codes)
	}
	n := netsvg.Net{Projection: o.Projection, Caution: Caution, Title: o.Title, Subtitle: subtitle(o.Source, o.AzimuthRef)}
	// Sets: poles' sets first, then lines' sets. A set is drawn in the
	// style of its index (poles' set j: j; lines' set j: the number of
	// poles' sets + j) and its members' markers point at its place in
	// n.Sets (pos), so a set with no members in the rows drawn (a domain
	// without it) leaves the others' colours and markers as they are.
	var pos [2][]int // [poles, lines][set] -> index in n.Sets, -1 when not drawn
	if o.Show.Sets {
		styleBase := 0
		addSets := func(g *group, ofLines bool) {
			if len(g.axes) == 0 && g.assign != nil {
				// sets formed on all rows, none of them in the part drawn
				styleBase += len(g.setNames)
			}
			if len(g.axes) == 0 || (hasSets && g.assign == nil) {
				return
			}
			if g.assign == nil {
				if f, err := dirstat.FisherMean(g.axes, g.weights, true); err == nil {
					name := "mean of poles"
					if ofLines {
						name = "mean of lines"
					}
					n.Sets = append(n.Sets, netsvg.SetMark{Name: name, Mean: f.Mean, Cone: f.Cone95, Count: f.N, Lines: ofLines,
						Style: visual.Pair(styleBase)})
					styleBase++
				}
				return
			}
			k := 0
			if ofLines {
				k = 1
			}
			pos[k] = make([]int, len(g.setNames))
			for j, name := range g.setNames {
				pos[k][j] = -1
				vs, ws := g.members(j)
				f, err := dirstat.FisherMean(vs, ws, true)
				if err != nil {
					continue
				}
				sm := netsvg.SetMark{Name: name, Count: len(vs), Lines: ofLines, Mean: f.Mean, Cone: f.Cone95, Style: visual.Pair(styleBase + j)}
				if o.Sets.ByType {
					sm.Style = styles[name]
				}
				if ofLines {
					sm.Name = name + " (lines)"
				}
				pos[k][j] = len(n.Sets)
				n.Sets = append(n.Sets, sm)
			}
			styleBase += len(g.setNames)
		}
		addSets(planes, false)
		addSets(lines, true)
	}
	markSet := func(g *group, i, k int) int {
		if g.assign == nil || !o.Show.Sets || g.assign[i] < 0 || pos[k] == nil {
			return -1
		}
		return pos[k][g.assign[i]]
	}
	if o.Show.Poles {
		for i, a := range planes.axes {
			n.Poles = append(n.Poles, netsvg.Mark{Axis: a, Set: markSet(planes, i, 0)})
		}
	}
	if o.Show.Planes {
		for i, r := range planes.rows {
			n.Planes = append(n.Planes, netsvg.PlaneMark{Plane: used[r].Plane, Set: markSet(planes, i, 0)})
		}
	}
	if o.Show.Lines {
		for i, a := range lines.axes {
			n.Lines = append(n.Lines, netsvg.Mark{Axis: a, Set: markSet(lines, i, 1)})
		}
	}
	n.Regions, n.RegionsNote = regionMarks(used, planes, lines, o.Regions, o.Show, markSet)
	notes := []string{words.Plural(len(in.Rows), "row")}
	if o.Part != nil {
		notes = append(notes, fmt.Sprintf("%s: %d of the %s drawn; sets formed on all rows", o.Part.Name, kept, words.Plural(len(in.Rows), "row")))
	}
	notes = append(notes, skipNotes(skipped)...)
	if o.Show.Density {
		g, of := planes, "poles"
		if len(g.axes) == 0 {
			g, of = lines, "lines"
		}
		if len(g.axes) > 0 {
			e, err := density.New(o.Density, g.axes, g.weights)
			if err != nil {
				return netsvg.Net{}, optErr("density", "", "%v", err)
			}
			grid := o.Grid
			if grid == 0 {
				grid = DefaultGrid
			}
			n.Density = netsvg.ContourGrid(o.Projection, e, grid, o.Sigma)
			notes = append(notes, fmt.Sprintf("density of %d %s", len(g.axes), of))
		}
	}
	if o.Weighting.On {
		notes = append(notes, fmt.Sprintf("Terzaghi weights, cap %.3g", o.Weighting.Cap))
	}
	if o.Sets.Auto > 0 {
		notes = append(notes, fmt.Sprintf("sets: k-means on axes, seed %d", o.Sets.Seed))
	}
	if o.Sets.ByType {
		notes = append(notes, "sets: one per type code")
	}
	for _, g := range []*group{planes, lines} {
		if g.assign == nil || !o.Show.Sets {
			continue
		}
		if un := g.unassigned(); un > 0 {
			notes = append(notes, fmt.Sprintf("%d %s in no set (grey)", un, g.kind))
		}
	}
	if in.Rejected > 0 {
		notes = append(notes, words.Plural(in.Rejected, "row")+" rejected (see messages)")
	}
	n.Notes = notes
	return n, nil
}
