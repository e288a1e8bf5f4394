package qa

import (
	"math"
	"testing"
)

// A hole surveyed twice: a gyro set, clean, and a magnetic set that reads
// the same path but 4 degrees off between 123 and 153 m (magnetic rock: the
// forward model of the test). Both carry small reading noise (a deterministic
// +-0.3 deg pattern, below a magnetic single-shot's usual 1 deg, from
// memory). The QA flags that zone, with its depth range and size, and
// nothing else.
func TestInterferenceZoneFlaggedAndNothingElse(t *testing.T) {
	// The true path: azimuth turning from 40 to 52 deg, dip from -60 to -55
	// over 300 m.
	az := func(md float64) float64 { return 40 + 12*md/300 }
	dip := func(md float64) float64 { return -60 + 5*md/300 }
	noise := func(i int) float64 { return 0.3 * math.Sin(float64(i)*1.7) }
	var gyro, mag []Station
	for i := 0; i <= 30; i++ {
		md := float64(10 * i)
		gyro = append(gyro, Station{HoleID: "TW1", Depth: md, Azimuth: az(md) + noise(i)/3, Dip: dip(md)})
	}
	for i := 0; i < 30; i++ {
		md := float64(10*i + 3)
		a := az(md) + noise(i+7)
		if md >= 120 && md <= 160 {
			a += 4
		}
		mag = append(mag, Station{HoleID: "TW1", Depth: md, Azimuth: a, Dip: dip(md) + noise(i)/10, Magnetic: true})
	}
	in := Input{
		Collars:    []Collar{{HoleID: "TW1", East: 1000, North: 2000, Elevation: 300, Azimuth: az(0), Dip: dip(0), Depth: 300}},
		Surveys:    gyro,
		SurveySets: []SurveySet{{HoleID: "TW1", Kind: KindGyro, Stations: gyro}, {HoleID: "TW1", Kind: KindMagnetic, Stations: mag}},
	}
	rep := Run(in, DefaultOptions())
	var got []Finding
	for _, f := range rep.Findings {
		if f.Severity != SeverityInfo {
			got = append(got, f)
		}
	}
	if len(got) != 1 {
		t.Fatalf("findings %+v, want the one interference zone", got)
	}
	f := got[0]
	if f.Check != CheckInterference || f.HoleID != "TW1" || f.Depth != 123 || f.DepthTo != 153 || math.Abs(f.Size-4) > 0.7 || f.Severity != SeverityFlag {
		t.Errorf("finding %+v, want 123-153 m, about 4 deg", f)
	}
	c := CompareSets(mag, gyro, 2, 5)
	if len(c.Intervals) != 1 || c.Intervals[0].Stations != 4 || math.Abs(c.Offset) > 0.5 || c.Compared != 30 {
		t.Errorf("comparison %+v", c)
	}

	// A constant 3 deg offset (a wrong declination) is a warning, not an
	// interference zone; azimuths across north wrap.
	var off, g2 []Station
	for i := 0; i <= 10; i++ {
		md := float64(10 * i)
		g2 = append(g2, Station{Depth: md, Azimuth: 359, Dip: -60})
		off = append(off, Station{Depth: md + 5, Azimuth: 2, Dip: -60})
	}
	c = CompareSets(off, g2, 2, 5)
	if math.Abs(c.Offset-3) > 1e-9 || len(c.Intervals) != 0 || c.Compared != 10 {
		t.Errorf("offset comparison %+v, want offset 3 and no interval", c)
	}
	fs := setFindings("X", []SurveySet{{Kind: KindMagnetic, Stations: off}, {Kind: KindGyro, Stations: g2}}, DefaultOptions())
	if len(fs) != 1 || fs[0].Check != CheckSetOffset {
		t.Errorf("offset findings %+v", fs)
	}
	// Near vertical: azimuths are not compared.
	var v1, v2 []Station
	for i := 0; i <= 5; i++ {
		v1 = append(v1, Station{Depth: float64(10 * i), Azimuth: 10, Dip: -88})
		v2 = append(v2, Station{Depth: float64(10 * i), Azimuth: 200, Dip: -88})
	}
	if c := CompareSets(v1, v2, 2, 5); c.Compared != 0 || len(c.Intervals) != 0 {
		t.Errorf("near-vertical comparison %+v", c)
	}
}

// The comparison is not tied to the words gyro and magnetic: any set
// measured against the Earth's field (a magnetic kind or instrument, or
// magnetic stations) is set against any measured set that is not (a gyro,
// or another kind referenced to true or grid north). A planned set is
// never compared, and two reference sets are not compared with each other.
func TestSetComparisonByNorthReference(t *testing.T) {
	az := func(md float64) float64 { return 40 + 12*md/300 }
	var clean, zone []Station
	for i := 0; i <= 30; i++ {
		md := float64(10 * i)
		clean = append(clean, Station{HoleID: "TW1", Depth: md, Azimuth: az(md), Dip: -60})
		a := az(md)
		if md >= 120 && md <= 160 {
			a += 4
		}
		zone = append(zone, Station{HoleID: "TW1", Depth: md, Azimuth: a, Dip: -60})
	}
	magnetic := func(st []Station) []Station {
		out := append([]Station(nil), st...)
		for i := range out {
			out[i].Magnetic = true
		}
		return out
	}
	zones := func(sets ...SurveySet) int {
		n := 0
		for _, f := range setFindings("TW1", sets, DefaultOptions()) {
			if f.Check == CheckInterference {
				n++
				if f.Depth != 120 || f.DepthTo != 160 {
					t.Errorf("zone %g-%g, want 120-160", f.Depth, f.DepthTo)
				}
			}
		}
		return n
	}
	cases := []struct {
		name string
		sets []SurveySet
		want int
	}{
		{"magnetic kind against gyro", []SurveySet{{Kind: KindMagnetic, Stations: zone}, {Kind: KindGyro, Stations: clean}}, 1},
		{"magnetic kind against other in true north", []SurveySet{{Kind: KindMagnetic, Stations: zone}, {Kind: KindOther, Stations: clean}}, 1},
		{"other by a magnetic instrument against gyro", []SurveySet{{Kind: KindOther, Instrument: "magnetic", Stations: zone}, {Kind: KindGyro, Stations: clean}}, 1},
		{"other with magnetic stations against gyro", []SurveySet{{Kind: KindOther, Stations: magnetic(zone)}, {Kind: KindGyro, Stations: clean}}, 1},
		{"magnetic against other with magnetic stations", []SurveySet{{Kind: KindMagnetic, Stations: zone}, {Kind: KindOther, Stations: magnetic(clean)}}, 0},
		{"magnetic against planned", []SurveySet{{Kind: KindMagnetic, Stations: zone}, {Kind: KindPlanned, Stations: clean}}, 0},
		{"gyro against other in true north", []SurveySet{{Kind: KindOther, Stations: zone}, {Kind: KindGyro, Stations: clean}}, 0},
	}
	for _, c := range cases {
		if got := zones(c.sets...); got != c.want {
			t.Errorf("%s: %d interference zones, want %d", c.name, got, c.want)
		}
	}
}
