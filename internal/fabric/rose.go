package fabric

import (
	"fmt"
	"strconv"
	"strings"

	"corvane/internal/netsvg"
	"corvane/internal/words"
)

// Rose quantities.
const (
	RoseDipDirection = "dip_direction"
	RoseStrike       = "strike"
	RoseTrend        = "trend"
)

// DefaultBin is the petal width, in degrees, when none is given.
const DefaultBin = 10

// RoseOptions are the options of [Rose].
type RoseOptions struct {
	Of        string  // RoseDipDirection (default), RoseStrike or RoseTrend
	Bin       float64 // petal width in degrees, dividing 180 (DefaultBin when not given)
	MinDip    float64 // planes dipping less are left out (dip directions and strikes)
	Weighting Weighting
	Title     string
	// Source and AzimuthRef go in the subtitle, as for [NetOptions].
	Source, AzimuthRef string
}

// ParseRose reads the rose options: of "" (dip_direction), "dip_direction"
// (also spelt dip-direction, see words.Option), "strike" or "trend"; the
// bin width must be one netsvg.CheckBinWidth takes (1 to 90 degrees,
// dividing 180); min_dip is 0..90.
func ParseRose(of string, bin, minDip float64) (string, float64, float64, error) {
	switch words.Option(of) {
	case "", "dip-direction":
		of = RoseDipDirection
	case RoseStrike:
		of = RoseStrike
	case RoseTrend:
		of = RoseTrend
	default:
		return "", 0, 0, optErr("of", of, "want dip_direction, strike or trend")
	}
	if netsvg.CheckBinWidth(bin) != nil {
		return "", 0, 0, optErr("bin", strconv.FormatFloat(bin, 'g', -1, 64), "want a width of %v to %v degrees that divides 180", netsvg.MinBinWidth, netsvg.MaxBinWidth)
	}
	if !(minDip >= 0 && minDip <= 90) {
		return "", 0, 0, optErr("min_dip", strconv.FormatFloat(minDip, 'g', -1, 64), "want 0 to 90")
	}
	return of, bin, minDip, nil
}

// Rose returns the rose diagram of in: dip directions of planes (directed),
// strikes of planes (right-hand rule, drawn both ways) or trends of lines;
// petal area is proportional to the count (or the Terzaghi weight of planes).
// Rows without a dip direction or not oriented are left out and counted on
// the sheet.
func Rose(in Input, o RoseOptions) (netsvg.Rose, error) {
	of, bin, minDip, err := ParseRose(o.Of, o.Bin, o.MinDip)
	if err != nil {
		return netsvg.Rose{}, err
	}
	used, skipped := usable(in.Rows)
	kind := kindPlanes
	if of == RoseTrend {
		kind = kindLines
	}
	g := buildGroup(used, kind, o.Weighting)
	r := netsvg.Rose{Title: o.Title, Subtitle: subtitle(o.Source, o.AzimuthRef), BinWidth: bin, Caution: Caution,
		Axial: of == RoseStrike, Azimuths: []float64{}}
	r.Quantity = map[string]string{RoseDipDirection: "dip directions", RoseStrike: "strikes (right-hand rule)", RoseTrend: "line trends"}[of]
	flat := 0
	for i, ri := range g.rows {
		row := used[ri]
		var az float64
		switch of {
		case RoseDipDirection, RoseStrike:
			if row.Plane.Dip < minDip {
				flat++
				continue
			}
			az = row.Plane.DipDirection
			if of == RoseStrike {
				az = row.Plane.Strike()
			}
		case RoseTrend:
			az = row.Line.Trend
		}
		r.Azimuths = append(r.Azimuths, az)
		if g.weights != nil {
			r.Weights = append(r.Weights, g.weights[i])
		}
	}
	r.Notes = []string{words.Plural(len(in.Rows), "row") + ": " + words.Plural(len(g.axes), strings.TrimSuffix(kind, "s"))}
	r.Notes = append(r.Notes, skipNotes(skipped)...)
	if flat > 0 {
		r.Notes = append(r.Notes, fmt.Sprintf("%s dipping less than %g left out", words.Plural(flat, "plane"), minDip))
	}
	if o.Weighting.On {
		r.Notes = append(r.Notes, fmt.Sprintf("Terzaghi weights, cap %.3g", o.Weighting.Cap))
	}
	if in.Rejected > 0 {
		r.Notes = append(r.Notes, words.Plural(in.Rejected, "row")+" rejected (see messages)")
	}
	return r, nil
}
