package httpapi

import (
	"fmt"
	"testing"
)

// BenchmarkLogMeasurement measures one POST .../measurements through the
// whole edge (auth, decoding, service, SQLite store, derived values,
// rendering), without the network.
func BenchmarkLogMeasurement(b *testing.B) {
	f := newFixture(b)
	f.h = f.srv // no contract checking inside the timed loop
	pid := f.project("Bench", nil)
	h := f.hole(pid, "BM001", 45, -60)
	url := "/v1/projects/" + itoa(pid) + "/measurements"
	body := fmt.Appendf(nil, `{"hole_id": %d, "depth": 12.5, "alpha": 40, "beta": 130, "type": "JN"}`, h.ID)
	b.ResetTimer()
	for b.Loop() {
		r := f.do(f.site, "POST", url, body)
		if r.Code != 201 {
			b.Fatalf("status %d: %s", r.Code, r.Body)
		}
	}
}

// BenchmarkListMeasurements measures reading one page of 100 measurements
// with their derived values.
func BenchmarkListMeasurements(b *testing.B) {
	f := newFixture(b)
	f.h = f.srv
	pid := f.project("Bench", nil)
	f.hole(pid, "BM001", 45, -60)
	csv := "hole_id,depth,alpha,beta,type\n"
	for i := range 100 {
		csv += fmt.Sprintf("BM001,%d,40,%d,JN\n", i+1, (i*37)%360)
	}
	f.must(201, f.site, "POST", "/v1/projects/"+itoa(pid)+"/imports/measurements", csv, nil)
	url := "/v1/projects/" + itoa(pid) + "/measurements?limit=100"
	b.ResetTimer()
	for b.Loop() {
		r := f.do(f.site, "GET", url, nil)
		if r.Code != 200 {
			b.Fatalf("status %d: %s", r.Code, r.Body)
		}
	}
}
