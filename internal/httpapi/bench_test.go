package httpapi

import (
	"fmt"
	"net/http/httptest"
	"os"
	"testing"
	"time"

	"corvane/internal/loadtest"
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

// BenchmarkLoad runs the project's load generator (package loadtest: 16
// clients logging measurements one by one and importing 20-row files with a
// retried idempotency key) against the edge on the SQLite store over
// loopback for CORVANE_LOAD_DURATION (2 s by default) per iteration, clients
// and server in one process, and reports its latency percentiles. Run it
// with -cpuprofile to see where the server spends the time under load.
func BenchmarkLoad(b *testing.B) {
	f := newFixture(b)
	pid := f.project("Load", nil)
	ts := httptest.NewServer(f.srv)
	defer ts.Close()
	d := 2 * time.Second
	if v := os.Getenv("CORVANE_LOAD_DURATION"); v != "" {
		var err error
		if d, err = time.ParseDuration(v); err != nil {
			b.Fatal(err)
		}
	}
	var res loadtest.Result
	for b.Loop() {
		var err error
		res, err = loadtest.Run(b.Context(), loadtest.Config{BaseURL: ts.URL, Token: f.site, Project: pid,
			Clients: 16, Duration: d, ImportRow: 20, ImportEvery: 8, Seed: 7})
		if err != nil || !res.OK() {
			b.Fatalf("%v\n%s", err, res)
		}
	}
	b.ReportMetric(float64(res.P50.Microseconds())/1000, "p50-ms")
	b.ReportMetric(float64(res.P99.Microseconds())/1000, "p99-ms")
	b.ReportMetric(res.RequestsPerSecond(), "req/s")
}
