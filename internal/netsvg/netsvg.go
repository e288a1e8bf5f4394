// Package netsvg draws lower-hemisphere nets and rose diagrams as SVG
// documents written to an io.Writer.
//
// The sheets are meant for reports: a white background, black line work,
// text in a plain sans-serif face, and the colours and marks of corvane's
// one visual language (package visual: the Okabe & Ito colour-blind-safe
// palette, each colour paired with its own marker shape, so that a greyscale
// print still tells the sets apart). A set drawn for a type code takes the
// type's own colour and mark, the same as on the web page.
// Density fills use a light-to-dark ramp whose lightness falls steadily, so the
// order of the levels survives greyscale printing too.
//
// netsvg imports only the standard library, corvane's math packages and its
// wording rules (package words).
package netsvg

import (
	"bufio"
	"bytes"
	"encoding/xml"
	"fmt"
	"io"
	"math"
	"strings"

	"corvane/internal/geom"
	"corvane/internal/projection"
	"corvane/internal/visual"
	"corvane/internal/words"
)

// densityRamp runs from light to dark with falling lightness.
var densityRamp = []string{"#f3f0df", "#d4e4c4", "#a3cdb3", "#6fb0a6", "#46899a", "#2f6488", "#27426d", "#1c2549"}

// Mark is a pole or a line to plot. Set is the index into Net.Sets, or -1.
type Mark struct {
	Axis geom.Vec3
	Set  int
}

// PlaneMark is a plane drawn as a great circle.
type PlaneMark struct {
	Plane geom.Plane
	Set   int
}

// SetMark is a set's mean axis with its cone of confidence (degrees; 0 or NaN
// for none), drawn as a large marker and a small circle.
type SetMark struct {
	Name  string
	Mean  geom.Vec3
	Cone  float64
	Count int
	Lines bool // a set of lines rather than poles
	// Style is how the set and its members are drawn; empty parts take the
	// visual language's default for the set's index.
	Style visual.Style
}

// Zone is a shaded region of the net, such as the critical zone of a
// kinematic check: a closed outline of directions (folded to the lower
// hemisphere). Tone picks the shading, 0 for a primary zone, 1 for a
// secondary one, 2 for a third kind; each tone has its own colour and hatch
// direction so that overlapping zones stay readable in greyscale.
type Zone struct {
	Label   string
	Outline []geom.Vec3
	Tone    int
}

// zoneTones are the fills of the zone tones: colour, hatch angle.
var zoneTones = []struct {
	colour string
	angle  int
}{{"#D55E00", 45}, {"#E69F00", -45}, {"#56B4E9", 0}}

// CircleMark is a small circle: the cone of half-angle Half degrees about
// Axis (both ends), e.g. the possible poles of an unoriented measurement
// about its hole axis, or a friction circle. Set colours it (-1 for grey);
// Dashed draws it dashed.
type CircleMark struct {
	Axis   geom.Vec3
	Half   float64
	Set    int
	Dashed bool
}

// RegionMark is the 95% region of one measured direction (a pole or a
// line): a closed outline of directions, drawn as a thin outline with a
// light fill in its set's colour (Set -1 for grey). Label is its tooltip.
type RegionMark struct {
	Outline []geom.Vec3
	Set     int
	Label   string
}

// Net is everything one net sheet shows.
type Net struct {
	Projection projection.Kind
	Title      string
	Subtitle   string // e.g. the input file
	Poles      []Mark // poles of planes
	Planes     []PlaneMark
	Lines      []Mark
	Sets       []SetMark
	Density    *Contours    // nil for none
	Zones      []Zone       // shaded regions, drawn under everything else
	Circles    []CircleMark // small circles (unoriented measurements, friction circles)
	// CirclesNote describes the circles in the side panel, "" for none.
	CirclesNote string
	// Regions are measurement uncertainty regions; RegionsNote describes
	// them in the side panel.
	Regions     []RegionMark
	RegionsNote string
	// Face, when set, is a slope or excavation face drawn as a heavy great
	// circle with a key entry.
	Face    *geom.Plane
	Notes   []string // further lines for the side panel (counts, weighting)
	Caution string   // printed at the foot of the sheet
}

// sheet geometry in SVG user units (1/96 inch)
const (
	sheetW = 860.0
	sheetH = 690.0
	netCX  = 315.0
	netCY  = 355.0
	netR   = 250.0
	panelX = 620.0
	// fontFamily is a presentation attribute rather than a style, so a page
	// under a strict Content Security Policy can show the sheet inline.
	fontFamily = "'DejaVu Sans',Helvetica,Arial,sans-serif"
)

