package cli

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"corvane/internal/geom"
	"corvane/internal/kinematic"
)

// TestGeotechHelp: each new command's --help exits 0 and documents its flags.
func TestGeotechHelp(t *testing.T) {
	for name, flags := range map[string][]string{
		"intervals":   {"-intervals", "-collars", "-feet", "-o"},
		"spacing":     {"-in", "-sets", "-set", "-intervals", "-domain", "-cap", "-type", "-o", "-values", "-svg"},
		"domains":     {"-in", "-domain", "-sets", "-set", "-o"},
		"slope-check": {"-in", "-face", "-friction", "-lateral", "-svg", "-projection", "-sets", "-o"},
	} {
		code, _, stderr := runCmd(t, name, "--help")
		if code != ExitOK {
			t.Errorf("%s --help: exit %d", name, code)
		}
		for _, f := range flags {
			if !strings.Contains(stderr, "  "+f+" ") && !strings.Contains(stderr, "  "+f+"\n") {
				t.Errorf("%s --help does not document %s", name, f)
			}
		}
	}
}

// TestIntervalsCommand: the Deere & Deere (1988) run (values from memory,
// see coreinterval's test) plus a second exact run, through the command.
func TestIntervalsCommand(t *testing.T) {
	iv := writeTemp(t, "iv.csv", "hole_id,from,to,recovered,pieces,natural_breaks\n"+
		"TM-001,10,12,1.36,0.38;0.05;0.17;0.04;0.06;0.03;0.20;0.43,8\n"+
		"TM-001,12,14,2,1.0;0.5;0.5,2\n")
	code, out, stderr := runCmd(t, "intervals", "--intervals", iv)
	if code != ExitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	var rep struct {
		Holes []struct {
			Intervals []map[string]any `json:"intervals"`
			Total     map[string]any   `json:"total"`
		} `json:"holes"`
		Caution string `json:"caution"`
	}
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatal(err)
	}
	if got := rep.Holes[0].Intervals[0]["rqd"]; got != 59.0 {
		t.Errorf("RQD of the Deere & Deere run: %v, want 59", got)
	}
	if got := rep.Holes[0].Total["rqd"]; got != 79.5 { // (1.18 + 2.0) / 4
		t.Errorf("total RQD %v, want 79.5", got)
	}
	if got := rep.Holes[0].Total["fracture_frequency"]; got != 2.5 {
		t.Errorf("total FF %v", got)
	}
	if rep.Caution == "" {
		t.Error("no caution")
	}
	// A located error, nothing printed, exit 2.
	bad := writeTemp(t, "bad.csv", "hole_id,from,to\nA,0,3\nA,2,4\n")
	code, out, stderr = runCmd(t, "intervals", "--intervals", bad)
	if code != ExitUsage || out != "" || !strings.Contains(stderr, `bad.csv:line 3, column "from"`) {
		t.Errorf("overlap: exit %d out %q err %q", code, out, stderr)
	}
	col := writeTemp(t, "c.csv", "hole_id,easting,northing,elevation,azimuth,dip,depth\nA,0,0,0,0,-60,3.5\n")
	good := writeTemp(t, "g.csv", "hole_id,from,to\nA,0,3\nA,3,4\n")
	code, _, stderr = runCmd(t, "intervals", "--intervals", good, "--collars", col)
	if code != ExitUsage || !strings.Contains(stderr, "beyond the end of the hole at 3.5") {
		t.Errorf("inside the hole: exit %d %q", code, stderr)
	}
}

// spacingCSV writes a vertical hole crossing horizontal planes every 2 m from
// 1 to 19 m, planes dipping 60 east at 0.5, 4.5, 8.5 m, and unoriented rows:
// alpha 90 at 20 m (fits the flat set) and alpha 30 at 21 m (fits the steep one).
func spacingCSV(t *testing.T) string {
	var b strings.Builder
	b.WriteString("hole_id,depth,alpha,beta,dip,dip_direction,hole_azimuth,hole_dip\n")
	for d := 1.0; d < 20; d += 2 {
		fmt.Fprintf(&b, "H,%g,90,0,0,0,0,-90\n", d)
	}
	for _, d := range []float64{0.5, 4.5, 8.5} {
		fmt.Fprintf(&b, "H,%g,30,0,60,90,0,-90\n", d)
	}
	b.WriteString("H,20,90,,,,0,-90\nH,21,30,,,,0,-90\n")
	return writeTemp(t, "sp.csv", b.String())
}

