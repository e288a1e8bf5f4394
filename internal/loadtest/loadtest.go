// Package loadtest drives a running corvane service with concurrent clients
// that log measurements one by one and import CSV files of measurements, for
// a fixed time, then counts every row to prove that nothing was lost and
// nothing doubled. It reports requests per second and latency percentiles.
//
// It talks HTTP only, so it measures the service as deployed. It is used by
// cmd/corvane-load and by the end-to-end tests.
package loadtest

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math/rand/v2"
	"net/http"
	"net/url"
	"slices"
	"strconv"
	"strings"
	"sync"
	"time"
)

// Config says what to run.
type Config struct {
	BaseURL   string        // e.g. http://127.0.0.1:8080
	Token     string        // a token with the admin role in Project
	Project   int64         // the project to write into
	Clients   int           // concurrent clients (default 16)
	Duration  time.Duration // how long to send requests (default 10 s)
	ImportRow int           // rows per imported file (default 50)
	// ImportEvery makes every n-th request of a client a file import (default
	// 10); the others log one measurement each.
	ImportEvery int
	Seed        uint64
	HTTP        *http.Client
}

// Result is what a run did and measured.
type Result struct {
	Requests   int           // requests sent (retries included)
	Logged     int           // measurements created one by one (201)
	Imports    int           // files imported
	ImportRows int           // rows in those files
	Retries    int           // imports sent a second time with the same key
	Errors     []string      // unexpected responses, at most 20 kept
	ErrorCount int           // all unexpected responses
	Elapsed    time.Duration // time spent sending
	P50, P99   time.Duration // request latency percentiles
	Max        time.Duration
	// ByKind gives the percentiles of each kind of request: "log" (one
	// measurement), "import" (a file's first sending) and "import again"
	// (the same file and key sent again, answered from the first).
	ByKind      map[string]Latency
	Expected    int // rows the service must hold
	Counted     int // rows it does hold
	Duplicates  int // rows counted twice by id (paging error) — must be 0
	HolesLoaded int
}

// RequestsPerSecond is Requests / Elapsed.
func (r Result) RequestsPerSecond() float64 {
	if r.Elapsed <= 0 {
		return 0
	}
	return float64(r.Requests) / r.Elapsed.Seconds()
}

// OK reports whether every row is there exactly once and no request failed.
func (r Result) OK() bool {
	return r.ErrorCount == 0 && r.Counted == r.Expected && r.Duplicates == 0
}

// String summarises r on a few lines.
func (r Result) String() string {
	var b strings.Builder
	fmt.Fprintf(&b, "%d requests in %.1f s: %.0f requests/s; latency p50 %s, p99 %s, max %s\n",
		r.Requests, r.Elapsed.Seconds(), r.RequestsPerSecond(), r.P50.Round(time.Microsecond),
		r.P99.Round(time.Microsecond), r.Max.Round(time.Microsecond))
	for _, k := range []string{"log", "import", "import again"} {
		if l, ok := r.ByKind[k]; ok {
			fmt.Fprintf(&b, "  %-12s %5d requests: p50 %s, p99 %s, max %s\n", k, l.N, l.P50.Round(time.Microsecond), l.P99.Round(time.Microsecond), l.Max.Round(time.Microsecond))
		}
	}
	fmt.Fprintf(&b, "logged %d measurements one by one; imported %d files (%d rows, %d retried with the same key)\n",
		r.Logged, r.Imports, r.ImportRows, r.Retries)
	fmt.Fprintf(&b, "rows expected %d, counted %d, duplicates %d, failed requests %d\n",
		r.Expected, r.Counted, r.Duplicates, r.ErrorCount)
	for _, e := range r.Errors {
		fmt.Fprintf(&b, "  error: %s\n", e)
	}
	return b.String()
}

// Latency sums up the latencies of one kind of request.
type Latency struct {
	N             int
	P50, P99, Max time.Duration
}

func latencyOf(lat []time.Duration) Latency {
	slices.Sort(lat)
	if len(lat) == 0 {
		return Latency{}
	}
	return Latency{N: len(lat), P50: lat[len(lat)*50/100], P99: lat[min(len(lat)-1, len(lat)*99/100)], Max: lat[len(lat)-1]}
}

