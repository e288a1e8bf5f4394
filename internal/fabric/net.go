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
	used, skipped := usable(in.Rows)
	planes, lines, err := groups(used, o.Weighting, o.Sets, "both")
	if err != nil {
		return netsvg.Net{}, err
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
	// Sets: poles' sets first (their indices match markers), then lines'
	// sets; lines' markers use indices offset by the number of pole sets.
	lineOffset := 0
	if o.Show.Sets {
		addSets := func(g *group, ofLines bool) {
			if len(g.axes) == 0 || (hasSets && g.assign == nil) {
				return
			}
			if g.assign == nil {
				if f, err := dirstat.FisherMean(g.axes, g.weights, true); err == nil {
					name := "mean of poles"
					if ofLines {
						name = "mean of lines"
					}
					n.Sets = append(n.Sets, netsvg.SetMark{Name: name, Mean: f.Mean, Cone: f.Cone95, Count: f.N, Lines: ofLines})
				}
				return
			}
			for j, name := range g.setNames {
				vs, ws := g.members(j)
				f, err := dirstat.FisherMean(vs, ws, true)
				if err != nil {
					continue
				}
				sm := netsvg.SetMark{Name: name, Count: len(vs), Lines: ofLines, Mean: f.Mean, Cone: f.Cone95}
				if o.Sets.ByType {
					sm.Style = styles[name]
				}
				if ofLines {
					sm.Name = name + " (lines)"
				}
				n.Sets = append(n.Sets, sm)
			}
		}
		addSets(planes, false)
		lineOffset = len(n.Sets)
		addSets(lines, true)
	}
	markSet := func(g *group, i, offset int) int {
		if g.assign == nil || !o.Show.Sets || g.assign[i] < 0 {
			return -1
		}
		return g.assign[i] + offset
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
			n.Lines = append(n.Lines, netsvg.Mark{Axis: a, Set: markSet(lines, i, lineOffset)})
		}
	}
	notes := []string{words.Plural(len(in.Rows), "row")}
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
