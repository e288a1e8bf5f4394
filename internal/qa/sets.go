package qa

import (
	"fmt"
	"math"
	"sort"

	"corvane/internal/geom"
	"corvane/internal/words"
)

// The kinds of survey set and instruments the comparison tells apart (the
// words of the files and the API).
const (
	KindGyro     = "gyro"
	KindMagnetic = "magnetic"
	KindPlanned  = "planned"
	KindOther    = "other"
)

// SurveySet is one of a hole's several surveys: its kind (gyro, magnetic,
// planned, other), its instrument (magnetic, gyro, unknown or "") and its
// stations, azimuths already in the report's north reference (the caller
// applies declination and grid convergence first, as for Surveys; a
// station's Magnetic says it was measured against magnetic north). Name
// says which set it is in messages, e.g. "magnetic".
type SurveySet struct {
	HoleID     string    `json:"hole_id"`
	Kind       string    `json:"kind"`
	Instrument string    `json:"instrument,omitempty"`
	Name       string    `json:"name,omitempty"`
	Stations   []Station `json:"stations"`
}

// IsMagnetic reports whether the set's azimuths come from the Earth's
// field: a magnetic kind or instrument, or stations measured against
// magnetic north. A planned set is never measured.
func (s SurveySet) IsMagnetic() bool {
	if s.Kind == KindPlanned {
		return false
	}
	if s.Kind == KindMagnetic || s.Instrument == KindMagnetic {
		return true
	}
	for _, st := range s.Stations {
		if st.Magnetic {
			return true
		}
	}
	return false
}

// IsReference reports whether the set can show a magnetic set's
// interference: a measured set that does not use the Earth's field — a gyro
// set, or another kind referenced to true or grid north (a gyro by another
// name, or an optical or inertial survey).
func (s SurveySet) IsReference() bool {
	return (s.Kind == KindGyro || s.Kind == KindOther) && !s.IsMagnetic()
}

// Interference is a depth interval where a magnetic set's azimuths leave
// a reference set's (a gyro's) by more than the threshold: likely magnetic
// interference.
type Interference struct {
	From, To float64 // depths of the first and last station in the interval
	Stations int     // magnetic stations in the interval
	// Max and Mean are the largest and the mean departure from the sets'
	// usual difference, degrees, signed (magnetic minus gyro).
	Max, Mean float64
}

// SetComparison is the result of comparing a magnetic and a gyro set.
type SetComparison struct {
	// Offset is the median difference magnetic minus gyro over the stations
	// compared (degrees): a constant difference (a declination or north
	// reference mismatch) that interference is measured from.
	Offset float64
	// Compared is the number of magnetic stations compared (inside the gyro
	// set's depth range and not near vertical).
	Compared  int
	Intervals []Interference
}

// CompareSets compares a magnetic set with a gyro set of the same hole,
// azimuths in the same north reference. Each magnetic station inside the
// gyro set's depth range is compared with the gyro direction at its depth
// (the unit vectors of the neighbouring gyro stations interpolated linearly
// by depth and renormalised, so azimuths wrap correctly); stations where
// either set is within nearVertical degrees of vertical are left out (the
// azimuth is undefined there). The difference's median over the hole is its
// offset; stations departing from it by more than threshold degrees form
// intervals, consecutive flagged stations one interval. Gyro surveys do not
// use the Earth's field, so a magnetic departure from a gyro set is the
// usual sign of magnetic rock or steel nearby (common practice).
func CompareSets(magnetic, gyro []Station, threshold, nearVertical float64) SetComparison {
	m := sortedStations(magnetic)
	g := sortedStations(gyro)
	var res SetComparison
	if len(g) == 0 || len(m) == 0 {
		return res
	}
	steep := func(dip float64) bool { return 90-math.Abs(dip) < nearVertical }
	type cmp struct {
		st   Station
		diff float64
	}
	var cs []cmp
	for _, s := range m {
		if s.Depth < g[0].Depth || s.Depth > g[len(g)-1].Depth || steep(s.Dip) {
			continue
		}
		gd := gyroAt(g, s.Depth)
		gaz, gdip := gd.AzimuthDip()
		if steep(gdip) {
			continue
		}
		cs = append(cs, cmp{s, wrap180(s.Azimuth - gaz)})
	}
	res.Compared = len(cs)
	if len(cs) == 0 {
		return res
	}
	diffs := make([]float64, len(cs))
	for i, c := range cs {
		diffs[i] = c.diff
	}
	sort.Float64s(diffs)
	if n := len(diffs); n%2 == 1 {
		res.Offset = diffs[n/2]
	} else {
		res.Offset = (diffs[n/2-1] + diffs[n/2]) / 2
	}
	var cur *Interference
	var sum float64
	for _, c := range cs {
		dep := c.diff - res.Offset
		if math.Abs(dep) <= threshold {
			if cur != nil {
				cur.Mean = sum / float64(cur.Stations)
				res.Intervals = append(res.Intervals, *cur)
				cur = nil
			}
			continue
		}
		if cur == nil {
			cur, sum = &Interference{From: c.st.Depth}, 0
		}
		cur.To, cur.Stations = c.st.Depth, cur.Stations+1
		sum += dep
		if math.Abs(dep) > math.Abs(cur.Max) {
			cur.Max = dep
		}
	}
	if cur != nil {
		cur.Mean = sum / float64(cur.Stations)
		res.Intervals = append(res.Intervals, *cur)
	}
	return res
}

