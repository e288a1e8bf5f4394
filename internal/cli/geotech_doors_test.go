package cli

import (
	"bytes"
	"encoding/json"
	"fmt"
	"net/http/httptest"
	"net/url"
	"os"
	"path/filepath"
	"reflect"
	"strconv"
	"strings"
	"testing"

	"corvane/internal/domain"
	"corvane/internal/kinematic"
	"corvane/internal/service"
)

// geoProgramme is the demo programme on a fresh SQLite store behind the real
// HTTP server, with unoriented measurements (no beta) and core intervals
// logged on its first two holes. It returns the server, a reader token, the
// project, the first two hole names, and the files the commands read: the
// stored measurements with their derived values in the converter's columns
// (shortest exact text, so both doors start from the same numbers) and the
// stored core intervals as exported.
func geoProgramme(t *testing.T) (srv *httptest.Server, token string, pid int64, holes [2]string, geoCSV, ivCSV string) {
	t.Helper()
	ctx, svc, p := demoService(t)
	hs, err := svc.ListHoles(ctx, p.ID, domain.Page{})
	if err != nil || len(hs.Items) < 2 {
		t.Fatalf("holes %+v %v", hs, err)
	}
	all, err := svc.ListTypeCodes(ctx, p.ID)
	if err != nil {
		t.Fatal(err)
	}
	// Unoriented planes: the plane types (a line type needs gamma).
	var types []domain.TypeCode
	for _, tc := range all {
		if tc.Kind != "line" {
			types = append(types, tc)
		}
	}
	for k, h := range hs.Items[:2] {
		holes[k] = h.Name
		for i := 0; i < 6; i++ {
			m := domain.Measurement{HoleID: h.ID, Depth: 12 + 7*float64(i), Alpha: 25 + 9*float64(i), TypeCode: types[i%len(types)].Code}
			if _, err := svc.CreateMeasurement(ctx, p.ID, m); err != nil {
				t.Fatal(err)
			}
		}
		var ivs []domain.CoreInterval
		for i := 0; i < 20; i++ {
			n := 2 + (i*7+k)%9
			ivs = append(ivs, domain.CoreInterval{From: 3 * float64(i), To: 3 * float64(i+1), Recovered: f64(2.7 + 0.01*float64(i%10)),
				Solid: f64(2.4), Sound: f64(1.5 + 0.05*float64(i%7)), NaturalBreaks: &n})
		}
		if _, err := svc.PutCoreIntervals(ctx, p.ID, h.ID, ivs); err != nil {
			t.Fatal(err)
		}
	}
	srv, token = readerServer(t, ctx, svc, p.ID)

	var b strings.Builder
	b.WriteString("hole_id,depth,alpha,type,dip,dip_direction,hole_azimuth,hole_dip,error\n")
	num := func(p *float64) string {
		if p == nil {
			return ""
		}
		return strconv.FormatFloat(*p, 'g', -1, 64)
	}
	unoriented := 0
	var after int64
	for {
		page, err := svc.ListMeasurements(ctx, p.ID, service.MeasurementQuery{}, domain.Page{Limit: domain.MaxLimit, After: after})
		if err != nil {
			t.Fatal(err)
		}
		for _, v := range page.Items {
			d := v.Derived
			if d.Unoriented {
				unoriented++
			}
			fmt.Fprintf(&b, "%s,%s,%s,%s,%s,%s,%s,%s,%q\n", v.Hole, num(&v.Depth), num(&v.Alpha), v.TypeCode, num(d.Dip), num(d.DipDirection),
				num(d.HoleAzimuth), num(d.HoleDip), d.Error)
			after = v.ID
		}
		if len(page.Items) < domain.MaxLimit {
			break
		}
	}
	if unoriented != 12 {
		t.Fatalf("%d unoriented measurements, want 12", unoriented)
	}
	dir := t.TempDir()
	geoCSV, ivCSV = filepath.Join(dir, "geo.csv"), filepath.Join(dir, "intervals.csv")
	var ivb bytes.Buffer
	if err := svc.ExportIntervals(ctx, p.ID, &ivb); err != nil {
		t.Fatal(err)
	}
	for name, text := range map[string]string{geoCSV: b.String(), ivCSV: ivb.String()} {
		if err := os.WriteFile(name, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	return srv, token, p.ID, holes, geoCSV, ivCSV
}

// TestGeotechEqualAtEveryDoor feeds the intervals, spacing, domains and
// slope-check commands and the service's routes the same data with the same
// options and compares the outputs: the JSON field for field and the slope
// nets byte for byte. What a door says of its source is put aside: "input"
// (the file read, or the route's selection), "intervals" (the intervals
// file, or the stored intervals), an interval's "line" in its file, and the
// nets' subtitle (the file's name, or the selection).
func TestGeotechEqualAtEveryDoor(t *testing.T) {
	srv, token, pid, holes, in, ivs := geoProgramme(t)
	base := fmt.Sprintf("/v1/projects/%d", pid)
	doms := []string{holes[0] + "=" + holes[0] + ":0..40", holes[1] + "+=" + holes[0] + ":40..1000," + holes[1]}
	domArgs := func(cli bool) []string {
		var out []string
		for _, d := range doms {
			if cli {
				out = append(out, "--domain", d)
			} else {
				out = append(out, "domain="+url.QueryEscape(d))
			}
		}
		return out
	}
	strip := func(v any, keys ...string) {
		var walk func(any)
		walk = func(v any) {
			switch x := v.(type) {
			case map[string]any:
				for _, k := range keys {
					delete(x, k)
				}
				for _, e := range x {
					walk(e)
				}
			case []any:
				for _, e := range x {
					walk(e)
				}
			}
		}
		walk(v)
	}
	cases := []struct {
		name  string
		cli   []string
		route string
	}{
		{"intervals", []string{"intervals", "--intervals", ivs}, "/intervals/summary"},
		{"spacing by type", []string{"spacing", "--in", in, "--sets", "type", "--intervals", ivs}, "/spacing?sets=type"},
		{"spacing auto, domains, cap, values", append([]string{"spacing", "--in", in, "--sets", "auto:3", "--seed", "5", "--cap", "4", "--values", "--intervals", ivs}, domArgs(true)...),
			"/spacing?sets=auto:3&seed=5&cap=4&values=true&" + strings.Join(domArgs(false), "&")},
		{"domains", append([]string{"domains", "--in", in, "--sets", "type"}, domArgs(true)...), "/domains?sets=type&" + strings.Join(domArgs(false), "&")},
		{"slope check", []string{"slope-check", "--in", in, "--sets", "type", "--face", "65/180", "--friction", "30"}, "/slope-check?sets=type&face=65/180&friction=30"},
		{"slope check one type, lateral", []string{"slope-check", "--in", in, "--type", "joint", "--sets", "auto:2", "--face", "70/200", "--friction", "25", "--lateral", "30"},
			"/slope-check?type=joint&sets=auto:2&face=70/200&friction=25&lateral=30"},
		{"slope check of a domain", []string{"slope-check", "--in", in, "--sets", "auto:3", "--face", "65/180", "--friction", "30", "--domain", doms[1]},
			"/slope-check?sets=auto:3&face=65/180&friction=30&domain=" + url.QueryEscape(doms[1])},
	}
	for _, c := range cases {
		code, stdout, stderr := runCmd(t, c.cli...)
		if code != ExitOK {
			t.Fatalf("%s: exit %d: %s", c.name, code, stderr)
		}
		cli := decodeJSON(t, "CLI", []byte(stdout))
		route := decodeJSON(t, "route", getRoute(t, srv, token, base+c.route))
		strip(cli, "input", "intervals", "line")
		strip(route, "input", "intervals", "line")
		if !reflect.DeepEqual(cli, route) {
			cj, _ := json.MarshalIndent(cli, "", " ")
			rj, _ := json.MarshalIndent(route, "", " ")
			t.Errorf("%s: the CLI and the route differ\nCLI:   %.4000s\nroute: %.4000s", c.name, cj, rj)
		}
		if strings.HasPrefix(c.name, "slope") && route["caution"] != kinematic.Caution {
			t.Errorf("%s: caution %v", c.name, route["caution"])
		}
		if strings.HasPrefix(c.name, "spacing") && !strings.Contains(string(getRoute(t, srv, token, base+c.route)), `"unoriented"`) {
			t.Errorf("%s: no count of the unoriented measurements", c.name)
		}
	}

	// A domain checks only its measurements: the domain of the whole first
	// hole counts what the hole filter selects, fewer than all.
	q := "/slope-check?sets=type&face=65/180&friction=30"
	whole := decodeJSON(t, "route", getRoute(t, srv, token, base+q))
	hole := decodeJSON(t, "route", getRoute(t, srv, token, base+q+"&hole="+url.QueryEscape(holes[0])))
	dom := decodeJSON(t, "route", getRoute(t, srv, token, base+q+"&domain="+url.QueryEscape("D="+holes[0])))
	if dom["domain"] != "D" || !reflect.DeepEqual(dom["measurements"], hole["measurements"]) || reflect.DeepEqual(dom["measurements"], whole["measurements"]) {
		t.Errorf("slope check of domain D=%s: %v %v; want the hole's %v, not all %v", holes[0], dom["domain"], dom["measurements"], hole["measurements"], whole["measurements"])
	}

	// The nets of the slope check, one per check, with the caution.
	prefix, domPrefix := filepath.Join(t.TempDir(), "slope"), filepath.Join(t.TempDir(), "domain")
	if code, _, stderr := runCmd(t, "slope-check", "--in", in, "--sets", "type", "--face", "65/180", "--friction", "30", "--svg", prefix); code != ExitOK {
		t.Fatalf("slope-check --svg: exit %d: %s", code, stderr)
	}
	if code, _, stderr := runCmd(t, "slope-check", "--in", in, "--sets", "type", "--face", "65/180", "--friction", "30", "--domain", doms[0], "--svg", domPrefix); code != ExitOK {
		t.Fatalf("slope-check --domain --svg: exit %d: %s", code, stderr)
	}
	// The net of the sets and the unoriented measurements' cones.
	svg := filepath.Join(t.TempDir(), "spacing.svg")
	if code, _, stderr := runCmd(t, "spacing", "--in", in, "--sets", "auto:3", "--seed", "5", "--svg", svg); code != ExitOK {
		t.Fatalf("spacing --svg: exit %d: %s", code, stderr)
	}
	cliNet, err := os.ReadFile(svg)
	if err != nil {
		t.Fatal(err)
	}
	cliNet = bytes.ReplaceAll(cliNet, []byte(">geo.csv"), []byte(">all measurements"))
	routeNet := getRoute(t, srv, token, base+"/spacing/net?sets=auto:3&seed=5")
	if !bytes.Equal(cliNet, routeNet) {
		t.Errorf("spacing net: the CLI's (%d bytes) and the route's (%d bytes) differ at byte %d", len(cliNet), len(routeNet), firstDiff(cliNet, routeNet))
	}
	if !strings.Contains(sheetText(routeNet), "possible poles of 12 unoriented") {
		t.Errorf("spacing net: no cones of the 12 unoriented measurements: %.300s", sheetText(routeNet))
	}

	for _, check := range []string{"planar", "wedge", "flexural", "direct"} {
		cli, err := os.ReadFile(prefix + "-" + check + ".svg")
		if err != nil {
			t.Fatal(err)
		}
		route := getRoute(t, srv, token, base+"/slope-check/"+check+"?sets=type&face=65/180&friction=30")
		if !bytes.Contains(cli, []byte(">geo.csv")) {
			t.Fatalf("%s: the CLI's net does not name its input", check)
		}
		cli = bytes.ReplaceAll(cli, []byte(">geo.csv"), []byte(">all measurements"))
		if !bytes.Equal(cli, route) {
			t.Errorf("%s: the CLI's net (%d bytes) and the route's (%d bytes) differ at byte %d", check, len(cli), len(route), firstDiff(cli, route))
		}
		if !bytes.Contains(route, []byte("Kinematically possible is not unstable")) {
			t.Errorf("%s: the route's net has no caution", check)
		}
		cli, err = os.ReadFile(domPrefix + "-" + check + ".svg")
		if err != nil {
			t.Fatal(err)
		}
		cli = bytes.ReplaceAll(cli, []byte(">geo.csv"), []byte(">all measurements"))
		route = getRoute(t, srv, token, base+"/slope-check/"+check+"?sets=type&face=65/180&friction=30&domain="+url.QueryEscape(doms[0]))
		if !bytes.Equal(cli, route) || !bytes.Contains(route, []byte("domain "+holes[0])) {
			t.Errorf("%s of a domain: the CLI's net (%d bytes) and the route's (%d bytes) differ at byte %d, or do not name the domain",
				check, len(cli), len(route), firstDiff(cli, route))
		}
	}
}
