package exchange

import (
	"math"
	"testing"

	"corvane/internal/desurvey"
	"corvane/internal/geom"
)

func TestTraceFromPath(t *testing.T) {
	c := desurvey.Collar{East: 1000, North: 2000, Elevation: 300, Azimuth: 90, Dip: -60, Depth: 130}
	p, err := desurvey.New(c, []desurvey.Station{{Depth: 40, Azimuth: 92, Dip: -58}, {Depth: 100, Azimuth: 95, Dip: -55}}, desurvey.MinimumCurvature)
	if err != nil {
		t.Fatal(err)
	}
	tr, err := TraceFromPath("H1", p, 7)
	if err != nil {
		t.Fatal(err)
	}
	pts := tr.Points
	if pts[0].Depth != 0 || pts[0].Pos != (geom.Vec3{X: 1000, Y: 2000, Z: 300}) || pts[len(pts)-1].Depth != 130 {
		t.Fatalf("ends: %+v ... %+v", pts[0], pts[len(pts)-1])
	}
	seen := map[float64]bool{}
	for i, pt := range pts {
		seen[pt.Depth] = true
		if i > 0 && (pt.Depth <= pts[i-1].Depth || pt.Depth-pts[i-1].Depth > 7+1e-9) {
			t.Errorf("point %d at %g after %g", i, pt.Depth, pts[i-1].Depth)
		}
		if pt.Extrapolated != (pt.Depth > 100) {
			t.Errorf("depth %g extrapolated = %v", pt.Depth, pt.Extrapolated)
		}
		want, _ := p.At(pt.Depth)
		if pt.Pos != want.Pos {
			t.Errorf("depth %g at %v, path says %v", pt.Depth, pt.Pos, want.Pos)
		}
	}
	for _, d := range []float64{40, 100} {
		if !seen[d] {
			t.Errorf("station at %g is not a trace point", d)
		}
	}
	s, e := tr.Split()
	if s[len(s)-1].Depth != 100 || e[0].Depth != 100 || e[len(e)-1].Depth != 130 || len(s)+len(e) != len(pts)+1 {
		t.Errorf("split: surveyed to %g, extrapolated %g..%g", s[len(s)-1].Depth, e[0].Depth, e[len(e)-1].Depth)
	}
	// A hole surveyed to its end has no extrapolated part.
	p2, _ := desurvey.New(desurvey.Collar{Azimuth: 0, Dip: -90, Depth: 10}, []desurvey.Station{{Depth: 10, Azimuth: 0, Dip: -89}}, desurvey.MinimumCurvature)
	tr2, _ := TraceFromPath("H2", p2, math.NaN())
	if _, e := tr2.Split(); e != nil {
		t.Errorf("extrapolated part %v", e)
	}
	if len(tr2.Points) != 3 { // 0, 5, 10 with the default step
		t.Errorf("%d points with the default step, want 3", len(tr2.Points))
	}
}
