// Package exchangetest builds the small invented scene that the tests of the
// transfer-format writers share: three holes of the fictional Zelvorra Reach
// prospect (one with an extrapolated tail below its last survey station)
// and structures of several types placed on them.
package exchangetest

import (
	"fmt"
	"math"
	"math/rand/v2"

	"corvane/internal/desurvey"
	"corvane/internal/exchange"
	"corvane/internal/geom"
)

// Hole is one hole of the scene with its inputs.
type Hole struct {
	Name     string
	Collar   desurvey.Collar
	Stations []desurvey.Station
	Path     *desurvey.Path
}

// Holes returns the scene's holes, desurveyed by minimum curvature.
func Holes() []Hole {
	hs := []Hole{
		{Name: "ZR101", Collar: desurvey.Collar{East: 431280.38, North: 5400038.96, Elevation: 405.69, Azimuth: 20, Dip: -60, Depth: 250.3},
			Stations: []desurvey.Station{{Depth: 15, Azimuth: 21.9, Dip: -59.6}, {Depth: 120, Azimuth: 23.5, Dip: -57.8}, {Depth: 201, Azimuth: 25.1, Dip: -56.0}}},
		{Name: "ZR102", Collar: desurvey.Collar{East: 431457.93, North: 5400034.47, Elevation: 408.90, Azimuth: 35, Dip: -55, Depth: 180},
			Stations: []desurvey.Station{{Depth: 30, Azimuth: 35.5, Dip: -54.0}, {Depth: 180, Azimuth: 38.0, Dip: -51.5}}},
		{Name: "ZR103 \"west\"", Collar: desurvey.Collar{East: 431102.5, North: 5400211.0, Elevation: 398.2, Azimuth: 300, Dip: -90, Depth: 95},
			Stations: []desurvey.Station{{Depth: 50, Azimuth: 300, Dip: -88}}},
	}
	for i := range hs {
		p, err := desurvey.New(hs[i].Collar, hs[i].Stations, desurvey.MinimumCurvature)
		if err != nil {
			panic(err)
		}
		hs[i].Path = p
	}
	return hs
}

// Traces returns the traces of [Holes] with the default step.
func Traces() []exchange.Trace {
	var ts []exchange.Trace
	for _, h := range Holes() {
		t, err := exchange.TraceFromPath(h.Name, h.Path, 0)
		if err != nil {
			panic(err)
		}
		ts = append(ts, t)
	}
	return ts
}

// Types are the structure type codes of the scene.
var Types = []string{"JN", "BD", "VN", "FLT"}

// Structures returns n structures spread over the holes of [Holes] with
// random planes from a fixed seed, including the extremes (horizontal and
// vertical planes), and an uncertainty on every third.
func Structures(n int) []exchange.Structure {
	hs := Holes()
	r := rand.New(rand.NewPCG(15, 4))
	out := make([]exchange.Structure, 0, n)
	for i := 0; i < n; i++ {
		h := hs[i%len(hs)]
		d := r.Float64() * h.Collar.Depth
		pt, err := h.Path.At(d)
		if err != nil {
			panic(err)
		}
		pl := geom.Plane{Dip: r.Float64() * 90, DipDirection: r.Float64() * 360}
		switch i {
		case 0:
			pl = geom.Plane{Dip: 0, DipDirection: 0}
		case 1:
			pl = geom.Plane{Dip: 90, DipDirection: 270}
		}
		s := exchange.Structure{
			Hole: h.Name, Depth: d, Pos: pt.Pos, Pole: pl.Normal(),
			Dip: pl.Dip, DipDirection: pl.DipDirection,
			Type: Types[i%len(Types)], Set: fmt.Sprint(1 + i%3), Uncertainty: math.NaN(),
		}
		if i%3 == 0 {
			s.Uncertainty = 2 + r.Float64()*10
		}
		out = append(out, s)
	}
	return out
}
