package holemodel

import (
	"fmt"
	"reflect"
	"testing"

	"corvane/internal/desurvey"
)

// stale fills every field of v (a pointer), at any depth, with a value
// that is not the zero value: what a former result leaves behind.
func stale(v reflect.Value) {
	switch v.Kind() {
	case reflect.Pointer:
		stale(v.Elem())
	case reflect.Struct:
		for i := 0; i < v.NumField(); i++ {
			if v.Field(i).CanSet() {
				stale(v.Field(i))
			}
		}
	case reflect.Float64:
		v.SetFloat(-12345.678)
	case reflect.Bool:
		v.SetBool(true)
	case reflect.String:
		v.SetString("stale")
	case reflect.Uint8, reflect.Uint, reflect.Uint16, reflect.Uint32, reflect.Uint64:
		v.SetUint(0x7f)
	case reflect.Int, reflect.Int8, reflect.Int16, reflect.Int32, reflect.Int64:
		v.SetInt(77)
	default:
		panic("stale: no value for " + v.Kind().String())
	}
}

// OrientTo sets every field of the result, whatever it held: into a result
// full of stale values it writes exactly what Orient returns, for
// measurements with and without beta, gamma and thickness, in an inclined
// and a vertical hole, one output in a local grid, below the last station, and with errors (the zero
// Result).
func TestOrientToSetsEveryField(t *testing.T) {
	inclined := New(input(Grid), Project{GridConvergence: f(0.5), Declination: f(3)})
	vertical := New(Input{ID: "V", Collar: desurvey.Collar{East: 1, North: 2, Elevation: 3, Azimuth: 0, Dip: -90, Depth: 100}}, Project{})
	local := New(input(Grid), Project{Output: Local, LocalGrid: mineGrid(10, 1), GridConvergence: f(0.4)})
	for _, h := range []*Hole{inclined, vertical, local} {
		if h.Err != nil {
			t.Fatal(h.Err)
		}
		for _, m := range []Measurement{
			{Depth: 50, Alpha: 40, Beta: 200},
			{Depth: 50, Alpha: 40, Beta: 200, Gamma: 30, HasGamma: true},
			{Depth: 20, Alpha: 88, NoBeta: true, Thickness: 0.4, HasThickness: true},
			{Depth: 99, Alpha: 10, Beta: 359.995, Gamma: 0, HasGamma: true, Thickness: 1, HasThickness: true},
			{Depth: 150, Alpha: 40, Beta: 10}, // past the vertical hole's depth
			{Depth: 50, Alpha: 91, Beta: 10},  // an error
		} {
			want, werr := h.Orient(m)
			var got Result
			stale(reflect.ValueOf(&got))
			gerr := h.OrientTo(&got, &m)
			if fmt.Sprint(werr) != fmt.Sprint(gerr) || fmt.Sprintf("%#v", got) != fmt.Sprintf("%#v", want) {
				t.Fatalf("hole %s %+v: OrientTo %#v %v, Orient %#v %v", h.In.ID, m, got, gerr, want, werr)
			}
		}
	}
}
