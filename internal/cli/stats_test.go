package cli

import (
	"bytes"
	"context"
	"encoding/json"
	"encoding/xml"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"corvane/internal/dirstat"
	"corvane/internal/geom"
)

func runCmd(t *testing.T, args ...string) (code int, stdout, stderr string) {
	t.Helper()
	var o, e bytes.Buffer
	code = Main(context.Background(), args, strings.NewReader(""), &o, &e, func(string) string { return "" })
	return code, o.String(), e.String()
}

// demoOrientationsCSV returns measurements in the converter's column layout
// for a fictional prospect, Zelvorra Reach: three joint sets, bedding and
// lineations logged in four inclined holes. Planes are kept with
// probability |cos delta| (delta between pole and hole), so the sample carries
// the sampling bias that Terzaghi weighting corrects.
func demoOrientationsCSV(seed uint64) string {
	rng := rand.New(rand.NewPCG(seed, 99))
	type set struct {
		typ    string
		dip    float64
		dipDir float64
		k      float64
		n      int
	}
	sets := []set{
		{"joint", 75, 130, 35, 260},
		{"joint", 60, 240, 30, 200},
		{"joint", 20, 20, 25, 140},
		{"bedding", 40, 330, 60, 120},
	}
	holes := []struct {
		id      string
		az, dip float64
	}{{"TM-001", 45, -60}, {"TM-002", 225, -55}, {"TM-003", 120, -70}, {"TM-004", 300, -65}}
	var b strings.Builder
	b.WriteString("hole_id,depth,type,alpha,beta,dip,dip_direction,line_trend,line_plunge,hole_azimuth,hole_dip\n")
	for _, s := range sets {
		pole := geom.Plane{Dip: s.dip, DipDirection: s.dipDir}.Normal()
		for i := 0; i < s.n; i++ {
			h := holes[rng.IntN(len(holes))]
			hd := geom.HoleDirection(h.az, h.dip)
			v := fisherDraw(rng, pole, s.k)
			if rng.Float64() > math.Abs(v.Dot(hd)) {
				continue // not intersected by the hole often enough to be logged
			}
			pl := geom.PlaneOf(v)
			fmt.Fprintf(&b, "%s,%.2f,%s,,,%.1f,%.1f,,,%.1f,%.1f\n", h.id, 10+rng.Float64()*300, s.typ, pl.Dip, pl.DipDirection, h.az, h.dip)
		}
	}
	// lineations plunging gently to the south-west
	for i := 0; i < 60; i++ {
		h := holes[rng.IntN(len(holes))]
		l := geom.LineOf(fisherDraw(rng, geom.FromTrendPlunge(215, 25), 40))
		fmt.Fprintf(&b, "%s,%.2f,lineation,,,,,%.1f,%.1f,%.1f,%.1f\n", h.id, 10+rng.Float64()*300, l.Trend, l.Plunge, h.az, h.dip)
	}
	return b.String()
}

// fisherDraw draws one unit vector from a Fisher distribution about m.
func fisherDraw(rng *rand.Rand, m geom.Vec3, k float64) geom.Vec3 {
	return dirstat.FisherRandom(rng, m, k)
}

