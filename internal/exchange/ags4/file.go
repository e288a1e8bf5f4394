// Package ags4 writes and reads the AGS4 data-transfer format of the
// geotechnical trade (Association of Geotechnical and Geoenvironmental
// Specialists, edition 4.1.1): project, transmission, units, types and
// abbreviations, locations (collars), hole orientation, core intervals,
// discontinuities and fracture spacing.
//
// Only groups and headings of the standard dictionary are written; a value
// that has no standard heading (alpha, beta, gamma, an uncertainty) is left
// out rather than defined in DICT. The file is built as a [File] of groups,
// checked against the format's rules ([Check]; each rule cited by its
// number) and only then written, so a file that breaks a rule is never
// produced. [Read] parses any AGS4 file (rules 1 to 6) and takes the groups
// this package knows into a [Data]; a file written by [Write] reads back to
// the same Data and writes again byte for byte.
//
// Rules that do not arise: 11 (record links) since no field of type RL is
// written (TRAN_DLIM and TRAN_RCON are still filled, as TRAN requires), and
// 18 (DICT definitions) since nothing outside the standard dictionary is
// written; a file with other groups or headings breaks rule 9 in [Check].
package ags4

import (
	"bufio"
	"bytes"
	"fmt"
	"io"
	"strings"
)

// Group is one group of a file: its name, headings with their units and
// types, and data rows (one field per heading).
type Group struct {
	Name     string
	Headings []string
	Units    []string
	Types    []string
	Rows     [][]string
	// Line is the line number of the GROUP row and RowLines those of the
	// DATA rows when the group was read from a file; zero otherwise.
	Line     int
	RowLines []int
}

// File is an AGS4 file as groups in file order.
type File struct {
	Groups []*Group
}

// Group returns the group named name, or nil.
func (f *File) Group(name string) *Group {
	for _, g := range f.Groups {
		if g.Name == name {
			return g
		}
	}
	return nil
}

// Index returns the position of heading h in g, or -1.
func (g *Group) Index(h string) int {
	for i, x := range g.Headings {
		if x == h {
			return i
		}
	}
	return -1
}

// Descriptors at the start of each line (AGS4 rule 3).
const (
	DescGroup   = "GROUP"
	DescHeading = "HEADING"
	DescUnit    = "UNIT"
	DescType    = "TYPE"
	DescData    = "DATA"
)

// Encode writes f: per group the GROUP, HEADING, UNIT and TYPE rows, then the
// DATA rows (rules 2b, 3, 4), every field in double quotes with quotes
// doubled (rule 5), separated by commas (rule 6), lines ending CR LF (rule
// 2a), groups separated by an empty line. It does not check the rules on
// values; [Check] does.
func (f *File) Encode(w io.Writer) error {
	bw := bufio.NewWriter(w)
	line := func(desc string, fields []string) {
		writeField(bw, desc)
		for _, s := range fields {
			bw.WriteByte(',')
			writeField(bw, s)
		}
		bw.WriteString("\r\n")
	}
	for i, g := range f.Groups {
		if i > 0 {
			bw.WriteString("\r\n")
		}
		line(DescGroup, []string{g.Name})
		line(DescHeading, g.Headings)
		line(DescUnit, g.Units)
		line(DescType, g.Types)
		for _, r := range g.Rows {
			line(DescData, r)
		}
	}
	return bw.Flush()
}

func writeField(w *bufio.Writer, s string) {
	w.WriteByte('"')
	if strings.IndexByte(s, '"') < 0 {
		w.WriteString(s)
	} else {
		w.WriteString(strings.ReplaceAll(s, `"`, `""`))
	}
	w.WriteByte('"')
}

// ParseError is a problem at a line of a file being read.
type ParseError struct {
	File string
	Line int
	Msg  string
}

func (e *ParseError) Error() string {
	return fmt.Sprintf("%s:%d: %s", e.File, e.Line, e.Msg)
}

