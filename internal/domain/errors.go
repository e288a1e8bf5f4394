package domain

import (
	"errors"
	"fmt"
	"strings"
)

// Kind classifies an [Error]. The HTTP edge maps each kind to one status code.
type Kind int

// The error kinds. Internal is the zero value: an unexpected failure whose
// message is not meant for the client.
const (
	Internal           Kind = iota // unexpected failure (storage down, bug)
	NotFound                       // the addressed row does not exist
	Invalid                        // the request or a row of it breaks a rule
	Conflict                       // the row clashes with another (duplicate key, still referenced)
	PreconditionFailed             // the caller's version (If-Match) is not the current one
	Unauthorized                   // no credentials, or unknown credentials
	Forbidden                      // known caller without the role needed
	Unavailable                    // the store cannot be reached or cannot take the write now; retry later
)

var kindNames = [...]string{"internal", "not found", "invalid", "conflict", "precondition failed", "unauthorized", "forbidden", "unavailable"}

// String returns the kind in words, e.g. "not found".
func (k Kind) String() string {
	if k < 0 || int(k) >= len(kindNames) {
		return fmt.Sprintf("kind(%d)", int(k))
	}
	return kindNames[k]
}

// Location says where in an input a problem lies. Every field is optional.
// Line and Column count from 1; zero means unknown.
type Location struct {
	File   string `json:"file,omitempty"`
	Line   int    `json:"line,omitempty"`
	Column string `json:"column,omitempty"` // column name as in the header, e.g. "alpha"
	Field  string `json:"field,omitempty"`  // JSON field or entity attribute, e.g. "dip"
}

// IsZero reports whether no part of l is set.
func (l Location) IsZero() bool { return l == Location{} }

// String formats l as file:line: column "c": field "f", leaving out the empty parts.
func (l Location) String() string {
	var parts []string
	if l.File != "" || l.Line > 0 {
		s := l.File
		if l.Line > 0 {
			if s != "" {
				s += ":"
			}
			s += fmt.Sprintf("line %d", l.Line)
		}
		parts = append(parts, s)
	}
	if l.Column != "" {
		parts = append(parts, fmt.Sprintf("column %q", l.Column))
	}
	if l.Field != "" {
		parts = append(parts, fmt.Sprintf("field %q", l.Field))
	}
	return strings.Join(parts, ", ")
}

// Error is corvane's one error type. Stores translate driver errors into it
// once; the service adds kinds and locations; the HTTP edge maps Kind to a
// status code. Problems lists further row-level problems (an import reports
// every bad row, not only the first).
type Error struct {
	Kind     Kind
	Msg      string   // human-readable, safe to show to the client unless Kind is Internal
	Loc      Location // optional
	Problems []*Error // optional, e.g. one per bad CSV row
	Err      error    // optional wrapped cause
}

// Error returns the location (if any), the message and the wrapped cause.
func (e *Error) Error() string {
	var b strings.Builder
	if !e.Loc.IsZero() {
		b.WriteString(e.Loc.String())
		b.WriteString(": ")
	}
	b.WriteString(e.Msg)
	if e.Err != nil {
		if e.Msg != "" {
			b.WriteString(": ")
		}
		b.WriteString(e.Err.Error())
	}
	return b.String()
}

// Unwrap returns the wrapped cause.
func (e *Error) Unwrap() error { return e.Err }

// Errorf returns an *Error of kind k with a formatted message. A %w verb wraps
// its operand as the cause.
func Errorf(k Kind, format string, args ...any) *Error {
	err := fmt.Errorf(format, args...)
	e := &Error{Kind: k, Msg: err.Error()}
	if u := errors.Unwrap(err); u != nil {
		e.Msg = strings.TrimSuffix(e.Msg, ": "+u.Error())
		e.Err = u
	}
	return e
}

// At returns a copy of e placed at loc.
func (e *Error) At(loc Location) *Error {
	c := *e
	c.Loc = loc
	return &c
}

// FieldErr returns an Invalid error about the named field.
func FieldErr(field, format string, args ...any) *Error {
	e := Errorf(Invalid, format, args...)
	e.Loc.Field = field
	return e
}

// KindOf returns the kind of the first *Error in err's chain, Internal when
// there is none, and Internal for a nil err as well (callers check nil first).
func KindOf(err error) Kind {
	var e *Error
	if errors.As(err, &e) {
		return e.Kind
	}
	return Internal
}

// IsKind reports whether err carries an *Error of kind k.
func IsKind(err error, k Kind) bool { return err != nil && KindOf(err) == k }

// Public returns the message the client may see for err: the *Error's
// location and message for all kinds except Internal, without the wrapped
// cause (driver text stays in the logs), and a fixed text for Internal
// failures.
func Public(err error) string {
	var e *Error
	if errors.As(err, &e) && e.Kind != Internal {
		if e.Loc.IsZero() {
			return e.Msg
		}
		return e.Loc.String() + ": " + e.Msg
	}
	return "internal error"
}
