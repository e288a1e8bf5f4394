package convert

import (
	"bytes"
	"context"
	"corvane/internal/holemodel"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"reflect"
	"runtime"
	"strconv"
	"strings"
	"testing"
	"time"

	"corvane/internal/coreangle"
	"corvane/internal/desurvey"
	"corvane/internal/domain"
	"corvane/internal/geom"
	"corvane/internal/northref"
	"corvane/internal/uncertainty"
)

func near(a, b, tol float64) bool { return math.Abs(a-b) <= tol }

const collarsCSV = `hole_id,easting,northing,elevation,azimuth,dip,depth
H1,1000,2000,300,0,-60,200
V1,1100,2000,300,0,-90,100
`

const surveysCSV = `hole_id,depth,azimuth,dip
H1,0,0,-60
H1,100,0,-60
`

func load(t *testing.T, collars, surveys string, opt Options) *Holes {
	t.Helper()
	opt.CollarsFile, opt.SurveysFile = "c.csv", "s.csv"
	hs, err := Load(strings.NewReader(collars), strings.NewReader(surveys), opt)
	if err != nil {
		t.Fatal(err)
	}
	return hs
}

// run converts structures and returns the output as maps by column name.
func run(t *testing.T, hs *Holes, structures string) ([]map[string]string, Summary) {
	t.Helper()
	var out bytes.Buffer
	sum, err := hs.Convert(context.Background(), strings.NewReader(structures), &out)
	if err != nil {
		t.Fatal(err)
	}
	recs, err := csv.NewReader(&out).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	var rows []map[string]string
	for _, r := range recs[1:] {
		m := map[string]string{}
		for i, c := range recs[0] {
			m[c] = r[i]
		}
		rows = append(rows, m)
	}
	return rows, sum
}

func num(t *testing.T, s string) float64 {
	t.Helper()
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		t.Fatalf("%q: %v", s, err)
	}
	return v
}

// The derived cases of references/README.md section 2 (hole 000/-60), run through
// the whole converter; positions on a straight hole are collar + depth x direction.
func TestConvertDerivedCases(t *testing.T) {
	hs := load(t, collarsCSV, surveysCSV, Options{})
	in := "Type,HOLE_ID,depth,alpha,beta,gamma,note\n" +
		"joint,H1,50,45,90,,a\n" +
		"joint,h1,50,45,90,,unknown hole (ids are exact)\n" +
		"joint,H1,50,45,270,,b\n" +
		"bedding,H1,150,30,180,90,\"x, y\"\n"
	rows, sum := run(t, hs, in)
	if sum.Rows != 4 || sum.BadRows != 1 || sum.Extrapols != 1 {
		t.Fatalf("summary %+v", sum)
	}
	r := rows[0]
	if !near(num(t, r["dip"]), 52.2, 0.05) || !near(num(t, r["dip_direction"]), 243.4, 0.05) || r["note"] != "a" || r["Type"] != "joint" {
		t.Errorf("row 1 %v, want 243.4/52.2", r)
	}
	if !near(num(t, r["strike"]), 153.43, 0.01) || !near(num(t, r["pole_trend"]), 63.43, 0.01) || !near(num(t, r["pole_plunge"]), 90-52.24, 0.01) {
		t.Errorf("row 1 strike/pole %v", r)
	}
	if !near(num(t, r["easting"]), 1000, 1e-3) || !near(num(t, r["northing"]), 2025, 1e-3) || !near(num(t, r["elevation"]), 300-50*math.Sin(geom.Rad(60)), 1e-3) {
		t.Errorf("row 1 position %v", r)
	}
	if r["hole_azimuth"] != "0.00" || r["hole_dip"] != "-60.00" || r["azimuth_reference"] != "grid" || r["warnings"] != "" || r["error"] != "" || r["line_trend"] != "" {
		t.Errorf("row 1 %v", r)
	}
	if r["declination_source"] != "none" || r["convergence_source"] != "none" || r["declination"] != "" {
		t.Errorf("row 1 corrections %v", r)
	}
	if e := rows[1]["error"]; !strings.Contains(e, `structures:line 3, column "HOLE_ID"`) || !strings.Contains(e, `unknown hole "h1"`) || rows[1]["dip"] != "" {
		t.Errorf("row 2 error %q", e)
	}
	if !near(num(t, rows[2]["dip_direction"]), 116.6, 0.05) {
		t.Errorf("row 3 %v, want 116.6/52.2", rows[2])
	}
	r = rows[3]
	// Below the last station (100): extrapolated straight on, warned.
	if !near(num(t, r["dip"]), 30, 1e-9) || r["dip_direction"] != "0.00" || !strings.Contains(r["warnings"], "extrapolated") {
		t.Errorf("row 4 %v", r)
	}
	// gamma 90 on plane 000/30 in this hole is the horizontal strike line (hand-derived, see coreangle tests).
	if r["line_plunge"] != "0.00" || !(r["line_trend"] == "90.00" || r["line_trend"] == "270.00") || r["note"] != "x, y" {
		t.Errorf("row 4 line %v", r)
	}
}

// Common practice: in a vertical hole dip = 90 - alpha and there is no dip direction.
func TestConvertVerticalHole(t *testing.T) {
	hs := load(t, collarsCSV, surveysCSV, Options{})
	rows, _ := run(t, hs, "hole_id,depth,alpha,beta,gamma\nV1,20,70,123,10\n")
	r := rows[0]
	if r["dip"] != "20.00" || r["dip_direction"] != "" || r["strike"] != "" || r["pole_trend"] != "" || r["pole_plunge"] != "70.00" || r["line_trend"] != "" || r["line_plunge"] == "" {
		t.Errorf("vertical hole row %v", r)
	}
	if !strings.Contains(r["warnings"], "vertical hole") || r["error"] != "" {
		t.Errorf("warnings %q error %q", r["warnings"], r["error"])
	}
}

