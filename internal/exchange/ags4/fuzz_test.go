package ags4

import (
	"bytes"
	"reflect"
	"testing"
)

// FuzzParse: Parse never panics, and a file it accepts encodes to one that
// parses to the same groups.
func FuzzParse(f *testing.F) {
	f.Add([]byte("\"GROUP\",\"PROJ\"\r\n\"HEADING\",\"PROJ_ID\"\r\n\"UNIT\",\"\"\r\n\"TYPE\",\"ID\"\r\n\"DATA\",\"A \"\"1\"\"\"\r\n"))
	f.Add([]byte("\"GROUP\",\"X\"\n\"DATA\"\n"))
	f.Fuzz(func(t *testing.T, b []byte) {
		g1, err := Parse(bytes.NewReader(b), "f.ags")
		if err != nil {
			return
		}
		var out bytes.Buffer
		if err := g1.Encode(&out); err != nil {
			t.Fatal(err)
		}
		g2, err := Parse(&out, "g.ags")
		if err != nil {
			t.Fatalf("re-encoded file does not parse: %v\n%q", err, out.String())
		}
		for i := range g1.Groups {
			a, b := *g1.Groups[i], *g2.Groups[i]
			a.Line, b.Line, a.RowLines, b.RowLines = 0, 0, nil, nil
			if !reflect.DeepEqual(a, b) {
				t.Fatalf("group %d: %+v != %+v", i, a, b)
			}
		}
	})
}
