package netsvg

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"math"

	"corvane/internal/geom"
)

// Rose is a rose diagram of azimuths: dip directions (directed, 0-360) or
// strikes (Axial: each strike also counts at strike + 180, so the diagram is
// symmetric).
type Rose struct {
	Title    string
	Subtitle string
	Azimuths []float64 // degrees
	Weights  []float64 // optional, one per azimuth
	Axial    bool
	BinWidth float64 // degrees, dividing 180; default 10
	Quantity string  // e.g. "dip direction" or "strike"
	Notes    []string
	Caution  string
}

// MinBinWidth and MaxBinWidth bound a rose's bin width in degrees: at most
// 360 petals are drawn.
const (
	MinBinWidth = 1.0
	MaxBinWidth = 90.0
)

// CheckBinWidth refuses a bin width (degrees) outside MinBinWidth..
// MaxBinWidth or not dividing 180.
func CheckBinWidth(bw float64) error {
	if !(bw >= MinBinWidth && bw <= MaxBinWidth) || math.Abs(180/bw-math.Round(180/bw)) > 1e-9 {
		return fmt.Errorf("bin width %v: want %v to %v degrees, dividing 180", bw, MinBinWidth, MaxBinWidth)
	}
	return nil
}

// RoseBins returns the (weighted) count in each bin of width bw degrees
// starting at 0 (bin k covers [k bw, (k+1) bw)). For axial data each value is
// counted at a and at a + 180.
func RoseBins(az, w []float64, bw float64, axial bool) []float64 {
	n := int(math.Round(360 / bw))
	bins := make([]float64, n)
	for i, a := range az {
		wi := 1.0
		if w != nil {
			wi = w[i]
		}
		for _, b := range []float64{a, a + 180} {
			k := int(geom.NormAzimuth(b) / bw)
			if k >= n {
				k = n - 1
			}
			bins[k] += wi
			if !axial {
				break
			}
		}
	}
	return bins
}

