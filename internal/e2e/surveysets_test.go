package e2e

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"corvane/internal/csvio"
	"corvane/internal/qa"
)

// A two-set hole through the doors: `corvane qa` on files with a kind
// column and GET .../qa on the same files imported give the same survey
// set findings, the one 4-degree interference zone planted in the magnetic
// set (123-153 m) and nothing else from the comparison; the surveys export
// gives back every set row; convert --survey-priority and the project's
// survey_priority choose the same set.
func TestSurveySetsAtEveryDoor(t *testing.T) {
	s := siteServer(t, filepath.Join(t.TempDir(), "sets.db"))
	// The reference set is a gyro, or another kind of set in true north
	// without a magnetic instrument (an optical or inertial survey, say):
	// the comparison is by north reference, the same at both doors.
	checkSetComparison(t, s, "other survey sets", "other", "")
	p, base, surveys := checkSetComparison(t, s, "survey sets", "gyro", "gyro")

	// The export gives back every row of every set.
	code, _, b := s.call(t, "GET", base+"/surveys.csv", nil)
	if code != 200 {
		t.Fatalf("surveys export: %d %s", code, b)
	}
	in, err := csvio.ReadSurveys(strings.NewReader(surveys), "surveys.csv")
	if err != nil {
		t.Fatal(err)
	}
	back, err := csvio.ReadSurveys(bytes.NewReader(b), "surveys export")
	if err != nil || len(back) != len(in) {
		t.Fatalf("export read back: %v, %d rows for %d", err, len(back), len(in))
	}
	for i := range in {
		a, g := in[i], back[i]
		if a.HoleID != g.HoleID || a.Station != g.Station || a.AzimuthRef != g.AzimuthRef || !a.Date.Equal(g.Date) || a.Kind != g.Kind || a.Instrument != g.Instrument {
			t.Errorf("row %d exported as %+v, imported %+v", i+1, g, a)
		}
	}

	// The set in use: gyro by the kind order; magnetic first by priority,
	// at both doors (the hole azimuth at 140 m says which).
	for _, prio := range []string{"", "magnetic,gyro"} {
		args := []string{"convert", "--collars", p("collars.csv"), "--surveys", p("surveys.csv"), "--structures", p("structures.csv"), "--output-reference", "true"}
		if prio != "" {
			args = append(args, "--survey-priority", prio)
		}
		out, err := exec.Command(binary, args...).Output()
		if err != nil {
			t.Fatalf("corvane convert: %v", err)
		}
		rows := readCSV(t, out)
		var got map[string]any
		r := s.mustJSON(t, 200, "GET", base, nil, nil)
		s.mustJSON(t, 200, "PUT", base, map[string]any{"name": "survey sets", "output_azimuth_ref": "true", "survey_priority": prio}, nil, "If-Match", r.Get("ETag"))
		var list struct {
			Items []struct {
				Derived map[string]any `json:"derived"`
			} `json:"items"`
		}
		s.mustJSON(t, 200, "GET", base+"/measurements", nil, &list)
		if len(list.Items) != 1 || len(rows) != 1 {
			t.Fatalf("priority %q: %d derived, %d converted", prio, len(list.Items), len(rows))
		}
		got = list.Items[0].Derived
		want := map[string]string{"": "gyro", "magnetic,gyro": "magnetic"}[prio]
		if got["survey_set"] != want {
			t.Errorf("priority %q: derived survey_set %v, want %s", prio, got["survey_set"], want)
		}
		if web := fromJSON(got)["hole_azimuth"]; web != rows[0]["hole_azimuth"] {
			t.Errorf("priority %q: hole azimuth %s over HTTP, %s by convert", prio, web, rows[0]["hole_azimuth"])
		}
	}
}

// checkSetComparison writes a two-set hole (a magnetic set with a 4-degree
// interference zone at 120-160 m, and a clean reference set of kind ref and
// instrument inst), runs `corvane qa` on the files and GET .../qa on them
// imported into a new project named name, and checks both give the one
// zone (123-153 m, the magnetic stations inside it) and nothing else from
// the comparison. It returns the files' path maker, the project's path and
// the surveys text.
func checkSetComparison(t *testing.T, s *server, name, ref, inst string) (func(string) string, string, string) {
	t.Helper()
	az := func(md float64) float64 { return 40 + 12*md/300 }
	dip := func(md float64) float64 { return -60 + 5*md/300 }
	var sb strings.Builder
	sb.WriteString("hole_id,depth,azimuth,dip,azimuth_reference,survey_date,kind,instrument\n")
	for i := 0; i <= 30; i++ {
		md := float64(10 * i)
		fmt.Fprintf(&sb, "TW1,%g,%.4f,%.4f,true,2024-02-10,%s,%s\n", md, az(md)+0.1*math.Sin(float64(i)), dip(md), ref, inst)
	}
	for i := 0; i < 30; i++ {
		md := float64(10*i + 3)
		a := az(md) + 0.3*math.Sin(float64(i)*1.7)
		if md >= 120 && md <= 160 {
			a += 4
		}
		fmt.Fprintf(&sb, "TW1,%g,%.4f,%.4f,true,2023-08-01,magnetic,magnetic\n", md, a, dip(md))
	}
	surveys := sb.String()
	collars := "hole_id,easting,northing,elevation,azimuth,dip,depth\nTW1,1000,2000,300,40,-60,300\n"
	structures := "hole_id,depth,alpha,beta,type\nTW1,140,40,200,BD\n"
	runs := "hole_id,from,to,confidence\nTW1,0,300,good\n"
	dir := t.TempDir()
	p := func(n string) string { return filepath.Join(dir, n) }
	for n, text := range map[string]string{"collars.csv": collars, "surveys.csv": surveys, "structures.csv": structures, "runs.csv": runs} {
		if err := os.WriteFile(p(n), []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	cmd := exec.Command(binary, "qa", "--collars", p("collars.csv"), "--surveys", p("surveys.csv"), "--structures", p("structures.csv"),
		"--runs", p("runs.csv"), "--output-reference", "true")
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("corvane qa: %v", err)
	}
	var cli qa.Report
	if err := json.Unmarshal(out, &cli); err != nil {
		t.Fatal(err)
	}
	pg := programme{name: name, project: map[string]any{"output_azimuth_ref": "true"}}
	base := importProject(t, s, "", pg, [2]string{"collars", collars}, [2]string{"surveys", surveys}, [2]string{"runs", runs}, [2]string{"measurements", structures})
	var web qa.Report
	s.mustJSON(t, 200, "GET", base+"/qa", nil, &web)

	sets := func(r qa.Report) []qa.Finding {
		var out []qa.Finding
		for _, f := range r.Findings {
			if f.Check == qa.CheckInterference || f.Check == qa.CheckSetOffset {
				out = append(out, f)
			}
		}
		return out
	}
	c, w := sets(cli), sets(web)
	if len(c) != 1 || c[0].Check != qa.CheckInterference || c[0].Depth != 123 || c[0].DepthTo != 153 || math.Abs(c[0].Size-4) > 0.7 ||
		!strings.Contains(c[0].Message, "prefer the "+ref+" set") {
		t.Errorf("%s: corvane qa: %+v, want one interference zone 123-153 m of about 4 deg against the %s set", name, c, ref)
	}
	if len(w) != len(c) || len(w) == 1 && (w[0].Depth != c[0].Depth || w[0].DepthTo != c[0].DepthTo || w[0].Size != c[0].Size || w[0].Message != c[0].Message) {
		t.Errorf("%s: GET qa %+v, corvane qa %+v", name, w, c)
	}
	return p, base, surveys
}
