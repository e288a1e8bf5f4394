package progress

import (
	"bytes"
	"io"
	"strings"
	"testing"
	"time"
)

func TestFormat(t *testing.T) {
	for _, c := range []struct {
		rows, done, total int64
		elapsed           time.Duration
		want              string
	}{
		{125000, 3_800_000, 10_000_000, 3 * time.Second, "convert: 125,000 rows, 41,667 rows/s, 38%, about 5 s left"},
		{12, 100, 0, 2 * time.Second, "convert: 12 rows, 6 rows/s"},
		{1_000_000, 10, 100, 20 * time.Second, "convert: 1,000,000 rows, 50,000 rows/s, 10%, about 3 min 0 s left"},
		{5, 100, 100, time.Second, "convert: 5 rows, 5 rows/s, 100%"},
	} {
		if got := Format("convert", c.rows, c.done, c.total, c.elapsed); got != c.want {
			t.Errorf("Format(%d, %d/%d, %v)\n got %q\nwant %q", c.rows, c.done, c.total, c.elapsed, got, c.want)
		}
	}
	if roundLeft(2*time.Hour+5*time.Minute) != "2 h 5 min" {
		t.Error(roundLeft(2*time.Hour + 5*time.Minute))
	}
}

// A writer that is not a terminal gets nothing, and the reader is the
// input itself.
func TestQuietWhenNotATerminal(t *testing.T) {
	var out bytes.Buffer
	m := New(&out, "convert", 100)
	in := strings.NewReader("a\nb\n")
	if r := m.Reader(in); r != io.Reader(in) {
		t.Error("a quiet meter wraps the reader")
	}
	m.add(10, 10)
	m.Done()
	if out.Len() != 0 {
		t.Errorf("quiet meter wrote %q", out.String())
	}
}

// On a terminal the line appears after Delay, at most every interval, and
// Done clears it.
func TestMeterLine(t *testing.T) {
	var out bytes.Buffer
	now := time.Unix(0, 0)
	m := newMeter(&out, "qa", 8, func() time.Time { return now })
	r := m.Reader(strings.NewReader("h\n1\n2\n3\n"))
	buf := make([]byte, 2)
	if _, err := r.Read(buf); err != nil {
		t.Fatal(err)
	}
	if out.Len() != 0 {
		t.Fatalf("shown before the delay: %q", out.String())
	}
	now = now.Add(2 * time.Second)
	if _, err := r.Read(buf); err != nil {
		t.Fatal(err)
	}
	if got := out.String(); got != "\rqa: 2 rows, 1 rows/s, 50%, about 2 s left\x1b[K" {
		t.Errorf("line %q", got)
	}
	if _, err := r.Read(buf); err != nil { // within the interval: no redraw
		t.Fatal(err)
	}
	m.Done()
	if !strings.HasSuffix(out.String(), "\r\x1b[K") || strings.Count(out.String(), "qa:") != 1 {
		t.Errorf("after Done: %q", out.String())
	}
}
