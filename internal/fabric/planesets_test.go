package fabric

import (
	"testing"

	"corvane/internal/dirstat"
	"corvane/internal/geom"
)

// TestPlaneSets: windows on poles give each plane row its set; rows without
// a plane stay unassigned; the result matches the statistics' assignment.
func TestPlaneSets(t *testing.T) {
	rows := []Row{
		{HasPlane: true, Plane: geom.Plane{Dip: 10, DipDirection: 0}},
		{HasLine: true, Line: geom.Line{Trend: 0, Plunge: 80}},
		{HasPlane: true, Plane: geom.Plane{Dip: 70, DipDirection: 90}},
		{HasPlane: true, Plane: geom.Plane{Dip: 45, DipDirection: 200}},
	}
	s := Sets{Windows: []dirstat.Window{
		{Name: "flat", Centre: geom.Vec3{Z: -1}, Cone: 20},
		{Name: "east", Centre: geom.Plane{Dip: 70, DipDirection: 90}.Normal(), Cone: 20},
	}}
	assign, names, method, err := PlaneSets(rows, s)
	if err != nil {
		t.Fatal(err)
	}
	want := []int{0, dirstat.Unassigned, 1, dirstat.Unassigned}
	for i := range want {
		if assign[i] != want[i] {
			t.Errorf("row %d: set %d, want %d", i, assign[i], want[i])
		}
	}
	if len(names) != 2 || names[1] != "east" || method != WindowMethod {
		t.Errorf("names %v method %q", names, method)
	}
	if a, n, _, err := PlaneSets(rows, Sets{}); err != nil || n != nil || a[0] != dirstat.Unassigned {
		t.Errorf("no sets: %v %v %v", a, n, err)
	}
}
