package cli

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"html"
	"io"
	"net/http"
	"net/http/httptest"
	"net/url"
	"os"
	"path/filepath"
	"reflect"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"corvane/internal/demo"
	"corvane/internal/domain"
	"corvane/internal/fabric"
	"corvane/internal/httpapi"
	"corvane/internal/service"
	"corvane/internal/store/sqlite"
	"corvane/internal/uncertainty"
)

// doorsProgramme is the demo programme on a fresh SQLite store behind the
// real HTTP server, plus a vertical hole whose planes have a dip and no dip
// direction. It returns the server, a reader token, the project and the
// stored measurements written as the CSV that corvane stats, net and rose
// read: the derived values with the shortest text that reads back to the same
// float64, so both doors start from the very same numbers. (How the
// orientations are derived is the hole model's part, with its own tests;
// this test is about the statistics pipeline and its doors.)
func doorsProgramme(t *testing.T) (srv *httptest.Server, token string, pid int64, csvPath, modelPath string) {
	t.Helper()
	ctx, svc, p := demoService(t)
	// An error model of the project's own, which corvane stats is given
	// as --error-model: the set statistics must carry it at both doors.
	p.ErrorModel = uncertainty.Model{Beta: 4, MarkPoor: 20, Magnetic: uncertainty.SurveyError{Azimuth: 2}}
	p, err := svc.UpdateProject(ctx, p.ID, p.Version, p)
	if err != nil {
		t.Fatal(err)
	}
	mj, _ := json.Marshal(p.ErrorModel)
	modelPath = filepath.Join(t.TempDir(), "model.json")
	if err := os.WriteFile(modelPath, mj, 0o644); err != nil {
		t.Fatal(err)
	}
	types, err := svc.ListTypeCodes(ctx, p.ID)
	if err != nil || len(types) == 0 {
		t.Fatalf("type codes: %v %v", types, err)
	}
	h, err := svc.CreateHole(ctx, p.ID, domain.Hole{Name: "ZRV01", East: 431300, North: 5400100, Elevation: 400, Azimuth: 0, Dip: -90, FinalDepth: 120})
	if err != nil {
		t.Fatal(err)
	}
	// The lineation takes the demo's line type (a plane type refuses gamma).
	g := 30.0
	for i, a := range []float64{35, 50, 62} {
		m := domain.Measurement{HoleID: h.ID, Depth: 20 + 10*float64(i), Alpha: a, Beta: f64(40 * float64(i)), TypeCode: types[0].Code}
		if i == 1 {
			m.Gamma = &g
			m.TypeCode = demo.LineType
		}
		if _, err := svc.CreateMeasurement(ctx, p.ID, m); err != nil {
			t.Fatal(err)
		}
	}
	srv, token = readerServer(t, ctx, svc, p.ID)

	var b strings.Builder
	b.WriteString("hole_id,depth,type,dip,dip_direction,line_trend,line_plunge,hole_azimuth,hole_dip,azimuth_reference,error," +
		"survey_instrument,run_confidence,run_mismatch,run_from\n")
	num := func(p *float64) string {
		if p == nil {
			return ""
		}
		return strconv.FormatFloat(*p, 'g', -1, 64)
	}
	var after int64
	vertical, inRuns := 0, 0
	for {
		page, err := svc.ListMeasurements(ctx, p.ID, service.MeasurementQuery{}, domain.Page{Limit: domain.MaxLimit, After: after})
		if err != nil {
			t.Fatal(err)
		}
		for _, v := range page.Items {
			d := v.Derived
			if d.Dip != nil && d.DipDirection == nil {
				vertical++
			}
			fmt.Fprintf(&b, "%s,%s,%s,%s,%s,%s,%s,%s,%s,%s,%q,%s,%s,%s,%s\n", v.Hole, num(&v.Depth), v.TypeCode, num(d.Dip), num(d.DipDirection), num(d.LineTrend), num(d.LinePlunge),
				num(d.HoleAzimuth), num(d.HoleDip), d.AzimuthRef, d.Error, d.SurveyInstrument, d.RunConfidence, num(d.RunMismatch), num(d.RunFrom))
			if d.RunFrom != nil {
				inRuns++
			}
			after = v.ID
		}
		if len(page.Items) < domain.MaxLimit {
			break
		}
	}
	if vertical != 3 {
		t.Fatalf("%d measurements without a dip direction, want the vertical hole's 3", vertical)
	}
	if inRuns < 100 {
		t.Fatalf("only %d measurements in orientation runs", inRuns)
	}
	csvPath = filepath.Join(t.TempDir(), "doors.csv")
	if err := os.WriteFile(csvPath, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return srv, token, p.ID, csvPath, modelPath
}

// demoService is the demo programme on a fresh SQLite store.
func demoService(t *testing.T) (context.Context, *service.Service, domain.Project) {
	t.Helper()
	ctx := service.WithActor(context.Background(), service.System)
	path := filepath.Join(t.TempDir(), "corvane.db")
	if err := sqlite.Migrate(path, 0); err != nil {
		t.Fatal(err)
	}
	st, err := sqlite.Open(ctx, path)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { st.Close() })
	svc := service.New(st, nil)
	p, _, err := svc.LoadDemo(ctx)
	if err != nil {
		t.Fatal(err)
	}
	return ctx, svc, p
}