// TestWriteDemoOrientations writes the demo CSV to the file named by
// CORVANE_DEMO_ORIENTATIONS (used by scripts/render-figures.sh when the
// demo programme's converted file is not there); otherwise it only checks
// that the demo data parse.
func TestWriteDemoOrientations(t *testing.T) {
	csv := demoOrientationsCSV(2026)
	if p := os.Getenv("CORVANE_DEMO_ORIENTATIONS"); p != "" {
		if err := os.WriteFile(p, []byte(csv), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	if strings.Count(csv, "\n") < 300 {
		t.Fatalf("demo too small")
	}
}

func writeTemp(t *testing.T, name, content string) string {
	t.Helper()
	p := filepath.Join(t.TempDir(), name)
	if err := os.WriteFile(p, []byte(content), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

type statsOut struct {
	RowsUsed     int      `json:"rows_used"`
	RowsRejected int      `json:"rows_rejected"`
	Problems     []string `json:"problems"`
	Caution      string   `json:"caution"`
	Planes       *struct {
		Count      int            `json:"count"`
		All        map[string]any `json:"all"`
		Sets       []setOut       `json:"sets"`
		Unassigned *int           `json:"unassigned"`
	} `json:"planes"`
	Lines *struct {
		Count int    `json:"count"`
		All   setOut `json:"all"`
	} `json:"lines"`
}

type setOut struct {
	Name       string   `json:"name"`
	Count      int      `json:"count"`
	Unweighted *statOut `json:"unweighted"`
	Weighted   *statOut `json:"weighted"`
}

type statOut struct {
	Mean struct {
		Dip, DipDirection, Trend, Plunge *float64
	} `json:"mean"`
	R, K, Cone95 float64
	Eigenvalues  []float64 `json:"eigenvalues"`
	SumOfWeights *float64  `json:"sum_of_weights"`
}

func (s *statOut) UnmarshalJSON(b []byte) error {
	var raw struct {
		Mean struct {
			Dip          *float64 `json:"dip"`
			DipDirection *float64 `json:"dip_direction"`
			Trend        *float64 `json:"trend"`
			Plunge       *float64 `json:"plunge"`
		} `json:"mean"`
		R            float64   `json:"R"`
		K            float64   `json:"k"`
		Cone95       float64   `json:"cone95"`
		Eigenvalues  []float64 `json:"eigenvalues"`
		SumOfWeights *float64  `json:"sum_of_weights"`
	}
	if err := json.Unmarshal(b, &raw); err != nil {
		return err
	}
	s.Mean.Dip, s.Mean.DipDirection, s.Mean.Trend, s.Mean.Plunge = raw.Mean.Dip, raw.Mean.DipDirection, raw.Mean.Trend, raw.Mean.Plunge
	s.R, s.K, s.Cone95, s.Eigenvalues, s.SumOfWeights = raw.R, raw.K, raw.Cone95, raw.Eigenvalues, raw.SumOfWeights
	return nil
}

// TestStatsWesselLines runs corvane stats on site A of Wessel, DA1 ch. 9 as
// lines (declination = trend, inclination = plunge) and checks the
// recomputed Fisher values of references README section 3: mean 122.1097 /
// 47.0660 (the book's 45.7 is a misprint from not normalising the mean), R
// 5.86274569, k 36.4287, exact cone 11.2487.
func TestStatsWesselLines(t *testing.T) {
	in := "line_trend,line_plunge\n105,40\n130,49\n115,57\n120,32\n118,55\n145,45\n"
	code, out, errOut := runCmd(t, "stats", "--in", writeTemp(t, "a.csv", in))
	if code != ExitOK {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	var r statsOut
	if err := json.Unmarshal([]byte(out), &r); err != nil {
		t.Fatal(err)
	}
	if r.Lines == nil || r.Planes != nil {
		t.Fatalf("want lines only: %s", out)
	}
	u := r.Lines.All.Unweighted
	for _, c := range []struct {
		what      string
		got, want float64
	}{
		{"trend", *u.Mean.Trend, 122.1097}, {"plunge", *u.Mean.Plunge, 47.0660},
		{"R", u.R, 5.86274569}, {"k", u.K, 36.4287}, {"cone95", u.Cone95, 11.2487},
	} {
		if math.Abs(c.got-c.want) > 1e-4 {
			t.Errorf("%s = %v, want %v", c.what, c.got, c.want)
		}
	}
	if !strings.Contains(r.Caution, "licensed practitioner") {
		t.Error("no caution in the report")
	}
}

// TestStatsRowsAndSets: bad rows are named and counted and the rest used;
// windows assign sets (nearest centre); Terzaghi weighting puts weighted
// beside unweighted statistics (references README section 5: vertical hole,
// plane 090/60 -> w = 2).
func TestStatsRowsAndSets(t *testing.T) {
	in := "Type,Dip,Dip_Direction,hole_azimuth,hole_dip\n" +
		"joint,60,90,0,-90\n" +
		"joint,62,92,0,-90\n" +
		"joint,x,92,0,-90\n" + // line 4
		"bedding,10,200,0,-90\n" +
		"joint,58,88,0,-90\n"
	p := writeTemp(t, "j.csv", in)
	code, out, errOut := runCmd(t, "stats", "--in", p, "--set", "J1:270/30:20", "--set", "B:20/80:20", "--weighting", "terzaghi")
	if code != ExitRows {
		t.Fatalf("exit %d, want %d", code, ExitRows)
	}
	if !strings.Contains(errOut, "line 4") || !strings.Contains(errOut, `column "dip"`) {
		t.Errorf("stderr does not name the bad row: %q", errOut)
	}
	var r statsOut
	if err := json.Unmarshal([]byte(out), &r); err != nil {
		t.Fatal(err)
	}
	if r.RowsUsed != 4 || r.RowsRejected != 1 || len(r.Problems) != 1 {
		t.Errorf("rows used %d rejected %d", r.RowsUsed, r.RowsRejected)
	}
	if len(r.Planes.Sets) != 2 || r.Planes.Sets[0].Count != 3 || r.Planes.Sets[1].Count != 1 || *r.Planes.Unassigned != 0 {
		t.Fatalf("sets: %+v", r.Planes.Sets)
	}
	j1 := r.Planes.Sets[0]
	if j1.Weighted == nil || j1.Unweighted == nil {
		t.Fatal("want weighted and unweighted side by side")
	}
	// weights of 60/090, 62/092, 58/088 in a vertical hole: 1/cos(dip)
	want := 1/math.Cos(geom.Rad(60)) + 1/math.Cos(geom.Rad(62)) + 1/math.Cos(geom.Rad(58))
	if math.Abs(*j1.Weighted.SumOfWeights-want) > 1e-5 {
		t.Errorf("sum of weights %v, want %v", *j1.Weighted.SumOfWeights, want)
	}
	if d := *j1.Unweighted.Mean.Dip; math.Abs(d-60) > 0.1 {
		t.Errorf("J1 mean dip %v", d)
	}
	// --type keeps only the bedding row
	code, out, _ = runCmd(t, "stats", "--in", p, "--type", "BEDDING")
	if code != ExitRows {
		t.Fatalf("exit %d", code)
	}
	r = statsOut{}
	_ = json.Unmarshal([]byte(out), &r)
	if r.Planes == nil || r.Planes.Count != 1 {
		t.Errorf("type filter: %s", out)
	}
}

func TestStatsUsageErrors(t *testing.T) {
	p := writeTemp(t, "x.csv", "dip,dip_direction\n10,20\n30,40\n")
	for _, args := range [][]string{
		{"stats"},
		{"stats", "--in", p, "--weighting", "terzaghi:0.5"},
		{"stats", "--in", p, "--sets", "auto:x"},
		{"stats", "--in", p, "--set", "J1:400/10:20"},
		{"stats", "--in", p, "--sets", "auto:2", "--set", "J1:10/10:20"},
		{"stats", "--in", p, "--type", "fault"},
		{"stats", "--in", filepath.Join(t.TempDir(), "missing.csv")},
	} {
		if code, _, errOut := runCmd(t, args...); code != ExitUsage || errOut == "" {
			t.Errorf("%v: exit %d, stderr %q", args, code, errOut)
		}
	}
}

func svgOK(t *testing.T, path string) string {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	d := xml.NewDecoder(bytes.NewReader(b))
	for {
		_, err := d.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatalf("%s: not well-formed XML: %v", path, err)
		}
	}
	return string(b)
}

// TestNetAndRoseOnDemo runs the three commands on the demo data: automatic
// sets recover the four generated plane sets, and the sheets are valid XML.
func TestNetAndRoseOnDemo(t *testing.T) {
	p := writeTemp(t, "demo.csv", demoOrientationsCSV(2026))
	code, out, errOut := runCmd(t, "stats", "--in", p, "--sets", "auto:4", "--weighting", "terzaghi", "--of", "planes")
	if code != ExitOK {
		t.Fatalf("stats exit %d: %s", code, errOut)
	}
	var r statsOut
	if err := json.Unmarshal([]byte(out), &r); err != nil {
		t.Fatal(err)
	}
	found := map[string]bool{}
	for _, s := range r.Planes.Sets {
		u := s.Unweighted
		for _, want := range []geom.Plane{{Dip: 75, DipDirection: 130}, {Dip: 60, DipDirection: 240}, {Dip: 20, DipDirection: 20}, {Dip: 40, DipDirection: 330}} {
			got := geom.Plane{Dip: *u.Mean.Dip, DipDirection: *u.Mean.DipDirection}
			if geom.AxialAngle(got.Normal(), want.Normal()) < 6 {
				found[fmt.Sprint(want)] = true
			}
		}
	}
	if len(found) != 4 {
		t.Errorf("auto sets found %d of the 4 generated sets: %s", len(found), out)
	}
	dir := t.TempDir()
	for _, args := range [][]string{
		{"net", "--in", p, "-o", filepath.Join(dir, "a.svg"), "--sets", "auto:4"},
		{"net", "--in", p, "-o", filepath.Join(dir, "b.svg"), "--projection", "equal-angle", "--show", "planes,sets,density", "--set", "J1:310/15:25", "--density", "kamb", "--units", "sigma"},
		{"net", "--in", p, "-o", filepath.Join(dir, "c.svg"), "--show", "density,lines", "--weighting", "terzaghi:10"},
		{"rose", "--in", p, "-o", filepath.Join(dir, "d.svg")},
		{"rose", "--in", p, "-o", filepath.Join(dir, "e.svg"), "--of", "strike", "--min-dip", "30"},
		{"rose", "--in", p, "-o", filepath.Join(dir, "f.svg"), "--of", "trend"},
	} {
		if code, _, errOut := runCmd(t, args...); code != ExitOK {
			t.Fatalf("%v: exit %d: %s", args, code, errOut)
		}
		s := svgOK(t, args[4])
		if !strings.Contains(s, "licensed practitioner") {
			t.Errorf("%v: no caution on the sheet", args)
		}
	}
	if s := svgOK(t, filepath.Join(dir, "b.svg")); !strings.Contains(s, "equal-angle projection") || !strings.Contains(s, "sigma") {
		t.Error("equal-angle sheet does not name its projection and units")
	}
	if code, _, _ := runCmd(t, "net", "--in", p, "-o", filepath.Join(dir, "x.svg"), "--show", "bogus"); code != ExitUsage {
		t.Error("bad --show accepted")
	}
	if code, _, _ := runCmd(t, "rose", "--in", p, "-o", filepath.Join(dir, "x.svg"), "--bin", "7"); code != ExitUsage {
		t.Error("bad --bin accepted")
	}
}

// TestSetsOn: sets apply to planes by default, to lines with --sets-on lines
// or when the file has no planes.
func TestSetsOn(t *testing.T) {
	p := writeTemp(t, "demo.csv", demoOrientationsCSV(7))
	type groups struct {
		Planes *struct {
			Sets []json.RawMessage `json:"sets"`
		} `json:"planes"`
		Lines *struct {
			Sets []json.RawMessage `json:"sets"`
		} `json:"lines"`
	}
	for _, c := range []struct {
		on            string
		planes, lines int
	}{{"", 2, 0}, {"lines", 0, 2}, {"both", 2, 2}} {
		args := []string{"stats", "--in", p, "--sets", "auto:2"}
		if c.on != "" {
			args = append(args, "--sets-on", c.on)
		}
		code, out, errOut := runCmd(t, args...)
		if code != ExitOK {
			t.Fatalf("%v: exit %d %s", args, code, errOut)
		}
		var g groups
		if err := json.Unmarshal([]byte(out), &g); err != nil {
			t.Fatal(err)
		}
		if len(g.Planes.Sets) != c.planes || len(g.Lines.Sets) != c.lines {
			t.Errorf("--sets-on %q: %d plane sets, %d line sets", c.on, len(g.Planes.Sets), len(g.Lines.Sets))
		}
	}
	lines := writeTemp(t, "l.csv", "line_trend,line_plunge\n10,20\n12,22\n200,40\n205,41\n")
	code, out, _ := runCmd(t, "stats", "--in", lines, "--sets", "auto:2")
	var g groups
	_ = json.Unmarshal([]byte(out), &g)
	if code != ExitOK || g.Lines == nil || len(g.Lines.Sets) != 2 {
		t.Errorf("lines-only file: exit %d, %s", code, out)
	}
	if code, _, _ := runCmd(t, "stats", "--in", lines, "--sets-on", "poles"); code != ExitUsage {
		t.Error("bad --sets-on accepted")
	}
}

// TestStatsSkipsVerticalHoles: the convert output of a vertical hole has a
// dip and no dip direction (dip = 90 - alpha, common practice). corvane
// stats, net and rose skip those rows, count them with the reason and
// succeed; the rows of the inclined hole are used.
func TestStatsSkipsVerticalHoles(t *testing.T) {
	dir := t.TempDir()
	write := func(name, text string) string { return writeFile(t, dir, name, text) }
	collars := write("collars.csv", "hole_id,easting,northing,elevation,azimuth,dip,depth\nV1,1000,2000,300,0,-90,100\nA1,1000,2100,300,45,-60,100\n")
	surveys := write("surveys.csv", "hole_id,depth,azimuth,dip,azimuth_reference\nV1,0,0,-90,true\nV1,50,0,-90,true\nA1,0,45,-60,true\nA1,80,45,-60,true\n")
	structures := write("structures.csv", "hole_id,depth,alpha,beta,gamma,type\nV1,10,40,30,,joint\nV1,20,50,100,20,joint\nA1,10,40,30,,joint\nA1,20,50,100,20,joint\nA1,30,45,200,,joint\n")
	vertOnly := write("vertical.csv", "hole_id,depth,alpha,beta,gamma,type\nV1,10,40,30,,joint\nV1,20,50,100,20,joint\n")
	for _, tc := range []struct {
		name, structures  string
		used, skipped     int
		planes, lines     int
		wantPlanesInStats bool
	}{
		{"mixed", structures, 3, 2, 3, 1, true},
		{"vertical only", vertOnly, 0, 2, 0, 0, false},
	} {
		oriented := filepath.Join(dir, tc.name+".csv")
		if code, _, stderr := runCmd(t, "convert", "--collars", collars, "--surveys", surveys, "--structures", tc.structures,
			"--output-reference", "true", "-o", oriented); code != ExitOK {
			t.Fatalf("%s: convert: exit %d: %s", tc.name, code, stderr)
		}
		code, stdout, stderr := runCmd(t, "stats", "--in", oriented)
		if code != ExitOK {
			t.Fatalf("%s: stats: exit %d, want %d: %s", tc.name, code, ExitOK, stderr)
		}
		var rep struct {
			Rows    int `json:"rows"`
			Used    int `json:"rows_used"`
			Skipped []struct {
				Reason string
				Count  int
			} `json:"rows_skipped"`
			Rejected int `json:"rows_rejected"`
			Planes   *struct {
				Count int `json:"count"`
			} `json:"planes"`
		}
		if err := json.Unmarshal([]byte(stdout), &rep); err != nil {
			t.Fatalf("%s: %v\n%s", tc.name, err, stdout)
		}
		if rep.Used != tc.used || rep.Rejected != 0 || len(rep.Skipped) != 1 || rep.Skipped[0].Count != tc.skipped ||
			!strings.Contains(rep.Skipped[0].Reason, "vertical hole") {
			t.Errorf("%s: used %d, rejected %d, skipped %+v; want %d used, %d skipped for a vertical hole", tc.name, rep.Used, rep.Rejected, rep.Skipped, tc.used, tc.skipped)
		}
		if (rep.Planes != nil) != tc.wantPlanesInStats || (rep.Planes != nil && rep.Planes.Count != tc.planes) {
			t.Errorf("%s: planes %+v, want %d", tc.name, rep.Planes, tc.planes)
		}
		for _, cmd := range []string{"net", "rose"} {
			svg := filepath.Join(dir, tc.name+"-"+cmd+".svg")
			code, _, stderr := runCmd(t, cmd, "--in", oriented, "-o", svg)
			if code != ExitOK {
				t.Errorf("%s: %s: exit %d: %s", tc.name, cmd, code, stderr)
				continue
			}
			b, _ := os.ReadFile(svg)
			if want := fmt.Sprintf("%d rows left out: no dip direction", tc.skipped); !strings.Contains(string(b), want) {
				t.Errorf("%s: %s sheet does not say %q", tc.name, cmd, want)
			}
		}
	}
}

// TestStatsWoodcockUndefined: identical lines have eigenvalues (1, 0, 0), for
// which Woodcock's (1977) K = ln(S1/S2)/ln(S2/S3) and C = ln(S1/S3) are
// infinite: the report gives null with a note, never a number.
func TestStatsWoodcockUndefined(t *testing.T) {
	in := filepath.Join(t.TempDir(), "c.csv")
	if err := os.WriteFile(in, []byte("line_trend,line_plunge\n30,40\n30,40\n30,40\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	code, stdout, stderr := runCmd(t, "stats", "--in", in)
	if code != ExitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	var rep struct {
		Lines struct {
			All struct {
				Unweighted struct {
					Shape map[string]any `json:"shape"`
				} `json:"unweighted"`
			} `json:"all"`
		} `json:"lines"`
	}
	if err := json.Unmarshal([]byte(stdout), &rep); err != nil {
		t.Fatal(err)
	}
	sh := rep.Lines.All.Unweighted.Shape
	for _, m := range []string{"woodcock_K", "woodcock_C"} {
		if v, ok := sh[m]; !ok || v != nil {
			t.Errorf("%s = %v, want null", m, v)
		}
		if note, _ := sh[m+"_note"].(string); !strings.Contains(note, "infinite") {
			t.Errorf("%s_note = %q, want a reason", m, note)
		}
	}
}

// negZero matches a JSON number that is a negative zero.
var negZero = regexp.MustCompile(`-0(\.0*)?([^.0-9]|$)`)

// TestStatsNoNegativeZero: horizontal lines and vertical planes have plunges
// of zero that the arithmetic may sign; no output shows -0.
func TestStatsNoNegativeZero(t *testing.T) {
	dir := t.TempDir()
	for name, text := range map[string]string{
		"lines.csv":  "line_trend,line_plunge\n30,0\n32,0\n28,0\n",
		"planes.csv": "dip,dip_direction\n90,0\n90,180\n90,0\n",
	} {
		in := filepath.Join(dir, name)
		if err := os.WriteFile(in, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		code, stdout, stderr := runCmd(t, "stats", "--in", in)
		if code != ExitOK {
			t.Fatalf("%s: exit %d: %s", name, code, stderr)
		}
		if m := negZero.FindString(stdout); m != "" {
			t.Errorf("%s: the report shows a negative zero %q:\n%s", name, m, stdout)
		}
	}
}
