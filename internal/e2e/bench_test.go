package e2e

import (
	"bytes"
	"context"
	"fmt"
	"net/http"
	"os"
	"os/exec"
	"path/filepath"
	"sort"
	"strconv"
	"testing"
	"time"

	"corvane/internal/pgtest"
)

// BenchmarkImportAPIvsPsqlCopy loads the same measurements into PostgreSQL
// twice per iteration: once through the API (POST .../imports/measurements
// to the running binary: upload, parse, check every row against the
// project's holes and vocabulary, COPY in batches of 5,000 rows straight
// into measurements as an import batch nobody sees until the last
// transaction shows it), once with psql's \copy straight into the measurements table
// (values already resolved to hole ids). The loads alternate so both meet
// the same machine load. CORVANE_BENCH_ROWS sets the rows per load (default
// 100000; the figure is 1000000).
//
//	CORVANE_BENCH_ROWS=1000000 go test ./internal/e2e -run XXX -bench ImportAPIvsPsqlCopy -benchtime 1x -timeout 30m
func BenchmarkImportAPIvsPsqlCopy(b *testing.B) {
	rows := 100000
	if v := os.Getenv("CORVANE_BENCH_ROWS"); v != "" {
		n, err := strconv.Atoi(v)
		if err != nil || n < 1 {
			b.Fatalf("CORVANE_BENCH_ROWS=%q", v)
		}
		rows = n
	}
	psql, err := findPsql()
	if err != nil {
		b.Skipf("SKIP: %v", err)
	}
	db := pgtest.DB(b)
	s := start(b, db, "--demo", "--log-level", "warn", "--max-import-bytes", strconv.Itoa(1<<30))
	var projects page
	s.mustJSON(b, 200, "GET", "/v1/projects", nil, &projects)
	pid := projects.Items[0].ID
	base := fmt.Sprintf("/v1/projects/%d", pid)
	var holes struct {
		Items []struct {
			ID         int64   `json:"id"`
			Name       string  `json:"name"`
			FinalDepth float64 `json:"final_depth"`
		} `json:"items"`
	}
	s.mustJSON(b, 200, "GET", base+"/holes", nil, &holes)
	sort.Slice(holes.Items, func(i, j int) bool { return holes.Items[i].ID < holes.Items[j].ID })
	var types struct {
		Items []struct {
			Code string `json:"code"`
			Kind string `json:"kind"`
		} `json:"items"`
	}
	s.mustJSON(b, 200, "GET", base+"/types", nil, &types)
	code := ""
	for _, t := range types.Items {
		if t.Kind == "plane" {
			code = t.Code
			break
		}
	}

	// The same rows in the two forms: the API's CSV (hole names) and the
	// table's columns (hole ids, timestamps).
	var api, table bytes.Buffer
	api.WriteString("hole_id,depth,alpha,beta,type,comment\n")
	now := time.Now().UTC().Format(time.RFC3339Nano)
	for i := range rows {
		h := holes.Items[i%len(holes.Items)]
		depth := 1 + float64(i/len(holes.Items)%int(h.FinalDepth-2)) + float64(i%97)/100
		alpha, beta := 5+float64(i*37%8000)/100, float64(i*53%36000)/100
		fmt.Fprintf(&api, "%s,%.2f,%.2f,%.2f,%s,bench\n", h.Name, depth, alpha, beta, code)
		fmt.Fprintf(&table, "%d,%d,%.2f,%.2f,%.2f,%s,bench,bench,%s,%s,%s\n", pid, h.ID, depth, alpha, beta, code, now, now, now)
	}
	file := filepath.Join(b.TempDir(), "rows.csv")
	if err := os.WriteFile(file, table.Bytes(), 0o644); err != nil {
		b.Fatal(err)
	}
	copyCmd := `\copy measurements (project_id, hole_id, depth, alpha, beta, type_code, comment, logged_by, logged_at, created_at, updated_at) FROM '` + file + `' WITH (FORMAT csv)`

	var apiTime, loggedTime, copyTime time.Duration
	b.ResetTimer()
	for range b.N {
		t0 := time.Now()
		ctx, cancel := context.WithTimeout(context.Background(), 30*time.Minute)
		req, _ := http.NewRequestWithContext(ctx, "POST", s.URL+base+"/imports/measurements?duplicates=keep", bytes.NewReader(api.Bytes()))
		req.Header.Set("Authorization", "Bearer "+s.Token)
		req.Header.Set("Content-Type", "text/csv")
		resp, err := http.DefaultClient.Do(req)
		if err != nil {
			cancel()
			b.Fatal(err)
		}
		resp.Body.Close()
		cancel()
		if resp.StatusCode != 201 {
			b.Fatalf("import: status %d", resp.StatusCode)
		}
		apiIter := time.Since(t0)
		apiTime += apiIter
		// The rows' change log entries (sync) are written after the import
		// answers; a read of the sync feed writes whatever is still owed
		// first, so its answer marks the import wholly done.
		feed, err := http.NewRequest("GET", s.URL+base+"/sync/changes?after=999999999999&limit=1", nil)
		if err != nil {
			b.Fatal(err)
		}
		feed.Header.Set("Authorization", "Bearer "+s.Token)
		fresp, err := http.DefaultClient.Do(feed)
		if err != nil {
			b.Fatal(err)
		}
		fresp.Body.Close()
		if fresp.StatusCode != 200 {
			b.Fatalf("sync feed: status %d", fresp.StatusCode)
		}
		loggedIter := time.Since(t0)
		loggedTime += loggedIter

		t0 = time.Now()
		out, err := exec.Command(psql, "-X", "-q", "-v", "ON_ERROR_STOP=1", "-d", db, "-c", copyCmd).CombinedOutput()
		if err != nil {
			b.Fatalf("psql \\copy: %v\n%s", err, out)
		}
		copyIter := time.Since(t0)
		copyTime += copyIter
		b.Logf("%d rows: API %v (change log written %v), psql \\copy %v", rows, apiIter.Round(time.Millisecond), loggedIter.Round(time.Millisecond), copyIter.Round(time.Millisecond))
	}
	b.StopTimer()
	total := float64(rows * b.N)
	apiRate, copyRate := total/apiTime.Seconds(), total/copyTime.Seconds()
	b.ReportMetric(apiRate, "api_rows/s")
	b.ReportMetric(copyRate, "psql_copy_rows/s")
	b.ReportMetric(apiRate/copyRate, "api/copy")
	b.ReportMetric(total/loggedTime.Seconds()/copyRate, "api_logged/copy")
	s.stop(b)
}

// findPsql looks for psql on PATH, then under the highest
// /usr/lib/postgresql/N/bin.
func findPsql() (string, error) {
	if p, err := exec.LookPath("psql"); err == nil {
		return p, nil
	}
	ms, _ := filepath.Glob("/usr/lib/postgresql/*/bin/psql")
	sort.Slice(ms, func(i, j int) bool {
		vi, _ := strconv.Atoi(filepath.Base(filepath.Dir(filepath.Dir(ms[i]))))
		vj, _ := strconv.Atoi(filepath.Base(filepath.Dir(filepath.Dir(ms[j]))))
		return vi < vj
	})
	if len(ms) == 0 {
		return "", fmt.Errorf("no psql on PATH or under /usr/lib/postgresql")
	}
	return ms[len(ms)-1], nil
}