type svgw struct {
	w   *bufio.Writer
	err error
}

func (s *svgw) printf(format string, args ...any) {
	if s.err != nil {
		return
	}
	_, s.err = fmt.Fprintf(s.w, format, args...)
}

func esc(t string) string {
	var b strings.Builder
	_ = xml.EscapeText(&b, []byte(t))
	return b.String()
}

func netXY(p projection.Point) (float64, float64) {
	return netCX + netR*p.X, netCY - netR*p.Y
}

func pathOf(pts []projection.Point, closed bool) string {
	var b strings.Builder
	for i, p := range pts {
		x, y := netXY(p)
		if i == 0 {
			fmt.Fprintf(&b, "M%.2f %.2f", x, y)
		} else {
			fmt.Fprintf(&b, "L%.2f %.2f", x, y)
		}
	}
	if closed {
		b.WriteString("Z")
	}
	return b.String()
}

// marker writes a marker of the given shape (a mark of package visual)
// centred at (x, y) with size r.
func (s *svgw) marker(shape string, x, y, r float64, attrs string) {
	s.printf(`<path d="%s" %s/>`+"\n", visual.MarkPath(shape, x, y, r), attrs)
}

// setStyle returns the colour and mark of set i of n (grey circles for no set).
func setStyle(n *Net, i int) (colour, shape string) {
	if i < 0 || i >= len(n.Sets) {
		if i < 0 {
			return "#6b6b6b", "circle"
		}
		p := visual.Pair(i)
		return p.Colour, p.Mark
	}
	st := n.Sets[i].Style
	p := visual.Pair(i)
	if st.Colour == "" {
		st.Colour = p.Colour
	}
	if st.Mark == "" {
		st.Mark = p.Mark
	}
	return st.Colour, st.Mark
}