func TestConvertRowErrors(t *testing.T) {
	hs := load(t, collarsCSV, surveysCSV, Options{})
	in := "hole_id,depth,alpha,beta,gamma,thickness\n" +
		"H1,10,95,10,,\n" +
		"H1,10,45,abc,,\n" +
		"H1,10,45,10,400,\n" +
		"H1,250,45,10,,\n" +
		"H1,NaN,45,10,,\n" +
		"NOPE,10,45,10,,\n" +
		"H1,10,45,10,,-1\n" +
		"H1,10,45\n" +
		"H1,10,90,360,360,2\n"
	rows, sum := run(t, hs, in)
	want := []string{`line 2, column "alpha": alpha 95 is outside 0..90`, `line 3, column "beta": beta "abc" is not a number`,
		`line 4, column "gamma"`, `line 5, column "depth": depth 250 is past the final depth 200`, `line 6, column "depth"`,
		`line 7, column "hole_id": unknown hole "NOPE"`, `line 8, column "thickness"`, `line 9: row has 3 fields`, ``}
	if sum.BadRows != 8 || len(rows) != 9 {
		t.Fatalf("summary %+v rows %d", sum, len(rows))
	}
	for i, w := range want {
		e := rows[i]["error"]
		if (w == "") != (e == "") || !strings.Contains(e, w) {
			t.Errorf("row %d error %q, want %q", i+2, e, w)
		}
		if w != "" && (rows[i]["dip"] != "" || rows[i]["easting"] != "") {
			t.Errorf("row %d has results despite an error", i+2)
		}
	}
	// Common practice: true thickness = apparent x sin(alpha).
	if rows[8]["true_thickness"] != "2.000" || !strings.Contains(rows[8]["warnings"], "alpha >= 85") {
		t.Errorf("last row %v", rows[8])
	}
}

func TestConvertWholeFileErrors(t *testing.T) {
	hs := load(t, collarsCSV, surveysCSV, Options{})
	var out bytes.Buffer
	for _, c := range []struct{ in, want string }{
		{"hole_id,depth,alpha\nH1,1,2\n", `missing column "beta"`},
		{"hole_id,depth,alpha,beta,Dip\nH1,1,2,3,4\n", `"Dip" has the name of an output column`},
		{"hole_id,depth,alpha,beta\nH1,1,2,3\nH1,\"1,2,3\n", "structures:line 3"},
	} {
		_, err := hs.Convert(context.Background(), strings.NewReader(c.in), &out)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%q: %v, want %q", c.in, err, c.want)
		}
	}
	for _, c := range []struct{ collars, surveys, want string }{
		{"hole_id,easting,northing,elevation,azimuth,depth\n", surveysCSV, `c.csv:line 1, column "dip"`},
		{collarsCSV, "hole_id,depth,azimuth,dip\nH1,10,0,-60\nH1,5,0,-60\n", `s.csv:line 3, column "depth"`},
		{collarsCSV, "hole_id,depth,azimuth,dip\nH1,10,0,-60\nH1,10,0,-60\n", "repeats line 2"},
		{collarsCSV, "hole_id,depth,azimuth,dip\nX9,10,0,-60\n", `s.csv:line 2, column "hole_id": survey of hole "X9"`},
	} {
		_, err := Load(strings.NewReader(c.collars), strings.NewReader(c.surveys), Options{CollarsFile: "c.csv", SurveysFile: "s.csv"})
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%v, want %q", err, c.want)
		}
	}
}

// A station past the final depth is a problem of that hole only: its rows
// carry the located error, the other holes convert (README, Data rules).
func TestStationPastFinalDepthIsTheHoles(t *testing.T) {
	collars := "hole_id,easting,northing,elevation,azimuth,dip,depth\nH1,0,0,0,0,-60,100\nH2,0,0,0,90,-60,100\n"
	surveys := "hole_id,depth,azimuth,dip\nH1,10,0,-60\nH1,300,0,-60\nH2,10,90,-60\n"
	hs, err := Load(strings.NewReader(collars), strings.NewReader(surveys), Options{CollarsFile: "c.csv", SurveysFile: "s.csv"})
	if err != nil {
		t.Fatalf("one hole's station refused the whole file: %v", err)
	}
	rows, sum := run(t, hs, "hole_id,depth,alpha,beta\nH1,5,45,90\nH2,5,45,90\n")
	if sum.BadRows != 1 || !strings.Contains(rows[0]["error"], `s.csv:line 3, column "depth"`) || !strings.Contains(rows[0]["error"], "300") {
		t.Errorf("H1 row error %q, want the station at s.csv line 3", rows[0]["error"])
	}
	if rows[1]["error"] != "" || rows[1]["dip"] == "" {
		t.Errorf("H2 row %v, want converted", rows[1])
	}
}

