// Package visual is corvane's one visual language: the colour and mark of
// each structure type, the fills of orientation-run confidence and the marks
// of QA finding severity. The web page (through the API), the SVG nets and
// roses and the QA report all take them from here; nothing else defines a
// colour or a mark for data.
//
// Colours come from the Okabe & Ito colour-blind-safe qualitative palette
// (M. Okabe and K. Ito, 2008, "Color Universal Design (CUD): how to make
// figures and presentations that are friendly to colorblind people",
// https://jfly.uni-koeln.de/color/), chosen to stay distinguishable with the
// common colour-vision deficiencies. Every meaning carried by a colour is
// also carried by a shape, a pattern or a word, so a greyscale print keeps
// it.
//
// visual is pure: it imports only the standard library.
package visual

import (
	"fmt"
	"math"
	"regexp"
	"slices"
	"strconv"
	"strings"
)

// Palette holds the Okabe & Ito colours in the order types receive them.
// Yellow comes last: it is the page's highlight and needs its black outline.
var Palette = []string{"#0072B2", "#D55E00", "#009E73", "#CC79A7", "#E69F00", "#56B4E9", "#000000", "#F0E442"}

// Marks are the marker shapes, in the order types receive them.
var Marks = []string{"circle", "square", "triangle", "diamond", "down", "hexagon", "star", "cross"}

// Style is how one structure type is drawn everywhere: a colour (#rrggbb)
// and a mark (one of [Marks]).
type Style struct {
	Colour string `json:"colour"`
	Mark   string `json:"mark"`
}

// Pair returns the k-th default style. The first len(Palette) pairs pair
// colour i with mark i; later ones shift the marks, so the 64 first pairs
// all differ.
func Pair(k int) Style {
	if k < 0 {
		k = 0
	}
	n := len(Palette)
	return Style{Colour: Palette[k%n], Mark: Marks[(k%n+k/n)%len(Marks)]}
}

// Next returns the first default style not in used, or Pair(len(used))
// when all 64 are taken.
func Next(used []Style) Style {
	taken := map[Style]bool{}
	for _, s := range used {
		taken[Style{Colour: strings.ToUpper(s.Colour), Mark: s.Mark}] = true
	}
	for k := 0; k < len(Palette)*len(Marks); k++ {
		p := Pair(k)
		if !taken[Style{Colour: strings.ToUpper(p.Colour), Mark: p.Mark}] {
			return p
		}
	}
	return Pair(len(used))
}

// Defaults gives type codes that have no stored style (a file with no
// vocabulary) the default styles in sorted code order, as a project whose
// types were stored without a style gets them ([Fill]); repeats are ignored.
func Defaults(codes []string) map[string]Style {
	cs := slices.Clone(codes)
	slices.Sort(cs)
	cs = slices.Compact(cs)
	st := Fill(make([]Style, len(cs)))
	m := make(map[string]Style, len(cs))
	for i, c := range cs {
		m[c] = st[i]
	}
	return m
}

// Fill gives every empty style in styles (in order) the next free default,
// leaving set ones alone. It returns styles.
func Fill(styles []Style) []Style {
	var used []Style
	for _, s := range styles {
		if s.Colour != "" && s.Mark != "" {
			used = append(used, s)
		}
	}
	for i, s := range styles {
		if s.Colour != "" && s.Mark != "" {
			continue
		}
		nx := Next(used)
		if s.Colour == "" {
			s.Colour = nx.Colour
		}
		if s.Mark == "" {
			s.Mark = nx.Mark
		}
		styles[i] = s
		used = append(used, s)
	}
	return styles
}

var colourRe = regexp.MustCompile(`^#[0-9A-Fa-f]{6}$`)

// CheckColour returns an error unless c is "" or a #rrggbb colour.
func CheckColour(c string) error {
	if c != "" && !colourRe.MatchString(c) {
		return fmt.Errorf("colour must be #rrggbb (six hex digits), got %q", c)
	}
	return nil
}

