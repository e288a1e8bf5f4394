package e2e

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"net/http"
	"net/url"
	"os/exec"
	"slices"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"corvane/internal/domain"
	"corvane/internal/pgtest"
)

// roundRobin sends each request to the next replica in turn, as a load
// balancer in front of them would; every replica is on the loopback.
type roundRobin struct {
	replicas []*url.URL
	next     atomic.Uint64
	base     http.RoundTripper
}

func (rr *roundRobin) RoundTrip(req *http.Request) (*http.Response, error) {
	u := rr.replicas[(rr.next.Add(1)-1)%uint64(len(rr.replicas))]
	r := req.Clone(req.Context())
	r.URL.Scheme, r.URL.Host, r.Host = u.Scheme, u.Host, u.Host
	return rr.base.RoundTrip(r)
}

// Scale-out: three `serve --demo` replicas start together on one PostgreSQL
// database (all start; the demo is loaded once), then 16 clients go through
// a round-robin client to all of them for a bounded time: edits of shared
// holes with If-Match (each a counter: elevation + 1) and imports sent twice
// with one Idempotency-Key to two replicas at once. Afterwards no edit is
// lost (each counter equals its acknowledged edits), no import row is
// doubled, and every answer had the right status: 200 or 412 for an edit,
// 201 once and 200 (replayed) once for each pair of imports.
func TestScaleOut(t *testing.T) {
	if testing.Short() {
		t.Skip("scale-out test skipped in -short mode")
	}
	db := pgtest.DB(t)
	const replicas = 3
	servers := make([]*server, replicas)
	errs := make([]error, replicas)
	var wg sync.WaitGroup
	for i := range replicas {
		wg.Add(1)
		go func() {
			defer wg.Done()
			servers[i], errs[i] = launch(t, db, "--demo", "--log-level", "error")
		}()
	}
	wg.Wait()
	for i, err := range errs {
		if err != nil {
			t.Fatalf("replica %d of %d starting together did not start: %v", i+1, replicas, err)
		}
	}
	// A site token for the load (each --demo start revokes the earlier demo
	// tokens, so only the last replica's is still valid).
	var stderr bytes.Buffer
	tc := exec.Command(binary, "token", "create", "--project", "all", "--role", "admin", "--name", "scale-out", "--db", db)
	tc.Stderr = &stderr
	out, err := tc.Output()
	if err != nil {
		t.Fatalf("token create: %v\n%s", err, stderr.String())
	}
	token := strings.TrimSpace(string(out))
	rr := &roundRobin{base: &http.Transport{MaxIdleConnsPerHost: 64}}
	for _, s := range servers {
		u, _ := url.Parse(s.URL)
		rr.replicas = append(rr.replicas, u)
		s.Token = token
	}
	hc := &http.Client{Timeout: 60 * time.Second, Transport: rr}
	ctx, cancel := context.WithTimeout(context.Background(), 3*time.Minute)
	defer cancel()
	do := func(method, path, ctype string, body []byte, hdr ...string) (int, http.Header, []byte) {
		return send(ctx, hc, "http://replicas", token, method, path, ctype, body, hdr...)
	}

	var projects page
	servers[0].mustJSON(t, 200, "GET", "/v1/projects", nil, &projects)
	if len(projects.Items) != 1 {
		t.Fatalf("%d projects after %d --demo replicas started together, want the demo loaded once", len(projects.Items), replicas)
	}
	base := fmt.Sprintf("/v1/projects/%d", projects.Items[0].ID)

	const clients, counters = 16, 4
	newHole := func(name string) int64 {
		var h struct{ ID int64 }
		in := map[string]any{"name": name, "easting": 5000, "northing": 8000, "elevation": 0, "azimuth": 90, "dip": -60, "final_depth": 100000}
		servers[0].mustJSON(t, 201, "POST", base+"/holes", in, &h)
		return h.ID
	}
	counterIDs := make([]int64, counters)
	for i := range counterIDs {
		counterIDs[i] = newHole(fmt.Sprintf("SCALE-CNT-%d", i))
	}
	importHoles := make([]string, clients)
	for i := range importHoles {
		importHoles[i] = fmt.Sprintf("SCALE-IMP-%02d", i)
		newHole(importHoles[i])
	}

	var (
		mu        sync.Mutex
		wrong     []string
		edits     = make([]int64, counters) // acknowledged edits per counter
		stale     int
		imported  = make([]int, clients) // rows acknowledged per import hole
		pairs     int
		statusLog = &counter{}
	)
	bad := func(format string, args ...any) {
		mu.Lock()
		defer mu.Unlock()
		if len(wrong) < 20 {
			wrong = append(wrong, fmt.Sprintf(format, args...))
		}
	}
	const rowsPerImport = 25
	runFor := 3 * time.Second
	deadline := time.Now().Add(runFor)
	for c := range clients {
		wg.Add(1)
		go func() {
			defer wg.Done()
			depth := 0.0
			for n := 0; n < 400 && time.Now().Before(deadline); n++ {
				if n%4 == 3 {
					var csv strings.Builder
					csv.WriteString("hole_id,depth,alpha,beta,type\n")
					for range rowsPerImport {
						depth += 0.01
						fmt.Fprintf(&csv, "%s,%.2f,%d,%d,bedding\n", importHoles[c], depth, 10+n%70, (n*7)%360)
					}
					key := fmt.Sprintf("scale-%d-%d", c, n)
					codes := make([]int, 2)
					bodies := make([][]byte, 2)
					var pw sync.WaitGroup
					for a := range 2 { // one file, one key, two replicas at once
						pw.Add(1)
						go func() {
							defer pw.Done()
							codes[a], _, bodies[a] = do("POST", base+"/imports/measurements", "text/csv", []byte(csv.String()), "Idempotency-Key", key)
						}()
					}
					pw.Wait()
					statusLog.add("import", codes[0])
					statusLog.add("import", codes[1])
					sorted := slices.Clone(codes)
					slices.Sort(sorted)
					if !slices.Equal(sorted, []int{200, 201}) {
						bad("import pair %s: statuses %v, want one 201 and one 200 (replayed): %.200s | %.200s", key, codes, bodies[0], bodies[1])
						if !slices.Contains(codes, 201) && !slices.Contains(codes, 200) {
							return
						}
					}
					mu.Lock()
					imported[c] += rowsPerImport
					pairs++
					mu.Unlock()
					continue
				}
				k := (c + n) % counters
				path := fmt.Sprintf("%s/holes/%d", base, counterIDs[k])
				code, hdr, body := do("GET", path, "", nil)
				statusLog.add("read", code)
				if code != 200 {
					bad("GET %s: %d %.200s", path, code, body)
					continue
				}
				var h domain.Hole
				if err := json.Unmarshal(body, &h); err != nil {
					bad("GET %s: %v", path, err)
					continue
				}
				h.Elevation++
				in, _ := json.Marshal(h)
				code, _, body = do("PUT", path, "application/json", in, "If-Match", hdr.Get("ETag"))
				statusLog.add("edit", code)
				switch code {
				case 200:
					mu.Lock()
					edits[k]++
					mu.Unlock()
				case 412:
					mu.Lock()
					stale++
					mu.Unlock()
				default:
					bad("PUT %s: %d, want 200 or 412: %.200s", path, code, body)
				}
			}
		}()
	}
	wg.Wait()
	t.Logf("answers through %d replicas: %s", replicas, statusLog)
	for _, w := range wrong {
		t.Error(w)
	}
	var total int64
	for k, id := range counterIDs {
		var h domain.Hole
		servers[k%replicas].mustJSON(t, 200, "GET", fmt.Sprintf("%s/holes/%d", base, id), nil, &h)
		if h.Elevation != float64(edits[k]) || h.Version != 1+edits[k] {
			t.Errorf("counter hole %d: elevation %v version %d after %d acknowledged edits: lost updates", id, h.Elevation, h.Version, edits[k])
		}
		total += edits[k]
	}
	rows := 0
	for c, name := range importHoles {
		n := count(t, servers[c%replicas], base+"/measurements?hole="+name)
		if n != imported[c] {
			t.Errorf("import hole %s: %d rows, want %d (imports doubled or lost)", name, n, imported[c])
		}
		rows += n
	}
	if total == 0 || stale == 0 || pairs == 0 {
		t.Errorf("the load did not exercise every path: %d edits, %d stale, %d import pairs", total, stale, pairs)
	}
	t.Logf("%d edits acknowledged (0 lost), %d answered 412; %d import pairs, %d rows (0 doubled)", total, stale, pairs, rows)
	for _, s := range servers {
		s.stop(t)
	}
}