// conventions.md: true = magnetic + D, grid = true - C.
func TestAzimuthReferences(t *testing.T) {
	collars := "hole_id,easting,northing,elevation,azimuth,dip,depth,declination,grid_convergence\n" +
		"M1,1000,2000,300,0,-60,200,10,2\n" + // per-hole numbers
		"M2,1000,2000,300,0,-60,200,,\n" + // numbers for all
		"T1,1000,2000,300,0,-60,200,,\n"
	surveys := "hole_id,depth,azimuth,dip,azimuth_reference\n" +
		"M1,0,40,-60,magnetic\nM2,0,40,-60,magnetic\nT1,0,40,-60,true\n"
	st := "hole_id,depth,alpha,beta\nM1,10,45,90\nM2,10,45,90\nT1,10,45,90\n"
	for _, c := range []struct {
		out        Reference
		want       [3]float64
		dsrc, csrc [3]string
	}{
		{Grid, [3]float64{40 + 10 - 2, 40 + 5 - 1, 40 - 1}, [3]string{"given", "project", "none"}, [3]string{"given", "project", "project"}},
		{True, [3]float64{40 + 10, 40 + 5, 40}, [3]string{"given", "project", "none"}, [3]string{"none", "none", "none"}},
	} {
		hs := load(t, collars, surveys, Options{Output: c.out, Declination: Given{5, true}, GridConvergence: Given{1, true}})
		rows, sum := run(t, hs, st)
		if sum.BadRows != 0 {
			t.Fatalf("%v", rows)
		}
		for i, r := range rows {
			if !near(num(t, r["hole_azimuth"]), c.want[i], 1e-9) || r["azimuth_reference"] != c.out.String() ||
				r["declination_source"] != c.dsrc[i] || r["convergence_source"] != c.csrc[i] {
				t.Errorf("%v row %d: %v, want azimuth %v", c.out, i, r, c.want[i])
			}
			// The plane turns with the hole: same alpha/beta, dip direction offset by the azimuth.
			want, _ := coreangle.Plane(geom.HoleDirection(c.want[i], -60), 45, 90, coreangle.Convention{})
			if !near(num(t, r["dip_direction"]), want.DipDirection, 0.006) {
				t.Errorf("%v row %d dip direction %v, want %v", c.out, i, r["dip_direction"], want.DipDirection)
			}
		}
	}
}

// Corrections computed by package northref when none are given, checked against
// calling northref directly; given numbers win; a hole that cannot be placed
// gets a per-hole error naming it.
func TestComputedCorrections(t *testing.T) {
	collars := "hole_id,easting,northing,elevation,azimuth,dip,depth,crs,declination\n" +
		"C1,400000,6500000,350,0,-60,200,EPSG:32750,\n" +
		"C2,400000,6500000,350,0,-60,200,,\n" +
		"C3,400000,6500000,350,0,-60,200,LOCAL,4.5\n"
	surveys := "hole_id,depth,azimuth,dip,azimuth_reference,survey_date\n" +
		"C1,0,40,-60,magnetic,2026-05-01\nC1,100,41,-60,magnetic,2026-05-02\n" +
		"C2,0,40,-60,magnetic,2026-05-01\n" +
		"C3,0,40,-60,magnetic,\n"
	res, err := northref.Corrections("EPSG:32750", 400000, 6500000, 350, time.Date(2026, 5, 1, 0, 0, 0, 0, time.UTC), true, true)
	if err != nil {
		t.Fatal(err)
	}
	hs := load(t, collars, surveys, Options{Output: True})
	rows, sum := run(t, hs, "hole_id,depth,alpha,beta\nC1,50,45,90\nC2,50,45,90\nC3,50,45,90\n")
	if sum.BadRows != 1 {
		t.Fatalf("summary %+v: %v", sum, rows)
	}
	r := rows[0]
	// The source names the model and the decimal year of the survey date.
	if r["declination_source"] != "computed (WMM-2025 at 2026.3288)" || !near(num(t, r["declination"]), res.Declination, 0.0005) || r["convergence_source"] != "none" {
		t.Errorf("C1 %v, want declination %v computed", r, res.Declination)
	}
	if e := rows[1]["error"]; !strings.Contains(e, `hole "C2"`) || !strings.Contains(e, "crs") {
		t.Errorf("C2 error %q", e)
	}
	if rows[2]["declination_source"] != "given" || rows[2]["declination"] != "4.500" {
		t.Errorf("C3 %v", rows[2])
	}
	// Grid output also needs the convergence, computed from the collar.
	hs = load(t, collars, surveys, Options{})
	rows, _ = run(t, hs, "hole_id,depth,alpha,beta\nC1,50,45,90\n")
	if rows[0]["convergence_source"] != "computed" || !near(num(t, rows[0]["grid_convergence"]), res.Convergence, 0.0005) {
		t.Errorf("C1 grid %v, want convergence %v", rows[0], res.Convergence)
	}
	// Depth 50 is halfway between magnetic stations 40 and 41: about 40.5 magnetic.
	wantAz := geom.NormAzimuth(40.5 + res.Declination - res.Convergence)
	if !near(num(t, rows[0]["hole_azimuth"]), wantAz, 0.02) {
		t.Errorf("C1 grid azimuth %v, want about %v", rows[0]["hole_azimuth"], wantAz)
	}
	// NoCompute: the hole has an error instead.
	hs = load(t, collars, surveys, Options{NoCompute: true})
	rows, _ = run(t, hs, "hole_id,depth,alpha,beta\nC1,50,45,90\n")
	if !strings.Contains(rows[0]["error"], "need a") {
		t.Errorf("NoCompute: %v", rows[0])
	}
}

