package cli

import (
	"bytes"
	"context"
	"encoding/json"
	"math"
	"path/filepath"
	"strconv"
	"testing"

	"corvane/internal/qa"
)

// Equal answers at both doors of the mark-rotation check: corvane qa on the
// demo's files (testdata/zelvorra) and the QA route on the demo programme
// loaded into a store give the same rotation estimate, interval, n and flag
// for every run, at default settings and with the tolerance changed.
func TestQAMarkRotationDoors(t *testing.T) {
	ctx, svc, p := demoService(t)
	srv, token := readerServer(t, ctx, svc, p.ID)

	dir := filepath.Join("..", "..", "testdata", "zelvorra")
	flagged := map[string]int{}
	for _, tol := range []string{"", "25"} {
		args := []string{"qa", "--collars", filepath.Join(dir, "collars.csv"), "--surveys", filepath.Join(dir, "surveys.csv"),
			"--structures", filepath.Join(dir, "structures.csv"), "--runs", filepath.Join(dir, "runs.csv"), "--persistent", "bedding"}
		query := "?persistent=bedding"
		if tol != "" {
			args = append(args, "--rotation-tolerance", tol)
			query += "&rotation_tolerance=" + tol
		}
		var out, errb bytes.Buffer
		if code := Main(context.Background(), args, nil, &out, &errb, func(string) string { return "" }); code != ExitOK {
			t.Fatalf("corvane qa: exit %d: %s", code, errb.String())
		}
		var cli, route qa.Report
		if err := json.Unmarshal(out.Bytes(), &cli); err != nil {
			t.Fatal(err)
		}
		if err := json.Unmarshal(getRoute(t, srv, token, "/v1/projects/"+strconv.FormatInt(p.ID, 10)+"/qa"+query), &route); err != nil {
			t.Fatal(err)
		}
		if len(cli.Holes) != len(route.Holes) || cli.Summary.RunsFlagged != route.Summary.RunsFlagged {
			t.Fatalf("tolerance %q: %d holes and %d flagged runs by the command, %d and %d by the route",
				tol, len(cli.Holes), cli.Summary.RunsFlagged, len(route.Holes), route.Summary.RunsFlagged)
		}
		estimates := 0
		for i, ch := range cli.Holes {
			rh := route.Holes[i]
			if ch.HoleID != rh.HoleID || len(ch.Runs) != len(rh.Runs) {
				t.Fatalf("hole %s: %d runs by the command, hole %s with %d by the route", ch.HoleID, len(ch.Runs), rh.HoleID, len(rh.Runs))
			}
			for k, cr := range ch.Runs {
				a, b := cr.Rotation, rh.Runs[k].Rotation
				if (a == nil) != (b == nil) {
					t.Errorf("%s run %.2f: estimate by one door only", ch.HoleID, cr.From)
					continue
				}
				if a == nil {
					continue
				}
				estimates++
				if a.N != b.N || a.Flagged != b.Flagged || math.Abs(a.Offset-b.Offset) > 1e-6 || math.Abs(a.HalfWidth95-b.HalfWidth95) > 1e-6 {
					t.Errorf("tolerance %q, %s run %.2f: command %+.4f +- %.4f n %d flagged %v; route %+.4f +- %.4f n %d flagged %v",
						tol, ch.HoleID, cr.From, a.Offset, a.HalfWidth95, a.N, a.Flagged, b.Offset, b.HalfWidth95, b.N, b.Flagged)
				}
			}
		}
		if estimates == 0 || cli.Summary.RunsFlagged == 0 {
			t.Errorf("tolerance %q: %d estimates, %d runs flagged: nothing compared", tol, estimates, cli.Summary.RunsFlagged)
		}
		flagged[tol] = cli.Summary.RunsFlagged
	}
	if flagged["25"] >= flagged[""] {
		t.Errorf("a 25 deg tolerance flags %d runs, the default %d: the option did not reach the check", flagged["25"], flagged[""])
	}
}
