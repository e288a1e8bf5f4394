package cli

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"

	"corvane/internal/coreangle"
	"corvane/internal/desurvey"
	"corvane/internal/geom"
	"corvane/internal/northref"
	"corvane/internal/qa"
)

// writeQAFiles writes a small fictional programme: hole KW1 (azimuth 070,
// dip -60, 60 m, straight), runs of 3 m, six bedding planes 040/50 per run
// turned into alpha/beta by the engine's inverse; run 8 (24-27 m) logged with
// its mark 40 deg off; one row with text in alpha.
func writeQAFiles(t *testing.T, dir string) {
	t.Helper()
	w := func(name, s string) {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(s), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	w("collars.csv", "hole_id,easting,northing,elevation,azimuth,dip,depth\nKW1,500,800,120,70,-60,60\n")
	w("surveys.csv", "hole_id,depth,azimuth,dip,azimuth_reference\nKW1,30,70,-60,grid\nKW1,60,70,-60,grid\n")
	path, err := desurvey.New(desurvey.Collar{Azimuth: 70, Dip: -60, Depth: 60}, []desurvey.Station{{Depth: 30, Azimuth: 70, Dip: -60}, {Depth: 60, Azimuth: 70, Dip: -60}}, desurvey.MinimumCurvature)
	if err != nil {
		t.Fatal(err)
	}
	var runs, st, picks strings.Builder
	picks.WriteString("hole_id,depth,dip,dip_direction\n")
	runs.WriteString("hole_id,from,to,confidence,mismatch\n")
	st.WriteString("hole_id,depth,alpha,beta,type,logged_by\n")
	plane := geom.Plane{Dip: 50, DipDirection: 40}
	for k := 0; k < 20; k++ {
		fmt.Fprintf(&runs, "KW1,%d,%d,good,2\n", 3*k, 3*k+3)
		for j := 0; j < 6; j++ {
			d := float64(3*k) + 0.25 + 0.45*float64(j)
			p, _ := path.At(d)
			// small deterministic scatter of the plane, a few degrees
			pl := geom.Plane{Dip: plane.Dip + float64((j*7+k)%5) - 2, DipDirection: plane.DipDirection + float64((j*3+k*5)%7) - 3}
			a, b, _ := coreangle.Angles(p.Dir, pl, coreangle.Convention{})
			if k == 8 {
				b = geom.NormAzimuth(b + 40)
			}
			fmt.Fprintf(&st, "KW1,%.2f,%.1f,%.1f,bedding,ann\n", d, a, b)
			if k >= 4 && k < 12 && j%2 == 0 { // picks on a depth scale 0.5 shorter
				fmt.Fprintf(&picks, "KW1,%.2f,%.1f,%.1f\n", d-0.5, pl.Dip, pl.DipDirection)
			}
		}
	}
	st.WriteString("KW1,59.5,abc,10,joint,ann\n")
	w("runs.csv", runs.String())
	w("picks.csv", picks.String())
	w("structures.csv", st.String())
}

func TestQACommand(t *testing.T) {
	dir := t.TempDir()
	writeQAFiles(t, dir)
	args := func(extra ...string) []string {
		return append([]string{"qa", "--collars", filepath.Join(dir, "collars.csv"), "--surveys", filepath.Join(dir, "surveys.csv"),
			"--structures", filepath.Join(dir, "structures.csv"), "--runs", filepath.Join(dir, "runs.csv"), "--persistent", "bedding",
			"--picks", filepath.Join(dir, "picks.csv"), "--magnetic-zone", "KW1:25-35"}, extra...)
	}
	var out, errb bytes.Buffer
	code := Main(context.Background(), args(), nil, &out, &errb, func(string) string { return "" })
	if code != ExitRows {
		t.Fatalf("exit %d, want %d (one bad row); stderr: %s", code, ExitRows, errb.String())
	}
	var rep qa.Report
	if err := json.Unmarshal(out.Bytes(), &rep); err != nil {
		t.Fatal(err)
	}
	var rot, bad []qa.Finding
	for _, f := range rep.Findings {
		switch f.Check {
		case qa.CheckMarkRotation:
			rot = append(rot, f)
		case qa.CheckMeasurementInvalid:
			bad = append(bad, f)
		}
	}
	if len(rot) != 1 || rot[0].Depth != 24 || rot[0].Size < 36 || rot[0].Size > 44 {
		t.Errorf("mark rotation findings %+v, want one at 24 of about 40 deg", rot)
	}
	if p := rep.Holes[0].Picks; p == nil || p.Matched != 24 || p.Shift < 0.49 || p.Shift > 0.51 {
		t.Errorf("picks %+v, want 24 matched with a shift of 0.5", p)
	}
	if len(bad) != 1 || bad[0].Line != 122 || !strings.Contains(bad[0].Message, "alpha") {
		t.Errorf("bad-row findings %+v, want line 122 naming alpha", bad)
	}

	// HTML to a file.
	html := filepath.Join(dir, "qa.html")
	out.Reset()
	errb.Reset()
	if code := Main(context.Background(), args("--format", "html", "-o", html, "--title", "Kestrel Wells"), nil, &out, &errb, func(string) string { return "" }); code != ExitRows {
		t.Fatalf("html: exit %d: %s", code, errb.String())
	}
	page, err := os.ReadFile(html)
	if err != nil || !bytes.Contains(page, []byte("Kestrel Wells")) || !bytes.Contains(page, []byte("do not replace it")) {
		t.Errorf("html page: %v, %d bytes", err, len(page))
	}
}

func TestQACommandUsage(t *testing.T) {
	for _, a := range [][]string{
		{"qa"},
		{"qa", "--collars", "x", "--surveys", "y", "--structures", "z", "--runs", "r", "--format", "pdf"},
		{"qa", "--magnetic-zone", "KW1:30"},
		{"qa", "--collars", "/nonexistent/c.csv", "--surveys", "y", "--structures", "z", "--runs", "r"},
	} {
		var out, errb bytes.Buffer
		if code := Main(context.Background(), a, nil, &out, &errb, func(string) string { return "" }); code != ExitUsage || errb.Len() == 0 {
			t.Errorf("%v: exit %d, stderr %q", a, code, errb.String())
		}
	}
	var z zoneFlags
	if err := z.Set("TM-001:12.5-30"); err != nil || z[0] != (qa.MagneticZone{HoleID: "TM-001", From: 12.5, To: 30}) {
		t.Errorf("zone %v %v", z, err)
	}
}

// With --feet the collar elevation is in feet; the declination computed for
// magnetic surveys must be the magnetic model's at that elevation in metres
// (northref.Corrections takes metres), as convert computes it.
func TestQAInputFeetElevation(t *testing.T) {
	dir := t.TempDir()
	writeQAFiles(t, dir)
	p := func(n string) string { return filepath.Join(dir, n) }
	const east, north, elevFt = 400000.0, 7400000.0, 9000.0
	if err := os.WriteFile(p("collars.csv"), []byte(fmt.Sprintf("hole_id,easting,northing,elevation,azimuth,dip,depth,crs\nKW1,%g,%g,%g,70,-60,60,EPSG:32750\n", east, north, elevFt)), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(p("surveys.csv"), []byte("hole_id,depth,azimuth,dip,azimuth_reference,survey_date\nKW1,30,70,-60,magnetic,2026-03-01\nKW1,60,70,-60,magnetic,2026-03-01\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	date := time.Date(2026, 3, 1, 0, 0, 0, 0, time.UTC)
	atM, err := northref.Corrections("EPSG:32750", east, north, elevFt*0.3048, date, true, false)
	if err != nil {
		t.Fatal(err)
	}
	atFt, err := northref.Corrections("EPSG:32750", east, north, elevFt, date, true, false)
	if err != nil {
		t.Fatal(err)
	}
	if atM.Declination == atFt.Declination {
		t.Fatalf("declination %v does not depend on elevation here: the check below could not fail", atM.Declination)
	}
	in, _, err := readQAInput(p("collars.csv"), p("surveys.csv"), p("structures.csv"), p("runs.csv"), p("picks.csv"), qaHoles{"true", math.NaN(), math.NaN(), true, northref.ModelAuto, "", nil}, io.Discard)
	if err != nil {
		t.Fatal(err)
	}
	if got, want := in.Surveys[0].Azimuth, 70+atM.Declination; got != want {
		t.Fatalf("station azimuth %v, want 70 + declination at %g m = %v (at %g as metres: %v)", got, elevFt*0.3048, want, elevFt, 70+atFt.Declination)
	}
}

// The data rules hold in qa as in convert (README, Data rules): a station
// past the final depth and a magnetic survey with no declination from any
// source are each a problem of that hole, reported once and located; the
// other holes are checked; no correction is taken as 0.
func TestQAHoleProblems(t *testing.T) {
	dir := t.TempDir()
	writeQAFiles(t, dir)
	p := func(n string) string { return filepath.Join(dir, n) }
	if err := os.WriteFile(p("collars.csv"), []byte("hole_id,easting,northing,elevation,azimuth,dip,depth\n"+
		"KW1,500,800,120,70,-60,60\nKW2,600,800,120,70,-60,60\nKW3,700,800,120,70,-60,60\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(p("surveys.csv"), []byte("hole_id,depth,azimuth,dip,azimuth_reference\n"+
		"KW1,30,70,-60,grid\nKW1,60,70,-60,grid\nKW2,30,70,-60,grid\nKW2,90,70,-60,grid\nKW3,30,70,-60,magnetic\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	in, _, err := readQAInput(p("collars.csv"), p("surveys.csv"), p("structures.csv"), p("runs.csv"), "", qaHoles{"grid", math.NaN(), 0, false, northref.ModelAuto, "", nil}, io.Discard) // --grid-convergence 0
	if err != nil {
		t.Fatalf("one hole's station refused the whole input: %v", err)
	}
	rep := qa.Run(in, qa.DefaultOptions())
	var kw2, kw3 bool
	for _, f := range rep.Findings {
		switch {
		case f.HoleID == "KW2" && f.Check == qa.CheckSurveyInvalid && f.Source == "surveys" && f.Line == 5 && strings.Contains(f.Message, "90"):
			kw2 = true
		case f.HoleID == "KW3" && f.Check == qa.CheckSurveyInvalid && f.Source == "surveys" && f.Line == 6 && strings.Contains(f.Message, "declination"):
			kw3 = true
		case f.HoleID == "KW1" && f.Check == qa.CheckSurveyInvalid:
			t.Errorf("KW1 has no problem: %+v", f)
		}
	}
	if !kw2 || !kw3 {
		t.Errorf("station past the final depth reported %v, missing declination reported %v: %+v", kw2, kw3, rep.Findings)
	}
	if len(in.Surveys) != 2 {
		t.Errorf("%d stations passed to the checks, want KW1's 2 only", len(in.Surveys))
	}
}

// --error-model: the mark-rotation decision follows the model given; a bad
// model is refused with the field named.
func TestQACommandErrorModel(t *testing.T) {
	dir := t.TempDir()
	writeQAFiles(t, dir)
	run := func(model string) (int, qa.Report, string) {
		p := filepath.Join(dir, "model.json")
		if err := os.WriteFile(p, []byte(model), 0o644); err != nil {
			t.Fatal(err)
		}
		var out, errb bytes.Buffer
		code := Main(context.Background(), []string{"qa", "--collars", filepath.Join(dir, "collars.csv"), "--surveys", filepath.Join(dir, "surveys.csv"),
			"--structures", filepath.Join(dir, "structures.csv"), "--runs", filepath.Join(dir, "runs.csv"), "--persistent", "bedding",
			"--error-model", p}, nil, &out, &errb, func(string) string { return "" })
		var rep qa.Report
		if code != ExitUsage {
			if err := json.Unmarshal(out.Bytes(), &rep); err != nil {
				t.Fatal(err)
			}
		}
		return code, rep, errb.String()
	}
	if code, rep, _ := run(`{"beta": 3}`); code == ExitUsage || rep.Summary.RunsFlagged != 1 || rep.Options.Errors.Beta != 3 {
		t.Errorf("default-like model: exit %d, %d runs flagged", code, rep.Summary.RunsFlagged)
	}
	// A beta reading error of 40 deg leaves no 40 deg rotation beyond doubt.
	if code, rep, _ := run(`{"beta": 40}`); code == ExitUsage || rep.Summary.RunsFlagged != 0 {
		t.Errorf("wide beta error: exit %d, %d runs flagged", code, rep.Summary.RunsFlagged)
	}
	if code, _, msg := run(`{"mark_poor": -2}`); code != ExitUsage || !strings.Contains(msg, "mark poor") {
		t.Errorf("negative error: exit %d, %q", code, msg)
	}
	if code, _, msg := run(`{"betta": 2}`); code != ExitUsage || !strings.Contains(msg, "betta") {
		t.Errorf("unknown field: exit %d, %q", code, msg)
	}
}

// corvane qa --model chooses the magnetic model as convert --model does: a
// magnetic survey dated 2023 is corrected with IGRF-14 under the default
// (auto) and the report's hole names model and decimal year; under wmm the
// hole is a located problem naming the WMM's years and the other model.
func TestQAModel(t *testing.T) {
	dir := t.TempDir()
	writeQAFiles(t, dir)
	p := func(n string) string { return filepath.Join(dir, n) }
	if err := os.WriteFile(p("collars.csv"), []byte("hole_id,easting,northing,elevation,azimuth,dip,depth,crs\nKW1,400000,6500000,350,70,-60,60,EPSG:32750\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(p("surveys.csv"), []byte("hole_id,depth,azimuth,dip,azimuth_reference,survey_date\nKW1,30,70,-60,magnetic,2023-08-01\nKW1,60,70,-60,magnetic,2023-08-01\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	want, err := northref.CorrectionsModel(northref.ModelIGRF, "EPSG:32750", 400000, 6500000, 350, time.Date(2023, 8, 1, 0, 0, 0, 0, time.UTC), true, true)
	if err != nil {
		t.Fatal(err)
	}
	run := func(model string) qa.Report {
		t.Helper()
		args := []string{"qa", "--collars", p("collars.csv"), "--surveys", p("surveys.csv"), "--structures", p("structures.csv"), "--runs", p("runs.csv")}
		if model != "" {
			args = append(args, "--model", model)
		}
		code, out, errs := runWithEnv(t, nil, args...)
		if code == ExitUsage {
			t.Fatalf("qa --model %q: %d %s", model, code, errs)
		}
		var rep qa.Report
		if err := json.Unmarshal([]byte(out), &rep); err != nil {
			t.Fatal(err)
		}
		return rep
	}
	for _, m := range []string{"", "auto", "igrf"} {
		rep := run(m)
		if len(rep.Holes) != 1 || rep.Holes[0].DeclinationSource != "computed (IGRF-14 at 2023.5808)" {
			t.Errorf("--model %q: holes %+v", m, rep.Holes)
		}
	}
	in, _, err := readQAInput(p("collars.csv"), p("surveys.csv"), p("structures.csv"), p("runs.csv"), "", qaHoles{"grid", math.NaN(), math.NaN(), false, northref.ModelAuto, "", nil}, io.Discard)
	if err != nil {
		t.Fatal(err)
	}
	if got, wantAz := in.Surveys[0].Azimuth, geom.NormAzimuth(70+want.Declination-want.Convergence); math.Abs(got-wantAz) > 1e-9 {
		t.Errorf("station azimuth %v, want 70 + IGRF-14 declination - convergence = %v", got, wantAz)
	}
	rep := run("wmm")
	found := false
	for _, f := range rep.Findings {
		if f.HoleID == "KW1" && f.Check == qa.CheckSurveyInvalid && f.Source == "surveys" &&
			strings.Contains(f.Message, "WMM-2025 (2025.0 to 2030.0); IGRF-14 covers 1900.0 to 2030.0") {
			found = true
		}
	}
	if !found {
		t.Errorf("--model wmm on a 2023 survey: findings %+v", rep.Findings)
	}
	if code, _, errs := runWithEnv(t, nil, "qa", "--collars", p("collars.csv"), "--surveys", p("surveys.csv"), "--structures", p("structures.csv"), "--runs", p("runs.csv"), "--model", "emm"); code != ExitUsage || !strings.Contains(errs, "auto, wmm, igrf") {
		t.Errorf("--model emm: %d %q", code, errs)
	}
}

// TestQADemoWording: the demo's QA report (the README's command) counts in
// plain English: no "1 measurements", "1 runs" or the like in any finding
// (the demo flags runs with a single bedding measurement).
func TestQADemoWording(t *testing.T) {
	d := "../../testdata/zelvorra/"
	out := filepath.Join(t.TempDir(), "qa.json")
	code, _, errs := runCLI("qa", "--collars", d+"collars.csv", "--surveys", d+"surveys.csv", "--structures", d+"structures.csv",
		"--runs", d+"runs.csv", "--persistent", "bedding", "-o", out)
	if code != ExitOK {
		t.Fatalf("qa: exit %d %s", code, errs)
	}
	b, err := os.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	var rep qa.Report
	if err := json.Unmarshal(b, &rep); err != nil {
		t.Fatal(err)
	}
	onePlural := regexp.MustCompile(`\b1 (measurements|runs|poles|holes|rows|planes|lines|stations|findings)\b`)
	single := 0
	for _, f := range rep.Findings {
		if m := onePlural.FindString(f.Message); m != "" {
			t.Errorf("%s finding says %q: %s", f.Check, m, f.Message)
		}
		if strings.Contains(f.Message, "1 measurement's pole") {
			single++
		}
	}
	if single == 0 {
		t.Error("no flag on a run with one measurement: the wording is not exercised")
	}
}