// Property: structures forward-modelled from known true planes and lines with the
// inverse (coreangle.Angles, Gamma) on a curving desurveyed hole convert back to
// those planes and lines within the output rounding, under every convention.
func TestConvertRoundTrip(t *testing.T) {
	r := rand.New(rand.NewPCG(21, 22))
	collars := "hole_id,easting,northing,elevation,azimuth,dip,depth\nR1,500,600,100,30,-55,400\n"
	var sv strings.Builder
	sv.WriteString("hole_id,depth,azimuth,dip\n")
	st := []desurvey.Station{}
	for d := 0.0; d <= 300; d += 30 {
		s := desurvey.Station{Depth: d, Azimuth: 30 + d/20, Dip: -55 + d/30}
		st = append(st, s)
		fmt.Fprintf(&sv, "R1,%g,%g,%g\n", s.Depth, s.Azimuth, s.Dip)
	}
	path, err := desurvey.New(desurvey.Collar{East: 500, North: 600, Elevation: 100, Azimuth: 30, Dip: -55, Depth: 400}, st, desurvey.MinimumCurvature)
	if err != nil {
		t.Fatal(err)
	}
	for _, conv := range []coreangle.Convention{{}, {RefLine: coreangle.Top, BetaApex: coreangle.UpHole, GammaSense: coreangle.Anticlockwise}} {
		hs := load(t, collars, sv.String(), Options{Convention: conv})
		var in strings.Builder
		in.WriteString("hole_id,depth,alpha,beta,gamma\n")
		type truth struct {
			p geom.Plane
			l geom.Line
		}
		var want []truth
		for len(want) < 300 {
			depth := r.Float64() * 390
			pt, _ := path.At(depth)
			p := geom.Plane{Dip: 5 + r.Float64()*85, DipDirection: r.Float64() * 360}
			th := r.Float64() * math.Pi
			lv := p.DipVector().Scale(math.Cos(th)).Add(p.Normal().Cross(p.DipVector()).Scale(math.Sin(th)))
			l := geom.LineOf(lv)
			a, b, w := coreangle.Angles(pt.Dir, p, conv)
			if w.Has(coreangle.AlphaHigh) || a < 1 {
				continue
			}
			g, err := coreangle.Gamma(pt.Dir, p, l, conv)
			if err != nil {
				t.Fatal(err)
			}
			fmt.Fprintf(&in, "R1,%.17g,%.17g,%.17g,%.17g\n", depth, a, b, g)
			want = append(want, truth{p, l})
		}
		rows, sum := run(t, hs, in.String())
		if sum.BadRows != 0 {
			t.Fatalf("bad rows: %+v", sum)
		}
		for i, row := range rows {
			got := geom.Plane{Dip: num(t, row["dip"]), DipDirection: num(t, row["dip_direction"])}
			if a := geom.AxialAngle(got.Normal(), want[i].p.Normal()); a > 0.01 {
				t.Fatalf("%v row %d: plane %+v, want %+v", conv, i, got, want[i].p)
			}
			gl := geom.Line{Trend: num(t, row["line_trend"]), Plunge: num(t, row["line_plunge"])}
			if a := geom.AxialAngle(gl.Vec(), want[i].l.Vec()); a > 0.01 {
				t.Fatalf("%v row %d: line %+v, want %+v", conv, i, gl, want[i].l)
			}
		}
	}
}

// genReader produces n structure rows on the fly; before reporting the end it
// records the live heap, so a test can see whether memory grows with n.
type genReader struct {
	n, i  int
	buf   bytes.Buffer
	heap  uint64
	holes int
}

func (g *genReader) Read(p []byte) (int, error) {
	for g.buf.Len() < len(p) && g.i <= g.n {
		if g.i == 0 {
			g.buf.WriteString("hole_id,depth,alpha,beta,gamma,type\n")
		} else {
			fmt.Fprintf(&g.buf, "G%d,%d.5,%d,%d,%d,joint\n", g.i%g.holes, g.i%190, g.i%90, g.i%360, g.i%7*50)
		}
		g.i++
	}
	if g.buf.Len() == 0 {
		if g.heap == 0 {
			runtime.GC()
			var ms runtime.MemStats
			runtime.ReadMemStats(&ms)
			g.heap = ms.HeapAlloc
		}
		return 0, io.EOF
	}
	return g.buf.Read(p)
}

func genHoles(t testing.TB, n int) *Holes {
	var c, s strings.Builder
	c.WriteString("hole_id,easting,northing,elevation,azimuth,dip,depth\n")
	s.WriteString("hole_id,depth,azimuth,dip\n")
	for i := 0; i < n; i++ {
		fmt.Fprintf(&c, "G%d,%d,%d,300,%d,-60,200\n", i, 1000+i*10, 5000, (i*37)%360)
		for d := 0; d <= 180; d += 30 {
			fmt.Fprintf(&s, "G%d,%d,%d,%g\n", i, d, (i*37+d/10)%360, -60+float64(d)/30)
		}
	}
	hs, err := Load(strings.NewReader(c.String()), strings.NewReader(s.String()), Options{})
	if err != nil {
		t.Fatal(err)
	}
	return hs
}

// Streaming: the live heap at the end of the input does not grow with the number
// of rows (10,000 vs 100,000 rows).
func TestConvertMemoryFlat(t *testing.T) {
	if testing.Short() {
		t.Skip("short")
	}
	hs := genHoles(t, 50)
	heap := func(n int) uint64 {
		g := &genReader{n: n, holes: 50}
		sum, err := hs.Convert(context.Background(), g, io.Discard)
		if err != nil || sum.Rows != n {
			t.Fatal(err, sum)
		}
		return g.heap
	}
	small, large := heap(10000), heap(100000)
	if large > small+1<<20 {
		t.Fatalf("live heap grows with rows: %d bytes at 10k rows, %d at 100k", small, large)
	}
}

func TestConvertCancel(t *testing.T) {
	hs := genHoles(t, 5)
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	_, err := hs.Convert(ctx, &genReader{n: 10000, holes: 5}, io.Discard)
	if !errors.Is(err, context.Canceled) {
		t.Fatalf("err = %v", err)
	}
}

// failAfter is a writer that fails once it has taken n bytes.
type failAfter struct{ n int }

func (w *failAfter) Write(p []byte) (int, error) {
	if w.n -= len(p); w.n < 0 {
		return 0, errors.New("disk full")
	}
	return len(p), nil
}

// cancelAfter is a structure stream that cancels its context once n rows
// have been read from it, and goes on giving rows.
type cancelAfter struct {
	genReader
	n      int
	cancel context.CancelFunc
}

func (c *cancelAfter) Read(p []byte) (int, error) {
	if c.i > c.n {
		c.cancel()
	}
	return c.genReader.Read(p)
}