type client struct {
	cfg  Config
	http *http.Client
}

func (c *client) do(ctx context.Context, method, path, ctype string, body []byte, hdr map[string]string) (int, []byte, time.Duration, error) {
	var r io.Reader
	if body != nil {
		r = bytes.NewReader(body)
	}
	req, err := http.NewRequestWithContext(ctx, method, c.cfg.BaseURL+path, r)
	if err != nil {
		return 0, nil, 0, err
	}
	if ctype != "" {
		req.Header.Set("Content-Type", ctype)
	}
	req.Header.Set("Authorization", "Bearer "+c.cfg.Token)
	for k, v := range hdr {
		req.Header.Set(k, v)
	}
	t0 := time.Now()
	resp, err := c.http.Do(req)
	if err != nil {
		return 0, nil, time.Since(t0), err
	}
	b, err := io.ReadAll(resp.Body)
	resp.Body.Close()
	return resp.StatusCode, b, time.Since(t0), err
}

func (c *client) json(ctx context.Context, want int, method, path string, in, out any) error {
	var body []byte
	if in != nil {
		var err error
		if body, err = json.Marshal(in); err != nil {
			return err
		}
	}
	code, b, _, err := c.do(ctx, method, path, "application/json", body, nil)
	if err != nil {
		return fmt.Errorf("%s %s: %w", method, path, err)
	}
	if code != want {
		return fmt.Errorf("%s %s: status %d, want %d: %s", method, path, code, want, b)
	}
	if out != nil {
		return json.Unmarshal(b, out)
	}
	return nil
}

type hole struct {
	ID   int64  `json:"id"`
	Name string `json:"name"`
}