// readerServer serves svc over the real HTTP server and returns a reader
// token of project pid.
func readerServer(t *testing.T, ctx context.Context, svc *service.Service, pid int64) (*httptest.Server, string) {
	t.Helper()
	token, _, err := svc.CreateToken(ctx, pid, domain.RoleRead, "reader")
	if err != nil {
		t.Fatal(err)
	}
	srv := httptest.NewServer(httpapi.New(httpapi.Options{Service: svc}))
	t.Cleanup(srv.Close)
	return srv, token
}

func getRoute(t *testing.T, srv *httptest.Server, token, path string) []byte {
	t.Helper()
	req, err := http.NewRequest(http.MethodGet, srv.URL+path, nil)
	if err != nil {
		t.Fatal(err)
	}
	req.Header.Set("Authorization", "Bearer "+token)
	res, err := srv.Client().Do(req)
	if err != nil {
		t.Fatal(err)
	}
	defer res.Body.Close()
	body, _ := io.ReadAll(res.Body)
	if res.StatusCode != http.StatusOK {
		t.Fatalf("GET %s: %d %s", path, res.StatusCode, body)
	}
	return body
}

func decodeJSON(t *testing.T, what string, b []byte) map[string]any {
	t.Helper()
	dec := json.NewDecoder(bytes.NewReader(b))
	dec.UseNumber()
	var m map[string]any
	if err := dec.Decode(&m); err != nil {
		t.Fatalf("%s: %v\n%s", what, err, b)
	}
	return m
}