// A failing writer or a cancelled context ends the conversion with its
// error, whatever the number of workers and the batch size; the workers all
// stop (the call returns).
func TestConvertStopsOnWriteErrorAndCancel(t *testing.T) {
	hs := genHoles(t, 5)
	for _, p := range pipelines {
		h := *hs
		h.opt.Workers, h.opt.batchRows = p.workers, p.batch
		_, err := h.Convert(context.Background(), &genReader{n: 20000, holes: 5}, &failAfter{n: 100000})
		if err == nil || !strings.Contains(err.Error(), "writing the output: disk full") {
			t.Fatalf("%+v: err = %v", p, err)
		}
		ctx, cancel := context.WithCancel(context.Background())
		var out bytes.Buffer
		sum, err := h.Convert(ctx, &cancelAfter{genReader: genReader{n: 50000, holes: 5}, n: 3000, cancel: cancel}, &out)
		cancel()
		if !errors.Is(err, context.Canceled) || sum.Rows >= 50000 || strings.Count(out.String(), "\n") != sum.Rows+1 {
			t.Fatalf("%+v: err = %v, %d rows counted, %d lines written", p, err, sum.Rows, strings.Count(out.String(), "\n"))
		}
	}
}

func TestOrient(t *testing.T) {
	hs := load(t, collarsCSV, surveysCSV, Options{})
	res, err := hs.Orient(Measurement{HoleID: "H1", Measurement: holemodel.Measurement{Depth: 50, Alpha: 20, Beta: 180}})
	if err != nil || !near(res.Plane.Dip, 40, 1e-9) || !near(res.Plane.DipDirection, 0, 1e-9) {
		t.Fatalf("%+v %v, want 000/40 (references/README.md derived case)", res.Plane, err)
	}
	_, err = hs.Orient(Measurement{HoleID: "H1", Measurement: holemodel.Measurement{Depth: 50, Alpha: 20, Beta: 400}})
	var de *domain.Error
	if !errors.As(err, &de) || de.Loc.Column != "beta" {
		t.Fatalf("err = %v", err)
	}
	if n := testing.AllocsPerRun(100, func() {
		_, _ = hs.Orient(Measurement{HoleID: "H1", Measurement: holemodel.Measurement{Depth: 50, Alpha: 20, Beta: 180}})
	}); n != 0 {
		t.Fatalf("Orient allocates %v", n)
	}
	if hs.Hole("H1") == nil || len(hs.List()) != 2 {
		t.Fatal("accessors")
	}
	if _, err := ParseReference("north"); err == nil {
		t.Fatal("bad reference accepted")
	}
}

// pipelines are the worker counts and batch sizes the output must not
// depend on: one row per batch, batches that do not divide the input, the
// default, more workers than cores.
var pipelines = []struct{ workers, batch int }{{1, 0}, {1, 1}, {2, 7}, {3, 64}, {2, 0}, {8, 1}, {8, 0}}

// convertWith converts in with the given workers and batch size and returns
// the output, the summary and the error.
func convertWith(t *testing.T, hs *Holes, in string, workers, batch int) (string, Summary, error) {
	t.Helper()
	h := *hs
	h.opt.Workers, h.opt.batchRows = workers, batch
	var out bytes.Buffer
	sum, err := h.Convert(context.Background(), strings.NewReader(in), &out)
	return out.String(), sum, err
}

