package cli

import (
	"errors"
	"io"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
)

// outputFile is a file a command writes. It is created beside its final
// path under a temporary name, with mode 0666 less the process umask (as any
// new file: 0644 under the usual umask 022), and renamed into place by
// Commit, so a command that fails part-way leaves no partial output behind.
// Every command that writes a file goes through [createOutput] or
// [writeOutput].
//
// A path that exists and is not a regular file (a device such as /dev/null
// or /dev/stdout, a named pipe) is written in place instead: renaming over
// it would replace the device with a plain file.
type outputFile struct {
	*os.File
	path   string
	done   bool
	direct bool // written in place: Commit and Abort only close
}

// createOutput starts writing the file path.
func createOutput(path string) (*outputFile, error) {
	if fi, err := os.Stat(path); err == nil && !fi.Mode().IsRegular() {
		if fi.IsDir() {
			return nil, errors.New(path + " is a directory")
		}
		f, err := os.OpenFile(path, os.O_WRONLY, 0)
		if err != nil {
			return nil, err
		}
		return &outputFile{File: f, path: path, direct: true}, nil
	}
	dir, base := filepath.Split(path)
	if dir == "" {
		dir = "."
	}
	for range 100 {
		tmp := filepath.Join(dir, "."+base+"-"+strconv.FormatUint(rand.Uint64(), 36)+".tmp")
		// os.CreateTemp would create the file with mode 0600; ask for 0666
		// and let the umask decide, as os.Create does.
		f, err := os.OpenFile(tmp, os.O_RDWR|os.O_CREATE|os.O_EXCL, 0o666)
		if errors.Is(err, os.ErrExist) {
			continue
		}
		if err != nil {
			return nil, err
		}
		return &outputFile{File: f, path: path}, nil
	}
	return nil, errors.New("cannot create a temporary file beside " + path)
}

// Commit closes the file and moves it to its path.
func (o *outputFile) Commit() error {
	o.done = true
	if o.direct {
		return o.File.Close()
	}
	if err := o.File.Close(); err != nil {
		os.Remove(o.Name())
		return err
	}
	if err := os.Rename(o.Name(), o.path); err != nil {
		os.Remove(o.Name())
		return err
	}
	return nil
}

// Abort closes and removes the file unless it was committed; it is safe to
// defer.
func (o *outputFile) Abort() {
	if o.done {
		return
	}
	o.done = true
	o.File.Close()
	if !o.direct {
		os.Remove(o.Name())
	}
}

// writeOutput writes the file path with write, through [createOutput]: a
// failure leaves no partial output.
func writeOutput(path string, write func(io.Writer) error) error {
	f, err := createOutput(path)
	if err != nil {
		return err
	}
	defer f.Abort()
	if err := write(f); err != nil {
		return err
	}
	return f.Commit()
}

// writeOutputOr writes to stdout when path is "" or "-", else to the file
// path through [writeOutput].
func writeOutputOr(stdout io.Writer, path string, write func(io.Writer) error) error {
	if path == "" || path == "-" {
		return write(stdout)
	}
	return writeOutput(path, write)
}
