package qa

import (
	"fmt"
	"math"
	"sort"

	"corvane/internal/desurvey"
	"corvane/internal/geom"
)

// slerp returns the direction a fraction f of the way from unit vector a to
// unit vector b along the great circle through them: the direction on a
// minimum-curvature arc at that fraction of its length (Sawaryn & Thorogood
// 2005).
func slerp(a, b geom.Vec3, f float64) geom.Vec3 {
	w := math.Atan2(a.Cross(b).Norm(), a.Dot(b))
	if w < 1e-9 {
		return a.Scale(1 - f).Add(b.Scale(f)).Unit()
	}
	s := math.Sin(w)
	return a.Scale(math.Sin((1-f)*w) / s).Add(b.Scale(math.Sin(f*w) / s)).Unit()
}

// median returns the median of xs, sorting a copy; NaN when empty.
func median(xs []float64) float64 {
	if len(xs) == 0 {
		return math.NaN()
	}
	s := append([]float64(nil), xs...)
	sort.Float64s(s)
	m := len(s) / 2
	if len(s)%2 == 1 {
		return s[m]
	}
	return (s[m-1] + s[m]) / 2
}

// robustScale returns 1.4826 times the median absolute deviation of xs from
// their median (a consistent estimate of the standard deviation for normal
// data; Hampel 1974, Rousseeuw & Croux 1993), and the median itself.
func robustScale(xs []float64) (scale, med float64) {
	med = median(xs)
	if len(xs) == 0 {
		return math.NaN(), med
	}
	dev := make([]float64, len(xs))
	for i, x := range xs {
		dev[i] = math.Abs(x - med)
	}
	return 1.4826 * median(dev), med
}

// looResiduals returns, for each station, the angle in degrees between its
// direction and the direction predicted at its depth on the minimum-curvature
// arc between its two neighbours (leave-one-out), and the predicted
// direction. The first and last stations get residual -1.
func looResiduals(depths []float64, dirs []geom.Vec3) (res []float64, pred []geom.Vec3) {
	n := len(depths)
	res = make([]float64, n)
	pred = make([]geom.Vec3, n)
	for i := range res {
		res[i] = -1
	}
	for i := 1; i+1 < n; i++ {
		f := (depths[i] - depths[i-1]) / (depths[i+1] - depths[i-1])
		p := slerp(dirs[i-1], dirs[i+1], f)
		pred[i] = p
		res[i] = geom.Angle(dirs[i], p)
	}
	return res, pred
}

