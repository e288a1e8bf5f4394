package holemodel

import (
	"math"
	"testing"

	"corvane/internal/desurvey"
	"corvane/internal/geom"
	"corvane/internal/localgrid"
)

// mineGrid is an invented mine grid on WGS 84 / UTM zone 50S: local north
// points to grid azimuth theta, local (5000, 10000) sits at (500100, 7000200).
func mineGrid(theta, scale float64) *localgrid.Grid {
	o := localgrid.Origin{X: 5000, Y: 10000, Easting: 500100, Northing: 7000200}
	g, _, err := localgrid.NewGrid(localgrid.Spec{Name: "mine", GridCRS: "EPSG:32750", Rotation: &theta, Scale: &scale, Origin: &o})
	if err != nil {
		panic(err)
	}
	return g
}

// Output in the local grid against a hole built directly in the local grid.
// Minimum curvature does not depend on where north is (rotating every
// azimuth of a hole by the same angle rotates its path: common practice, a
// property of the method), so with scale 1 the hole given in grid azimuths
// and output in the local grid must equal the same hole given in local
// azimuths (grid - theta, the similarity transformation's rule, IOGP 7-2
// method 9621) and local collar coordinates, output as it is.
func TestOutputLocalMatchesHoleBuiltInLocal(t *testing.T) {
	const theta = -37.25
	g := mineGrid(theta, 1)
	p := Project{GridConvergence: f(0.4), LocalGrid: g}
	in := input(Grid) // collar and stations in the grid of EPSG:32750
	in.CollarRef = Grid
	p.Output = Local
	h := New(in, p)
	if h.Err != nil {
		t.Fatal(h.Err)
	}
	if h.Output != Local {
		t.Fatalf("output %q", h.Output)
	}
	// The same hole typed in the local grid, output as typed.
	loc := in
	loc.CRS = ""
	loc.Collar.East, loc.Collar.North = g.T.ToLocal(in.Collar.East, in.Collar.North)
	loc.Collar.Azimuth = geom.NormAzimuth(in.Collar.Azimuth - theta)
	loc.Stations = append([]Station(nil), in.Stations...)
	for i := range loc.Stations {
		loc.Stations[i].Azimuth = geom.NormAzimuth(loc.Stations[i].Azimuth - theta)
		loc.Stations[i].Ref = ""
	}
	ref := New(loc, Project{})
	if ref.Err != nil {
		t.Fatal(ref.Err)
	}
	for _, m := range []Measurement{{Depth: 40, Alpha: 35, Beta: 120}, {Depth: 150, Alpha: 60, Beta: 300, Gamma: 40, HasGamma: true}, {Depth: 199, Alpha: 80, Beta: 10}} {
		got, err := h.Orient(m)
		if err != nil {
			t.Fatal(err)
		}
		want, err := ref.Orient(m)
		if err != nil {
			t.Fatal(err)
		}
		for _, c := range []struct {
			name      string
			got, want float64
		}{
			{"hole azimuth", got.HoleAzimuth, want.HoleAzimuth}, {"hole dip", got.HoleDip, want.HoleDip},
			{"dip", got.Plane.Dip, want.Plane.Dip}, {"dip direction", got.Plane.DipDirection, want.Plane.DipDirection},
			{"line trend", got.Line.Trend, want.Line.Trend}, {"line plunge", got.Line.Plunge, want.Line.Plunge},
			{"easting", got.Point.Pos.X, want.Point.Pos.X}, {"northing", got.Point.Pos.Y, want.Point.Pos.Y},
			{"elevation", got.Point.Pos.Z, want.Point.Pos.Z},
		} {
			if math.Abs(azDiff(c.got, c.want)) > 1e-9 && math.Abs(c.got-c.want) > 1e-7 {
				t.Errorf("depth %g %s: %.9f, built in the local grid %.9f", m.Depth, c.name, c.got, c.want)
			}
		}
		// Grid azimuths to the local grid need no convergence.
		if got.Convergence.Source != SourceNone {
			t.Errorf("convergence %+v", got.Convergence)
		}
	}
	// Collar coordinates out: the inverse of the transformation, exactly.
	x, y := h.OutputXY(h.Collar.East, h.Collar.North)
	if math.Abs(x-loc.Collar.East) > 1e-9 || math.Abs(y-loc.Collar.North) > 1e-9 {
		t.Errorf("collar out %.6f %.6f, want %.6f %.6f", x, y, loc.Collar.East, loc.Collar.North)
	}
	if az := h.OutputAzimuth(h.Collar.Azimuth); math.Abs(az-loc.Collar.Azimuth) > 1e-9 {
		t.Errorf("collar azimuth out %.9f, want %.9f", az, loc.Collar.Azimuth)
	}
}