func sortedStations(st []Station) []Station {
	out := append([]Station(nil), st...)
	sort.SliceStable(out, func(i, j int) bool { return out[i].Depth < out[j].Depth })
	return out
}

// gyroAt is the direction of the gyro set at depth md (inside its range).
func gyroAt(g []Station, md float64) geom.Vec3 {
	i := sort.Search(len(g), func(i int) bool { return g[i].Depth >= md })
	if i < len(g) && g[i].Depth == md || i == 0 {
		return geom.HoleDirection(g[i].Azimuth, g[i].Dip)
	}
	a, b := g[i-1], g[i]
	t := (md - a.Depth) / (b.Depth - a.Depth)
	va, vb := geom.HoleDirection(a.Azimuth, a.Dip), geom.HoleDirection(b.Azimuth, b.Dip)
	return va.Scale(1 - t).Add(vb.Scale(t)).Unit()
}

// setFindings compares every magnetic set of a hole with every reference
// set (see [SurveySet.IsMagnetic], [SurveySet.IsReference]) and reports the
// interference intervals (flags) and a constant offset above the threshold
// (a warning: a declination or north reference to check).
func setFindings(hole string, sets []SurveySet, o Options) []Finding {
	var out []Finding
	name := func(s SurveySet) string {
		if s.Name != "" {
			return s.Name
		}
		return s.Kind
	}
	for _, ms := range sets {
		if !ms.IsMagnetic() {
			continue
		}
		for _, gs := range sets {
			if !gs.IsReference() {
				continue
			}
			c := CompareSets(ms.Stations, gs.Stations, o.InterferenceThreshold, o.NearVertical)
			if math.Abs(c.Offset) > o.InterferenceThreshold {
				out = append(out, Finding{Check: CheckSetOffset, Severity: SeverityWarning, HoleID: hole, Size: c.Offset, Unit: "deg", Source: "surveys",
					Message: fmt.Sprintf("hole %s: the %s set's azimuths differ from the %s set's by %.1f deg over the %d stations compared: check its declination and north reference",
						hole, name(ms), name(gs), c.Offset, c.Compared)})
			}
			for _, iv := range c.Intervals {
				out = append(out, Finding{Check: CheckInterference, Severity: SeverityFlag, HoleID: hole, Depth: iv.From, DepthTo: iv.To,
					Size: iv.Max, Unit: "deg", Source: "surveys",
					Message: fmt.Sprintf("hole %s: from %g to %g (%s) the %s set's azimuths leave the %s set's by up to %.1f deg (mean %.1f) beyond their usual %.1f deg: likely magnetic interference; prefer the %s set there",
						hole, iv.From, iv.To, words.Plural(iv.Stations, "station"), name(ms), name(gs), iv.Max, iv.Mean, c.Offset, name(gs))})
			}
		}
	}
	return out
}