// The output does not depend on the number of workers or the batch size:
// rows stay in input order, good and bad alike, byte for byte, with the
// same errors (file, line, column) and the same summary. The input mixes
// rows with and without quotes (a quoted field across lines, doubled
// quotes), CRLF line ends, empty lines, gamma and thickness cells, run
// ratings, rows of the wrong width, unknown holes and bad numbers.
func TestConvertWorkersSameOutput(t *testing.T) {
	var in strings.Builder
	in.WriteString("hole_id,depth,alpha,beta,gamma,thickness,run_confidence,note\n")
	r := rand.New(rand.NewPCG(40, 41))
	rows := 0
	for i := 0; i < 5000; i++ {
		k := r.IntN(24)
		if k != 7 {
			rows++
		}
		switch k {
		case 0:
			fmt.Fprintf(&in, "G%d,%d,95,10,,,,bad alpha %d\n", r.IntN(12), r.IntN(200), i)
		case 1:
			fmt.Fprintf(&in, "NOPE,1,1,1,,,,%d\n", i)
		case 2:
			fmt.Fprintf(&in, "G1,1,2\n")
		case 3:
			fmt.Fprintf(&in, "G2,1,2,3,4,5,good,x,%d\n", i) // one field too many
		case 4:
			fmt.Fprintf(&in, "G3,abc,20,30,,,,%d\n", i)
		case 5:
			fmt.Fprintf(&in, "\"G%d\",%.1f,%d,%d,,,fair,\"two\nlines, \"\"quoted\"\" %d\"\n", r.IntN(12), r.Float64()*200, r.IntN(91), r.IntN(360), i)
		case 6:
			fmt.Fprintf(&in, "G%d,%.2f,%d,%d,,%.2f,poor,crlf %d\r\n", r.IntN(12), r.Float64()*200, r.IntN(91), r.IntN(360), r.Float64(), i)
		case 7:
			in.WriteString("\n")
		case 8:
			fmt.Fprintf(&in, "G%d,%.2f,%d,,,,,unoriented %d\n", r.IntN(12), r.Float64()*200, r.IntN(91), i)
		case 9:
			fmt.Fprintf(&in, "G%d,%.2f,%d,%d,%d,,bogus,bad rating %d\n", r.IntN(12), r.Float64()*200, r.IntN(91), r.IntN(360), r.IntN(360), i)
		default:
			fmt.Fprintf(&in, "G%d,%.2f,%d,%d,%d,,,\"row, %d\"\n", r.IntN(12), r.Float64()*200, r.IntN(91), r.IntN(360), r.IntN(360), i)
		}
	}
	hs := genHoles(t, 10)
	var outs []string
	var sums []Summary
	for _, p := range pipelines {
		out, sum, err := convertWith(t, hs, in.String(), p.workers, p.batch)
		if err != nil {
			t.Fatal(err)
		}
		outs = append(outs, out)
		sums = append(sums, sum)
	}
	for i := 1; i < len(outs); i++ {
		if outs[i] != outs[0] || !reflect.DeepEqual(sums[i], sums[0]) {
			t.Fatalf("output with %+v differs from %+v", pipelines[i], pipelines[0])
		}
	}
	for _, want := range []string{`structures:line `, `column ""depth""`, `column ""hole_id""`, `column ""run_confidence""`,
		`row has 3 fields`, `row has 9 fields`, `two` + "\n" + `lines, ""quoted""`, `orientation run rated poor`} {
		if !strings.Contains(outs[0], want) {
			t.Errorf("output lacks %q", want)
		}
	}
	if sums[0].Rows != rows || sums[0].BadRows == 0 || sums[0].WarnRows == 0 {
		t.Fatalf("summary %+v, want %d rows", sums[0], rows)
	}

	// A broken record ends the conversion with the same error and the same
	// rows written before it, however the work is split.
	broken := in.String() + "G1,1,\"2\"x,3,,,,\n" + "G1,1,2,3,,,,after\n"
	var firstOut string
	var firstErr error
	for i, p := range pipelines {
		out, _, err := convertWith(t, hs, broken, p.workers, p.batch)
		if err == nil || !strings.Contains(err.Error(), "broken CSV") {
			t.Fatalf("%+v: err = %v", p, err)
		}
		if i == 0 {
			firstOut, firstErr = out, err
			continue
		}
		if out != firstOut || err.Error() != firstErr.Error() {
			t.Fatalf("%+v: output or error %v differs from %+v's %v", p, err, pipelines[0], firstErr)
		}
	}
	if strings.Contains(firstOut, "after") || !strings.HasSuffix(firstOut, outs[0][strings.LastIndex(outs[0][:len(outs[0])-1], "\n")+1:]) {
		t.Fatal("the rows before the broken record are not all written, or one after it is")
	}

	// Summary.PerHole against the written rows themselves, read back with
	// encoding/csv: rows per hole_id cell (first appearance order), rows
	// with an error, and rows with warnings but no error.
	cr := csv.NewReader(strings.NewReader(outs[0]))
	cr.FieldsPerRecord = -1
	recs, err := cr.ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	head := recs[0]
	col := func(name string) int {
		for i := len(head) - 1; i >= 0; i-- { // output columns come last
			if head[i] == name {
				return i
			}
		}
		t.Fatalf("no column %s", name)
		return -1
	}
	iWarn, iErr := col(ColWarnings), col(ColError)
	var want []HoleRows
	at := map[string]int{}
	for _, rec := range recs[1:] {
		id := rec[0]
		i, ok := at[id]
		if !ok {
			i = len(want)
			at[id] = i
			want = append(want, HoleRows{HoleID: id})
		}
		want[i].Rows++
		if rec[iErr] != "" {
			want[i].BadRows++
		} else if rec[iWarn] != "" {
			want[i].WarnRows++
		}
	}
	if !reflect.DeepEqual(sums[0].PerHole, want) {
		t.Fatalf("per hole %+v\nfrom the output %+v", sums[0].PerHole, want)
	}
	if _, ok := at["NOPE"]; !ok || len(want) < 13 {
		t.Fatalf("holes %v: want G0..G11 and NOPE", want)
	}
}

// Stations surveyed on different dates get the declination of their own date;
// a row reports the one of the station at or above it. In feet, the collar
// elevation goes to the magnetic model in metres (1 ft = 0.3048 m exactly).
func TestDeclinationByDateAndFeet(t *testing.T) {
	collars := "hole_id,easting,northing,elevation,azimuth,dip,depth,crs\nD1,400000,6500000,3000,0,-60,300,EPSG:32750\n"
	surveys := "hole_id,depth,azimuth,dip,azimuth_reference,survey_date\n" +
		"D1,0,40,-60,magnetic,2025-02-01\nD1,100,40,-60,magnetic,2029-12-01\n"
	at := func(date time.Time, elev float64) float64 {
		res, err := northref.Corrections("EPSG:32750", 400000, 6500000, elev, date, true, false)
		if err != nil {
			t.Fatal(err)
		}
		return res.Declination
	}
	d1 := at(time.Date(2025, 2, 1, 0, 0, 0, 0, time.UTC), 3000*0.3048)
	d2 := at(time.Date(2029, 12, 1, 0, 0, 0, 0, time.UTC), 3000*0.3048)
	if math.Abs(d1-d2) < 0.01 {
		t.Fatalf("test needs declinations that differ: %v %v", d1, d2)
	}
	hs := load(t, collars, surveys, Options{Output: True, Unit: desurvey.Feet})
	rows, sum := run(t, hs, "hole_id,depth,alpha,beta\nD1,50,45,90\nD1,150,45,90\n")
	if sum.BadRows != 0 {
		t.Fatal(rows)
	}
	if !near(num(t, rows[0]["declination"]), d1, 0.0005) || !near(num(t, rows[1]["declination"]), d2, 0.0005) {
		t.Errorf("declinations %v %v, want %v %v", rows[0]["declination"], rows[1]["declination"], d1, d2)
	}
	// Below the second station the hole runs along its (true) azimuth 40 + d2.
	if !near(num(t, rows[1]["hole_azimuth"]), 40+d2, 0.006) {
		t.Errorf("azimuth %v, want %v", rows[1]["hole_azimuth"], 40+d2)
	}
}

