package qa

import (
	"encoding/binary"
	"encoding/json"
	"math"
	"testing"
)

// FuzzRun: whatever numbers arrive (NaN, infinities, negative depths,
// unsorted or repeated stations, runs backwards, picks out of range), Run
// does not panic and its report marshals to JSON.
func FuzzRun(f *testing.F) {
	f.Add([]byte{0, 0, 0, 0, 0, 0, 0x24, 0x40, 1, 2, 3, 4, 5, 6, 7, 8})
	f.Add(make([]byte, 200))
	f.Fuzz(func(t *testing.T, data []byte) {
		next := func() float64 {
			if len(data) < 8 {
				return 10
			}
			v := math.Float64frombits(binary.LittleEndian.Uint64(data))
			data = data[8:]
			return v
		}
		small := func() float64 { // a plausible number most of the time
			v := next()
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return v
			}
			return math.Mod(v, 400)
		}
		in := Input{Collars: []Collar{{HoleID: "A", Azimuth: small(), Dip: -math.Abs(small()) / 4.5, Depth: math.Abs(small())}}}
		for i := 0; i < 4; i++ {
			in.Surveys = append(in.Surveys, Station{HoleID: "A", Depth: small(), Azimuth: small(), Dip: small() / 4.5, Magnetic: i%2 == 0})
			m := 1.0
			in.Runs = append(in.Runs, OrientationRun{HoleID: "A", From: small(), To: small(), Confidence: []string{"good", "none", "poor", ""}[i], Mismatch: &m})
			in.Picks = append(in.Picks, Pick{HoleID: "A", Depth: small(), Dip: small() / 4, DipDirection: small()})
		}
		for i := 0; i < 12; i++ {
			in.Measurements = append(in.Measurements, Measurement{HoleID: "A", Depth: small(), Alpha: small() / 4, Beta: small(), Type: "bedding"})
		}
		in.MagneticZones = []MagneticZone{{HoleID: "A", From: small(), To: small()}}
		rep := Run(in, Options{PersistentType: "bedding", MinRunCount: 2})
		if _, err := json.Marshal(rep); err != nil {
			t.Fatalf("report does not marshal: %v", err)
		}
	})
}