// WriteRose writes the rose diagram r as a complete SVG document to w.
// Petal radius is proportional to the square root of the count, so petal
// area is proportional to the count (an equal-area rose, as recommended by
// Nemec 1988, Sedimentary Geology 59, from memory). It returns an error for a
// bin width [CheckBinWidth] refuses or for mismatched weights.
func WriteRose(w io.Writer, r Rose) error {
	bw := r.BinWidth
	if bw == 0 {
		bw = 10
	}
	if err := CheckBinWidth(bw); err != nil {
		return fmt.Errorf("netsvg: rose %w", err)
	}
	if r.Weights != nil && len(r.Weights) != len(r.Azimuths) {
		return errors.New("netsvg: rose weights do not match azimuths")
	}
	bins := RoseBins(r.Azimuths, r.Weights, bw, r.Axial)
	maxC := 0.0
	for _, c := range bins {
		maxC = math.Max(maxC, c)
	}
	s := &svgw{w: bufio.NewWriter(w)}
	s.printf(`<?xml version="1.0" encoding="UTF-8"?>` + "\n")
	s.printf(`<svg xmlns="http://www.w3.org/2000/svg" width="%.0f" height="%.0f" viewBox="0 0 %.0f %.0f" font-family="%s">`+"\n",
		sheetW, sheetH, sheetW, sheetH, fontFamily)
	s.printf("<title>%s</title>\n", esc(orDefault(r.Title, "Rose diagram")))
	s.printf(`<rect width="100%%" height="100%%" fill="#ffffff"/>` + "\n")
	// ring values: round counts
	// the largest petal reaches the outer circle; rings at round counts below it
	ringStep := niceStep(maxC / 4)
	rmax := maxC
	scale := func(c float64) float64 {
		if rmax <= 0 {
			return 0
		}
		return netR * math.Sqrt(c/rmax)
	}
	s.printf(`<g id="rings" fill="none" stroke="#9a9a9a" stroke-width="0.6" stroke-dasharray="3 3">` + "\n")
	for c := ringStep; ringStep > 0 && c <= 0.9*rmax; c += ringStep {
		s.printf(`<circle cx="%.2f" cy="%.2f" r="%.2f"/>`+"\n", netCX, netCY, scale(c))
	}
	s.printf("</g>\n")
	// petals
	petal := densityRamp[5]
	s.printf(`<g id="petals" fill="%s" fill-opacity="0.85" stroke="#1c2549" stroke-width="0.8">`+"\n", petal)
	for k, c := range bins {
		if c <= 0 {
			continue
		}
		a0, a1 := geom.Rad(float64(k)*bw), geom.Rad(float64(k+1)*bw)
		rr := scale(c)
		x0, y0 := netCX+rr*math.Sin(a0), netCY-rr*math.Cos(a0)
		x1, y1 := netCX+rr*math.Sin(a1), netCY-rr*math.Cos(a1)
		s.printf(`<path d="M%.2f %.2fL%.2f %.2fA%.2f %.2f 0 0 1 %.2f %.2fZ"><title>%s-%s: %s</title></path>`+"\n",
			netCX, netCY, x0, y0, rr, rr, x1, y1, fmtNum(float64(k)*bw), fmtNum(float64(k+1)*bw), fmtNum(math.Round(c*100)/100))
	}
	s.printf("</g>\n")
	// ring labels along the east-north-east radius
	s.printf(`<g font-size="9.5" fill="#444">` + "\n")
	for c := ringStep; ringStep > 0 && c <= 0.9*rmax; c += ringStep {
		a := geom.Rad(75)
		s.printf(`<text x="%.2f" y="%.2f" stroke="#fff" stroke-width="2.5" paint-order="stroke">%s</text>`+"\n",
			netCX+scale(c)*math.Sin(a)+2, netCY-scale(c)*math.Cos(a)-2, fmtNum(c))
	}
	s.printf("</g>\n")
	// outer circle, ticks and north mark as on the nets
	s.printf(`<circle cx="%.2f" cy="%.2f" r="%.2f" fill="none" stroke="#000" stroke-width="1.3"/>`+"\n", netCX, netCY, netR)
	s.azimuthRing("")

	// side panel
	s.printf(`<text x="24" y="34" font-size="18" font-weight="bold">%s</text>`+"\n", esc(orDefault(r.Title, "Rose diagram")))
	if r.Subtitle != "" {
		s.printf(`<text x="24" y="54" font-size="11" fill="#444">%s</text>`+"\n", esc(r.Subtitle))
	}
	y := 40.0
	txt := func(size float64, attrs, t string) { // wrapped to the panel, as on the net
		for _, l := range wrapText(t, panelChars(size)) {
			s.printf(`<text x="%.1f" y="%.1f" font-size="%.0f"%s>%s</text>`+"\n", panelX, y, size, attrs, esc(l))
			y += size + 6
		}
	}
	q := orDefault(r.Quantity, "azimuth")
	txt(13, ` font-weight="bold"`, "Rose of "+q)
	if r.Axial {
		txt(11, "", "bidirectional (each value at a and a+180)")
	}
	txt(11, "", fmt.Sprintf("%d values, %s\u00b0 bins", len(r.Azimuths), fmtNum(bw)))
	txt(11, "", "petal area proportional to count")
	txt(11, "", fmt.Sprintf("largest petal %s", fmtNum(math.Round(maxC*100)/100)))
	txt(11, "", "outer circle: largest petal")
	txt(11, "", "dashed rings: counts as labelled")
	for _, n := range r.Notes {
		txt(11, "", n)
	}
	if r.Caution != "" {
		s.wrapped(24, sheetH-38, sheetH, 112, 9.5, r.Caution)
	}
	s.printf("</svg>\n")
	if s.err != nil {
		return s.err
	}
	return s.w.Flush()
}

// niceStep returns the smallest of 1, 2, 2.5, 5 times a power of ten that is
// at least raw (0 for raw <= 0).
func niceStep(raw float64) float64 {
	if !(raw > 0) {
		return 0
	}
	p := math.Pow(10, math.Floor(math.Log10(raw)))
	for _, m := range []float64{1, 2, 2.5, 5, 10} {
		if m*p >= raw {
			return m * p
		}
	}
	return 10 * p
}
