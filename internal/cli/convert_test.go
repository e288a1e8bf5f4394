package cli

import (
	"bytes"
	"context"
	"encoding/csv"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func convertFiles(t *testing.T, files map[string]string) string {
	t.Helper()
	dir := t.TempDir()
	for n, s := range files {
		if err := os.WriteFile(filepath.Join(dir, n), []byte(s), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	return dir
}

// writeFile writes text to the file name in dir and returns its path.
func writeFile(t *testing.T, dir, name, text string) string {
	t.Helper()
	p := filepath.Join(dir, name)
	if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

func runCLI(args ...string) (code int, stdout, stderr string) {
	var o, e bytes.Buffer
	code = Main(context.Background(), args, strings.NewReader(""), &o, &e, func(string) string { return "" })
	return code, o.String(), e.String()
}

// The demo programme converts with the one command the README gives.
func TestConvertDemo(t *testing.T) {
	out := filepath.Join(t.TempDir(), "zelvorra-oriented.csv")
	d := "../../testdata/zelvorra/"
	code, _, stderr := runCLI("convert", "--collars", d+"collars.csv", "--surveys", d+"surveys.csv", "--structures", d+"structures.csv", "-o", out)
	if code != ExitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	f, err := os.Open(out)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	in, _ := os.ReadFile(d + "structures.csv")
	if len(recs) != strings.Count(string(in), "\n") || recs[0][len(recs[0])-1] != "error" {
		t.Fatalf("%d output rows for %d input lines; header %v", len(recs), strings.Count(string(in), "\n"), recs[0])
	}
	if !strings.Contains(stderr, "azimuths referenced to grid north") {
		t.Errorf("stderr %q", stderr)
	}
	left, _ := filepath.Glob(filepath.Join(filepath.Dir(out), ".corvane-convert-*"))
	if len(left) != 0 {
		t.Errorf("temporary files left: %v", left)
	}
}

func TestConvertExitCodes(t *testing.T) {
	collars := "hole_id,easting,northing,elevation,azimuth,dip,depth\nA,0,0,100,90,-60,100\n"
	surveys := "hole_id,depth,azimuth,dip\nA,0,90,-60\n"
	dir := convertFiles(t, map[string]string{
		"c.csv": collars, "s.csv": surveys,
		"ok.csv":       "hole_id,depth,alpha,beta\nA,10,30,180\n",
		"rows.csv":     "hole_id,depth,alpha,beta\nA,10,30,180\nA,10,91,180\nB,1,1,1\n",
		"broken.csv":   "hole_id,depth,alpha,beta\nA,10,30,180\nA,\"10,30,180\n",
		"sgrid.csv":    "hole_id,depth,azimuth,dip,azimuth_reference\nA,0,90,-60,grid\n",
		"unsorted.csv": "hole_id,depth,azimuth,dip\nA,10,90,-60\nA,5,90,-60\n",
	})
	p := func(n string) string { return filepath.Join(dir, n) }
	base := []string{"convert", "--collars", p("c.csv"), "--surveys", p("s.csv")}

	// To standard output; plane 090/30 for alpha 30 beta 180 in a hole 090/-60
	// (conventions.md check case, turned to azimuth 090).
	code, stdout, stderr := runCLI(append(base, "--structures", p("ok.csv"))...)
	if code != ExitOK || !strings.Contains(stdout, ",30.00,90.00,0.00,") {
		t.Fatalf("exit %d\n%s\n%s", code, stdout, stderr)
	}

	out := p("rows-out.csv")
	code, _, stderr = runCLI(append(base, "--structures", p("rows.csv"), "-o", out)...)
	b, _ := os.ReadFile(out)
	if code != ExitRows || !strings.Contains(string(b), `column ""alpha"": alpha 91 is outside 0..90`) || !strings.Contains(string(b), `unknown hole ""B""`) {
		t.Fatalf("exit %d\n%s\n%s", code, b, stderr)
	}

	out = p("broken-out.csv")
	code, _, stderr = runCLI(append(base, "--structures", p("broken.csv"), "-o", out)...)
	if _, err := os.Stat(out); code != ExitUsage || err == nil || !strings.Contains(stderr, "broken.csv:line 3") {
		t.Fatalf("broken CSV: exit %d, output exists: %v, %s", code, err == nil, stderr)
	}

	out = p("unsorted-out.csv")
	code, _, stderr = runCLI("convert", "--collars", p("c.csv"), "--surveys", p("unsorted.csv"), "--structures", p("ok.csv"), "-o", out)
	if _, err := os.Stat(out); code != ExitUsage || err == nil || !strings.Contains(stderr, `unsorted.csv:line 3, column "depth"`) {
		t.Fatalf("unsorted surveys: exit %d, output exists: %v, %s", code, err == nil, stderr)
	}

	for _, args := range [][]string{
		{"convert"},
		append(base, "--structures", p("ok.csv"), "--reference-line", "left"),
		append(base, "--structures", p("ok.csv"), "--output-reference", "magnetic"),
		append(base, "--structures", p("ok.csv"), "--declination", "abc"),
		append(base, "--structures", p("missing.csv")),
	} {
		if code, _, _ := runCLI(args...); code != ExitUsage {
			t.Errorf("%v: exit %d, want %d", args, code, ExitUsage)
		}
	}

	// Options reach the conversion: top line + up-hole apex equals the default
	// (references/README.md); anticlockwise gamma, true output and the methods run.
	code, stdout2, _ := runCLI(append(base, "--structures", p("ok.csv"), "--reference-line", "top", "--beta-apex", "uphole")...)
	if code != ExitOK || stdout2 != stdout {
		t.Fatalf("top/uphole differs from bottom/downhole:\n%s\n%s", stdout2, stdout)
	}
	// Grid survey azimuth 90 to true output: true = grid + C (conventions.md).
	code, stdout2, _ = runCLI("convert", "--collars", p("c.csv"), "--surveys", p("sgrid.csv"), "--structures", p("ok.csv"),
		"--output-reference", "true", "--grid-convergence", "1.5", "--method", "tangential", "--gamma-sense", "anticlockwise")
	if code != ExitOK || !strings.Contains(stdout2, "A,10,30,180,91.50,") || !strings.Contains(stdout2, ",true,,none,1.500,project,") {
		t.Fatalf("true output:\n%s", stdout2)
	}
}