// The uncertainty columns follow the survey's instrument and the error
// model, are empty in a vertical hole and with NoUncertainty, and a hole
// whose survey rows name two instruments is refused at the row.
func TestUncertaintyColumns(t *testing.T) {
	const structures = "hole_id,depth,alpha,beta,gamma\nH1,50,40,120,30\nV1,50,40,120,\n"
	cone := func(inst string, opt Options) []map[string]string {
		surveys := "hole_id,depth,azimuth,dip,instrument\nH1,0,0,-60," + inst + "\nH1,100,0,-60,\n"
		rows, _ := run(t, load(t, collarsCSV, surveys, opt), structures)
		return rows
	}
	f := func(s string) float64 {
		v, err := strconv.ParseFloat(s, 64)
		if err != nil {
			t.Fatalf("%q: %v", s, err)
		}
		return v
	}
	gyro, unknown := cone("gyro", Options{}), cone("", Options{})
	if !(f(gyro[0][ColPoleCone95]) < f(unknown[0][ColPoleCone95])) || !(f(gyro[0][ColLineCone95]) < f(unknown[0][ColLineCone95])) {
		t.Errorf("gyro %v not narrower than unknown %v", gyro[0], unknown[0])
	}
	if gyro[1][ColPoleCone95] != "" || gyro[1][ColPoleMethod] != "" {
		t.Errorf("vertical hole has a region: %v", gyro[1])
	}
	wide := cone("gyro", Options{ErrorModel: uncertainty.Model{MarkUnrated: 30}})
	if !(f(wide[0][ColPoleLong95]) > f(gyro[0][ColPoleLong95])) {
		t.Errorf("a wider mark error did not widen the region: %v vs %v", wide[0][ColPoleLong95], gyro[0][ColPoleLong95])
	}
	if none := cone("gyro", Options{NoUncertainty: true}); none[0][ColPoleCone95] != "" || none[0][ColDip] != gyro[0][ColDip] {
		t.Errorf("NoUncertainty: %v", none[0])
	}
	_, err := Load(strings.NewReader(collarsCSV), strings.NewReader("hole_id,depth,azimuth,dip,instrument\nH1,0,0,-60,gyro\nH1,100,0,-60,magnetic\n"), Options{SurveysFile: "s.csv"})
	if err == nil || !strings.Contains(err.Error(), "s.csv:line 3") || !strings.Contains(err.Error(), "instrument") {
		t.Errorf("two instruments in one hole: %v", err)
	}
}

// An unoriented measurement (alpha without beta) gives what it can: the hole
// direction and position at the depth, no dip, dip direction, strike or
// pole, and a note in the warnings, not an error. In a vertical hole the dip
// is still 90 - alpha (common practice). A lineation needs beta.
func TestConvertUnoriented(t *testing.T) {
	hs := load(t, collarsCSV, surveysCSV, Options{})
	rows, sum := run(t, hs, "hole_id,depth,alpha,beta,gamma\nH1,50,40,,\nV1,20,70,,\nH1,51,40,,30\nH1,52,95,,\n")
	if sum.Rows != 4 || sum.BadRows != 2 {
		t.Fatalf("summary %+v", sum)
	}
	r := rows[0]
	if r["error"] != "" || r["hole_azimuth"] != "0.00" || r["hole_dip"] != "-60.00" || r["northing"] == "" {
		t.Errorf("unoriented row: hole direction and position missing: %v", r)
	}
	for _, c := range []string{"dip", "dip_direction", "strike", "pole_trend", "pole_plunge", "line_trend", "line_plunge"} {
		if r[c] != "" {
			t.Errorf("unoriented row: %s = %q, want empty", c, r[c])
		}
	}
	if !strings.Contains(r["warnings"], "unoriented (no beta)") {
		t.Errorf("warnings %q", r["warnings"])
	}
	if v := rows[1]; v["dip"] != "20.00" || v["dip_direction"] != "" || v["error"] != "" || !strings.Contains(v["warnings"], "unoriented") {
		t.Errorf("unoriented row in a vertical hole %v", v)
	}
	if e := rows[2]["error"]; !strings.Contains(e, `column "gamma"`) || !strings.Contains(e, "gamma needs beta") {
		t.Errorf("gamma without beta: error %q", e)
	}
	if e := rows[3]["error"]; !strings.Contains(e, `column "alpha"`) {
		t.Errorf("alpha out of range without beta: error %q", e)
	}
}

// With sets by kind each set has its own instrument, and the uncertainty
// follows the instrument of the set in use (domain.UsedSurvey): the same
// stations surveyed by gyro and by magnetic instrument give the gyro's
// narrower region when the gyro set is used, the magnetic's when it is.
func TestUncertaintyFollowsSetInUse(t *testing.T) {
	const structures = "hole_id,depth,alpha,beta,gamma\nH1,50,40,120,30\n"
	surveys := "hole_id,depth,azimuth,dip,kind,instrument\n" +
		"H1,0,0,-60,gyro,gyro\nH1,100,0,-60,gyro,\n" +
		"H1,0,0,-60,magnetic,magnetic\nH1,100,0,-60,magnetic,magnetic\n"
	cone := func(priority string) float64 {
		hs := load(t, collarsCSV, surveys, Options{SurveyPriority: priority})
		if h := hs.Hole("H1"); h.Survey != priority || h.In.Instrument != uncertainty.Instrument(priority) {
			t.Fatalf("priority %s: hole uses %q with instrument %q", priority, h.Survey, h.In.Instrument)
		}
		rows, _ := run(t, hs, structures)
		v, err := strconv.ParseFloat(rows[0][ColPoleCone95], 64)
		if err != nil {
			t.Fatalf("%q: %v", rows[0][ColPoleCone95], err)
		}
		return v
	}
	if g, m := cone("gyro"), cone("magnetic"); !(g < m) {
		t.Errorf("gyro set in use: cone %v, not narrower than with the magnetic set in use %v", g, m)
	}
}

