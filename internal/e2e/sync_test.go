package e2e

import (
	"context"
	"fmt"
	"net/http"
	"net/http/httptest"
	"os/exec"
	"path/filepath"
	"strings"
	"sync"
	"syscall"
	"testing"
	"time"

	"corvane/internal/domain"
	"corvane/internal/httpapi"
	"corvane/internal/pgtest"
	"corvane/internal/service"
	"corvane/internal/store/postgres"
	"corvane/internal/store/sqlite"
)

// gate holds the n-th push request until released, telling when it is held.
type gate struct {
	next   http.Handler
	n      int
	mu     sync.Mutex
	seen   int
	held   chan struct{}
	open   chan struct{}
	closed sync.Once
}

func (g *gate) ServeHTTP(w http.ResponseWriter, r *http.Request) {
	if strings.HasSuffix(r.URL.Path, "/sync/push") {
		g.mu.Lock()
		g.seen++
		k := g.seen
		g.mu.Unlock()
		if k == g.n {
			close(g.held)
			<-g.open
		}
	}
	g.next.ServeHTTP(w, r)
}

// TestSyncKilledMidPush kills the real corvane sync (SIGKILL) while the
// centre holds one of its pushes, then syncs again: everything arrives
// once, and a third sync changes nothing.
func TestSyncKilledMidPush(t *testing.T) {
	ctx := context.Background()
	sys := service.WithActor(ctx, service.System)
	url := pgtest.DB(t)
	if err := postgres.Migrate(url, 0); err != nil {
		t.Fatal(err)
	}
	cst, err := postgres.Open(ctx, url)
	if err != nil {
		t.Fatal(err)
	}
	defer cst.Close()
	central := service.New(cst, nil)
	p, err := central.CreateProject(sys, domain.Project{Name: "Ridgeback"})
	if err != nil {
		t.Fatal(err)
	}
	if _, _, err := central.PutTypeCode(sys, p.ID, domain.TypeCode{Code: "JN", Kind: "plane"}); err != nil {
		t.Fatal(err)
	}
	if _, err := central.CreateHole(sys, p.ID, domain.Hole{Name: "RB001", Azimuth: 90, Dip: -60, FinalDepth: 400}); err != nil {
		t.Fatal(err)
	}
	token, _, err := central.CreateToken(sys, p.ID, domain.RoleLog, "shed laptop")
	if err != nil {
		t.Fatal(err)
	}
	g := &gate{next: httpapi.New(httpapi.Options{Service: central}), n: 2, held: make(chan struct{}), open: make(chan struct{})}
	srv := httptest.NewServer(g)
	defer srv.Close()
	defer g.closed.Do(func() { close(g.open) })

	laptop := filepath.Join(t.TempDir(), "laptop.db")
	sync := func() *exec.Cmd {
		cmd := exec.Command(binary, "sync", "--remote", srv.URL, "--project", "Ridgeback", "--db", laptop)
		cmd.Env = append(cmd.Environ(), "CORVANE_SYNC_TOKEN="+token)
		return cmd
	}
	if out, err := sync().CombinedOutput(); err != nil {
		t.Fatalf("first sync: %v\n%s", err, out)
	}

	// 1,500 measurements logged offline: three batches of 500.
	lst, err := sqlite.Open(ctx, laptop)
	if err != nil {
		t.Fatal(err)
	}
	lp, err := lst.GetProjectByName(ctx, "Ridgeback")
	if err != nil {
		t.Fatal(err)
	}
	h, err := lst.GetHoleByName(ctx, lp.ID, "RB001")
	if err != nil {
		t.Fatal(err)
	}
	ms := make([]domain.Measurement, 1500)
	for i := range ms {
		ms[i] = domain.Measurement{ProjectID: lp.ID, HoleID: h.ID, Depth: float64(i) / 5, Alpha: 30, TypeCode: "JN",
			LoggedBy: "shed", LoggedAt: time.Now(), Comment: fmt.Sprint("offline ", i)}
	}
	if _, err := lst.CreateMeasurements(ctx, ms); err != nil {
		t.Fatal(err)
	}
	lst.Close()

	cmd := sync()
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	select {
	case <-g.held:
	case <-time.After(2 * time.Minute):
		cmd.Process.Kill()
		t.Fatal("the second push never came")
	}
	if err := cmd.Process.Signal(syscall.SIGKILL); err != nil {
		t.Fatal(err)
	}
	cmd.Wait()
	g.closed.Do(func() { close(g.open) })

	out, err := sync().CombinedOutput()
	if err != nil {
		t.Fatalf("sync after the kill: %v\n%s", err, out)
	}
	out, err = sync().CombinedOutput()
	if err != nil || !strings.Contains(string(out), "pushed 0 (") || !strings.Contains(string(out), "pulled 0,") {
		t.Fatalf("a third sync: %v\n%s", err, out)
	}
	got, err := cst.CountMeasurements(ctx, domain.MeasurementFilter{ProjectID: p.ID})
	if err != nil {
		t.Fatal(err)
	}
	if got != 1500 {
		t.Errorf("the centre holds %d measurements, want the 1500 logged offline, once each", got)
	}
	// And every one of them by its own global id.
	seen := map[string]bool{}
	for after := int64(0); ; {
		page, err := cst.ListMeasurements(ctx, domain.MeasurementFilter{ProjectID: p.ID}, domain.Page{Limit: domain.MaxLimit, After: after})
		if err != nil {
			t.Fatal(err)
		}
		for _, m := range page {
			seen[m.GlobalID] = true
		}
		if len(page) < domain.MaxLimit {
			break
		}
		after = page[len(page)-1].ID
	}
	for _, m := range ms {
		if !seen[m.GlobalID] {
			t.Fatalf("measurement %s logged offline is missing on the centre", m.GlobalID)
		}
	}
}
