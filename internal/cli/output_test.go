//go:build unix

package cli

import (
	"io"
	"os"
	"path/filepath"
	"syscall"
	"testing"
)

// TestOutputFileModes: every command that writes a file creates it as any
// new file is created, mode 0666 less the umask (0644 under the usual 022,
// 0640 under 027), and leaves no temporary file behind.
func TestOutputFileModes(t *testing.T) {
	d := "../../testdata/zelvorra/"
	dir := t.TempDir()
	oriented := filepath.Join(dir, "oriented.csv")
	points := filepath.Join(dir, "points.csv")
	if err := os.WriteFile(points, []byte("lat,lon,height_km,date\n-31.95,115.86,0.03,2026-05-20\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if code, _, stderr := runCmd(t, "convert", "--collars", d+"collars.csv", "--surveys", d+"surveys.csv", "--structures", d+"structures.csv", "-o", oriented); code != ExitOK {
		t.Fatalf("convert: exit %d: %s", code, stderr)
	}
	for _, umask := range []int{0o022, 0o027} {
		old := syscall.Umask(umask)
		want := os.FileMode(0o666 &^ umask)
		out := t.TempDir()
		file := func(name string) string { return filepath.Join(out, name) }
		for _, args := range [][]string{
			{"convert", "--collars", d + "collars.csv", "--surveys", d + "surveys.csv", "--structures", d + "structures.csv",
				"-o", file("convert.csv"), "--hole-summary", file("holes.csv")},
			{"qa", "--collars", d + "collars.csv", "--surveys", d + "surveys.csv", "--structures", d + "structures.csv",
				"--runs", d + "runs.csv", "-o", file("qa.json")},
			{"declination", "--in", points, "-o", file("declination.csv")},
			{"stats", "--in", oriented, "-o", file("stats.json")},
			{"net", "--in", oriented, "-o", file("net.svg")},
			{"rose", "--in", oriented, "-o", file("rose.svg")},
		} {
			if code, _, stderr := runCmd(t, args...); code != ExitOK && code != ExitRows {
				t.Errorf("%s: exit %d: %s", args[0], code, stderr)
			}
		}
		syscall.Umask(old)
		entries, err := os.ReadDir(out)
		if err != nil {
			t.Fatal(err)
		}
		if len(entries) != 7 {
			t.Errorf("umask %03o: %d files written, want 7: %v", umask, len(entries), entries)
		}
		for _, e := range entries {
			info, err := e.Info()
			if err != nil {
				t.Fatal(err)
			}
			if info.Mode().Perm() != want {
				t.Errorf("umask %03o: %s has mode %04o, want %04o", umask, e.Name(), info.Mode().Perm(), want)
			}
		}
	}
}

// An output path that is a named pipe (or a device such as /dev/null) is
// written in place: renaming a temporary file over it would replace the
// pipe or device with a plain file. The pipe stands in for /dev/null so a
// failure cannot break the machine's /dev/null.
func TestOutputToSpecialFile(t *testing.T) {
	fifo := filepath.Join(t.TempDir(), "out.pipe")
	if err := syscall.Mkfifo(fifo, 0o600); err != nil {
		t.Skipf("no named pipes here: %v", err)
	}
	got := make(chan []byte, 1)
	go func() {
		b, _ := os.ReadFile(fifo) // blocks until the writer opens and closes it
		got <- b
	}()
	if err := writeOutput(fifo, func(w io.Writer) error {
		_, err := io.WriteString(w, "hole_id,depth\n")
		return err
	}); err != nil {
		t.Fatal(err)
	}
	if b := <-got; string(b) != "hole_id,depth\n" {
		t.Errorf("the pipe's reader got %q", b)
	}
	fi, err := os.Lstat(fifo)
	if err != nil || fi.Mode()&os.ModeNamedPipe == 0 {
		t.Errorf("after writing, %s is %v (%v), want the named pipe still", fifo, fi.Mode(), err)
	}
	if ents, _ := os.ReadDir(filepath.Dir(fifo)); len(ents) != 1 {
		t.Errorf("files left beside the pipe: %v", ents)
	}
	if err := writeOutput(t.TempDir(), func(io.Writer) error { return nil }); err == nil {
		t.Error("a directory as output: no error")
	}
}