// A magnetic survey dated 2023 is corrected under the default model choice
// by IGRF-14 and says so; with the WMM chosen, the hole's error names the
// WMM's years and the other model, and gives the survey date once, as typed.
func TestOlderSurveyModelChoice(t *testing.T) {
	collars := "hole_id,easting,northing,elevation,azimuth,dip,depth,crs\nC1,400000,6500000,350,0,-60,200,EPSG:32750\n"
	surveys := "hole_id,depth,azimuth,dip,azimuth_reference,survey_date\nC1,0,40,-60,magnetic,2023-08-01\n"
	res, err := northref.CorrectionsModel(northref.ModelIGRF, "EPSG:32750", 400000, 6500000, 350, time.Date(2023, 8, 1, 0, 0, 0, 0, time.UTC), true, false)
	if err != nil {
		t.Fatal(err)
	}
	rows, _ := run(t, load(t, collars, surveys, Options{Output: True}), "hole_id,depth,alpha,beta\nC1,50,45,90\n")
	if r := rows[0]; r["declination_source"] != "computed (IGRF-14 at 2023.5808)" || !near(num(t, r["declination"]), res.Declination, 0.0005) {
		t.Errorf("auto: %v, want IGRF-14 declination %v", r, res.Declination)
	}
	rows, _ = run(t, load(t, collars, surveys, Options{Output: True, MagneticModel: northref.ModelWMM}), "hole_id,depth,alpha,beta\nC1,50,45,90\n")
	e := rows[0]["error"]
	if !strings.Contains(e, `survey_date "2023-08-01": is outside the years of magnetic model WMM-2025 (2025.0 to 2030.0); IGRF-14 covers 1900.0 to 2030.0`) || strings.Count(e, "2023") != 1 {
		t.Errorf("wmm: error %q", e)
	}
}

// The structures file's run columns set the mark's error of the
// uncertainty columns as the error model says (a good mark narrower than an
// unrated one, a poor one wider, a logged mismatch m widening a good mark
// to m/sqrt(2)), add the run's warning for a poor or unusable run, and a
// bad value is an error on the row naming the column; with --monte-carlo
// every row runs the draws and a row far from the core axis keeps its
// first-order region (they agree), while a pole near the axis is Monte
// Carlo either way.
func TestRunColumns(t *testing.T) {
	const structures = "hole_id,depth,alpha,beta,run_confidence,run_mismatch\n" +
		"H1,50,40,120,,\nH1,50,40,120,good,\nH1,50,40,120,Poor,\nH1,50,40,120,good,40\nH1,50,40,120,none,\n" +
		"H1,50,40,120,great,\nH1,50,40,120,good,200\nH1,50,88,120,good,\n"
	hs := load(t, collarsCSV, surveysCSV, Options{})
	rows, sum := run(t, hs, structures)
	if sum.BadRows != 2 {
		t.Fatalf("summary %+v", sum)
	}
	long := func(i int) float64 {
		v, err := strconv.ParseFloat(rows[i][ColPoleLong95], 64)
		if err != nil {
			t.Fatalf("row %d: %q", i+1, rows[i][ColPoleLong95])
		}
		return v
	}
	unrated, good, poor, mismatch, none := long(0), long(1), long(2), long(3), long(4)
	if !(good < unrated && unrated < poor) || none != unrated {
		t.Errorf("long semi-axes: good %v, unrated %v, poor %v, none %v", good, unrated, poor, none)
	}
	// A mismatch of 40 deg: a mark error of 40/sqrt(2) = 28.3 deg, against
	// 3 for a good mark (the error model's rule, uncertainty.Model.Mark).
	if !(mismatch > poor) {
		t.Errorf("a good run with a 40 deg mismatch: %v, poor %v", mismatch, poor)
	}
	if w := rows[2][ColWarnings]; !strings.Contains(w, "orientation run rated poor") {
		t.Errorf("poor run: warnings %q", w)
	}
	if w := rows[4][ColWarnings]; !strings.Contains(w, "orientation run rated unusable") {
		t.Errorf("unusable run: warnings %q", w)
	}
	if e := rows[5][ColError]; !strings.Contains(e, `column "run_confidence"`) {
		t.Errorf("bad rating: %q", e)
	}
	if e := rows[6][ColError]; !strings.Contains(e, `column "run_mismatch"`) {
		t.Errorf("bad mismatch: %q", e)
	}
	if rows[7][ColPoleMethod] != "monte-carlo" || rows[1][ColPoleMethod] != "first-order" {
		t.Errorf("methods: near the axis %q, far %q", rows[7][ColPoleMethod], rows[1][ColPoleMethod])
	}
	// Both sizes only where both ran: by default a pole far from the axis
	// has its first-order region alone, with --monte-carlo both.
	rd := uncertainty.Reading{Hole: geom.HoleDirection(0, -60), Alpha: 40, Beta: 120, Gamma: math.NaN(), Sigma: uncertainty.DefaultModel().Sigmas("", "good", math.NaN(), 0)}
	byDefault, _ := NewMeasurer(false).Measure(rd)
	always, _ := NewMeasurer(true).Measure(rd)
	if byDefault.Pole.MonteCarlo != nil || always.Pole.MonteCarlo == nil || always.Pole.Draws != uncertainty.PerMeasurement.Draws {
		t.Errorf("Monte Carlo by default %v, with --monte-carlo %v", byDefault.Pole.MonteCarlo, always.Pole.MonteCarlo)
	}
	all, _ := run(t, load(t, collarsCSV, surveysCSV, Options{MonteCarlo: true}), structures)
	for _, i := range []int{1, 7} {
		for _, c := range []string{ColPoleCone95, ColPoleLong95, ColPoleShort95, ColPoleMethod} {
			if all[i][c] != rows[i][c] {
				t.Errorf("--monte-carlo row %d: %s %q, default %q", i+1, c, all[i][c], rows[i][c])
			}
		}
	}
}