// CheckMark returns an error unless m is "" or one of [Marks].
func CheckMark(m string) error {
	if m == "" {
		return nil
	}
	for _, k := range Marks {
		if m == k {
			return nil
		}
	}
	return fmt.Errorf("mark must be one of %s, got %q", strings.Join(Marks, ", "), m)
}

func num(v float64) string {
	v = math.Round(v*100) / 100
	if v == 0 {
		v = 0 // no "-0"
	}
	return strconv.FormatFloat(v, 'f', -1, 64)
}

// MarkPath returns the SVG path data of mark centred at (x, y) with size r
// (about the radius; the shapes are balanced to look the same size). An
// unknown mark is a circle.
func MarkPath(mark string, x, y, r float64) string {
	var pts [][2]float64
	poly := func(n int, rot, rr float64) {
		for k := 0; k < n; k++ {
			a := rot + 2*math.Pi*float64(k)/float64(n)
			pts = append(pts, [2]float64{x + rr*math.Sin(a), y - rr*math.Cos(a)})
		}
	}
	switch mark {
	case "square":
		q := r * 0.89
		pts = [][2]float64{{x - q, y - q}, {x + q, y - q}, {x + q, y + q}, {x - q, y + q}}
	case "triangle":
		poly(3, 0, r*1.3)
	case "down":
		poly(3, math.Pi, r*1.3)
	case "diamond":
		poly(4, 0, r*1.25)
	case "hexagon":
		poly(6, math.Pi/6, r*1.05)
	case "star":
		for k := 0; k < 10; k++ {
			rr := r * 1.4
			if k%2 == 1 {
				rr = r * 0.62
			}
			a := math.Pi * float64(k) / 5
			pts = append(pts, [2]float64{x + rr*math.Sin(a), y - rr*math.Cos(a)})
		}
	case "cross":
		w := r * 0.42
		for _, p := range [][2]float64{{-w, -r}, {w, -r}, {w, -w}, {r, -w}, {r, w}, {w, w}, {w, r}, {-w, r}, {-w, w}, {-r, w}, {-r, -w}, {-w, -w}} {
			pts = append(pts, [2]float64{x + p[0]*1.2, y + p[1]*1.2})
		}
	default: // circle, as two arcs
		return "M" + num(x-r) + " " + num(y) + "a" + num(r) + " " + num(r) + " 0 1 0 " + num(2*r) + " 0a" + num(r) + " " + num(r) + " 0 1 0 " + num(-2*r) + " 0Z"
	}
	var b strings.Builder
	for i, p := range pts {
		if i == 0 {
			b.WriteByte('M')
		} else {
			b.WriteByte('L')
		}
		b.WriteString(num(p[0]))
		b.WriteByte(' ')
		b.WriteString(num(p[1]))
	}
	b.WriteByte('Z')
	return b.String()
}

// Confidence is how a run-confidence rating is drawn: a fill colour, a
// pattern over it (none, hatch, dots or cross) and the word used in every
// legend.
type Confidence struct {
	Code    string `json:"code"`
	Word    string `json:"word"`
	Fill    string `json:"fill"`
	Pattern string `json:"pattern"`
	// SVG is a <pattern> element with id PatternID(code), or "" for a plain fill.
	SVG string `json:"svg"`
}

// Confidences lists the run ratings from best to worst. Ratings outside
// this list are drawn as "none".
var Confidences = []Confidence{
	{Code: "good", Word: "good", Fill: "#0072B2"},
	{Code: "fair", Word: "fair", Fill: "#56B4E9", Pattern: "hatch"},
	{Code: "poor", Word: "poor", Fill: "#E69F00", Pattern: "dots"},
	{Code: "none", Word: "none (unusable)", Fill: "#FFFFFF", Pattern: "cross"},
}

func init() {
	for i := range Confidences {
		Confidences[i].SVG = patternSVG(Confidences[i])
	}
}