// surveyChecks runs the survey checks on one hole. stations must be sorted
// by depth with strictly increasing depths. It fills the hole's station
// reports and scatter and returns the findings.
func surveyChecks(c Collar, stations []Station, path *desurvey.Path, zones []MagneticZone, o Options, hr *HoleReport) []Finding {
	var out []Finding
	per, unit := 30.0, "deg/30 m"
	if o.Feet {
		per, unit = 100.0, "deg/100 ft"
	}
	collarDir := geom.HoleDirection(c.Azimuth, c.Dip)
	n := len(stations)
	depths := make([]float64, n)
	dirs := make([]geom.Vec3, n)
	for i, s := range stations {
		depths[i] = s.Depth
		dirs[i] = geom.HoleDirection(s.Azimuth, s.Dip)
	}
	hr.Stations = make([]StationReport, n)
	for i, s := range stations {
		hr.Stations[i] = StationReport{Depth: s.Depth, Azimuth: geom.NormAzimuth(s.Azimuth), Dip: s.Dip, Magnetic: s.Magnetic, Residual: -1}
	}
	if n == 0 {
		out = append(out, Finding{Check: CheckSurveyGap, Severity: SeverityWarning, HoleID: c.HoleID,
			Depth: 0, DepthTo: c.Depth, Size: c.Depth, Source: "surveys",
			Message: fmt.Sprintf("no survey stations: the hole is taken as straight along the collar direction for all %.1f of its length", c.Depth)})
		return out
	}

	// Dogleg severity per interval of the hole's path, the collar standing in
	// at depth 0 when no station is there (conventions: hole path); interval
	// k ends at station k + skip.
	ivs := path.Intervals()
	skip := len(stations) - len(ivs)
	for k, iv := range ivs {
		i := k + skip
		dls := iv.Severity
		if math.IsInf(dls, 0) || math.IsNaN(dls) { // stations a hair apart
			continue
		}
		hr.Stations[i].DLS = dls
		if dls > o.DoglegThreshold {
			out = append(out, Finding{Check: CheckDogleg, Severity: SeverityWarning, HoleID: c.HoleID,
				Depth: iv.From, DepthTo: iv.To, Size: dls, Unit: unit, Source: "surveys", Line: stations[i].Line, Station: i + 1,
				Message: fmt.Sprintf("dogleg severity %.2f %s between %.1f and %.1f exceeds %.2f %s (dogleg %.2f deg)",
					dls, unit, iv.From, iv.To, o.DoglegThreshold, unit, iv.Dogleg)})
		}
	}

	// Leave-one-out: each station against the arc through its neighbours.
	// The residuals are angles, positive, roughly Rayleigh distributed for
	// normal shot errors (median 1.18 sigma), so the hole's own scatter is
	// measured by the median residual, which stays stable for the few
	// stations of a hole where a median absolute deviation would not; a
	// station is flagged beyond OutlierFactor times that median (4: about
	// 4.7 sigma). A shot off the path also lifts its two neighbours'
	// residuals (to about half its own), so each station is judged against
	// the median of the other stations, its neighbours left out; with fewer
	// than three such stations the hole cannot show its own scatter and
	// o.NominalResidual stands in for that median.
	res, pred := looResiduals(depths, dirs)
	var inner []float64
	for _, r := range res {
		if r >= 0 {
			inner = append(inner, r)
		}
	}
	scaleAll, medAll := robustScale(inner)
	if len(inner) > 0 {
		hr.ScatterMAD = scaleAll
		hr.MedianResidual = medAll
	}
	var others []float64
	for i, r := range res {
		hr.Stations[i].Residual = r
		if r < 0 || len(inner) < 3 {
			continue
		}
		others = others[:0]
		for j, q := range res {
			if q >= 0 && (j < i-1 || j > i+1) {
				others = append(others, q)
			}
		}
		ref := o.NominalResidual
		if len(others) >= 3 {
			ref = median(others)
		}
		limit := o.OutlierFactor * ref
		if r <= limit || r <= o.OutlierFloor {
			continue
		}
		// Name only the station that stands out most locally.
		if (i > 0 && res[i-1] > r) || (i+1 < n && res[i+1] > r) {
			continue
		}
		pa, pd := pred[i].AzimuthDip()
		da := wrap180(stations[i].Azimuth - pa)
		out = append(out, Finding{Check: CheckSurveyOutlier, Severity: SeverityFlag, HoleID: c.HoleID,
			Depth: depths[i], Size: r, Unit: "deg", Source: "surveys", Line: stations[i].Line, Station: i + 1,
			Message: fmt.Sprintf("station at %.1f is %.2f deg off the path through its neighbours (azimuth %+.2f, dip %+.2f deg); the other stations' median residual is %.2f deg, the limit %.2f deg",
				depths[i], r, da, stations[i].Dip-pd, ref, math.Max(limit, o.OutlierFloor))})
	}

	// Gaps, from the collar to the first station and between stations.
	prevD := 0.0
	for i := range stations {
		if g := depths[i] - prevD; g > o.GapThreshold {
			out = append(out, Finding{Check: CheckSurveyGap, Severity: SeverityWarning, HoleID: c.HoleID,
				Depth: prevD, DepthTo: depths[i], Size: g, Source: "surveys", Line: stations[i].Line, Station: i + 1,
				Message: fmt.Sprintf("%.1f without a survey station between %.1f and %.1f (more than %.1f)", g, prevD, depths[i], o.GapThreshold)})
		}
		prevD = depths[i]
	}

	// Survey short of the final depth.
	last := stations[n-1]
	if short := c.Depth - last.Depth; short > o.ShortTolerance {
		out = append(out, Finding{Check: CheckSurveyShort, Severity: SeverityWarning, HoleID: c.HoleID,
			Depth: last.Depth, DepthTo: c.Depth, Size: short, Source: "surveys", Line: last.Line, Station: n,
			Message: fmt.Sprintf("last station at %.1f is %.1f short of the final depth %.1f: the path below is extrapolated straight", last.Depth, short, c.Depth)})
	}

	// First station against the collar.
	first := stations[0]
	ang := geom.Angle(collarDir, dirs[0])
	allowed := o.CollarTolerance + o.DoglegThreshold*first.Depth/per
	if ang > allowed {
		out = append(out, Finding{Check: CheckCollarDisagree, Severity: SeverityFlag, HoleID: c.HoleID,
			Depth: first.Depth, Size: ang, Unit: "deg", Source: "surveys", Line: first.Line, Station: 1,
			Message: fmt.Sprintf("first station at %.1f (azimuth %.1f, dip %.1f) is %.1f deg from the collar direction (azimuth %.1f, dip %.1f); at most %.1f deg expected",
				first.Depth, geom.NormAzimuth(first.Azimuth), first.Dip, ang, geom.NormAzimuth(c.Azimuth), c.Dip, allowed)})
	}

	// Magnetic shots in magnetic zones.
	for si, s := range stations {
		if !s.Magnetic {
			continue
		}
		for _, z := range zones {
			if s.Depth >= z.From && s.Depth <= z.To {
				out = append(out, Finding{Check: CheckMagneticZone, Severity: SeverityFlag, HoleID: c.HoleID,
					Depth: s.Depth, Size: s.Azimuth, Unit: "deg", Source: "surveys", Line: s.Line, Station: si + 1,
					Message: fmt.Sprintf("magnetic survey shot at %.1f lies in the magnetic zone %.1f-%.1f: its azimuth %.1f cannot be trusted", s.Depth, z.From, z.To, geom.NormAzimuth(s.Azimuth))})
				break
			}
		}
	}
	return out
}
