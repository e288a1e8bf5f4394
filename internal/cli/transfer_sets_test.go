package cli

import (
	"bytes"
	"fmt"
	"os"
	"path/filepath"
	"reflect"
	"strconv"
	"strings"
	"testing"

	"corvane/internal/exchange/ags4"
)

// TestTransferSetsDoors: with the statistics' set options, both doors label
// every structure with its set from the one grouping (fabric.PlaneSets), in
// the points' set column, the glTF discs' extras and AGS4 FRAC_SET (DISC
// and FRAC), and the labels are those of the statistics route over the same
// selection: the count of each label equals the set's count there.
func TestTransferSetsDoors(t *testing.T) {
	ctx, svc, p := demoService(t)
	dir := t.TempDir()
	srv, token := readerServer(t, ctx, svc, p.ID)
	base := "/v1/projects/" + strconv.FormatInt(p.ID, 10)
	converted := filepath.Join(dir, "measurements.csv")
	if err := os.WriteFile(converted, getRoute(t, srv, token, base+"/measurements.csv"), 0o644); err != nil {
		t.Fatal(err)
	}
	d := "../../testdata/tallowmere/"
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
