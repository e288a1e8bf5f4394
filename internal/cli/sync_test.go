package cli

import (
	"context"
	"encoding/json"
	"net/http"
	"net/http/httptest"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"corvane/internal/domain"
	"corvane/internal/httpapi"
	"corvane/internal/service"
	"corvane/internal/store"
)

// The sync command end to end against a central service on loopback: the
// first sync, a repeated one that changes nothing, a conflict listed by the
// command as the route lists it, resolved from the command line with the
// choice in the centre's audit trail.
func TestSyncCommand(t *testing.T) {
	ctx := context.Background()
	sys := service.WithActor(ctx, service.System)
	centralDB := filepath.Join(t.TempDir(), "central.db")
	cst, err := store.OpenMigrated(ctx, centralDB)
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
	h, err := central.CreateHole(sys, p.ID, domain.Hole{Name: "RB001", Azimuth: 90, Dip: -60, FinalDepth: 200})
	if err != nil {
		t.Fatal(err)
	}
	m, err := central.CreateMeasurement(sys, p.ID, domain.Measurement{HoleID: h.ID, Depth: 12, Alpha: 40, Beta: new(float64), TypeCode: "JN"})
	if err != nil {
		t.Fatal(err)
	}
	token, _, err := central.CreateToken(sys, p.ID, domain.RoleLog, "shed laptop")
	if err != nil {
		t.Fatal(err)
	}
	srv := httptest.NewServer(httpapi.New(httpapi.Options{Service: central}))
	defer srv.Close()

	laptop := filepath.Join(t.TempDir(), "laptop.db")
	env := map[string]string{"CORVANE_DATABASE_URL": laptop, EnvSyncToken: token}
	sync := func(args ...string) (int, string, string) {
		return runWithEnv(t, env, append([]string{"sync", "--remote", srv.URL, "--project", "Ridgeback"}, args...)...)
	}
	if code, out, errs := sync(); code != ExitOK || !strings.Contains(out, "pulled 3,") {
		t.Fatalf("first sync: %d %q %q", code, out, errs)
	}
	if code, out, errs := sync(); code != ExitOK || !strings.Contains(out, "pushed 0 (") || !strings.Contains(out, "pulled 0,") {
		t.Fatalf("second sync: %d %q %q", code, out, errs)
	}

	// The same measurement edited on both sides.
	lst, err := store.Open(ctx, laptop)
	if err != nil {
		t.Fatal(err)
	}
	local := service.New(lst, nil)
	lp, err := lst.GetProjectByName(ctx, "Ridgeback")
	if err != nil {
		t.Fatal(err)
	}
	ms, err := lst.ListMeasurements(ctx, domain.MeasurementFilter{ProjectID: lp.ID}, domain.Page{})
	if err != nil || len(ms) != 1 || ms[0].GlobalID != m.GlobalID {
		t.Fatalf("laptop measurements: %+v %v", ms, err)
	}
	lm := ms[0]
	lm.Comment = "closed, calcite"
	if _, err := local.UpdateMeasurement(sys, lp.ID, lm.ID, lm.Version, lm); err != nil {
		t.Fatal(err)
	}
	lst.Close()
	cm := m.Measurement
	cm.Comment = "open"
	if _, err := central.UpdateMeasurement(sys, p.ID, cm.ID, cm.Version, cm); err != nil {
		t.Fatal(err)
	}
	if code, _, errs := sync(); code != ExitRows || !strings.Contains(errs, "--conflicts") {
		t.Fatalf("sync meeting a conflict: %d %q", code, errs)
	}

	// The command lists what the route lists.
	req, _ := http.NewRequest("GET", srv.URL+"/v1/projects/"+strconv.FormatInt(p.ID, 10)+"/sync/conflicts?status=open", nil)
	req.Header.Set("Authorization", "Bearer "+token)
	resp, err := http.DefaultClient.Do(req)
	if err != nil {
		t.Fatal(err)
	}
	var listed struct {
		Items []service.ConflictView `json:"items"`
	}
	err = json.NewDecoder(resp.Body).Decode(&listed)
	resp.Body.Close()
	if err != nil || len(listed.Items) != 1 {
		t.Fatalf("route lists %+v (%v), want one conflict", listed.Items, err)
	}
	id := listed.Items[0].ID
	code, out, errs := runWithEnv(t, env, "sync", "--conflicts")
	if code != ExitOK || !strings.Contains(out, id) || !strings.Contains(out, `"closed, calcite"`) || !strings.Contains(out, `"open"`) ||
		!strings.Contains(out, "* comment") {
		t.Fatalf("--conflicts: %d %q %q", code, out, errs)
	}

	code, out, errs = sync("--resolve", id, "--keep", "local")
	if code != ExitOK || !strings.Contains(out, "kept local, by shed laptop") {
		t.Fatalf("--resolve: %d %q %q", code, out, errs)
	}
	got, err := central.GetMeasurement(sys, p.ID, cm.ID)
	if err != nil || got.Comment != "closed, calcite" {
		t.Fatalf("the centre after keep local: %q %v", got.Comment, err)
	}
	audit, err := central.ListAudit(sys, p.ID, domain.Page{Limit: 100})
	if err != nil {
		t.Fatal(err)
	}
	last := audit.Items[len(audit.Items)-1]
	if last.Entity != "sync_conflict" || last.EntityID != id || last.ActorName != "shed laptop" || !strings.Contains(string(last.After), `"kept":"local"`) {
		t.Errorf("last audit entry: %+v", last)
	}
	if code, out, _ := runWithEnv(t, env, "sync", "--conflicts"); code != ExitOK || !strings.Contains(out, "no conflicts") {
		t.Errorf("--conflicts after resolving: %q", out)
	}
	if code, out, errs := sync(); code != ExitOK {
		t.Fatalf("sync after resolving: %d %q %q", code, out, errs)
	}
}
