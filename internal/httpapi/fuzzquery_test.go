package httpapi

import (
	"math/rand/v2"
	"net/url"
	"os"
	"strconv"
	"strings"
	"testing"

	"corvane/internal/domain"
)

// queryNames are the query parameters the routes read, and a few they do not.
var queryNames = []string{
	"hole", "type", "min_depth", "max_depth", "from", "to", "limit", "after", "sets", "terzaghi", "terzaghi_cap",
	"projection", "density", "planes", "title", "bin", "of", "step", "format", "persistent", "reference",
	"shift_step", "max_depth_shift", "neighbours", "pick_window", "mismatch_tolerance", "rotation_threshold",
	"min_run_count", "digit_min_count", "digit_p", "confident_ratings", "unusable_ratings", "dry_run",
	"weighting", "sets_on", "set", "seed", "show", "units", "grid", "min_dip",
	"x", "", "hole[]", "LIMIT",
}

// queryValues are values of every kind a careless or hostile client sends.
// An empty value is left out: the server reads it as absent, which the
// document's enums do not say.
var queryValues = []string{
	"0", "-1", "1", "10", "15", "2.5", "1e308", "-1e308", "1e-300", "1.6370904631912708e-10", "NaN", "Inf", "-Inf",
	"abc", "true", "false", "ZR001", "JN", "LN,BD", "equal-angle", "strike", "html", "json", "hole", "neighbours",
	"auto:3", "auto:100000", "terzaghi:5", "J1:135/20:25", "kamb", "sigma", "both", "lines", "2026-01-01", "2026-13-45", "2026-01-01T00:00:00Z", "\x00", "\x1b[31m", "é", "\xff\xfe", strings.Repeat("9", 400),
	"99999999999999999999", "0x10", " 5", "5 ", "1,2,3", "%", "'; DROP TABLE holes; --",
}

// randomQuery is a query string of up to six random pairs; one in ten also
// carries raw junk the server must refuse (";" or a bad escape).
func randomQuery(r *rand.Rand) string {
	v := url.Values{}
	for range r.IntN(7) {
		name := queryNames[r.IntN(len(queryNames))]
		val := queryValues[r.IntN(len(queryValues))]
		if r.IntN(4) == 0 {
			val = strconv.FormatFloat(r.NormFloat64()*math10(r.IntN(12)), 'g', -1, 64)
		}
		v.Add(name, val)
	}
	q := v.Encode()
	switch r.IntN(10) {
	case 0:
		q += ";x=1"
	case 1:
		q += "&bad=%zz"
	}
	return q
}

func math10(n int) float64 {
	x := 1.0
	for range n {
		x *= 10
	}
	return x
}

// TestFuzzQueryParameters sends every GET route (and the QA with a body)
// random query parameters, a bounded number of times from a fixed seed
// (CORVANE_FUZZ_SEED overrides it, CORVANE_FUZZ_N the count): no request may
// fail with a server error or panic, every answer must match api/openapi.yaml
// (the fixture's checker), and every refusal is a problem document.
func TestFuzzQueryParameters(t *testing.T) {
	seed, n := uint64(1), 25
	if testing.Short() {
		n = 15
	}
	if v, err := strconv.ParseUint(os.Getenv("CORVANE_FUZZ_SEED"), 10, 64); err == nil {
		seed = v
	}
	if v, err := strconv.Atoi(os.Getenv("CORVANE_FUZZ_N")); err == nil && v > 0 {
		n = v
	}
	f := newFixture(t)
	pid := f.project("Fuzz", nil)
	h := f.hole(pid, "ZR001", 120, -65)
	base := "/v1/projects/" + itoa(pid)
	var run domain.Run
	f.must(201, f.site, "POST", base+"/holes/"+itoa(h.ID)+"/runs", map[string]any{"from": 0, "to": 30, "confidence": "good"}, &run)
	var m view
	r := rand.New(rand.NewPCG(seed, 2))
	for i := range 40 {
		f.must(201, f.site, "POST", base+"/measurements", map[string]any{"hole_id": h.ID, "depth": 1 + float64(i)*0.7,
			"alpha": 10 + r.Float64()*70, "beta": r.Float64() * 360, "type": []string{"JN", "BD"}[i%2]}, &m)
	}
	ids := map[string]string{"project": itoa(pid), "hole": itoa(h.ID), "run": itoa(run.ID), "measurement": itoa(m.ID), "code": "JN", "kind": "runs"}
	var paths []string
	for _, rt := range f.srv.Routes() {
		if rt.Method != "GET" {
			continue
		}
		p := rt.Path
		for k, v := range ids {
			p = strings.ReplaceAll(p, ":"+k, v)
		}
		paths = append(paths, p)
	}
	picks := map[string]any{"picks": []map[string]any{{"hole_id": "ZR001", "depth": 2, "dip": 40, "dip_direction": 100}}}
	for i := range n {
		for _, p := range paths {
			q := randomQuery(r)
			resp := f.do(f.site, "GET", p+"?"+q, nil)
			checkFuzzReply(t, "GET "+p+"?"+q, resp)
		}
		q := randomQuery(r)
		checkFuzzReply(t, "POST qa?"+q, f.do(f.site, "POST", base+"/qa?"+q, picks))
		if t.Failed() {
			t.Fatalf("stopped at round %d (seed %d)", i, seed)
		}
	}
}

func checkFuzzReply(t *testing.T, what string, r reply) {
	t.Helper()
	if r.Code >= 500 {
		t.Errorf("%s: status %d: %.300s", what, r.Code, r.Body)
		return
	}
	if r.Code >= 400 {
		if ct := r.Header.Get("Content-Type"); ct != ProblemContentType {
			t.Errorf("%s: status %d with Content-Type %q", what, r.Code, ct)
		}
	}
}
