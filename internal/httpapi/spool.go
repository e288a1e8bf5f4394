package httpapi

import (
	"bytes"
	"io"
	"os"
)

// spoolMemory is how much of an upload is kept in memory; the rest goes to
// a temporary file.
const spoolMemory = 8 << 20

// spool reads a whole upload before the service sees it, so that a slow
// client never holds the store's write transaction open (an import is all or
// nothing, one transaction). Up to spoolMemory bytes stay in memory, larger
// bodies go to a temporary file that cleanup removes.
func spool(r io.Reader) (body io.Reader, cleanup func(), err error) {
	var buf bytes.Buffer
	n, err := io.CopyN(&buf, r, spoolMemory+1)
	if err != nil && err != io.EOF {
		return nil, func() {}, err
	}
	if n <= spoolMemory {
		return &buf, func() {}, nil
	}
	f, err := os.CreateTemp("", "corvane-upload-*.csv")
	if err != nil {
		return nil, func() {}, err
	}
	cleanup = func() { f.Close(); os.Remove(f.Name()) }
	if _, err := buf.WriteTo(f); err != nil {
		cleanup()
		return nil, func() {}, err
	}
	if _, err := io.Copy(f, r); err != nil {
		cleanup()
		return nil, func() {}, err
	}
	if _, err := f.Seek(0, io.SeekStart); err != nil {
		cleanup()
		return nil, func() {}, err
	}
	return f, cleanup, nil
}
