package structdomain

import (
	"math"
	"strings"
	"testing"
)

func TestContains(t *testing.T) {
	d := Domain{Name: "north", Parts: []Part{{"A", 0, 50}, {"B", 20, math.Inf(1)}}}
	cases := []struct {
		hole  string
		depth float64
		rock  string
		want  bool
	}{
		{"A", 0, "", true}, {"A", 49.99, "", true}, {"A", 50, "", false},
		{"B", 19.9, "", false}, {"B", 20, "", true}, {"B", 1e6, "", true}, {"C", 30, "", false},
	}
	for _, c := range cases {
		if got := d.Contains(c.hole, c.depth, c.rock); got != c.want {
			t.Errorf("%s %v: %v", c.hole, c.depth, got)
		}
	}
	d.RockTypes = []string{"Granite", "schist"}
	if !d.Contains("A", 10, "granite ") || d.Contains("A", 10, "") || d.Contains("A", 10, "basalt") {
		t.Error("rock type filter")
	}
}

func TestValidate(t *testing.T) {
	ok := []Domain{{Name: "a", Parts: []Part{{"A", 0, 10}, {"A", 10, 20}}}, {Name: "b", Parts: []Part{{"A", 5, 15}}}}
	if err := Validate(ok); err != nil {
		t.Fatal(err)
	}
	bad := map[string][]Domain{
		"no name":          {{Parts: []Part{{"A", 0, 1}}}},
		"defined twice":    {{Name: "a", Parts: []Part{{"A", 0, 1}}}, {Name: "a", Parts: []Part{{"A", 2, 3}}}},
		"no hole interval": {{Name: "a"}},
		"no hole":          {{Name: "a", Parts: []Part{{"", 0, 1}}}},
		"not greater":      {{Name: "a", Parts: []Part{{"A", 2, 1}}}},
		"overlaps part 1":  {{Name: "a", Parts: []Part{{"A", 0, 10}, {"A", 9, 12}}}},
	}
	for want, ds := range bad {
		if err := Validate(ds); err == nil || !strings.Contains(err.Error(), want) {
			t.Errorf("%s: %v", want, err)
		}
	}
}