func TestSpacingCommand(t *testing.T) {
	in := spacingCSV(t)
	iv := writeTemp(t, "iv.csv", "hole_id,from,to\nH,0,12\nH,12,22\n")
	svg := filepath.Join(t.TempDir(), "u.svg")
	code, out, stderr := runCmd(t, "spacing", "--in", in, "--intervals", iv, "--set", "flat:0/90:10", "--set", "steep:270/30:10", "--svg", svg)
	if code != ExitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	var rep struct {
		Domains []struct {
			Holes      []map[string]any `json:"holes"`
			Unoriented map[string]any   `json:"unoriented"`
			Sets       []struct {
				Name              string  `json:"name"`
				OrientedMembers   int     `json:"oriented_members"`
				UnorientedCounted int     `json:"unoriented_counted"`
				Count             int     `json:"count"`
				P10Normal         float64 `json:"p10_normal"`
				True              struct {
					Median float64 `json:"median"`
					N      int     `json:"n"`
				} `json:"true_spacing"`
				P32 float64 `json:"p32_estimate"`
			} `json:"sets"`
		} `json:"domains"`
		P32Assumptions string `json:"p32_assumptions"`
	}
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatal(err)
	}
	d := rep.Domains[0]
	flat, steep := d.Sets[0], d.Sets[1]
	// flat: 10 oriented + the alpha 90 row; crossings 1, 3, ..., 19, 20 over 22 m
	if flat.OrientedMembers != 10 || flat.UnorientedCounted != 1 || flat.Count != 11 || flat.True.Median != 2 {
		t.Errorf("flat set %+v", flat)
	}
	if math.Abs(flat.P10Normal-11.0/22) > 1e-6 || math.Abs(flat.P32-11.0/22) > 1e-6 {
		t.Errorf("flat P10/P32 %v %v", flat.P10Normal, flat.P32)
	}
	// steep: 60 degrees to the vertical hole, gaps of 4 m along the hole are
	// 4 cos 60 = 2 m along the normal (exact)
	if steep.Count != 4 || steep.UnorientedCounted != 1 || math.Abs(steep.True.Median-2) > 1e-6 {
		t.Errorf("steep set %+v", steep)
	}
	if d.Unoriented["total"] != 2.0 || d.Unoriented["excluded_from_set_means"] != 2.0 {
		t.Errorf("unoriented %v", d.Unoriented)
	}
	if d.Holes[0]["length_from"] != "intervals" || d.Holes[0]["count"] != 15.0 {
		t.Errorf("hole totals %v", d.Holes[0])
	}
	if b, err := os.ReadFile(svg); err != nil || !strings.Contains(string(b), `id="circles"`) || !strings.Contains(string(b), "possible poles of 2 unoriented") {
		t.Errorf("net of unoriented cones: %v", err)
	}
	if !strings.Contains(rep.P32Assumptions, "estimate") {
		t.Error("P32 not stated as an estimate")
	}
	// A domain covering 0-10 m: the set counts shrink to its rows.
	code, out, _ = runCmd(t, "spacing", "--in", in, "--set", "flat:0/90:10", "--domain", "top=H:0..10")
	if code != ExitOK || !strings.Contains(out, `"name": "top"`) {
		t.Fatalf("domain: exit %d", code)
	}
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatal(err)
	}
	if rep.Domains[0].Sets[0].Count != 5 {
		t.Errorf("domain count %d, want 5", rep.Domains[0].Sets[0].Count)
	}
	if code, _, stderr := runCmd(t, "spacing", "--in", in); code != ExitUsage || !strings.Contains(stderr, "give sets") {
		t.Errorf("no sets: %d %s", code, stderr)
	}
	if code, _, stderr := runCmd(t, "spacing", "--in", in, "--set", "a:0/90:10", "--domain", "x=H:5..1"); code != ExitUsage || !strings.Contains(stderr, "not greater") {
		t.Errorf("bad domain: %d %s", code, stderr)
	}
}

