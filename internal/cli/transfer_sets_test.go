package cli

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"net/http"
	"net/http/httptest"
	"os"
	"path/filepath"
	"reflect"
	"strconv"
	"strings"
	"testing"

	"corvane/internal/domain"
	"corvane/internal/exchange/ags4"
	"corvane/internal/exchange/exchangetest"
	"corvane/internal/palette"
	"corvane/internal/visual"
)

// TestTransferSetsDoors: with the statistics' set options, both doors label
// every structure with its set from the one grouping (fabric.PlaneSets), in
// the points' set column, the glTF discs' extras and AGS4 FRAC_SET (DISC
// and FRAC), and the labels are those of the statistics route over the same
// selection: the count of each label equals the set's count there.
func TestTransferSetsDoors(t *testing.T) {
	tp := newTransferPair(t)
	p, dir, srv, token, base, converted, d := tp.p, tp.dir, tp.srv, tp.token, tp.base, tp.converted, tp.data
	for _, c := range []struct{ cli, route string }{
		{"--sets auto:3 --seed 4", "sets=auto:3&seed=4"},
		{"--sets type", "sets=type"},
		{"--set J1:200/10:35 --set J2:100/40:35", "set=J1:200/10:35&set=J2:100/40:35"},
	} {
		out := func(n string) string { return filepath.Join(dir, n) }
		args := append([]string{"transfer", "--collars", d + "collars.csv", "--surveys", d + "surveys.csv", "--converted", converted,
			"--output-reference", p.OutputAzimuthRef, "--project", p.Name,
			"--glb", out("scene.glb"), "--points", out("points.csv"), "--ags", out("transfer.ags")}, strings.Fields(c.cli)...)
		if code, _, stderr := runCLI(args...); code != ExitOK {
			t.Fatalf("%s: exit %d: %s", c.cli, code, stderr)
		}
		read := func(n string) []byte {
			b, err := os.ReadFile(out(n))
			if err != nil {
				t.Fatal(err)
			}
			return b
		}
		// Points: the set column, row by row.
		setsOf := func(b []byte) []string {
			recs := parseCSV(t, b)
			col := -1
			for i, h := range recs[0] {
				if h == "set" {
					col = i
				}
			}
			var out []string
			for _, r := range recs[1:] {
				out = append(out, r[col])
			}
			return out
		}
		cliSets, httpSets := setsOf(read("points.csv")), setsOf(getRoute(t, srv, token, base+"/points.csv?"+c.route))
		if !reflect.DeepEqual(cliSets, httpSets) {
			t.Fatalf("%s: points' sets differ between the doors", c.cli)
		}
		counts := map[string]int{}
		for _, s := range httpSets {
			counts[s]++
		}
		// The statistics route over the same selection counts the same sets.
		stats := decodeJSON(t, "statistics", getRoute(t, srv, token, base+"/statistics?"+c.route))
		planes := stats["planes"].(map[string]any)
		want := map[string]int{}
		for _, s := range planes["sets"].([]any) {
			m := s.(map[string]any)
			if n := jsonInt(t, m["count"]); n > 0 {
				want[m["name"].(string)] = n
			}
		}
		if un, ok := planes["unassigned"]; ok && jsonInt(t, un) > 0 {
			want[""] = jsonInt(t, un)
		}
		if !reflect.DeepEqual(counts, want) || len(want) < 2 {
			t.Errorf("%s: labels %v in the points, sets %v in the statistics", c.cli, counts, want)
		}
		// glTF: each disc's extras carry its set, in the points' order.
		discSets := func(b []byte) []string {
			doc, _ := glbParts(t, b)
			var out []string
			for _, n := range doc["nodes"].([]any) {
				m := n.(map[string]any)
				if _, ok := m["rotation"]; !ok {
					continue
				}
				ex := m["extras"].(map[string]any)
				s, _ := ex["set"].(string)
				out = append(out, s)
			}
			return out
		}
		cliDisc, httpDisc := discSets(read("scene.glb")), discSets(getRoute(t, srv, token, base+"/scene.glb?"+c.route))
		if !reflect.DeepEqual(cliDisc, httpDisc) || len(cliDisc) != len(httpSets) {
			t.Errorf("%s: glTF discs' sets: %d by the command line, %d by the route, %d points", c.cli, len(cliDisc), len(httpDisc), len(httpSets))
		}
		discCounts := map[string]int{}
		for _, s := range httpDisc {
			discCounts[s]++
		}
		if !reflect.DeepEqual(discCounts, counts) {
			t.Errorf("%s: glTF discs' sets %v, points' %v", c.cli, discCounts, counts)
		}
		// AGS4: FRAC_SET of DISC rows, in the points' order.
		ca, err := ags4.Read(bytes.NewReader(read("transfer.ags")), "cli.ags")
		if err != nil {
			t.Fatal(err)
		}
		ha, err := ags4.Read(bytes.NewReader(getRoute(t, srv, token, base+"/transfer.ags?"+c.route)), "http.ags")
		if err != nil {
			t.Fatal(err)
		}
		var cliDISC, httpDISC []string
		for _, x := range ca.Discontinuities {
			cliDISC = append(cliDISC, x.Set)
		}
		for _, x := range ha.Discontinuities {
			httpDISC = append(httpDISC, x.Set)
		}
		if !reflect.DeepEqual(cliDISC, httpDISC) || !reflect.DeepEqual(httpDISC, httpSets) {
			t.Errorf("%s: DISC FRAC_SET differs from the points' sets", c.cli)
		}
		if fa, fb := fmt.Sprintf("%+v", ca.Spacings), fmt.Sprintf("%+v", ha.Spacings); fa != fb {
			t.Errorf("%s: FRAC differs between the doors", c.cli)
		}

		// Discs grouped and coloured by set: the same materials at both
		// doors; an automatic or window set j in the nets' colour of set j
		// (visual.Pair), sets by type in their types' colours.
		args = append(args, "--colour-by", "set")
		if code, _, stderr := runCLI(args...); code != ExitOK {
			t.Fatalf("%s --colour-by set: exit %d: %s", c.cli, code, stderr)
		}
		cliDoc, _ := glbParts(t, read("scene.glb"))
		httpDoc, _ := glbParts(t, getRoute(t, srv, token, base+"/scene.glb?colour_by=set&"+c.route))
		cm, hm := must(json.Marshal(cliDoc["materials"])), must(json.Marshal(httpDoc["materials"]))
		if !bytes.Equal(cm, hm) {
			t.Errorf("%s: materials by set differ:\n%s\n%s", c.cli, cm, hm)
		}
		if !strings.Contains(c.cli, "type") {
			first := "A"
			if strings.HasPrefix(c.cli, "--set ") {
				first = "J1"
			}
			rgb, ok := palette.ParseHex(visual.Pair(0).Colour)
			if !ok {
				t.Fatal(visual.Pair(0))
			}
			lin := rgb.Linear()
			var found bool
			for _, m := range httpDoc["materials"].([]any) {
				mm := m.(map[string]any)
				if mm["name"] == "set "+first {
					found = true
					got := mm["pbrMetallicRoughness"].(map[string]any)["baseColorFactor"].([]any)
					if math.Abs(got[0].(float64)-lin[0]) > 1e-9 {
						t.Errorf("%s: set %s coloured %v, want %v", c.cli, first, got, lin)
					}
				}
			}
			if !found {
				t.Errorf("%s: no material for set %s", c.cli, first)
			}
		}
	}
	// Discs by set need sets, at both doors.
	if code, _, stderr := runCLI("transfer", "--collars", d+"collars.csv", "--surveys", d+"surveys.csv", "--converted", converted,
		"--glb", filepath.Join(dir, "x.glb"), "--colour-by", "set"); code != ExitUsage || !strings.Contains(stderr, "needs sets") {
		t.Errorf("--colour-by set without sets: exit %d: %s", code, stderr)
	}
	req, _ := http.NewRequest(http.MethodGet, srv.URL+base+"/scene.glb?colour_by=set", nil)
	req.Header.Set("Authorization", "Bearer "+token)
	res, err := srv.Client().Do(req)
	if err != nil {
		t.Fatal(err)
	}
	res.Body.Close()
	if res.StatusCode != http.StatusUnprocessableEntity {
		t.Errorf("colour_by=set without sets: status %d", res.StatusCode)
	}
}

