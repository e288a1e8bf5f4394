package httpapi

import (
	"bytes"
	"context"
	"encoding/xml"
	"errors"
	"fmt"
	"io"
	"math"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"corvane/internal/domain"
	"corvane/internal/service"
)

// petalTitle is the tooltip of one petal: "from-to: count".
var petalTitle = regexp.MustCompile(`<title>([0-9.]+)-([0-9.]+): ([0-9.]+)</title></path>`)

// TestRose checks the served rose over the demo programme: it is valid XML,
// counts the planes the filter selects, and each petal holds the number of
// derived dip directions (or strikes, each counted both ways) in its bin.
func TestRose(t *testing.T) {
	f := newFixture(t)
	p, _, err := f.svc.LoadDemo(service.WithActor(context.Background(), service.System))
	if err != nil {
		t.Fatal(err)
	}
	base := "/v1/projects/" + itoa(p.ID)
	var hs struct {
		Items []domain.Hole `json:"items"`
	}
	f.must(200, f.site, "GET", base+"/holes", nil, &hs)
	if len(hs.Items) < 2 {
		t.Fatalf("demo has %d holes", len(hs.Items))
	}
	filter := "hole=" + hs.Items[1].Name + "&max_depth=250"
	var ms struct {
		Items []view `json:"items"`
	}
	f.must(200, f.site, "GET", base+"/measurements?limit=1000&"+filter, nil, &ms)
	var dd []float64
	for _, m := range ms.Items {
		if m.Derived.DipDirection != nil {
			dd = append(dd, *m.Derived.DipDirection)
		}
	}
	if len(dd) < 10 {
		t.Fatalf("the filter selects only %d planes", len(dd))
	}
	reader := f.token(p.ID, domain.RoleRead, "reader")
	for _, tc := range []struct {
		q     string
		bw    float64
		axial bool
	}{{"", 10, false}, {"&of=strike&bin=15", 15, true}, {"&of=dip_direction&bin=30", 30, false}} {
		r := f.must(200, reader, "GET", base+"/rose?"+filter+tc.q, nil, nil)
		if ct := r.Header.Get("Content-Type"); ct != "image/svg+xml" {
			t.Errorf("%s: Content-Type %q", tc.q, ct)
		}
		dec := xml.NewDecoder(bytes.NewReader(r.Body))
		for {
			if _, err := dec.Token(); err != nil {
				if !errors.Is(err, io.EOF) {
					t.Fatalf("%s: not valid XML: %v", tc.q, err)
				}
				break
			}
		}
		body := string(r.Body)
		if want := fmt.Sprintf("%d values, %g\u00b0 bins", len(dd), tc.bw); !strings.Contains(body, want) {
			t.Errorf("%s: sheet does not say %q", tc.q, want)
		}
		want := map[int]float64{}
		for _, a := range dd {
			if tc.axial {
				s := math.Mod(a-90+360, 360) // right-hand rule strike (common practice)
				want[int(s/tc.bw)]++
				want[int(math.Mod(s+180, 360)/tc.bw)]++
			} else {
				want[int(a/tc.bw)]++
			}
		}
		got := map[int]float64{}
		for _, m := range petalTitle.FindAllStringSubmatch(body, -1) {
			from, _ := strconv.ParseFloat(m[1], 64)
			c, _ := strconv.ParseFloat(m[3], 64)
			got[int(math.Round(from/tc.bw))] = c
		}
		if len(got) != len(want) {
			t.Errorf("%s: %d petals, want %d", tc.q, len(got), len(want))
		}
		for k, c := range want {
			if got[k] != c {
				t.Errorf("%s: bin %v-%v holds %v, want %v", tc.q, float64(k)*tc.bw, float64(k+1)*tc.bw, got[k], c)
			}
		}
	}
	for _, bad := range []struct{ q, field string }{{"of=plunge", "of"}, {"bin=7", "bin"}, {"min_dip=95", "min_dip"}, {"weighting=equal", "weighting"}, {"bin=0", "bin"}, {"bin=x", "bin"}} {
		r := f.do(f.site, "GET", base+"/rose?"+bad.q, nil)
		if pr := r.problem(t); pr.Status != 422 || len(pr.Errors) == 0 || pr.Errors[0].Field != bad.field {
			t.Errorf("%s: %+v, want 422 naming %s", bad.q, pr, bad.field)
		}
	}
}