// WriteNet writes the net n as a complete SVG document to w.
// The sheet grows downward when the side panel needs more room, so no
// legend text leaves the image.
func WriteNet(w io.Writer, n Net) error {
	var body bytes.Buffer
	s := &svgw{w: bufio.NewWriter(&body)}
	title := n.Title
	if title == "" {
		title = "Net"
	}
	s.printf("<title>%s</title>\n", esc(title))
	s.printf(`<rect width="100%%" height="100%%" fill="#ffffff"/>` + "\n")
	s.printf(`<defs><clipPath id="primitive"><circle cx="%.2f" cy="%.2f" r="%.2f"/></clipPath></defs>`+"\n", netCX, netCY, netR)

	// Density fills, clipped to the primitive circle.
	if c := n.Density; c != nil && len(c.Levels) > 0 {
		s.printf(`<g id="density" clip-path="url(#primitive)" fill-rule="evenodd">` + "\n")
		for k, lvl := range c.Levels {
			rs := rings(c.Grid, c.Extent, lvl)
			if len(rs) == 0 {
				continue
			}
			var d strings.Builder
			for _, r := range rs {
				d.WriteString(pathOf(r, true))
			}
			s.printf(`<path d="%s" fill="%s" stroke="#3a3a3a" stroke-width="0.4" stroke-opacity="0.6"><title>&#8805; %s %s</title></path>`+"\n",
				d.String(), rampColour(k, len(c.Levels)), fmtNum(lvl), esc(c.Unit))
		}
		s.printf("</g>\n")
	}

	s.zones(n)

	// Primitive circle, centre cross, tick ring and north mark.
	s.printf(`<circle cx="%.2f" cy="%.2f" r="%.2f" fill="none" stroke="#000" stroke-width="1.3"/>`+"\n", netCX, netCY, netR)
	s.printf(`<path d="M%.2f %.2fh12M%.2f %.2fv12" stroke="#000" stroke-width="0.8"/>`+"\n", netCX-6, netCY, netCX, netCY-6)
	s.azimuthRing(` id="ticks"`)

	// Great circles.
	if len(n.Planes) > 0 {
		s.printf(`<g id="planes" fill="none" stroke-width="0.5" stroke-opacity="0.6">` + "\n")
		for _, pm := range n.Planes {
			col, _ := setStyle(&n, pm.Set)
			if pm.Set < 0 {
				col = "#8a8a8a"
			}
			s.printf(`<path d="%s" stroke="%s"/>`+"\n", pathOf(n.Projection.GreatCircle(pm.Plane, 90), false), col)
		}
		s.printf("</g>\n")
	}

	if n.Face != nil {
		d := pathOf(n.Projection.GreatCircle(*n.Face, 180), false)
		s.printf(`<path id="face" d="%s" fill="none" stroke="#000" stroke-width="2.4"/>`+"\n", d)
	}

	// Small circles.
	if len(n.Circles) > 0 {
		s.printf(`<g id="circles" fill="none" stroke-width="0.8">` + "\n")
		for _, c := range n.Circles {
			col, _ := setStyle(&n, c.Set)
			dash := ""
			if c.Dashed {
				dash = ` stroke-dasharray="4 3"`
			}
			parts, closed := n.Projection.SmallCircle(c.Axis, c.Half, 120)
			for _, p := range parts {
				s.printf(`<path d="%s" stroke="%s"%s/>`+"\n", pathOf(p, closed), col, dash)
			}
		}
		s.printf("</g>\n")
	}

	// Measurement regions: a part of a region that crosses the horizontal
	// is drawn open on each side, folded to the lower hemisphere.
	if len(n.Regions) > 0 {
		s.printf(`<g id="regions" stroke-width="0.9" stroke-linejoin="round">` + "\n")
		for _, r := range n.Regions {
			col, _ := setStyle(&n, r.Set)
			if r.Set < 0 {
				col = "#6b6b6b"
			}
			parts, closed := n.Projection.Loop(r.Outline)
			fill := "none"
			if closed {
				fill = col
			}
			for _, p := range parts {
				s.printf(`<path d="%s" fill="%s" fill-opacity="0.12" stroke="%s"><title>%s</title></path>`+"\n", pathOf(p, closed), fill, col, esc(r.Label))
			}
		}
		s.printf("</g>\n")
	}

	// Poles (filled) and lines (open).
	if len(n.Poles) > 0 {
		s.printf(`<g id="poles" stroke="#ffffff" stroke-width="0.6">` + "\n")
		for _, m := range n.Poles {
			col, shape := setStyle(&n, m.Set)
			x, y := netXY(n.Projection.Project(m.Axis))
			r := 3.2
			if m.Set < 0 {
				r = 2.4
			}
			s.marker(shape, x, y, r, fmt.Sprintf(`fill="%s"`, col))
		}
		s.printf("</g>\n")
	}
	if len(n.Lines) > 0 {
		s.printf(`<g id="lines" fill="#ffffff" stroke-width="1.3">` + "\n")
		for _, m := range n.Lines {
			col, shape := setStyle(&n, m.Set)
			x, y := netXY(n.Projection.Project(m.Axis))
			s.marker(shape, x, y, 3.4, fmt.Sprintf(`stroke="%s"`, col))
		}
		s.printf("</g>\n")
	}

	// Set means and cones.
	if len(n.Sets) > 0 {
		s.printf(`<g id="sets">` + "\n")
		for i, st := range n.Sets {
			col, _ := setStyle(&n, i)
			if !st.Lines {
				// the mean plane of a set of poles, as a broad great circle
				d := pathOf(n.Projection.GreatCircle(geom.PlaneOf(st.Mean), 180), false)
				s.printf(`<path d="%s" fill="none" stroke="#ffffff" stroke-width="4.2"/>`+"\n", d)
				s.printf(`<path d="%s" fill="none" stroke="%s" stroke-width="2.2" stroke-dasharray="9 3"/>`+"\n", d, col)
			}
		}
		for i, st := range n.Sets {
			col, shape := setStyle(&n, i)
			if st.Cone > 0 && st.Cone < 90 {
				parts, closed := n.Projection.SmallCircle(st.Mean, st.Cone, 180)
				for _, p := range parts {
					d := pathOf(p, closed)
					s.printf(`<path d="%s" fill="none" stroke="#ffffff" stroke-width="3.6"/>`+"\n", d)
					s.printf(`<path d="%s" fill="none" stroke="%s" stroke-width="1.6"/>`+"\n", d, col)
				}
			}
			x, y := netXY(n.Projection.Project(st.Mean))
			s.marker(shape, x, y, 6.5, fmt.Sprintf(`fill="%s" stroke="#000" stroke-width="1.4"`, col))
			s.printf(`<text x="%.2f" y="%.2f" font-size="12" font-weight="bold" stroke="#fff" stroke-width="3" paint-order="stroke">%s</text>`+"\n",
				x+9, y-8, esc(st.Name))
		}
		s.printf("</g>\n")
	}

	height := s.panel(n)
	s.printf("</svg>\n")
	if s.err == nil {
		s.err = s.w.Flush()
	}
	if s.err != nil {
		return s.err
	}
	out := bufio.NewWriter(w)
	fmt.Fprintf(out, `<?xml version="1.0" encoding="UTF-8"?>`+"\n")
	fmt.Fprintf(out, `<svg xmlns="http://www.w3.org/2000/svg" width="%.0f" height="%.0f" viewBox="0 0 %.0f %.0f" font-family="%s">`+"\n",
		sheetW, height, sheetW, height, fontFamily)
	if _, err := out.Write(body.Bytes()); err != nil {
		return err
	}
	return out.Flush()
}

