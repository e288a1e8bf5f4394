package csvio

import (
	"bytes"
	"encoding/csv"
	"math"
	"strconv"
	"strings"
	"testing"

	"corvane/internal/exchange"
	"corvane/internal/geom"
)

func TestWritePoints(t *testing.T) {
	// Pole of dip 30 toward 045: trend 225, plunge 60 (conventions: trend =
	// dip direction + 180, plunge = 90 - dip), i.e. (cos60 sin225,
	// cos60 cos225, -sin60) = (-0.353553, -0.353553, -0.866025), computed by
	// hand from the direction formula of the conventions.
	pl := geom.Plane{Dip: 30, DipDirection: 45}
	ss := []exchange.Structure{
		{Hole: "ZR001", Depth: 12.3456, Pos: geom.Vec3{X: 431280.38049, Y: 5400038.9604, Z: 405.6949}, Pole: pl.Normal(),
			Dip: 30, DipDirection: 45, Type: "JN", Set: "2", Uncertainty: math.NaN()},
		{Hole: "TM,002", Depth: 3, Pos: geom.Vec3{X: 1, Y: 2, Z: -3}, Pole: geom.Vec3{Z: -1}, Dip: 0, DipDirection: 0, Type: "BD", Uncertainty: 4.567},
	}
	var b bytes.Buffer
	if err := WritePoints(&b, ss); err != nil {
		t.Fatal(err)
	}
	rows, err := csv.NewReader(&b).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	want := [][]string{
		{"x", "y", "z", "nx", "ny", "nz", "dip", "dip_direction", "type", "set", "hole_id", "depth", "uncertainty"},
		{"431280.380", "5400038.960", "405.695", "-0.353553", "-0.353553", "-0.866025", "30.00", "45.00", "JN", "2", "ZR001", "12.346", ""},
		{"1.000", "2.000", "-3.000", "0.000000", "0.000000", "-1.000000", "0.00", "0.00", "BD", "", "TM,002", "3.000", "4.57"},
	}
	if len(rows) != len(want) {
		t.Fatalf("%d rows, want %d:\n%s", len(rows), len(want), b.String())
	}
	for i := range want {
		if strings.Join(rows[i], "|") != strings.Join(want[i], "|") {
			t.Errorf("row %d:\n got %q\nwant %q", i, rows[i], want[i])
		}
	}
	// The normal is a unit vector to the written precision.
	var n [3]float64
	for k := 0; k < 3; k++ {
		n[k], _ = strconv.ParseFloat(rows[1][3+k], 64)
	}
	if l := math.Sqrt(n[0]*n[0] + n[1]*n[1] + n[2]*n[2]); math.Abs(l-1) > 2e-6 {
		t.Errorf("|n| = %v", l)
	}
	// Without any uncertainty there is no such column.
	b.Reset()
	if err := WritePoints(&b, ss[:1]); err != nil {
		t.Fatal(err)
	}
	if first, _, _ := strings.Cut(b.String(), "\n"); strings.Contains(first, "uncertainty") {
		t.Errorf("header %q has uncertainty", first)
	}
}
