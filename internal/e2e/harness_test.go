package e2e

import (
	"bufio"
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"net/http"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"sync"
	"testing"
	"time"

	"corvane/internal/pgtest"
)

// binary is the corvane executable built once by TestMain.
var binary string

func TestMain(m *testing.M) {
	dir, err := os.MkdirTemp("", "corvane-e2e-")
	if err != nil {
		fmt.Fprintln(os.Stderr, "e2e:", err)
		os.Exit(1)
	}
	binary = filepath.Join(dir, "corvane")
	// A plain build (not -race): the race detector covers the same code in
	// the httpapi and service tests, and an instrumented server would make the
	// load test measure the detector.
	cmd := exec.Command("go", "build", "-buildvcs=false", "-o", binary, "corvane/cmd/corvane")
	cmd.Stdout, cmd.Stderr = os.Stderr, os.Stderr
	if err := cmd.Run(); err != nil {
		fmt.Fprintln(os.Stderr, "e2e: building corvane:", err)
		os.RemoveAll(dir)
		os.Exit(1)
	}
	// One throwaway PostgreSQL server for the package (skipped loudly without
	// binaries, a failure when CORVANE_REQUIRE_POSTGRES=1); the binary applies
	// the migrations itself, so the template database stays empty.
	code := pgtest.Main(m, nil)
	os.RemoveAll(dir)
	os.Exit(code)
}

// server is one running `corvane serve`.
type server struct {
	URL   string // http://127.0.0.1:PORT
	Token string // the demo admin token, when started with --demo
	cmd   *exec.Cmd
	out   *syncBuffer
	done  chan error
}

type syncBuffer struct {
	mu sync.Mutex
	b  bytes.Buffer
}

func (s *syncBuffer) Write(p []byte) (int, error) {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.Write(p)
}

func (s *syncBuffer) String() string {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.String()
}

var (
	urlLine   = regexp.MustCompile(`listening on (http://\S+)`)
	tokenLine = regexp.MustCompile(`demo admin token: (\S+)`)
)

// start runs `corvane serve --addr 127.0.0.1:0 --db db args...` and waits until
// it prints its URL (and, with --demo, its token) and /readyz answers 200.
func start(t testing.TB, db string, args ...string) *server {
	t.Helper()
	s, err := launch(t, db, args...)
	if err != nil {
		t.Fatal(err)
	}
	return s
}

// launch is start returning its failure instead of failing the test, so
// that several servers can be started at once from other goroutines. The
// server is killed when the test ends.
func launch(t testing.TB, db string, args ...string) (*server, error) {
	all := append([]string{"serve", "--addr", "127.0.0.1:0", "--db", db, "--log-format", "json"}, args...)
	cmd := exec.Command(binary, all...)
	cmd.Env = append(os.Environ(), "CORVANE_DATABASE_URL=", "CORVANE_ADDR=")
	stdout, err := cmd.StdoutPipe()
	if err != nil {
		return nil, err
	}
	s := &server{cmd: cmd, out: &syncBuffer{}, done: make(chan error, 1)}
	cmd.Stderr = s.out
	if err := cmd.Start(); err != nil {
		return nil, err
	}
	demo := false
	for _, a := range args {
		demo = demo || a == "--demo"
	}
	found := make(chan struct{})
	var mu sync.Mutex
	go func() {
		sc := bufio.NewScanner(stdout)
		signalled := false
		for sc.Scan() {
			line := sc.Text()
			fmt.Fprintln(s.out, line)
			mu.Lock()
			if m := urlLine.FindStringSubmatch(line); m != nil {
				s.URL = m[1]
			}
			if m := tokenLine.FindStringSubmatch(line); m != nil {
				s.Token = m[1]
			}
			ready := s.URL != "" && (!demo || s.Token != "")
			mu.Unlock()
			if !signalled && ready {
				signalled = true
				close(found)
			}
		}
		_, _ = io.Copy(io.Discard, stdout)
		s.done <- cmd.Wait()
	}()
	t.Cleanup(func() {
		if s.cmd.ProcessState == nil {
			_ = s.cmd.Process.Kill()
			<-s.done
		}
		if t.Failed() {
			t.Logf("server output:\n%s", s.out)
		}
	})
	select {
	case <-found:
	case err := <-s.done:
		s.done <- err
		return nil, fmt.Errorf("corvane serve exited early: %v\n%s", err, s.out)
	case <-time.After(60 * time.Second):
		return nil, fmt.Errorf("corvane serve did not print its URL within 60 s\n%s", s.out)
	}
	mu.Lock()
	defer mu.Unlock()
	deadline := time.Now().Add(30 * time.Second)
	for {
		resp, err := http.Get(s.URL + "/readyz")
		if err == nil {
			resp.Body.Close()
			if resp.StatusCode == 200 {
				return s, nil
			}
		}
		if time.Now().After(deadline) {
			return nil, fmt.Errorf("/readyz not 200 within 30 s (last error %v)\n%s", err, s.out)
		}
		time.Sleep(50 * time.Millisecond)
	}
}