// Run sets up one hole per client in cfg.Project, runs the clients for
// cfg.Duration, then counts the rows of every hole through the API.
func Run(ctx context.Context, cfg Config) (Result, error) {
	if cfg.Clients <= 0 {
		cfg.Clients = 16
	}
	if cfg.Duration <= 0 {
		cfg.Duration = 10 * time.Second
	}
	if cfg.ImportRow <= 0 {
		cfg.ImportRow = 50
	}
	if cfg.ImportEvery <= 0 {
		cfg.ImportEvery = 10
	}
	if cfg.HTTP == nil {
		cfg.HTTP = &http.Client{
			Timeout:   60 * time.Second,
			Transport: &http.Transport{MaxIdleConnsPerHost: cfg.Clients * 2},
		}
	}
	c := &client{cfg: cfg, http: cfg.HTTP}
	p := "/v1/projects/" + strconv.FormatInt(cfg.Project, 10)

	// A plane type from the project's vocabulary, or one of our own.
	var types struct {
		Items []struct {
			Code string `json:"code"`
			Kind string `json:"kind"`
		} `json:"items"`
	}
	if err := c.json(ctx, 200, "GET", p+"/types", nil, &types); err != nil {
		return Result{}, err
	}
	code := ""
	for _, t := range types.Items {
		if t.Kind == "plane" {
			code = t.Code
			break
		}
	}
	if code == "" {
		code = "LOADJT"
		if err := c.json(ctx, 201, "PUT", p+"/types/"+code, map[string]string{"description": "load test joint", "kind": "plane"}, nil); err != nil {
			return Result{}, err
		}
	}

	nonce := strconv.FormatInt(time.Now().UnixNano()%1e9, 36)
	holes := make([]hole, cfg.Clients)
	for i := range holes {
		in := map[string]any{
			"name": fmt.Sprintf("LOAD-%s-%02d", nonce, i), "easting": 5000 + 10*float64(i), "northing": 8000,
			"elevation": 400, "azimuth": 90, "dip": -60, "final_depth": 100000,
		}
		if err := c.json(ctx, 201, "POST", p+"/holes", in, &holes[i]); err != nil {
			return Result{}, fmt.Errorf("creating load hole: %w", err)
		}
	}

	var (
		mu  sync.Mutex
		res Result
		lat []time.Duration
		by  = map[string][]time.Duration{}
	)
	record := func(kind string, d time.Duration, msg string) {
		mu.Lock()
		defer mu.Unlock()
		res.Requests++
		lat = append(lat, d)
		by[kind] = append(by[kind], d)
		if msg != "" {
			res.ErrorCount++
			if len(res.Errors) < 20 {
				res.Errors = append(res.Errors, msg)
			}
		}
	}
	runCtx, cancel := context.WithTimeout(ctx, cfg.Duration)
	defer cancel()
	start := time.Now()
	var wg sync.WaitGroup
	expected := make([]int, cfg.Clients)
	for i := range cfg.Clients {
		wg.Add(1)
		go func() {
			defer wg.Done()
			rng := rand.New(rand.NewPCG(cfg.Seed, uint64(i)))
			h := holes[i]
			depth := 0.0
			for n := 0; runCtx.Err() == nil; n++ {
				if n%cfg.ImportEvery == cfg.ImportEvery-1 {
					var csv strings.Builder
					csv.WriteString("hole_id,depth,alpha,beta,type\n")
					for range cfg.ImportRow {
						depth += 0.01
						fmt.Fprintf(&csv, "%s,%.2f,%.1f,%.1f,%s\n", h.Name, depth, 5+80*rng.Float64(), 360*rng.Float64(), code)
					}
					key := fmt.Sprintf("load-%s-%d-%d", nonce, i, n)
					body := []byte(csv.String())
					// Send the same file twice with the same key: the second
					// must return the first result and write nothing.
					for attempt := range 2 {
						st, b, d, err := c.do(ctx, "POST", p+"/imports/measurements", "text/csv", body, map[string]string{"Idempotency-Key": key})
						msg := ""
						if err != nil {
							msg = "import: " + err.Error()
						} else if st != 200 && st != 201 {
							msg = fmt.Sprintf("import: status %d: %.200s", st, b)
						}
						record([]string{"import", "import again"}[attempt], d, msg)
						if msg != "" {
							break
						}
						if attempt == 0 {
							expected[i] += cfg.ImportRow
							mu.Lock()
							res.Imports++
							res.ImportRows += cfg.ImportRow
							mu.Unlock()
						} else {
							mu.Lock()
							res.Retries++
							mu.Unlock()
						}
					}
					continue
				}
				depth += 0.01
				body, _ := json.Marshal(map[string]any{
					"hole_id": h.ID, "depth": depth, "alpha": 5 + 80*rng.Float64(),
					"beta": 360 * rng.Float64(), "type": code, "comment": "load test",
				})
				st, b, d, err := c.do(ctx, "POST", p+"/measurements", "application/json", body, nil)
				msg := ""
				if err != nil {
					msg = "log: " + err.Error()
				} else if st != 201 {
					msg = fmt.Sprintf("log: status %d: %.200s", st, b)
				}
				record("log", d, msg)
				if msg == "" {
					expected[i]++
					mu.Lock()
					res.Logged++
					mu.Unlock()
				}
			}
		}()
	}
	wg.Wait()
	res.Elapsed = time.Since(start)
	all := latencyOf(lat)
	res.P50, res.P99, res.Max = all.P50, all.P99, all.Max
	res.ByKind = map[string]Latency{}
	for k, l := range by {
		res.ByKind[k] = latencyOf(l)
	}

	// Count every row, hole by hole, paging through the list.
	for i, h := range holes {
		res.Expected += expected[i]
		seen := map[int64]bool{}
		after := int64(0)
		for {
			var page struct {
				Items []struct {
					ID int64 `json:"id"`
				} `json:"items"`
				NextAfter *int64 `json:"next_after"`
			}
			q := fmt.Sprintf("%s/measurements?hole=%s&limit=1000&after=%d", p, url.QueryEscape(h.Name), after)
			if err := c.json(ctx, 200, "GET", q, nil, &page); err != nil {
				return res, fmt.Errorf("counting rows: %w", err)
			}
			for _, it := range page.Items {
				if seen[it.ID] {
					res.Duplicates++
				}
				seen[it.ID] = true
			}
			if page.NextAfter == nil {
				break
			}
			after = *page.NextAfter
		}
		res.Counted += len(seen)
		res.HolesLoaded++
	}
	if !res.OK() {
		return res, errors.New("load test: rows lost or doubled, or requests failed")
	}
	return res, nil
}
