// Package palette is corvane's one colour scheme for structure types. Every
// output that colours structures by type (3D models, and any later view)
// takes its colours from here, so a type looks the same everywhere.
//
// The colours are the eight of the Okabe-Ito palette (Okabe and Ito, "Color
// Universal Design", 2002), chosen because they stay distinguishable for
// the common forms of colour-vision deficiency; the web page already uses
// them. Types are given colours in the sorted order of the project's
// vocabulary codes, so a project's colours do not depend on which
// measurements a selection holds; past seven types the colours repeat.
package palette

import (
	"math"
	"slices"
	"strings"
)

// RGB is a colour with sRGB components in 0..255.
type RGB struct{ R, G, B uint8 }

// Hex returns the colour as #rrggbb.
func (c RGB) Hex() string {
	const d = "0123456789abcdef"
	return string([]byte{'#', d[c.R>>4], d[c.R&15], d[c.G>>4], d[c.G&15], d[c.B>>4], d[c.B&15]})
}

// Linear returns the colour's components converted from sRGB to linear
// light in 0..1, as glTF's baseColorFactor expects (IEC 61966-2-1 transfer
// function).
func (c RGB) Linear() [3]float64 {
	f := func(u uint8) float64 {
		v := float64(u) / 255
		if v <= 0.04045 {
			return v / 12.92
		}
		return math.Pow((v+0.055)/1.055, 2.4)
	}
	return [3]float64{f(c.R), f(c.G), f(c.B)}
}

// Colours is the palette in the order types receive it: Okabe-Ito without
// its black first, which is kept for type codes outside the vocabulary
// ([Unknown]).
//
// The order is the one the web page's type markers and the nets' sets use
// (blue, vermillion, bluish green, reddish purple, orange, sky blue,
// yellow), so the n-th type of a vocabulary has the same colour on the page
// and in a 3D scene.
var Colours = []RGB{
	{0x00, 0x72, 0xB2}, // blue
	{0xD5, 0x5E, 0x00}, // vermillion
	{0x00, 0x9E, 0x73}, // bluish green
	{0xCC, 0x79, 0xA7}, // reddish purple
	{0xE6, 0x9F, 0x00}, // orange
	{0x56, 0xB4, 0xE9}, // sky blue
	{0xF0, 0xE4, 0x42}, // yellow
}

// Trace and TraceExtrapolated are the colours of hole traces: the surveyed
// part dark grey, the part below the last survey station (extrapolated)
// light grey.
var (
	Trace             = RGB{0x33, 0x33, 0x33}
	TraceExtrapolated = RGB{0xA0, 0xA0, 0xA0}
)

// Unknown is the colour of a type code that is not in the vocabulary given
// to [New] (black, the eighth Okabe-Ito colour).
var Unknown = RGB{0, 0, 0}

// Scheme maps type codes to colours.
type Scheme struct {
	codes []string // sorted, distinct, upper-cased
}

// New returns the scheme of a vocabulary: the codes, in any order, with
// repeats ignored. Codes are matched without regard to case.
func New(codes []string) Scheme {
	cs := make([]string, 0, len(codes))
	for _, c := range codes {
		cs = append(cs, strings.ToUpper(strings.TrimSpace(c)))
	}
	slices.Sort(cs)
	return Scheme{codes: slices.Compact(cs)}
}

// Colour returns the colour of type code.
func (s Scheme) Colour(code string) RGB {
	i, ok := slices.BinarySearch(s.codes, strings.ToUpper(strings.TrimSpace(code)))
	if !ok {
		return Unknown
	}
	return Colours[i%len(Colours)]
}
