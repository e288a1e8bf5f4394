package service_test

import (
	"context"
	"sort"
	"strings"
	"testing"

	"corvane/internal/demo"
	"corvane/internal/domain"
	"corvane/internal/geom"
	"corvane/internal/service"
)

// The demo programme is made by forward modelling (package demo): true
// planes in grid coordinates, hole directions from grid surveys, then core
// angles and magnetic survey azimuths. Loading it and reading it back must
// recover the model's grid hole directions (through declination and grid
// convergence from the magnetic model) and, up to the logging noise the
// generator adds, its planes.
func TestLoadDemoRecoversTheForwardModel(t *testing.T) {
	s, ctx := newService(t)
	checkDemo(t, s, ctx, true)
}

// checkDemo loads the demo and compares it with the forward model; ordered
// says the store keeps bulk-loaded rows in load order (row i is structure i).
func checkDemo(t *testing.T, s *service.Service, ctx context.Context, ordered bool) {
	p, loaded, err := s.LoadDemo(ctx)
	if err != nil || !loaded {
		t.Fatalf("LoadDemo: %v (loaded %v)", err, loaded)
	}
	if _, again, err := s.LoadDemo(ctx); err != nil || again {
		t.Fatalf("second LoadDemo must be a no-op: loaded %v err %v", again, err)
	}
	d := demo.Programme()
	n := must(s.CountMeasurements(ctx, p.ID, service.MeasurementQuery{}))
	if int(n) != len(d.Structures) {
		t.Fatalf("%d measurements stored, demo has %d", n, len(d.Structures))
	}
	var all []service.MeasurementView
	pg := domain.Page{Limit: 1000}
	for {
		l := must(s.ListMeasurements(ctx, p.ID, service.MeasurementQuery{}, pg))
		all = append(all, l.Items...)
		if l.Next == 0 {
			break
		}
		pg.After = l.Next
	}
	var holeErr, planeErr []float64
	for i, v := range all {
		want := d.Structures[i] // stored in generation order
		if !ordered {
			want = find(t, d.Structures, v)
		}
		if v.Hole != want.HoleID || v.Depth != want.Depth {
			t.Fatalf("row %d is %s@%v, demo has %s@%v", i, v.Hole, v.Depth, want.HoleID, want.Depth)
		}
		if v.Derived.Error != "" {
			t.Fatalf("row %d: %s", i, v.Derived.Error)
		}
		if v.Derived.ConvergenceSource != "computed" || !strings.HasPrefix(v.Derived.DeclinationSource, "computed (WMM-2025 at 2026.") {
			t.Fatalf("row %d: corrections from %q and %q, want computed convergence and declination",
				i, v.Derived.ConvergenceSource, v.Derived.DeclinationSource)
		}
		h := geom.HoleDirection(*v.Derived.HoleAzimuth, *v.Derived.HoleDip)
		holeErr = append(holeErr, geom.Angle(h, want.HoleDir))
		if v.Derived.DipDirection != nil {
			got := geom.Plane{Dip: *v.Derived.Dip, DipDirection: *v.Derived.DipDirection}
			planeErr = append(planeErr, geom.AxialAngle(got.Normal(), want.TruePlane.Normal()))
		}
	}
	sort.Float64s(holeErr)
	sort.Float64s(planeErr)
	if worst := holeErr[len(holeErr)-1]; worst > 0.01 {
		t.Errorf("hole direction differs from the forward model by up to %.4f degrees", worst)
	}
	if med := planeErr[len(planeErr)/2]; med > 5 {
		t.Errorf("median plane misfit %.2f degrees; the generator's noise is a few degrees", med)
	}
	t.Logf("hole direction worst %.4f deg; plane misfit median %.2f, 90th percentile %.2f deg",
		holeErr[len(holeErr)-1], planeErr[len(planeErr)/2], planeErr[len(planeErr)*9/10])
}

// find returns the demo structure a stored measurement came from.
func find(t *testing.T, ss []demo.Structure, v service.MeasurementView) demo.Structure {
	t.Helper()
	for _, x := range ss {
		if x.HoleID == v.Hole && x.Depth == v.Depth && x.Alpha == v.Alpha && v.Beta != nil && x.Beta == *v.Beta {
			return x
		}
	}
	t.Fatalf("stored measurement %s@%v is not in the demo", v.Hole, v.Depth)
	return demo.Structure{}
}