// Parse reads an AGS4 file. It checks the rules on the file's structure:
// ASCII only (rule 1), every line a GROUP, HEADING, UNIT, TYPE or DATA row
// (rule 3) with quoted, comma-separated fields (rules 5, 6), UNIT and TYPE
// right after HEADING (rule 2b), one field per heading (rule 4), and at
// least one DATA row per group (rule 2). Lines may end in CR LF (rule 2a)
// or, leniently, LF alone; empty lines are skipped. name is the file name
// used in errors.
func Parse(r io.Reader, name string) (*File, error) {
	f := &File{}
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 64<<10), 16<<20)
	var g *Group
	stage := "" // last descriptor seen in the current group
	n := 0
	fail := func(format string, args ...any) error {
		return &ParseError{File: name, Line: n, Msg: fmt.Sprintf(format, args...)}
	}
	endGroup := func() error {
		if g != nil && len(g.Rows) == 0 {
			return &ParseError{File: name, Line: g.Line, Msg: fmt.Sprintf("group %s has no DATA row (AGS4 rule 2)", g.Name)}
		}
		return nil
	}
	for sc.Scan() {
		n++
		b := bytes.TrimSuffix(sc.Bytes(), []byte("\r"))
		if n == 1 {
			b = bytes.TrimPrefix(b, []byte("\xef\xbb\xbf")) // a byte-order mark is not content
		}
		if len(bytes.TrimSpace(b)) == 0 {
			continue
		}
		for i, c := range b {
			if c >= 0x80 {
				return nil, fail("byte 0x%02x at column %d is not ASCII (AGS4 rule 1)", c, i+1)
			}
		}
		fields, err := splitLine(b)
		if err != nil {
			return nil, fail("%v", err)
		}
		desc, rest := fields[0], fields[1:]
		switch desc {
		case DescGroup:
			if err := endGroup(); err != nil {
				return nil, err
			}
			if len(rest) != 1 || rest[0] == "" {
				return nil, fail("a GROUP row holds the group name alone (AGS4 rule 4)")
			}
			if f.Group(rest[0]) != nil {
				return nil, fail("group %s appears twice", rest[0])
			}
			g = &Group{Name: rest[0], Line: n}
			f.Groups = append(f.Groups, g)
			stage = DescGroup
		case DescHeading, DescUnit, DescType:
			want := map[string]string{DescHeading: DescGroup, DescUnit: DescHeading, DescType: DescUnit}[desc]
			if g == nil || stage != want {
				return nil, fail("%s row out of place: GROUP, HEADING, UNIT and TYPE rows come first, in that order (AGS4 rule 2b)", desc)
			}
			switch desc {
			case DescHeading:
				g.Headings = rest
			case DescUnit:
				g.Units = rest
			case DescType:
				g.Types = rest
			}
			if desc != DescHeading && len(rest) != len(g.Headings) {
				return nil, fail("group %s: %s row has %d fields for %d headings (AGS4 rule 4)", g.Name, desc, len(rest), len(g.Headings))
			}
			stage = desc
		case DescData:
			if g == nil || (stage != DescType && stage != DescData) {
				return nil, fail("DATA row before its group's HEADING, UNIT and TYPE rows (AGS4 rule 2b)")
			}
			if len(rest) != len(g.Headings) {
				return nil, fail("group %s: DATA row has %d fields for %d headings (AGS4 rule 4)", g.Name, len(rest), len(g.Headings))
			}
			g.Rows = append(g.Rows, rest)
			g.RowLines = append(g.RowLines, n)
			stage = DescData
		default:
			return nil, fail("line starts with %q; want GROUP, HEADING, UNIT, TYPE or DATA (AGS4 rule 3)", desc)
		}
	}
	if err := sc.Err(); err != nil {
		return nil, fmt.Errorf("%s: %w", name, err)
	}
	if err := endGroup(); err != nil {
		return nil, err
	}
	if len(f.Groups) == 0 {
		return nil, &ParseError{File: name, Line: n, Msg: "no GROUP in the file (AGS4 rule 2)"}
	}
	return f, nil
}

// splitLine splits one line into its quoted fields (rules 5 and 6).
func splitLine(b []byte) ([]string, error) {
	var out []string
	i := 0
	for {
		if i >= len(b) || b[i] != '"' {
			return nil, fmt.Errorf("field %d does not start with a double quote (AGS4 rule 5)", len(out)+1)
		}
		i++
		var sb []byte
		closed := false
		for i < len(b) {
			if b[i] == '"' {
				if i+1 < len(b) && b[i+1] == '"' {
					sb = append(sb, '"')
					i += 2
					continue
				}
				i++
				closed = true
				break
			}
			sb = append(sb, b[i])
			i++
		}
		if !closed {
			return nil, fmt.Errorf("field %d has no closing double quote (AGS4 rule 5; no line breaks inside a field, rule 6)", len(out)+1)
		}
		out = append(out, string(sb))
		if i == len(b) {
			return out, nil
		}
		if b[i] != ',' {
			return nil, fmt.Errorf("field %d is followed by %q, not a comma (AGS4 rule 6)", len(out), b[i])
		}
		i++
	}
}
