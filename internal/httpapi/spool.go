package httpapi

import (
	"bytes"
	"errors"
	"io"
	"net/http"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"
)

// spoolMemory is how much of an upload is kept in memory; the rest goes to
// a temporary file.
const spoolMemory = 8 << 20

// spoolPrefix starts the name of every upload file; the process id follows,
// so that a server starting can tell the files left by a process that is gone
// (killed part-way through an upload) from those of one still running.
const spoolPrefix = "corvane-upload-"

// spoolFile is a temporary upload file (an *os.File).
type spoolFile interface {
	io.ReadWriteSeeker
	io.Closer
	Name() string
}

func createSpoolFile(dir string) (spoolFile, error) {
	return os.CreateTemp(dir, spoolPrefix+strconv.Itoa(os.Getpid())+"-*.csv")
}

// clientError marks a failure to read the client's body (as opposed to a
// failure of the server's temporary storage).
type clientError struct{ err error }

func (e clientError) Error() string { return e.err.Error() }
func (e clientError) Unwrap() error { return e.err }

type clientReader struct{ r io.Reader }

func (c clientReader) Read(p []byte) (int, error) {
	n, err := c.r.Read(p)
	if err != nil && err != io.EOF {
		err = clientError{err}
	}
	return n, err
}

// spool reads a whole upload before the service sees it, so that a slow
// client never holds the store's write transaction open (an import is all or
// nothing, one transaction). Up to spoolMemory bytes stay in memory, larger
// bodies go to a temporary file in the server's temp dir that cleanup
// removes; cleanup is always set, also on error. Errors are problems for the
// client: 413 past the limit, 400 for a body cut off, 507 when the temp dir is
// full and 503 when it cannot be used, never naming a server path.
func (s *Server) spool(r io.Reader) (body io.Reader, cleanup func(), err error) {
	cleanup = func() {}
	r = clientReader{r}
	var buf bytes.Buffer
	n, err := io.CopyN(&buf, r, spoolMemory+1)
	if err != nil && err != io.EOF {
		return nil, cleanup, spoolError(err)
	}
	if n <= spoolMemory {
		return &buf, cleanup, nil
	}
	f, err := s.createTemp(s.opt.TempDir)
	if err != nil {
		return nil, cleanup, spoolError(err)
	}
	cleanup = func() { f.Close(); os.Remove(f.Name()) }
	if _, err := buf.WriteTo(f); err != nil {
		return nil, cleanup, spoolError(err)
	}
	if _, err := io.Copy(f, r); err != nil {
		return nil, cleanup, spoolError(err)
	}
	if _, err := f.Seek(0, io.SeekStart); err != nil {
		return nil, cleanup, spoolError(err)
	}
	return f, cleanup, nil
}

// spoolError turns a failure while spooling into the client's problem.
func spoolError(err error) error {
	var mbe *http.MaxBytesError
	var ce clientError
	switch {
	case errors.As(err, &mbe):
		return mbe
	case errors.As(err, &ce):
		return errBadRequest("reading the upload: the body was cut off or could not be read")
	case errors.Is(err, syscall.ENOSPC) || errors.Is(err, syscall.EDQUOT):
		return &edgeError{http.StatusInsufficientStorage, "insufficient-storage",
			"the server has no room to hold this upload now; try again later or send a smaller file", err}
	}
	return &edgeError{http.StatusServiceUnavailable, "unavailable",
		"the server cannot hold uploads now (temporary storage unusable); try again later", err}
}

// cleanSpool removes the upload files in dir left by processes that are gone
// (a server killed part-way through an upload) and returns how many it
// removed. Files of running processes, this one included, are left alone.
func cleanSpool(dir string) (int, error) {
	ents, err := os.ReadDir(dir)
	if err != nil {
		return 0, err
	}
	removed := 0
	for _, e := range ents {
		rest, ok := strings.CutPrefix(e.Name(), spoolPrefix)
		if !ok || !e.Type().IsRegular() {
			continue
		}
		pidText, _, ok := strings.Cut(rest, "-")
		pid, err := strconv.Atoi(pidText)
		if !ok || err != nil || pid <= 0 || pid == os.Getpid() || processAlive(pid) {
			continue
		}
		if os.Remove(filepath.Join(dir, e.Name())) == nil {
			removed++
		}
	}
	return removed, nil
}

// processAlive reports whether a process with the id runs (or may run: any
// answer but "no such process" counts as alive, so nothing live is removed).
func processAlive(pid int) bool {
	p, err := os.FindProcess(pid)
	if err != nil {
		return false
	}
	err = p.Signal(syscall.Signal(0))
	return err == nil || !(errors.Is(err, os.ErrProcessDone) || errors.Is(err, syscall.ESRCH))
}
