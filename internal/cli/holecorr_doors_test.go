package cli

import (
	"encoding/json"
	"fmt"
	"strconv"
	"testing"
)

// TestHoleCorrectionsEqualAtEveryDoor: the demo programme's hole
// corrections read from the service's hole list (JSON) are the numbers the
// hole summary of corvane convert writes for the same collars and surveys
// (CSV), cell for cell: both are written at the derived values' precision
// (convert.Decimals), so no floating-point noise reaches the JSON and the
// two doors agree.
func TestHoleCorrectionsEqualAtEveryDoor(t *testing.T) {
	ctx, svc, p := demoService(t)
	srv, token := readerServer(t, ctx, svc, p.ID)
	_, _, sum, _ := demoHoleSummary(t)
	csvHoles := map[string]map[string]string{}
	for _, h := range readCSV(t, sum) {
		csvHoles[h["hole_id"]] = h
	}
	var page struct {
		Items []struct {
			Name        string `json:"name"`
			Corrections struct {
				Declination     *json.Number `json:"declination"`
				GridConvergence *json.Number `json:"grid_convergence"`
			} `json:"corrections"`
		} `json:"items"`
	}
	if err := json.Unmarshal(getRoute(t, srv, token, fmt.Sprintf("/v1/projects/%d/holes?limit=500", p.ID)), &page); err != nil {
		t.Fatal(err)
	}
	if len(page.Items) == 0 || len(page.Items) != len(csvHoles) {
		t.Fatalf("%d holes over HTTP, %d in the hole summary", len(page.Items), len(csvHoles))
	}
	for _, h := range page.Items {
		row, ok := csvHoles[h.Name]
		if !ok {
			t.Fatalf("hole %s is not in the hole summary", h.Name)
		}
		for _, c := range []struct {
			col  string
			json *json.Number
		}{{"declination", h.Corrections.Declination}, {"grid_convergence", h.Corrections.GridConvergence}} {
			if c.json == nil || row[c.col] == "" {
				t.Fatalf("hole %s %s: JSON %v, CSV %q; want a number at both doors", h.Name, c.col, c.json, row[c.col])
			}
			want, err := strconv.ParseFloat(row[c.col], 64)
			if err != nil {
				t.Fatal(err)
			}
			// The JSON text is the shortest form of the CSV's value: no
			// digits beyond the CSV's.
			if got := c.json.String(); got != strconv.FormatFloat(want, 'f', -1, 64) {
				t.Errorf("hole %s %s: JSON %s, CSV %q", h.Name, c.col, got, row[c.col])
			}
		}
	}
}
