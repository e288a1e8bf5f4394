package cli

import (
	"path/filepath"
	"strings"
	"testing"
)

// TestConvertReportsEveryFile: convert and qa read both hole files before
// failing, so the problems of each are reported at once; identical row
// problems come as one line with their count and lines.
func TestConvertReportsEveryFile(t *testing.T) {
	dir := convertFiles(t, map[string]string{
		"collars.csv":    "hole_id,easting,northing,elevation,azimuth,dip\nH1,0,0,0,0,-60\n",
		"surveys.csv":    "hole_id,depth,azimuth,dip\nH1,0,0,-60\nH1,x,0,-60\nH1,x,0,-60\nH1,x,0,-60\nH1,10,x,-60\n",
		"structures.csv": "hole_id,depth,alpha,beta\nH1,5,40,100\n",
		"runs.csv":       "hole_id,from,to,confidence\nH1,0,10,good\n",
	})
	p := func(n string) string { return filepath.Join(dir, n) }
	for _, args := range [][]string{
		{"convert", "--collars", p("collars.csv"), "--surveys", p("surveys.csv"), "--structures", p("structures.csv")},
		{"qa", "--collars", p("collars.csv"), "--surveys", p("surveys.csv"), "--structures", p("structures.csv"), "--runs", p("runs.csv")},
	} {
		code, _, stderr := runCLI(args...)
		if code != ExitUsage {
			t.Errorf("%s: exit %d, want %d", args[0], code, ExitUsage)
		}
		if !strings.Contains(stderr, `missing column "depth"`) || !strings.Contains(stderr, "surveys.csv") {
			t.Errorf("%s: both files' problems not reported:\n%s", args[0], stderr)
		}
		if !strings.Contains(stderr, `surveys.csv: 4 bad survey rows:`) || !strings.Contains(stderr, `3 rows: depth "x" is not a number (lines 3-5)`) {
			t.Errorf("%s: identical survey problems not summarised:\n%s", args[0], stderr)
		}
	}
}

// TestConvertQuietWhenPiped: with standard error not a terminal (here a
// buffer) convert and qa print no progress line.
func TestConvertQuietWhenPiped(t *testing.T) {
	d := filepath.Join("..", "..", "testdata", "zelvorra")
	p := func(n string) string { return filepath.Join(d, n) }
	out := filepath.Join(t.TempDir(), "o.csv")
	for _, args := range [][]string{
		{"convert", "--collars", p("collars.csv"), "--surveys", p("surveys.csv"), "--structures", p("structures.csv"), "-o", out},
		{"qa", "--collars", p("collars.csv"), "--surveys", p("surveys.csv"), "--structures", p("structures.csv"), "--runs", p("runs.csv"), "-o", out},
	} {
		code, _, stderr := runCLI(args...)
		if code != ExitOK || strings.Contains(stderr, "\r") || strings.Contains(stderr, "rows/s") {
			t.Errorf("%s: exit %d, stderr %q", args[0], code, stderr)
		}
	}
}