// TestSlopeCheckCommand: planes on the exact boundaries of planar sliding
// under a 60/180 face with friction 30 (see the kinematic package's tests),
// through the command, with the caution and the nets.
func TestSlopeCheckCommand(t *testing.T) {
	in := writeTemp(t, "k.csv", "dip,dip_direction\n"+
		"30,180\n"+ // at the friction angle: no
		"45,200\n"+ // at the lateral limit: yes
		"45,180\n"+ // yes
		"45,201\n"+ // outside the limit: no
		"80,0\n") // flexural
	dir := t.TempDir()
	code, out, stderr := runCmd(t, "slope-check", "--in", in, "--face", "60/180", "--friction", "30", "--svg", filepath.Join(dir, "k"))
	if code != ExitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	var rep struct {
		All struct {
			Poles  int `json:"poles"`
			Planar struct {
				Count   int     `json:"count"`
				Percent float64 `json:"percent"`
			} `json:"planar"`
			Flexural struct {
				Count int `json:"count"`
			} `json:"flexural"`
		} `json:"measurements"`
		SVG     []string `json:"svg"`
		Caution string   `json:"caution"`
	}
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatal(err)
	}
	if rep.All.Poles != 5 || rep.All.Planar.Count != 2 || rep.All.Planar.Percent != 40 || rep.All.Flexural.Count != 1 {
		t.Errorf("counts %+v", rep.All)
	}
	if rep.Caution != kinematic.Caution {
		t.Error("caution missing")
	}
	if len(rep.SVG) != 4 {
		t.Fatalf("svg %v", rep.SVG)
	}
	for _, f := range rep.SVG {
		b, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		if !strings.Contains(string(b), `id="zones"`) || !strings.Contains(string(b), "Kinematically possible is not unstable") {
			t.Errorf("%s lacks zones or caution", f)
		}
	}
	if code, _, _ := runCmd(t, "slope-check", "--in", in, "--face", "60/180"); code != ExitUsage {
		t.Error("no friction accepted")
	}
	if code, _, _ := runCmd(t, "slope-check", "--in", in, "--face", "95/180", "--friction", "30"); code != ExitUsage {
		t.Error("face dip 95 accepted")
	}
}

// TestDomainsCommand: one set in two domains, the same mean in both versus a
// mean turned by 30 degrees: the test's p-value is large, then tiny.
func TestDomainsCommand(t *testing.T) {
	write := func(turn float64) string {
		var b strings.Builder
		b.WriteString("hole_id,depth,dip,dip_direction,hole_azimuth,hole_dip\n")
		for i := 0; i < 20; i++ {
			dd := 100 + 8*math.Sin(float64(i)) // a spread of planes about 100
			dip := 50 + 6*math.Cos(1.7*float64(i))
			fmt.Fprintf(&b, "A,%d,%.3f,%.3f,0,-90\n", i, dip, dd)
			fmt.Fprintf(&b, "B,%d,%.3f,%.3f,0,-90\n", i, dip, geom.NormAzimuth(dd+turn+3*math.Cos(float64(i))))
		}
		return writeTemp(t, "d.csv", b.String())
	}
	type out struct {
		Tests []struct {
			P   float64  `json:"p_value"`
			Dom []string `json:"domains"`
		} `json:"common_mean_tests"`
	}
	run := func(in string) out {
		code, o, stderr := runCmd(t, "domains", "--in", in, "--set", "S:280/40:40", "--domain", "west=A", "--domain", "east=B:0..100")
		if code != ExitOK {
			t.Fatalf("exit %d: %s", code, stderr)
		}
		var r out
		if err := json.Unmarshal([]byte(o), &r); err != nil {
			t.Fatal(err)
		}
		return r
	}
	same, turned := run(write(0)), run(write(30))
	if len(same.Tests) != 1 || len(same.Tests[0].Dom) != 2 || same.Tests[0].P < 0.05 {
		t.Errorf("same mean: %+v", same)
	}
	if turned.Tests[0].P > 1e-6 {
		t.Errorf("turned mean: p = %v", turned.Tests[0].P)
	}
}

// TestGeotechSkippedRows: rows the conversion could not orient (error column
// filled, e.g. a row without beta) are counted under the statistics' reason
// and change nothing else.
func TestGeotechSkippedRows(t *testing.T) {
	in := writeTemp(t, "e.csv", "hole_id,depth,alpha,dip,dip_direction,hole_azimuth,hole_dip,error\n"+
		"H,1,90,0,0,0,-90,\nH,3,90,0,0,0,-90,\nH,4,40,,,,,beta is empty\n")
	code, out, stderr := runCmd(t, "spacing", "--in", in, "--set", "flat:0/90:10")
	if code != ExitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	var rep struct {
		Skipped []struct {
			Reason string `json:"reason"`
			Count  int    `json:"count"`
		} `json:"rows_skipped"`
		Domains []struct {
			Sets []struct {
				Count int `json:"count"`
			} `json:"sets"`
		} `json:"domains"`
	}
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatal(err)
	}
	if len(rep.Skipped) != 1 || rep.Skipped[0].Count != 1 || !strings.Contains(rep.Skipped[0].Reason, "not oriented") {
		t.Errorf("skipped %+v", rep.Skipped)
	}
	if rep.Domains[0].Sets[0].Count != 2 {
		t.Errorf("set count %d", rep.Domains[0].Sets[0].Count)
	}
}
