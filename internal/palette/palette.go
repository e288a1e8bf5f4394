// Package palette turns the visual language's type styles (package
// [corvane/internal/visual], the one place that says how a structure type
// is drawn) into the colour values that binary outputs such as glTF need.
// It holds no colours of its own beyond those of hole traces: a type has the
// same colour in a 3D scene as on the page, the nets and the QA report.
package palette

import (
	"math"
	"strconv"
	"strings"

	"corvane/internal/visual"
)

// RGB is a colour with sRGB components in 0..255.
type RGB struct{ R, G, B uint8 }

// Hex returns the colour as #rrggbb.
func (c RGB) Hex() string {
	const d = "0123456789abcdef"
	return string([]byte{'#', d[c.R>>4], d[c.R&15], d[c.G>>4], d[c.G&15], d[c.B>>4], d[c.B&15]})
}

// ParseHex reads a #rrggbb colour; ok is false for anything else.
func ParseHex(s string) (c RGB, ok bool) {
	if len(s) != 7 || s[0] != '#' {
		return RGB{}, false
	}
	v, err := strconv.ParseUint(s[1:], 16, 32)
	if err != nil {
		return RGB{}, false
	}
	return RGB{uint8(v >> 16), uint8(v >> 8), uint8(v)}, true
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

// Trace and TraceExtrapolated are the colours of hole traces: the surveyed
// part dark grey, the part below the last survey station (extrapolated)
// light grey.
var (
	Trace             = RGB{0x33, 0x33, 0x33}
	TraceExtrapolated = RGB{0xA0, 0xA0, 0xA0}
)

// Uncertainty is the colour of a structure's 95% uncertainty region drawn in
// 3D (translucent, over the type colour of its disc): a neutral light
// violet-grey that no type colour uses.
var Uncertainty = RGB{0xB8, 0xB0, 0xD0}

// Unknown is the colour of a type code that has no style in the scheme
// (mid grey, outside the type palette).
var Unknown = RGB{0x80, 0x80, 0x80}

// Scheme maps type codes (matched without regard to case) to colours.
type Scheme struct {
	colours map[string]RGB
}

func key(code string) string { return strings.ToUpper(strings.TrimSpace(code)) }

// New returns the scheme of a vocabulary known only by its codes (a file
// with no stored styles): the visual language's default styles given in
// sorted code order, as a project whose types were stored without a style
// gets them ([visual.Fill]). Repeats are ignored.
func New(codes []string) Scheme {
	cs := make([]string, 0, len(codes))
	for _, c := range codes {
		cs = append(cs, key(c))
	}
	return FromStyles(visual.Defaults(cs))
}

// FromStyles returns the scheme of a project's stored type styles (code ->
// style, as the service's TypeStyles gives them). A style whose colour is
// not #rrggbb draws as [Unknown].
func FromStyles(styles map[string]visual.Style) Scheme {
	s := Scheme{colours: make(map[string]RGB, len(styles))}
	for code, st := range styles {
		c, ok := ParseHex(st.Colour)
		if !ok {
			c = Unknown
		}
		s.colours[key(code)] = c
	}
	return s
}

// Colour returns the colour of type code, [Unknown] for a code outside the
// scheme.
func (s Scheme) Colour(code string) RGB {
	if c, ok := s.colours[key(code)]; ok {
		return c
	}
	return Unknown
}
