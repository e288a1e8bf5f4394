package ags4

import (
	"fmt"
	"regexp"
	"strings"
)

// Heading is one heading of the standard dictionary as this package uses
// it: name, unit, data type, and whether it is a KEY or REQUIRED field.
type Heading struct {
	Name, Unit, Type string
	Key, Required    bool
}

// GroupDef is a group of the standard dictionary with the headings this
// package writes, in the dictionary's order (AGS4 rule 7), and its parent
// group ("" for none).
type GroupDef struct {
	Name     string
	Parent   string
	Headings []Heading
}

// Edition is the AGS4 edition written to TRAN_AGS.
const Edition = "4.1.1"

// Data types and units used by the headings below.
const (
	TypeID  = "ID"
	TypeX   = "X"
	TypeXN  = "XN"
	TypePA  = "PA"
	TypeDT  = "DT"
	Type0DP = "0DP"
	Type2DP = "2DP"

	UnitDate = "yyyy-mm-dd"
)

// Dictionary holds the groups this package writes, in the order it writes
// them. Heading names, units, types and KEY/REQUIRED statuses are those of
// the AGS4 4.1.1 standard dictionary as summarised in the project's
// references (section 9); the order of headings inside a group follows the
// dictionary (from memory where the summary lists headings by status).
var Dictionary = []GroupDef{
	{Name: "PROJ", Headings: []Heading{
		{Name: "PROJ_ID", Type: TypeID, Key: true, Required: true},
		{Name: "PROJ_NAME", Type: TypeX}, {Name: "PROJ_LOC", Type: TypeX}, {Name: "PROJ_CLNT", Type: TypeX},
		{Name: "PROJ_CONT", Type: TypeX}, {Name: "PROJ_ENG", Type: TypeX}, {Name: "PROJ_MEMO", Type: TypeX},
	}},
	{Name: "TRAN", Headings: []Heading{
		{Name: "TRAN_ISNO", Type: TypeX, Key: true, Required: true},
		{Name: "TRAN_DATE", Unit: UnitDate, Type: TypeDT, Required: true},
		{Name: "TRAN_PROD", Type: TypeX, Required: true},
		{Name: "TRAN_STAT", Type: TypeX, Required: true},
		{Name: "TRAN_DESC", Type: TypeX},
		{Name: "TRAN_AGS", Type: TypeX, Required: true},
		{Name: "TRAN_RECV", Type: TypeX, Required: true},
		{Name: "TRAN_DLIM", Type: TypeX, Required: true},
		{Name: "TRAN_RCON", Type: TypeX, Required: true},
		{Name: "TRAN_REM", Type: TypeX},
	}},
	{Name: "UNIT", Headings: []Heading{
		{Name: "UNIT_UNIT", Type: TypeX, Key: true, Required: true},
		{Name: "UNIT_DESC", Type: TypeX, Required: true},
		{Name: "UNIT_REM", Type: TypeX},
	}},
	{Name: "TYPE", Headings: []Heading{
		{Name: "TYPE_TYPE", Type: TypeX, Key: true, Required: true},
		{Name: "TYPE_DESC", Type: TypeX, Required: true},
	}},
	{Name: "ABBR", Headings: []Heading{
		{Name: "ABBR_HDNG", Type: TypeX, Key: true, Required: true},
		{Name: "ABBR_CODE", Type: TypeX, Key: true, Required: true},
		{Name: "ABBR_DESC", Type: TypeX, Required: true},
		{Name: "ABBR_LIST", Type: TypeX},
		{Name: "ABBR_REM", Type: TypeX},
	}},
	{Name: "LOCA", Parent: "PROJ", Headings: []Heading{
		{Name: "LOCA_ID", Type: TypeID, Key: true, Required: true},
		{Name: "LOCA_TYPE", Type: TypePA},
		{Name: "LOCA_NATE", Unit: "m", Type: Type2DP},
		{Name: "LOCA_NATN", Unit: "m", Type: Type2DP},
		{Name: "LOCA_GREF", Type: TypePA},
		{Name: "LOCA_GL", Unit: "m", Type: Type2DP},
		{Name: "LOCA_REM", Type: TypeX},
		{Name: "LOCA_FDEP", Unit: "m", Type: Type2DP},
	}},
	{Name: "HORN", Parent: "LOCA", Headings: []Heading{
		{Name: "LOCA_ID", Type: TypeID, Key: true, Required: true},
		{Name: "HORN_TOP", Unit: "m", Type: Type2DP, Key: true, Required: true},
		{Name: "HORN_BASE", Unit: "m", Type: Type2DP, Key: true, Required: true},
		{Name: "HORN_ORNT", Unit: "deg", Type: Type0DP},
		{Name: "HORN_INCL", Unit: "deg", Type: Type0DP},
		{Name: "HORN_REM", Type: TypeX},
	}},
	{Name: "CORE", Parent: "LOCA", Headings: []Heading{
		{Name: "LOCA_ID", Type: TypeID, Key: true, Required: true},
		{Name: "CORE_TOP", Unit: "m", Type: Type2DP, Key: true, Required: true},
		{Name: "CORE_BASE", Unit: "m", Type: Type2DP, Key: true, Required: true},
		{Name: "CORE_PREC", Unit: "%", Type: Type0DP},
		{Name: "CORE_SREC", Unit: "%", Type: Type0DP},
		{Name: "CORE_RQD", Unit: "%", Type: Type0DP},
		{Name: "CORE_DIAM", Unit: "mm", Type: Type0DP},
		{Name: "CORE_REM", Type: TypeX},
	}},
	{Name: "DISC", Parent: "LOCA", Headings: []Heading{
		{Name: "LOCA_ID", Type: TypeID, Key: true, Required: true},
		{Name: "DISC_TOP", Unit: "m", Type: Type2DP, Key: true, Required: true},
		{Name: "DISC_BASE", Unit: "m", Type: Type2DP, Key: true},
		{Name: "FRAC_SET", Type: TypeX, Key: true},
		{Name: "DISC_NUMB", Type: TypeX, Key: true},
		{Name: "DISC_TYPE", Type: TypePA},
		{Name: "DISC_DIP", Unit: "deg", Type: TypeX},
		{Name: "DISC_DIR", Unit: "deg", Type: TypeX},
		{Name: "DISC_REM", Type: TypeX},
	}},
	{Name: "FRAC", Parent: "LOCA", Headings: []Heading{
		{Name: "LOCA_ID", Type: TypeID, Key: true, Required: true},
		{Name: "FRAC_FROM", Unit: "m", Type: Type2DP, Key: true, Required: true},
		{Name: "FRAC_TO", Unit: "m", Type: Type2DP, Key: true, Required: true},
		{Name: "FRAC_SET", Type: TypeX, Key: true},
		{Name: "FRAC_IMAX", Unit: "mm", Type: TypeXN},
		{Name: "FRAC_IAVE", Unit: "mm", Type: TypeXN},
		{Name: "FRAC_IMIN", Unit: "mm", Type: TypeXN},
		{Name: "FRAC_FI", Type: TypeXN},
		{Name: "FRAC_REM", Type: TypeX},
	}},
}