// zones writes the hatch patterns and the shaded zones, clipped to the
// primitive circle.
func (s *svgw) zones(n Net) {
	if len(n.Zones) == 0 {
		return
	}
	s.printf("<defs>\n")
	for i, t := range zoneTones {
		s.printf(`<pattern id="zone%d" patternUnits="userSpaceOnUse" width="7" height="7" patternTransform="rotate(%d)">`+
			`<rect width="7" height="7" fill="%s" fill-opacity="0.16"/><path d="M0 0v7" stroke="%s" stroke-width="1.1" stroke-opacity="0.7"/></pattern>`+"\n",
			i, t.angle, t.colour, t.colour)
	}
	s.printf("</defs>\n")
	s.printf(`<g id="zones" clip-path="url(#primitive)">` + "\n")
	for _, z := range n.Zones {
		if len(z.Outline) < 3 {
			continue
		}
		pts := make([]projection.Point, len(z.Outline))
		for i, v := range z.Outline {
			pts[i] = n.Projection.Project(v)
		}
		t := z.Tone % len(zoneTones)
		s.printf(`<path d="%s" fill="url(#zone%d)" stroke="%s" stroke-width="1" stroke-linejoin="round"><title>%s</title></path>`+"\n",
			pathOf(pts, true), t, zoneTones[t].colour, esc(z.Label))
	}
	s.printf("</g>\n")
}

// azimuthRing draws the azimuth ticks round the outer circle (every 10 deg,
// longer every 30), their labels and the north mark (a solid arrowhead above
// the circle and the letter N). attrs is added to the ticks' group element.
func (s *svgw) azimuthRing(attrs string) {
	s.printf(`<g%s stroke="#000" stroke-width="0.8">`+"\n", attrs)
	for a := 0; a < 360; a += 10 {
		l := 5.0
		if a%30 == 0 {
			l = 9
		}
		sa, ca := math.Sincos(geom.Rad(float64(a)))
		s.printf(`<line x1="%.2f" y1="%.2f" x2="%.2f" y2="%.2f"/>`+"\n",
			netCX+netR*sa, netCY-netR*ca, netCX+(netR+l)*sa, netCY-(netR+l)*ca)
	}
	s.printf("</g>\n")
	s.printf(`<g font-size="10" fill="#444" text-anchor="middle">` + "\n")
	for a := 30; a < 360; a += 30 {
		sa, ca := math.Sincos(geom.Rad(float64(a)))
		s.printf(`<text x="%.2f" y="%.2f">%03d</text>`+"\n", netCX+(netR+20)*sa, netCY-(netR+20)*ca+3.5, a)
	}
	s.printf("</g>\n")
	s.printf(`<path d="M%.2f %.2fl-6 12h12z" fill="#000"/>`+"\n", netCX, netCY-netR-24)
	s.printf(`<text x="%.2f" y="%.2f" font-size="15" font-weight="bold" text-anchor="middle">N</text>`+"\n", netCX, netCY-netR-29)
}

func rampColour(k, n int) string {
	if n <= 1 {
		return densityRamp[len(densityRamp)/2]
	}
	i := int(math.Round(float64(k) * float64(len(densityRamp)-1) / float64(n-1)))
	return densityRamp[i]
}

func fmtNum(v float64) string {
	if v == math.Trunc(v) {
		return fmt.Sprintf("%.0f", v)
	}
	return strings.TrimRight(strings.TrimRight(fmt.Sprintf("%.2f", v), "0"), ".")
}