// stop sends SIGTERM and waits for a clean exit.
func (s *server) stop(t testing.TB) {
	t.Helper()
	if err := s.cmd.Process.Signal(sigterm); err != nil {
		t.Fatal(err)
	}
	select {
	case err := <-s.done:
		if err != nil {
			t.Fatalf("corvane serve exited with %v after SIGTERM\n%s", err, s.out)
		}
	case <-time.After(60 * time.Second):
		_ = s.cmd.Process.Kill()
		t.Fatalf("corvane serve did not stop within 60 s of SIGTERM\n%s", s.out)
	}
}

// call sends one request with the server's token and returns the status, the
// headers and the body.
func (s *server) call(t testing.TB, method, path string, body any, hdr ...string) (int, http.Header, []byte) {
	t.Helper()
	var r io.Reader
	ct := ""
	switch b := body.(type) {
	case nil:
	case string:
		r, ct = strings.NewReader(b), "text/csv"
	case []byte:
		r, ct = bytes.NewReader(b), "text/csv"
	default:
		j, err := json.Marshal(b)
		if err != nil {
			t.Fatal(err)
		}
		r, ct = bytes.NewReader(j), "application/json"
	}
	ctx, cancel := context.WithTimeout(context.Background(), 60*time.Second)
	defer cancel()
	req, err := http.NewRequestWithContext(ctx, method, s.URL+path, r)
	if err != nil {
		t.Fatal(err)
	}
	if ct != "" {
		req.Header.Set("Content-Type", ct)
	}
	if s.Token != "" {
		req.Header.Set("Authorization", "Bearer "+s.Token)
	}
	for i := 0; i+1 < len(hdr); i += 2 {
		req.Header.Set(hdr[i], hdr[i+1])
	}
	resp, err := http.DefaultClient.Do(req)
	if err != nil {
		t.Fatalf("%s %s: %v", method, path, err)
	}
	defer resp.Body.Close()
	b, err := io.ReadAll(resp.Body)
	if err != nil {
		t.Fatalf("%s %s: reading body: %v", method, path, err)
	}
	return resp.StatusCode, resp.Header, b
}

// mustJSON sends a request, fails unless the status is want, and decodes the
// body into out (when out is not nil).
func (s *server) mustJSON(t testing.TB, want int, method, path string, body, out any, hdr ...string) http.Header {
	t.Helper()
	code, h, b := s.call(t, method, path, body, hdr...)
	if code != want {
		t.Fatalf("%s %s: status %d, want %d: %s", method, path, code, want, b)
	}
	if out != nil {
		if err := json.Unmarshal(b, out); err != nil {
			t.Fatalf("%s %s: decoding %s: %v", method, path, b, err)
		}
	}
	return h
}