// TypeDescriptions describe the data types in the TYPE group (AGS4 rule
// 17); wording after the AGS4 TYPE list, from memory.
var TypeDescriptions = map[string]string{
	TypeID:  "Unique identifier",
	TypeX:   "Text",
	TypeXN:  "Text / numeric",
	TypePA:  "Text listed in ABBR Group",
	TypeDT:  "Date time in international format",
	Type0DP: "Value; required number of decimal places, 0",
	Type2DP: "Value; required number of decimal places, 2",
}

// UnitDescriptions describe the units in the UNIT group (AGS4 rule 15).
var UnitDescriptions = map[string]string{
	"m":      "metre",
	"mm":     "millimetre",
	"deg":    "degree (angle)",
	"%":      "percentage",
	UnitDate: "year month day",
}

// Def returns the definition of group name, or nil.
func Def(name string) *GroupDef {
	for i := range Dictionary {
		if Dictionary[i].Name == name {
			return &Dictionary[i]
		}
	}
	return nil
}

// RuleError is a breach of a numbered AGS4 rule.
type RuleError struct {
	Rule  string // e.g. "10b"
	Group string
	Line  int // line in the file read, or 0; for a built file the DATA row from 1
	Msg   string
}

func (e *RuleError) Error() string {
	where := e.Group
	if e.Line > 0 {
		where = fmt.Sprintf("%s row %d", e.Group, e.Line)
	}
	if where != "" {
		where += ": "
	}
	return fmt.Sprintf("%sAGS4 rule %s: %s", where, e.Rule, e.Msg)
}

