package csvio

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"io"
	"strings"
	"unicode/utf8"
)

// recordReader reads CSV records exactly as encoding/csv.Reader does with a
// comma separator, FieldsPerRecord = -1, no comments, no lazy quotes and no
// trimming (same records, same *csv.ParseError values), and also keeps the
// raw bytes of each record so that a converter can copy its input columns
// through without quoting them again. It exists for speed on the structure
// stream; a differential fuzz test holds it to encoding/csv.
type recordReader struct {
	r       *bufio.Reader
	numLine int
	recLine int    // line where the last record started
	rawLine []byte // scratch for lines longer than the bufio buffer
	raw     []byte // raw bytes of the last record, "\r\n" normalised to "\n", without its final newline; may alias the bufio buffer
	own     []byte // buffer for raw when a record is copied together from several lines
	buf     []byte // field contents, unescaped
	ends    []int  // end of each field in buf
	fields  []string
}

func newRecordReader(r io.Reader) *recordReader {
	return &recordReader{r: bufio.NewReaderSize(r, 64<<10)}
}

func lengthNL(b []byte) int {
	if len(b) > 0 && b[len(b)-1] == '\n' {
		return 1
	}
	return 0
}

func (r *recordReader) readLine() ([]byte, error) {
	line, err := r.r.ReadSlice('\n')
	if err == bufio.ErrBufferFull {
		r.rawLine = append(r.rawLine[:0], line...)
		for err == bufio.ErrBufferFull {
			line, err = r.r.ReadSlice('\n')
			r.rawLine = append(r.rawLine, line...)
		}
		line = r.rawLine
	}
	n := len(line)
	if n > 0 && err == io.EOF {
		err = nil
		if line[n-1] == '\r' { // a trailing \r before EOF is dropped
			line = line[:n-1]
		}
	}
	r.numLine++
	if n := len(line); n >= 2 && line[n-2] == '\r' && line[n-1] == '\n' {
		line[n-2] = '\n'
		line = line[:n-1]
	}
	return line, err
}

// Read returns the next record. The slice is reused by the next call; the
// strings are not. Raw returns the record's raw bytes until the next call.
func (r *recordReader) Read() ([]string, error) {
	line, errRead := r.firstLine()
	if errRead == io.EOF {
		return nil, errRead
	}
	if errRead == nil && bytes.IndexByte(line, '"') < 0 {
		// No quotes: the fields are the line split at commas.
		body := line[:len(line)-lengthNL(line)]
		r.raw = body
		r.fields = SplitFields(r.fields[:0], string(body))
		return r.fields, nil
	}
	return r.parse(line, errRead)
}

// ReadUnsplit is Read, except that a record without quotes is not split:
// it returns nil fields and unsplit = true, and the record's fields are then
// its raw bytes split at every comma ([SplitFields]). The raw bytes stay
// valid until the next call.
func (r *recordReader) ReadUnsplit() (fields []string, unsplit bool, err error) {
	line, errRead := r.firstLine()
	if errRead == io.EOF {
		return nil, false, errRead
	}
	if errRead == nil && bytes.IndexByte(line, '"') < 0 {
		r.raw = line[:len(line)-lengthNL(line)]
		return nil, true, nil
	}
	fields, err = r.parse(line, errRead)
	return fields, false, err
}

// SplitFields appends to dst the fields of a record without quotes: s split
// at every comma.
func SplitFields(dst []string, s string) []string {
	for {
		i := strings.IndexByte(s, ',')
		if i < 0 {
			return append(dst, s)
		}
		dst = append(dst, s[:i])
		s = s[i+1:]
	}
}

// firstLine reads the first non-empty line of the next record and notes
// where the record starts.
func (r *recordReader) firstLine() ([]byte, error) {
	var line []byte
	var errRead error
	for errRead == nil {
		line, errRead = r.readLine()
		if errRead == nil && len(line) == lengthNL(line) {
			line = nil
			continue // empty line
		}
		break
	}
	if errRead != io.EOF {
		r.recLine = r.numLine
	}
	return line, errRead
}

// parse reads a record that contains quotes (or ended in a read error)
// starting from its first line.
func (r *recordReader) parse(line []byte, errRead error) ([]string, error) {
	r.raw = append(r.own[:0], line...)
	r.buf = r.buf[:0]
	r.ends = r.ends[:0]
	var err error
	col, pline := 1, r.numLine
parseField:
	for {
		if len(line) == 0 || line[0] != '"' {
			i := bytes.IndexByte(line, ',')
			field := line
			if i >= 0 {
				field = field[:i]
			} else {
				field = field[:len(field)-lengthNL(field)]
			}
			if j := bytes.IndexByte(field, '"'); j >= 0 {
				err = &csv.ParseError{StartLine: r.recLine, Line: r.numLine, Column: col + j, Err: csv.ErrBareQuote}
				break parseField
			}
			r.buf = append(r.buf, field...)
			r.ends = append(r.ends, len(r.buf))
			if i >= 0 {
				line = line[i+1:]
				col += i + 1
				continue parseField
			}
			break parseField
		}
		line = line[1:]
		col++
		for {
			i := bytes.IndexByte(line, '"')
			switch {
			case i >= 0:
				r.buf = append(r.buf, line[:i]...)
				line = line[i+1:]
				col += i + 1
				rn, _ := utf8.DecodeRune(line)
				switch {
				case len(line) > 0 && rn == '"':
					r.buf = append(r.buf, '"')
					line = line[1:]
					col++
				case len(line) > 0 && rn == ',':
					line = line[1:]
					col++
					r.ends = append(r.ends, len(r.buf))
					continue parseField
				case lengthNL(line) == len(line):
					r.ends = append(r.ends, len(r.buf))
					break parseField
				default:
					err = &csv.ParseError{StartLine: r.recLine, Line: r.numLine, Column: col - 1, Err: csv.ErrQuote}
					break parseField
				}
			case len(line) > 0:
				r.buf = append(r.buf, line...)
				if errRead != nil {
					break parseField
				}
				col += len(line)
				line, errRead = r.readLine()
				r.raw = append(r.raw, line...)
				if len(line) > 0 {
					pline++
					col = 1
				}
				if errRead == io.EOF {
					errRead = nil
				}
			default:
				if errRead == nil {
					err = &csv.ParseError{StartLine: r.recLine, Line: pline, Column: col, Err: csv.ErrQuote}
					break parseField
				}
				r.ends = append(r.ends, len(r.buf))
				break parseField
			}
		}
	}
	if err == nil {
		err = errRead
	}
	r.own = r.raw
	if n := len(r.raw); n > 0 && r.raw[n-1] == '\n' {
		r.raw = r.raw[:n-1]
	}
	s := string(r.buf)
	r.fields = r.fields[:0]
	prev := 0
	for _, e := range r.ends {
		r.fields = append(r.fields, s[prev:e])
		prev = e
	}
	if err != nil {
		return r.fields, err
	}
	return r.fields, nil
}