// panelChars is how many characters of a size-px line fit the side panel:
// the panel runs from panelX to 12 units short of the sheet's edge, and a
// character of the sans-serif face is taken as 0.62 em wide (wider than the
// average of DejaVu Sans, so the estimate errs toward shorter lines).
func panelChars(size float64) int {
	return int((sheetW - 12 - panelX) / (0.62 * size))
}

// wrapText breaks text into lines of at most width characters (a longer
// word stays whole on a line of its own).
func wrapText(text string, width int) []string {
	var out []string
	var cur string
	for _, w := range strings.Fields(text) {
		if cur != "" && len([]rune(cur))+1+len([]rune(w)) > width {
			out = append(out, cur)
			cur = w
			continue
		}
		if cur != "" {
			cur += " "
		}
		cur += w
	}
	if cur != "" {
		out = append(out, cur)
	}
	return out
}

// panel writes the side panel: title, projection, counts, sets, density
// legend, and the caution at the foot of the sheet. Every line is wrapped to
// the panel's width. It returns the sheet height the panel needs.
func (s *svgw) panel(n Net) float64 {
	y := 40.0
	lineAt := func(x float64, size float64, weight, text string) {
		for _, l := range wrapText(text, int(float64(panelChars(size))-(x-panelX)/(0.62*size))) {
			s.printf(`<text x="%.1f" y="%.1f" font-size="%.0f"%s>%s</text>`+"\n", x, y, size, weight, esc(l))
			y += size + 6
		}
	}
	line := func(size float64, weight, text string) { lineAt(panelX, size, weight, text) }
	s.printf(`<text x="24" y="34" font-size="18" font-weight="bold">%s</text>`+"\n", esc(orDefault(n.Title, "Net")))
	if n.Subtitle != "" {
		s.printf(`<text x="24" y="54" font-size="11" fill="#444">%s</text>`+"\n", esc(n.Subtitle))
	}
	line(13, ` font-weight="bold"`, "Lower hemisphere")
	line(12, "", n.Projection.String()+" projection")
	y += 6
	if len(n.Poles) > 0 {
		line(11, "", words.Plural(len(n.Poles), "pole")+" to planes")
	}
	if len(n.Planes) > 0 {
		line(11, "", words.Plural(len(n.Planes), "great circle"))
	}
	if len(n.Lines) > 0 {
		line(11, "", words.Plural(len(n.Lines), "line"))
	}
	for _, note := range n.Notes {
		line(11, "", note)
	}
	if n.Face != nil {
		s.printf(`<path d="M%.1f %.1fh12" stroke="#000" stroke-width="2.4"/>`+"\n", panelX, y-4)
		s.printf(`<text x="%.1f" y="%.1f" font-size="11">face %02.0f/%03.0f (dip/dip direction)</text>`+"\n", panelX+16, y, n.Face.Dip, n.Face.DipDirection)
		y += 16
	}
	if n.CirclesNote != "" {
		s.printf(`<path d="M%.1f %.1fh12" stroke="#6b6b6b" stroke-dasharray="4 3"/>`+"\n", panelX, y-4)
		s.printf(`<text x="%.1f" y="%.1f" font-size="11">%s</text>`+"\n", panelX+16, y, esc(n.CirclesNote))
		y += 16
	}
	if n.RegionsNote != "" {
		s.printf(`<path d="M%.1f %.1fq6 -8 12 0" fill="#6b6b6b" fill-opacity="0.12" stroke="#6b6b6b" stroke-width="0.9"/>`+"\n", panelX, y-2)
		for i, t := range wrapText(n.RegionsNote, panelChars(11)-3) {
			if i > 0 {
				y += 13
			}
			s.printf(`<text x="%.1f" y="%.1f" font-size="11">%s</text>`+"\n", panelX+16, y, esc(t))
		}
		y += 16
	}
	if len(n.Zones) > 0 {
		y += 4
		seen := map[string]bool{}
		for _, z := range n.Zones {
			if seen[z.Label] {
				continue
			}
			seen[z.Label] = true
			s.printf(`<rect x="%.1f" y="%.1f" width="22" height="13" fill="url(#zone%d)" stroke="%s" stroke-width="0.8"/>`+"\n",
				panelX, y-11, z.Tone%len(zoneTones), zoneTones[z.Tone%len(zoneTones)].colour)
			s.printf(`<text x="%.1f" y="%.1f" font-size="11">%s</text>`+"\n", panelX+30, y, esc(z.Label))
			y += 17
		}
	}
	// symbol key
	if len(n.Poles) > 0 || len(n.Lines) > 0 {
		y += 4
		if len(n.Poles) > 0 {
			s.marker("circle", panelX+5, y-4, 3.2, `fill="#6b6b6b"`)
			lineAt(panelX+16, 11, "", "pole (filled)")
			y += 2
		}
		if len(n.Lines) > 0 {
			s.marker("circle", panelX+5, y-4, 3.4, `fill="#fff" stroke="#6b6b6b" stroke-width="1.3"`)
			lineAt(panelX+16, 11, "", "line (open)")
			y += 2
		}
	}
	if len(n.Sets) > 0 {
		y += 8
		line(12, ` font-weight="bold"`, "Sets: mean and 95% cone")
		s.printf(`<g id="set-legend">` + "\n")
		for i, st := range n.Sets {
			col, shape := setStyle(&n, i)
			t, p := geom.LineOf(st.Mean).Trend, geom.LineOf(st.Mean).Plunge
			desc := fmt.Sprintf("line %03.0f/%02.0f", t, p)
			if !st.Lines {
				pl := geom.PlaneOf(st.Mean)
				desc = fmt.Sprintf("plane %02.0f/%03.0f", pl.Dip, pl.DipDirection)
			}
			if st.Cone > 0 && !math.IsNaN(st.Cone) {
				desc += fmt.Sprintf("  \u00b1%.1f\u00b0", st.Cone)
			}
			// data-* carry the key for a page that shows it beside the net.
			s.printf(`<g class="set-key" data-name="%s" data-colour="%s" data-mark="%s" data-count="%d" data-desc="%s">`+"\n",
				esc(st.Name), col, shape, st.Count, esc(desc))
			s.marker(shape, panelX+7, y-4, 5.5, fmt.Sprintf(`fill="%s" stroke="#000" stroke-width="1.2"`, col))
			lineAt(panelX+18, 11, ` font-weight="bold"`, fmt.Sprintf("%s  n=%d", st.Name, st.Count))
			y -= 3
			lineAt(panelX+18, 11, "", desc)
			y += 3
			s.printf("</g>\n")
		}
		s.printf("</g>\n")
		if !n.Sets[0].Lines {
			line(9, ` fill="#444"`, "plane = dip/dip direction of the mean pole, drawn as a dashed great circle")
		}
	}
	if c := n.Density; c != nil && len(c.Levels) > 0 {
		y += 10
		line(12, ` font-weight="bold"`, "Density of poles")
		line(10, ` fill="#444"`, c.Method)
		unit := c.Unit
		if unit == "MUD" {
			unit = "multiples of uniform density"
		}
		line(10, ` fill="#444"`, "contours in "+unit)
		for k := len(c.Levels) - 1; k >= 0; k-- {
			lo := c.Levels[k]
			label := "\u2265 " + fmtNum(lo)
			if k < len(c.Levels)-1 {
				label = fmtNum(lo) + " \u2013 " + fmtNum(c.Levels[k+1])
			}
			s.printf(`<rect x="%.1f" y="%.1f" width="22" height="13" fill="%s" stroke="#3a3a3a" stroke-width="0.5"/>`+"\n",
				panelX, y-11, rampColour(k, len(c.Levels)))
			lineAt(panelX+30, 11, "", label)
			y -= 1
		}
		mt, mp := geom.LineOf(c.MaxAt).Trend, geom.LineOf(c.MaxAt).Plunge
		line(10, ` fill="#444"`, fmt.Sprintf("maximum %s at %03.0f/%02.0f", fmtNum(math.Round(c.Max*100)/100), mt, mp))
	}
	height := math.Max(sheetH, y+60)
	if n.Caution != "" {
		s.wrapped(24, height-38, height, 112, 9.5, n.Caution)
	}
	return height
}

// wrapped writes text broken into lines of at most width characters,
// moved up when needed so that its last line stays above bottom.
func (s *svgw) wrapped(x, y, bottom float64, width int, size float64, text string) {
	lines := wrapText(text, width)
	// Move a long text up so that its last line stays on the sheet.
	if last := y + float64(len(lines)-1)*(size+4); last > bottom-8 {
		y -= last - (bottom - 8)
	}
	for _, l := range lines {
		s.printf(`<text x="%.1f" y="%.1f" font-size="%.1f" fill="#333" font-style="italic">%s</text>`+"\n", x, y, size, esc(l))
		y += size + 4
	}
}

func orDefault(s, d string) string {
	if s == "" {
		return d
	}
	return s
}
