// Package progress shows the progress of long command-line work (rows read,
// rows per second, share done and time left) on a terminal, and nothing when
// the output is not a terminal (a pipe, a file, a test buffer).
package progress

import (
	"bytes"
	"fmt"
	"io"
	"os"
	"strings"
	"sync"
	"time"

	"github.com/mattn/go-isatty"
)

// Delay is how long work runs before progress is first shown: short work
// prints nothing.
const Delay = time.Second

// every is the interval between updates.
const every = 250 * time.Millisecond

// IsTerminal reports whether w is a terminal.
func IsTerminal(w io.Writer) bool {
	f, ok := w.(*os.File)
	return ok && (isatty.IsTerminal(f.Fd()) || isatty.IsCygwinTerminal(f.Fd()))
}

// Meter counts the rows and bytes of one piece of work and redraws one
// status line on a terminal. The zero of a Meter made by New for a writer
// that is not a terminal does nothing.
type Meter struct {
	w     io.Writer // nil: quiet
	label string
	total int64 // bytes expected; 0 when unknown
	now   func() time.Time

	mu          sync.Mutex
	start, last time.Time
	rows, bytes int64
	shown       bool
}

// New returns a meter for label writing to w when w is a terminal, and a
// quiet one otherwise. total is the size in bytes of the input when known
// (0 when not), for the share done and the time left.
func New(w io.Writer, label string, total int64) *Meter {
	if !IsTerminal(w) {
		w = nil
	}
	return newMeter(w, label, total, time.Now)
}

func newMeter(w io.Writer, label string, total int64, now func() time.Time) *Meter {
	t := now()
	return &Meter{w: w, label: label, total: total, now: now, start: t, last: t}
}

// Reader counts what is read from r: bytes, and rows as line ends.
func (m *Meter) Reader(r io.Reader) io.Reader {
	if m.w == nil {
		return r
	}
	return &countReader{r: r, m: m}
}

type countReader struct {
	r io.Reader
	m *Meter
}

func (c *countReader) Read(p []byte) (int, error) {
	n, err := c.r.Read(p)
	if n > 0 {
		c.m.add(int64(bytes.Count(p[:n], []byte{'\n'})), int64(n))
	}
	return n, err
}

func (m *Meter) add(rows, bytes int64) {
	m.mu.Lock()
	defer m.mu.Unlock()
	m.rows += rows
	m.bytes += bytes
	t := m.now()
	if t.Sub(m.start) < Delay || t.Sub(m.last) < every {
		return
	}
	m.last = t
	m.shown = true
	fmt.Fprintf(m.w, "\r%s\x1b[K", Format(m.label, m.rows, m.bytes, m.total, t.Sub(m.start)))
}

// Done clears the status line, if one was shown.
func (m *Meter) Done() {
	if m.w == nil {
		return
	}
	m.mu.Lock()
	defer m.mu.Unlock()
	if m.shown {
		fmt.Fprint(m.w, "\r\x1b[K")
		m.shown = false
	}
}

// Format is the status line: "convert: 125,000 rows, 41,600 rows/s, 38%,
// about 5 s left". The share and time left need total (bytes) > 0.
func Format(label string, rows, done, total int64, elapsed time.Duration) string {
	var b strings.Builder
	fmt.Fprintf(&b, "%s: %s rows", label, group(rows))
	if s := elapsed.Seconds(); s > 0 {
		fmt.Fprintf(&b, ", %s rows/s", group(int64(float64(rows)/s+0.5)))
	}
	if total > 0 && done > 0 {
		share := float64(done) / float64(total)
		if share > 1 {
			share = 1
		}
		fmt.Fprintf(&b, ", %.0f%%", 100*share)
		if share < 1 && elapsed > 0 {
			left := time.Duration(float64(elapsed) * (1 - share) / share)
			fmt.Fprintf(&b, ", about %s left", roundLeft(left))
		}
	}
	return b.String()
}

// roundLeft writes a time left as people say it: "5 s", "2 min 10 s", "1 h 5 min".
func roundLeft(d time.Duration) string {
	s := int64(d.Round(time.Second) / time.Second)
	switch {
	case s < 60:
		return fmt.Sprintf("%d s", s)
	case s < 3600:
		return fmt.Sprintf("%d min %d s", s/60, s%60)
	default:
		return fmt.Sprintf("%d h %d min", s/3600, s%3600/60)
	}
}

// group writes n with thousands separated by commas.
func group(n int64) string {
	s := fmt.Sprint(n)
	neg := strings.HasPrefix(s, "-")
	s = strings.TrimPrefix(s, "-")
	var b strings.Builder
	for i, r := range s {
		if i > 0 && (len(s)-i)%3 == 0 {
			b.WriteByte(',')
		}
		b.WriteRune(r)
	}
	if neg {
		return "-" + b.String()
	}
	return b.String()
}