// A collar given in the local grid (crs local) and output in the local grid
// comes back where it was typed, azimuths too; true output of the same hole
// differs by theta + C (true = local + theta + C, IOGP 7-2 method 9621 and
// the convergence's sign convention, common practice).
func TestLocalInLocalOut(t *testing.T) {
	const theta, c = 12.5, -0.75
	g := mineGrid(theta, 0.9998)
	// In a collar labelled local, a grid azimuth is a local-grid azimuth.
	in := Input{ID: "L1", CRS: "local", CollarRef: Grid, Collar: desurvey.Collar{East: 5100, North: 10250, Elevation: 300, Azimuth: 45, Dip: -60, Depth: 120}}
	out := map[string]*Hole{}
	for _, o := range []string{Local, True} {
		h := New(in, Project{Output: o, LocalGrid: g, GridConvergence: f(c)})
		if h.Err != nil {
			t.Fatal(o, h.Err)
		}
		out[o] = h
	}
	m := Measurement{Depth: 0, Alpha: 50, Beta: 30}
	rl, err := out[Local].Orient(m)
	if err != nil {
		t.Fatal(err)
	}
	rt, err := out[True].Orient(m)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(rl.Point.Pos.X-5100) > 1e-6 || math.Abs(rl.Point.Pos.Y-10250) > 1e-6 {
		t.Errorf("collar out %.6f %.6f, want 5100 10250", rl.Point.Pos.X, rl.Point.Pos.Y)
	}
	if math.Abs(rl.HoleAzimuth-45) > 1e-9 {
		t.Errorf("hole azimuth out %.9f, want 45 (as typed)", rl.HoleAzimuth)
	}
	if d := azDiff(rt.Plane.DipDirection, rl.Plane.DipDirection+theta+c); math.Abs(d) > 1e-9 {
		t.Errorf("true dip direction %.9f, local %.9f: differ by %.9f, want theta + C = %g", rt.Plane.DipDirection, rl.Plane.DipDirection, rt.Plane.DipDirection-rl.Plane.DipDirection, theta+c)
	}
}

// A hole's own local grid wins over the project's.
func TestHoleGridWinsOverProject(t *testing.T) {
	in := input(Grid)
	in.LocalGrid = mineGrid(30, 1)
	h := New(in, Project{Output: Local, LocalGrid: mineGrid(-10, 1), GridConvergence: f(0)})
	if h.Err != nil {
		t.Fatal(h.Err)
	}
	if h.Grid != in.LocalGrid {
		t.Fatal("the project's grid was used")
	}
	r, err := h.Orient(Measurement{Depth: 0, Alpha: 90, Beta: 0})
	if err != nil {
		t.Fatal(err)
	}
	// the station at the collar, grid azimuth 100, is 70 in a local grid
	// rotated 30 degrees (local = grid - theta)
	if math.Abs(r.HoleAzimuth-70) > 1e-9 {
		t.Errorf("hole azimuth %.9f, want 70", r.HoleAzimuth)
	}
}

func TestOutputLocalErrors(t *testing.T) {
	h := New(input(Grid), Project{Output: Local, GridConvergence: f(0)})
	if h.Err == nil || h.Err.Field != FieldLocalGrid {
		t.Fatalf("no local grid: %v", h.Err)
	}
	in := input(Grid)
	in.CRS = "EPSG:32751" // not the grid's EPSG:32750
	h = New(in, Project{Output: Local, LocalGrid: mineGrid(0, 1), GridConvergence: f(0)})
	if h.Err == nil || h.Err.Field != FieldCRS {
		t.Fatalf("collar in another grid: %v", h.Err)
	}
	if _, err := h.Orient(Measurement{Depth: 10, Alpha: 40, Beta: 10}); err == nil {
		t.Fatal("a measurement of a hole with an error oriented")
	}
}

// CoreAngles takes a plane in the output reference: in the local grid it
// inverts Orient as it does in the grid.
func TestCoreAnglesLocal(t *testing.T) {
	h := New(input(Grid), Project{Output: Local, LocalGrid: mineGrid(-37.25, 1), GridConvergence: f(0)})
	for _, m := range []Measurement{{Depth: 50, Alpha: 30, Beta: 200}, {Depth: 150, Alpha: 70, Beta: 15}} {
		r, err := h.Orient(m)
		if err != nil {
			t.Fatal(err)
		}
		a, b, err := h.CoreAngles(m.Depth, r.Plane)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(a-m.Alpha) > 1e-8 || math.Abs(azDiff(b, m.Beta)) > 1e-8 {
			t.Errorf("depth %g: alpha %.9f beta %.9f, want %g %g", m.Depth, a, b, m.Alpha, m.Beta)
		}
	}
}

func TestOrientLocalDoesNotAllocate(t *testing.T) {
	h := New(input(Grid), Project{Output: Local, LocalGrid: mineGrid(20, 1), GridConvergence: f(0)})
	m := Measurement{Depth: 50, Alpha: 30, Beta: 200}
	if n := testing.AllocsPerRun(100, func() { _, _ = h.Orient(m) }); n != 0 {
		t.Fatalf("%v allocations", n)
	}
}

// azDiff is a - b wrapped to [-180, 180).
func azDiff(a, b float64) float64 { return math.Mod(math.Mod(a-b+180, 360)+360, 360) - 180 }