// TestStatsNetRoseEqualAtEveryDoor feeds corvane stats, net and rose and the
// service's statistics, net and rose routes the same measurements with the
// same options and compares what comes out: the statistics report field for
// field, the SVG byte for byte. The one thing a door adds is the name of its
// source: "input" in the report and the start of the sheet's subtitle (the
// CLI names the file read, the route the selection, "all measurements");
// those are compared after putting the route's words in place of the file
// name.
func TestStatsNetRoseEqualAtEveryDoor(t *testing.T) {
	srv, token, pid, in, model := doorsProgramme(t)
	base := fmt.Sprintf("/v1/projects/%d", pid)
	out := t.TempDir()

	statsCases := []struct{ cli, route string }{
		{"", ""},
		{"--sets type --sets-on both --weighting terzaghi", "sets=type&sets_on=both&weighting=terzaghi"},
		{"--sets auto:3 --seed 7 --weighting terzaghi:2", "sets=auto:3&seed=7&weighting=terzaghi:2"},
		{"--set J1:310/15:25 --set J2:060/30:25 --of planes", "set=J1:310/15:25&set=J2:060/30:25&of=planes"},
		// Type codes match without regard to case at both doors (the
		// demo's vocabulary says "joint").
		{"--type JOINT --sets auto:2", "type=JOINT&sets=auto:2"},
		{"--sets type --uncertainty=false", "sets=type&uncertainty=false"},
		{"--sets type --set-uncertainty off", "sets=type&set_uncertainty=off"},
		{"--sets type --set-uncertainty monte-carlo", "sets=type&set_uncertainty=monte-carlo"},
	}
	for _, c := range statsCases {
		args := append([]string{"stats", "--in", in, "--error-model", model}, strings.Fields(c.cli)...)
		code, stdout, stderr := runCmd(t, args...)
		if code != ExitOK {
			t.Fatalf("stats %s: exit %d: %s", c.cli, code, stderr)
		}
		cli := decodeJSON(t, "CLI", []byte(stdout))
		route := decodeJSON(t, "route", getRoute(t, srv, token, base+"/statistics?"+c.route))
		wantRoute := "all measurements"
		if strings.Contains(c.route, "type=") {
			wantRoute = "types JOINT"
		}
		if cli["input"] != in || route["input"] != wantRoute {
			t.Errorf("stats %s: input %v and %v", c.cli, cli["input"], route["input"])
		}
		delete(cli, "input")
		delete(route, "input")
		if !reflect.DeepEqual(cli, route) {
			cj, _ := json.MarshalIndent(cli, "", " ")
			rj, _ := json.MarshalIndent(route, "", " ")
			t.Errorf("stats %q: the CLI and the route differ\nCLI:   %.3000s\nroute: %.3000s", c.cli, cj, rj)
		}
		// The sets of planes carry the measurement errors (unless turned
		// off), with the project's error model.
		planes, _ := cli["planes"].(map[string]any)
		all, _ := planes["all"].(map[string]any)
		mu, has := all["measurement_uncertainty"].(map[string]any)
		if off := strings.Contains(c.cli, "--uncertainty=false") || strings.Contains(c.cli, "--set-uncertainty off"); has == off {
			t.Errorf("stats %q: measurement_uncertainty %v", c.cli, all["measurement_uncertainty"])
		} else if !off {
			if mu["dominant"] != "sampling" && mu["dominant"] != "measurement" {
				t.Errorf("stats %q: measurement uncertainty %v", c.cli, mu)
			}
			note, _ := json.Marshal(cli["measurement_uncertainty"])
			used := `"used":"first-order"`
			if strings.Contains(c.cli, "monte-carlo") {
				used = `"used":"monte-carlo"`
			}
			if !strings.Contains(string(note), used) {
				t.Errorf("stats %q: the report does not say %s: %s", c.cli, used, note)
			}
			if !strings.Contains(string(note), `{"basis":"project setting","name":"beta","value":4}`) {
				t.Errorf("stats %q: the error model is not the project's: %s", c.cli, note)
			}
		}
		if strings.Contains(c.cli, "--type") {
			if cli["rows_used"] == float64(0) {
				t.Errorf("stats %q: no rows used", c.cli)
			}
			continue
		}
		skipped, _ := json.Marshal(cli["rows_skipped"])
		if !strings.Contains(string(skipped), `"count":3`) || !strings.Contains(string(skipped), fabric.SkipNoDipDirection) {
			t.Errorf("stats %q: rows_skipped %s, want the vertical hole's 3 rows with the reason", c.cli, skipped)
		}
	}

	// The CLI names the file it read where the route names the selection.
	sameSource := func(svg []byte) []byte {
		return bytes.Replace(svg, []byte(">doors.csv; azimuths"), []byte(">all measurements; azimuths"), 1)
	}
	// One structural domain per net: part of one demo hole and the vertical
	// hole; sets formed on every row (auto:3 here, so the domain's net keeps
	// the whole selection's set names and colours).
	hole := strings.Split(strings.Split(string(must(os.ReadFile(in))), "\n")[1], ",")[0]
	dom := "Upper=" + hole + ":0..120,TMV01"
	svgCases := []struct{ cmd, cli, route string }{
		{"net", "--domain " + dom + " --sets auto:3 --seed 5", "domain=" + url.QueryEscape(dom) + "&sets=auto:3&seed=5"},
		{"net", "--domain " + dom + " --sets type --show poles,planes,lines,sets", "domain=" + url.QueryEscape(dom) + "&sets=type&show=poles,planes,lines,sets"},
		{"net", "", ""},
		{"net", "--projection equal-angle --show poles,planes,lines,sets --sets type --sets-on both", "projection=equal-angle&show=poles,planes,lines,sets&sets=type&sets_on=both"},
		{"net", "--sets auto:4 --density kamb --units sigma --grid 80 --weighting terzaghi", "sets=auto:4&density=kamb&units=sigma&grid=80&weighting=terzaghi"},
		// The uncertainty regions, with the project's error model at both doors.
		{"net", "--regions all --sets type --show poles,lines,sets --error-model " + model, "regions=all&sets=type&show=poles,lines,sets"},
		{"net", "--regions cone:12 --show poles --error-model " + model, "regions=cone:12&show=poles"},
		{"rose", "", ""},
		{"rose", "--of strike --bin 15 --min-dip 30", "of=strike&bin=15&min_dip=30"},
		{"rose", "--of trend --weighting terzaghi", "of=trend&weighting=terzaghi"},
	}
	for i, c := range svgCases {
		file := filepath.Join(out, fmt.Sprintf("%s-%d.svg", c.cmd, i))
		args := append([]string{c.cmd, "--in", in, "-o", file, "--title", "Doors"}, strings.Fields(c.cli)...)
		if code, _, stderr := runCmd(t, args...); code != ExitOK {
			t.Fatalf("%s %s: exit %d: %s", c.cmd, c.cli, code, stderr)
		}
		cli, err := os.ReadFile(file)
		if err != nil {
			t.Fatal(err)
		}
		route := getRoute(t, srv, token, base+"/"+c.cmd+"?title=Doors&"+c.route)
		if !bytes.Contains(cli, []byte(">doors.csv; azimuths from ")) {
			t.Errorf("%s %q: the CLI's sheet does not name its input", c.cmd, c.cli)
		}
		if !bytes.Equal(sameSource(cli), route) {
			t.Errorf("%s %q: the CLI's SVG (%d bytes) and the route's (%d bytes) differ at byte %d", c.cmd, c.cli, len(cli), len(route), firstDiff(sameSource(cli), route))
		}
		if strings.Contains(c.cli, "--domain") && !strings.Contains(sheetText(route), "domain Upper: ") {
			t.Errorf("%s %q: the sheet does not name the domain", c.cmd, c.cli)
		}
		if !strings.Contains(sheetText(route), "3 rows left out: "+fabric.SkipNoDipDirection) {
			t.Errorf("%s %q: the sheet does not count the rows without a dip direction", c.cmd, c.cli)
		}
		if strings.Contains(c.cli, "--regions") {
			if n := bytes.Count(route, []byte("<title>pole ")); n < 20 {
				t.Errorf("%s %q: %d pole regions drawn", c.cmd, c.cli, n)
			}
			if strings.HasPrefix(c.cli, "--regions all") && !bytes.Contains(route, []byte("<title>line ")) {
				t.Errorf("%s %q: no line regions", c.cmd, c.cli)
			}
		}
	}
}

func firstDiff(a, b []byte) int {
	for i := range min(len(a), len(b)) {
		if a[i] != b[i] {
			return i
		}
	}
	return min(len(a), len(b))
}

// sheetText is the text of an SVG sheet, its lines joined by spaces (the
// side panel wraps long notes over several lines).
func sheetText(svg []byte) string {
	var parts []string
	for _, m := range regexp.MustCompile(`>([^<]+)</text>`).FindAllSubmatch(svg, -1) {
		parts = append(parts, html.UnescapeString(string(m[1])))
	}
	return strings.Join(parts, " ")
}

func f64(v float64) *float64 { return &v }

func must[T any](v T, err error) T {
	if err != nil {
		panic(err)
	}
	return v
}