func jsonInt(t *testing.T, v any) int {
	t.Helper()
	n, err := strconv.Atoi(fmt.Sprint(v))
	if err != nil {
		t.Fatalf("%v: not a whole number", v)
	}
	return n
}

// TestTransferUncertaintyDoors: with --uncertainty (the route's
// uncertainty=true) both doors carry each structure's 95% cone: the points'
// uncertainty column (the command line reads the converted file's
// pole_cone95, written to 0.01 degree; the route has full precision) and
// one cone node per disc in glTF, scaled to the same half-angle; both
// scenes pass the Khronos validator.
func TestTransferUncertaintyDoors(t *testing.T) {
	tp := newTransferPair(t)
	p, dir, srv, token, base, converted, d := tp.p, tp.dir, tp.srv, tp.token, tp.base, tp.converted, tp.data
	out := func(n string) string { return filepath.Join(dir, n) }
	if code, _, stderr := runCLI("transfer", "--collars", d+"collars.csv", "--surveys", d+"surveys.csv", "--converted", converted,
		"--output-reference", p.OutputAzimuthRef, "--project", p.Name, "--uncertainty",
		"--glb", out("scene.glb"), "--points", out("points.csv")); code != ExitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	cliPts := parseCSV(t, must(os.ReadFile(out("points.csv"))))
	httpPts := parseCSV(t, getRoute(t, srv, token, base+"/points.csv?uncertainty=true"))
	col := len(cliPts[0]) - 1
	if cliPts[0][col] != "uncertainty" || httpPts[0][col] != "uncertainty" || len(cliPts) != len(httpPts) {
		t.Fatalf("headers %v and %v, %d and %d rows", cliPts[0], httpPts[0], len(cliPts), len(httpPts))
	}
	with := 0
	for i := 1; i < len(cliPts); i++ {
		a, b := cliPts[i][col], httpPts[i][col]
		if (a == "") != (b == "") {
			t.Fatalf("row %d: uncertainty %q by the command line, %q by the route", i, a, b)
		}
		if a == "" {
			continue
		}
		with++
		if math.Abs(num(t, a)-num(t, b)) > 0.0101 {
			t.Fatalf("row %d: uncertainty %s by the command line, %s by the route", i, a, b)
		}
	}
	if with < 100 {
		t.Fatalf("%d structures with an uncertainty", with)
	}
	httpGLB := getRoute(t, srv, token, base+"/scene.glb?uncertainty=true")
	cones := func(b []byte) []float64 {
		doc, _ := glbParts(t, b)
		var out []float64
		for _, n := range doc["nodes"].([]any) {
			m := n.(map[string]any)
			if sc, ok := m["scale"].([]any); ok {
				out = append(out, sc[1].(float64)) // disc radius * cos(half-angle)
			}
		}
		return out
	}
	a, b := cones(must(os.ReadFile(out("scene.glb")))), cones(httpGLB)
	if len(a) != with || len(b) != with {
		t.Fatalf("cones: %d by the command line, %d by the route, want %d", len(a), len(b), with)
	}
	for i := range a {
		if math.Abs(a[i]-b[i]) > 2e-4 {
			t.Fatalf("cone %d: scale %v by the command line, %v by the route", i, a[i], b[i])
		}
	}
	if err := os.WriteFile(out("route.glb"), httpGLB, 0o644); err != nil {
		t.Fatal(err)
	}
	t.Run("khronos", func(t *testing.T) {
		exchangetest.RequireValid(t, exchangetest.ValidatorDir(t), out("scene.glb"), out("route.glb"))
	})
}

// transferPair is the demo programme in a store behind the HTTP server and,
// for the command line, the service's measurements.csv export as the
// converted file beside the demo's collars and surveys (data).
type transferPair struct {
	p                          domain.Project
	dir, base, converted, data string
	srv                        *httptest.Server
	token                      string
}

func newTransferPair(t *testing.T) transferPair {
	t.Helper()
	ctx, svc, p := demoService(t)
	tp := transferPair{p: p, dir: t.TempDir(), base: "/v1/projects/" + strconv.FormatInt(p.ID, 10), data: "../../testdata/zelvorra/"}
	tp.srv, tp.token = readerServer(t, ctx, svc, p.ID)
	tp.converted = filepath.Join(tp.dir, "measurements.csv")
	if err := os.WriteFile(tp.converted, getRoute(t, tp.srv, tp.token, tp.base+"/measurements.csv"), 0o644); err != nil {
		t.Fatal(err)
	}
	return tp
}