// ConfidenceOf returns the drawing of a rating (case and spaces ignored);
// an unknown or empty rating is "none".
func ConfidenceOf(rating string) Confidence {
	r := strings.ToLower(strings.TrimSpace(rating))
	for _, c := range Confidences {
		if c.Code == r {
			return c
		}
	}
	return Confidences[len(Confidences)-1]
}

// PatternID is the id of the confidence's <pattern> element.
func PatternID(code string) string { return "conf-" + code }

// FillOf is the SVG fill of a rating: its colour, or url(#pattern).
func FillOf(rating string) string {
	c := ConfidenceOf(rating)
	if c.Pattern == "" {
		return c.Fill
	}
	return "url(#" + PatternID(c.Code) + ")"
}

func patternSVG(c Confidence) string {
	id := PatternID(c.Code)
	switch c.Pattern {
	case "hatch":
		return `<pattern id="` + id + `" width="6" height="6" patternUnits="userSpaceOnUse" patternTransform="rotate(45)"><rect width="6" height="6" fill="` + c.Fill + `"/><line x1="0" y1="0" x2="0" y2="6" stroke="#000" stroke-width="1.6"/></pattern>`
	case "dots":
		return `<pattern id="` + id + `" width="6" height="6" patternUnits="userSpaceOnUse"><rect width="6" height="6" fill="` + c.Fill + `"/><circle cx="3" cy="3" r="1.3" fill="#000"/></pattern>`
	case "cross":
		return `<pattern id="` + id + `" width="8" height="8" patternUnits="userSpaceOnUse"><rect width="8" height="8" fill="` + c.Fill + `"/><path d="M0 0L8 8M8 0L0 8" stroke="#555" stroke-width="1.2"/></pattern>`
	}
	return ""
}

// PatternDefs returns the <pattern> elements of every confidence, for an
// SVG's <defs>.
func PatternDefs() string {
	var b strings.Builder
	for _, c := range Confidences {
		b.WriteString(c.SVG)
	}
	return b.String()
}

// Severity is how a QA finding's severity is drawn: a word, a fill and a
// mark (a different shape for each, so print keeps them apart).
type Severity struct {
	Code string `json:"code"`
	Word string `json:"word"`
	Fill string `json:"fill"`
	Mark string `json:"mark"`
}

// Severities lists the severities from most to least pressing.
var Severities = []Severity{
	{Code: "flag", Word: "flag", Fill: "#000000", Mark: "down"},
	{Code: "warning", Word: "warning", Fill: "#E69F00", Mark: "diamond"},
	{Code: "info", Word: "note", Fill: "#FFFFFF", Mark: "circle"},
}

// SeverityOf returns the drawing of a severity code; unknown codes are
// drawn as notes.
func SeverityOf(code string) Severity {
	for _, s := range Severities {
		if s.Code == code {
			return s
		}
	}
	return Severities[len(Severities)-1]
}

// Legend is everything a client needs to draw in the visual language: the
// default palette and marks, each mark's path at unit size centred on the
// origin, the run confidences and the severities.
type Legend struct {
	Palette     []string          `json:"palette"`
	Marks       []string          `json:"marks"`
	MarkPaths   map[string]string `json:"mark_paths"`
	Confidences []Confidence      `json:"confidences"`
	Severities  []Severity        `json:"severities"`
	Source      string            `json:"source"`
}

// unitScale is the size at which MarkPath draws the unit paths; a client
// scales them by r / unitScale (paths at r = 1 would round to 0.01 steps).
const unitScale = 100

// TheLegend returns the legend. Mark paths are drawn at r = 100 centred on
// the origin; scale by r/100.
func TheLegend() Legend {
	paths := map[string]string{}
	for _, m := range Marks {
		paths[m] = MarkPath(m, 0, 0, unitScale)
	}
	return Legend{Palette: Palette, Marks: Marks, MarkPaths: paths, Confidences: Confidences, Severities: Severities,
		Source: "Okabe & Ito (2008), Color Universal Design; every colour paired with a shape, pattern or word"}
}
