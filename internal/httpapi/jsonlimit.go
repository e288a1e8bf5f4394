package httpapi

import (
	"io"
	"strconv"
)

// Body limits of the JSON routes. A JSON body is read once, as it arrives,
// through an elementCounter: the decoder never holds more than the body's
// byte limit, and the Go values it builds never outnumber the element limit,
// so a small body of many tiny array elements ("[{},{},...]", a few bytes
// each, tens of bytes each once decoded) cannot multiply into gigabytes.
const (
	// maxBodyElements bounds the array elements of an ordinary JSON body
	// (a survey's stations, for one).
	maxBodyElements = 50_000
	// maxConvertBytes and maxConvertElements bound POST /v1/convert: the
	// service's 100,000 measurements at about 100 bytes each, with their
	// collars and surveys.
	maxConvertBytes    = 32 << 20
	maxConvertElements = 250_000
	// maxQABytes and maxQAElements bound the picks and magnetic zones of
	// POST .../qa.
	maxQABytes    = 16 << 20
	maxQAElements = 100_000
)

// errTooManyElements is the problem of a body over its element limit.
func errTooManyElements(limit int) error {
	return &edgeError{413, "too-large", "request body has more than " + strconv.Itoa(limit) + " array elements", nil}
}

// elementCounter passes a JSON text through and fails the read, with
// errTooManyElements, once the text holds more than max array elements at
// any depth. It follows strings and escapes; it does not check the syntax
// (the decoder does).
type elementCounter struct {
	r        io.Reader
	max, n   int
	inString bool
	escaped  bool
	stack    []bool // true: an array
	first    bool   // in an array, before its first element
	err      error
}

func (e *elementCounter) Read(p []byte) (int, error) {
	if e.err != nil {
		return 0, e.err
	}
	n, err := e.r.Read(p)
	for _, b := range p[:n] {
		e.scan(b)
		if e.n > e.max {
			e.err = errTooManyElements(e.max)
			return 0, e.err
		}
	}
	return n, err
}

func (e *elementCounter) inArray() bool { return len(e.stack) > 0 && e.stack[len(e.stack)-1] }

func (e *elementCounter) scan(b byte) {
	if e.inString {
		switch {
		case e.escaped:
			e.escaped = false
		case b == '\\':
			e.escaped = true
		case b == '"':
			e.inString = false
		}
		return
	}
	switch b {
	case ' ', '\t', '\n', '\r':
		return
	}
	if e.first && e.inArray() && b != ']' {
		e.n++
	}
	e.first = false
	switch b {
	case '"':
		e.inString = true
	case '[':
		e.stack = append(e.stack, true)
		e.first = true
	case '{':
		e.stack = append(e.stack, false)
	case ']', '}':
		if len(e.stack) > 0 {
			e.stack = e.stack[:len(e.stack)-1]
		}
	case ',':
		if e.inArray() {
			e.first = true // the next value starts an element
		}
	}
}