var (
	reGroup   = regexp.MustCompile(`^[A-Z]{4}$`)
	reHeading = regexp.MustCompile(`^[A-Z0-9_]{1,9}$`)
	re0DP     = regexp.MustCompile(`^-?[0-9]+$`)
	re2DP     = regexp.MustCompile(`^-?[0-9]+\.[0-9]{2}$`)
	reXN      = regexp.MustCompile(`^-?[0-9]+(\.[0-9]+)?$`)
	reDate    = regexp.MustCompile(`^[0-9]{4}-(0[1-9]|1[0-2])-(0[1-9]|[12][0-9]|3[01])$`)
)

// Check returns the breaches of the AGS4 rules this package implements, in
// file order (nil when there are none): 1 ASCII, 6 no line breaks in a
// field, 7 heading order and no duplicates, 8 values in their type, 9 names
// from the dictionary, 10a keys unique, 10b required fields filled, 10c
// parent rows present, 13 one PROJ row, 14 one TRAN row, 15 every unit in
// UNIT, 16 every PA value in ABBR, 17 every type in TYPE, 19/19a/19b name
// forms. The layout rules (2, 2a, 2b, 3, 4, 5) are kept by [File.Encode]
// and checked by [Parse].
func Check(f *File) []error {
	var errs []error
	add := func(rule, group string, row int, format string, args ...any) {
		errs = append(errs, &RuleError{Rule: rule, Group: group, Line: row, Msg: fmt.Sprintf(format, args...)})
	}
	rowNo := func(g *Group, i int) int {
		if i < len(g.RowLines) {
			return g.RowLines[i]
		}
		return i + 1
	}
	units := map[string]bool{}
	types := map[string]bool{}
	abbr := map[[2]string]bool{}
	if g := f.Group("UNIT"); g != nil {
		for _, r := range g.Rows {
			units[r[0]] = true
		}
	}
	if g := f.Group("TYPE"); g != nil {
		for _, r := range g.Rows {
			types[r[0]] = true
		}
	}
	if g := f.Group("ABBR"); g != nil {
		h, c := g.Index("ABBR_HDNG"), g.Index("ABBR_CODE")
		if h >= 0 && c >= 0 {
			for _, r := range g.Rows {
				abbr[[2]string{r[h], r[c]}] = true
			}
		}
	}
	for _, name := range []string{"PROJ", "TRAN"} {
		rule := map[string]string{"PROJ": "13", "TRAN": "14"}[name]
		if g := f.Group(name); g == nil || len(g.Rows) != 1 {
			n := 0
			if g != nil {
				n = len(g.Rows)
			}
			add(rule, name, 0, "the file needs exactly one %s row, has %d", name, n)
		}
	}
	if f.Group("UNIT") == nil {
		add("15", "UNIT", 0, "the file has no UNIT group")
	}
	if f.Group("TYPE") == nil {
		add("17", "TYPE", 0, "the file has no TYPE group")
	}
	for _, g := range f.Groups {
		if !reGroup.MatchString(g.Name) {
			add("19", g.Name, 0, "group name %q is not four upper-case letters", g.Name)
		}
		def := Def(g.Name)
		if def == nil {
			add("9", g.Name, 0, "group %s is not in the dictionary this file uses and there is no DICT group", g.Name)
			continue
		}
		// Rules 7, 9, 19a, 19b on headings.
		pos := -1
		seen := map[string]bool{}
		idx := make([]*Heading, len(g.Headings))
		for i, h := range g.Headings {
			if !reHeading.MatchString(h) {
				add("19a", g.Name, 0, "heading %q is not upper-case letters, digits and _ up to 9 characters", h)
			}
			if pre, _, ok := strings.Cut(h, "_"); !ok || (pre != g.Name && Def(pre) == nil) {
				add("19b", g.Name, 0, "heading %q does not start with its group's name (or another group's) and _", h)
			}
			if seen[h] {
				add("7", g.Name, 0, "heading %s appears twice", h)
			}
			seen[h] = true
			k := -1
			for j := range def.Headings {
				if def.Headings[j].Name == h {
					k = j
				}
			}
			if k < 0 {
				add("9", g.Name, 0, "heading %s is not in the dictionary for %s and there is no DICT group", h, g.Name)
				continue
			}
			if k < pos {
				add("7", g.Name, 0, "heading %s is out of the dictionary's order", h)
			}
			pos = k
			idx[i] = &def.Headings[k]
			if g.Types[i] != idx[i].Type {
				add("8", g.Name, 0, "heading %s has type %q, the dictionary's is %q", h, g.Types[i], idx[i].Type)
			}
			if g.Units[i] != idx[i].Unit {
				add("8", g.Name, 0, "heading %s has unit %q, the dictionary's is %q", h, g.Units[i], idx[i].Unit)
			}
			if u := g.Units[i]; u != "" && !units[u] {
				add("15", g.Name, 0, "unit %q of %s is not in the UNIT group", u, h)
			}
			if t := g.Types[i]; t != "" && !types[t] {
				add("17", g.Name, 0, "type %q of %s is not in the TYPE group", t, h)
			}
		}
		for _, dh := range def.Headings {
			if (dh.Key || dh.Required) && !seen[dh.Name] {
				add(map[bool]string{true: "10a", false: "10b"}[dh.Key], g.Name, 0, "%s heading %s is missing", map[bool]string{true: "KEY", false: "REQUIRED"}[dh.Key], dh.Name)
			}
		}
		// Values.
		keys := map[string]int{}
		var parent *Group
		var parentIDs map[string]bool
		if def.Parent == "LOCA" {
			parent = f.Group(def.Parent)
			parentIDs = map[string]bool{}
			if parent != nil {
				if k := parent.Index("LOCA_ID"); k >= 0 {
					for _, r := range parent.Rows {
						parentIDs[r[k]] = true
					}
				}
			}
		}
		for ri, r := range g.Rows {
			row := rowNo(g, ri)
			var key []string
			for i, v := range r {
				h := idx[i]
				if h == nil {
					continue
				}
				for k := 0; k < len(v); k++ {
					if v[k] >= 0x80 {
						add("1", g.Name, row, "%s %q has a byte that is not ASCII", h.Name, v)
						break
					}
					if v[k] == '\r' || v[k] == '\n' {
						add("6", g.Name, row, "%s has a line break inside the field", h.Name)
						break
					}
				}
				if h.Required && v == "" {
					add("10b", g.Name, row, "REQUIRED field %s is empty", h.Name)
				}
				if h.Key {
					key = append(key, v)
				}
				if v == "" {
					continue
				}
				ok := true
				switch h.Type {
				case Type0DP:
					ok = re0DP.MatchString(v)
				case Type2DP:
					ok = re2DP.MatchString(v)
				case TypeXN:
					ok = reXN.MatchString(v)
				case TypeDT:
					ok = h.Unit != UnitDate || reDate.MatchString(v)
				case TypePA:
					ok = abbr[[2]string{h.Name, v}]
					if !ok {
						add("16", g.Name, row, "%s value %q is not defined in the ABBR group", h.Name, v)
						ok = true
					}
				}
				if !ok {
					add("8", g.Name, row, "%s value %q is not of type %s", h.Name, v, h.Type)
				}
			}
			k := strings.Join(key, "\x00")
			if prev, dup := keys[k]; dup {
				add("10a", g.Name, row, "the KEY fields repeat those of row %d", prev)
			} else {
				keys[k] = row
			}
			if parentIDs != nil {
				if k := g.Index("LOCA_ID"); k >= 0 && !parentIDs[r[k]] {
					add("10c", g.Name, row, "LOCA_ID %q has no row in LOCA", r[k])
				}
			}
		}
		if def.Parent == "PROJ" && f.Group("PROJ") == nil {
			add("10c", g.Name, 0, "parent group PROJ is missing")
		}
	}
	return errs
}
