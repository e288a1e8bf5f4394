package ags4

import (
	"errors"
	"fmt"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"
	"time"
)

// Project is the PROJ row.
type Project struct {
	ID, Name, Location, Client, Contractor, Engineer, Memo string
}

// Transmission is the TRAN row. TRAN_AGS is always [Edition]; TRAN_DLIM and
// TRAN_RCON take the usual "|" and "+" when empty.
type Transmission struct {
	IssueNo     string
	Date        time.Time // written as yyyy-mm-dd
	Producer    string
	Status      string // e.g. "Draft" or "Final"
	Description string
	Recipient   string
	Delimiter   string // TRAN_DLIM
	Concatenate string // TRAN_RCON
	Remarks     string
}

// Location is a LOCA row: a hole and its collar.
type Location struct {
	ID   string
	Type string // LOCA_TYPE abbreviation, e.g. "RC" (rotary core); defined in Abbreviations
	// East and North are national-grid coordinates (LOCA_NATE, LOCA_NATN),
	// GroundLevel the collar elevation (LOCA_GL), FinalDepth LOCA_FDEP; NaN
	// when not known.
	East, North, GroundLevel, FinalDepth float64
	GridRef                              string // LOCA_GREF abbreviation, e.g. "EPSG:32750"
	Remarks                              string
}

// Orientation is a HORN row: the direction of a section of hole. Dip is
// corvane's hole dip (negative downward); it is written as HORN_INCL,
// measured positive downward from horizontal (dip -60 is HORN_INCL 60).
type Orientation struct {
	Hole         string
	Top, Base    float64
	Azimuth, Dip float64
	Remarks      string
}

// Core is a CORE row: a core run with its recoveries in percent (NaN when
// not measured) and core diameter in millimetres.
type Core struct {
	Hole                              string
	Top, Base                         float64
	TotalRecovery, SolidRecovery, RQD float64 // CORE_PREC, CORE_SREC, CORE_RQD
	Diameter                          float64 // CORE_DIAM
	Remarks                           string
	// Line is the file line of the row when read ([Read]); 0 when built.
	// Writing ignores it.
	Line int
}

// Discontinuity is a DISC row. Base is the bottom of the discontinuity
// (equal to Top for one measured at a single depth); Number tells apart
// discontinuities at the same depths. Dip and DipDirection are NaN for an
// unoriented one (AGS4 has no heading for alpha, so none is written).
type Discontinuity struct {
	Hole              string
	Top, Base         float64
	Set               string // FRAC_SET
	Number            string // DISC_NUMB
	Type              string // DISC_TYPE abbreviation, defined in Abbreviations
	Dip, DipDirection float64
	Remarks           string
	// Line is the file line of the row when read ([Read]); 0 when built.
	// Writing ignores it.
	Line int
}

// Spacing is a FRAC row: fracture spacing over a depth interval for one set
// ("" for all discontinuities), spacings in millimetres along the core and
// the fracture index (fractures per metre); NaN when not known.
type Spacing struct {
	Hole           string
	From, To       float64
	Set            string
	Max, Mean, Min float64 // FRAC_IMAX, FRAC_IAVE, FRAC_IMIN
	Index          float64 // FRAC_FI
	Remarks        string
}

// Abbreviation is an ABBR row: the meaning of a code used in a PA heading.
type Abbreviation struct {
	Heading, Code, Description, List, Remarks string
}

// Data is the content of a transfer file.
type Data struct {
	Project         Project
	Transmission    Transmission
	Abbreviations   []Abbreviation
	Locations       []Location
	Orientations    []Orientation
	Cores           []Core
	Discontinuities []Discontinuity
	Spacings        []Spacing
}

// Decimals of the XN and X numbers this package writes: spacings to the
// millimetre, fracture index to 0.01 per metre, discontinuity dip and dip
// direction to the whole degree (the usual precision of a logged
// discontinuity, common practice).
const (
	spacingDecimals = 0
	indexDecimals   = 2
	angleDecimals   = 0
)

// fix formats v with d decimals; NaN is an empty field and -0 is 0.
func fix(v float64, d int) string {
	if math.IsNaN(v) {
		return ""
	}
	s := strconv.FormatFloat(v, 'f', d, 64)
	if strings.TrimLeft(s, "-0.") == "" { // -0, -0.00
		s = strings.TrimPrefix(s, "-")
	}
	return s
}

// azimuth formats an azimuth in [0, 360) with d decimals, 360 after rounding
// written as 0.
func azimuth(v float64, d int) string {
	s := fix(v, d)
	if f, err := strconv.ParseFloat(s, 64); err == nil && f >= 360 {
		s = fix(0, d)
	}
	return s
}

// Build turns d into an AGS4 file: PROJ, TRAN, UNIT, TYPE, ABBR, then the
// data groups that have rows. UNIT and TYPE list the units and types of the
// groups written; ABBR holds d.Abbreviations sorted by heading and code.
// It does not check the rules; [Write] does.
func Build(d *Data) (*File, error) {
	f := &File{}
	add := func(name string, rows [][]string) *Group {
		def := Def(name)
		g := &Group{Name: name, Rows: rows}
		for _, h := range def.Headings {
			g.Headings = append(g.Headings, h.Name)
			g.Units = append(g.Units, h.Unit)
			g.Types = append(g.Types, h.Type)
		}
		f.Groups = append(f.Groups, g)
		return g
	}
	p := d.Project
	add("PROJ", [][]string{{p.ID, p.Name, p.Location, p.Client, p.Contractor, p.Engineer, p.Memo}})
	t := d.Transmission
	date := ""
	if !t.Date.IsZero() {
		date = t.Date.Format(time.DateOnly)
	}
	dlim, rcon := t.Delimiter, t.Concatenate
	if dlim == "" {
		dlim = "|"
	}
	if rcon == "" {
		rcon = "+"
	}
	add("TRAN", [][]string{{t.IssueNo, date, t.Producer, t.Status, t.Description, Edition, t.Recipient, dlim, rcon, t.Remarks}})
	unitG := add("UNIT", nil)
	typeG := add("TYPE", nil)
	ab := slices.Clone(d.Abbreviations)
	slices.SortFunc(ab, func(a, b Abbreviation) int {
		return strings.Compare(a.Heading+"\x00"+a.Code, b.Heading+"\x00"+b.Code)
	})
	var abRows [][]string
	for _, a := range ab {
		abRows = append(abRows, []string{a.Heading, a.Code, a.Description, a.List, a.Remarks})
	}
	if len(abRows) > 0 {
		add("ABBR", abRows)
	}
	var rows [][]string
	for _, l := range d.Locations {
		rows = append(rows, []string{l.ID, l.Type, fix(l.East, 2), fix(l.North, 2), l.GridRef, fix(l.GroundLevel, 2), l.Remarks, fix(l.FinalDepth, 2)})
	}
	if rows != nil {
		add("LOCA", rows)
	}
	rows = nil
	for _, o := range d.Orientations {
		rows = append(rows, []string{o.Hole, fix(o.Top, 2), fix(o.Base, 2), azimuth(o.Azimuth, 0), fix(-o.Dip, 0), o.Remarks})
	}
	if rows != nil {
		add("HORN", rows)
	}
	rows = nil
	for _, c := range d.Cores {
		rows = append(rows, []string{c.Hole, fix(c.Top, 2), fix(c.Base, 2), fix(c.TotalRecovery, 0), fix(c.SolidRecovery, 0), fix(c.RQD, 0), fix(c.Diameter, 0), c.Remarks})
	}
	if rows != nil {
		add("CORE", rows)
	}
	rows = nil
	for i, x := range d.Discontinuities {
		// DISC_DIP and DISC_DIR are text (type X): rule 8 cannot catch an
		// infinity there, so it is refused here.
		if math.IsInf(x.Dip, 0) || math.IsInf(x.DipDirection, 0) {
			return nil, fmt.Errorf("DISC row %d (hole %s, depth %g): dip or dip direction is not finite", i+1, x.Hole, x.Top)
		}
		rows = append(rows, []string{x.Hole, fix(x.Top, 2), fix(x.Base, 2), x.Set, x.Number, x.Type, fix(x.Dip, angleDecimals), azimuth(x.DipDirection, angleDecimals), x.Remarks})
	}
	if rows != nil {
		add("DISC", rows)
	}
	rows = nil
	for _, s := range d.Spacings {
		rows = append(rows, []string{s.Hole, fix(s.From, 2), fix(s.To, 2), s.Set, fix(s.Max, spacingDecimals), fix(s.Mean, spacingDecimals), fix(s.Min, spacingDecimals), fix(s.Index, indexDecimals), s.Remarks})
	}
	if rows != nil {
		add("FRAC", rows)
	}
	// UNIT and TYPE: what the groups use (rules 15 and 17), sorted.
	us, ts := map[string]bool{}, map[string]bool{}
	for _, g := range f.Groups {
		for i := range g.Headings {
			if g.Units[i] != "" {
				us[g.Units[i]] = true
			}
			ts[g.Types[i]] = true
		}
	}
	for _, u := range sortedKeys(us) {
		unitG.Rows = append(unitG.Rows, []string{u, UnitDescriptions[u], ""})
	}
	for _, t := range sortedKeys(ts) {
		typeG.Rows = append(typeG.Rows, []string{t, TypeDescriptions[t]})
	}
	return f, nil
}

func sortedKeys(m map[string]bool) []string {
	out := make([]string, 0, len(m))
	for k := range m {
		out = append(out, k)
	}
	slices.Sort(out)
	return out
}

// Write builds d as an AGS4 file, checks it against the rules ([Check]) and
// writes it to w. A breach of a rule is an error listing every breach, and
// nothing is written.
func Write(w io.Writer, d *Data) error {
	f, err := Build(d)
	if err != nil {
		return err
	}
	if errs := Check(f); len(errs) > 0 {
		return errors.Join(errs...)
	}
	return f.Encode(w)
}

// Read parses an AGS4 file ([Parse]) and takes from it the groups this
// package writes: PROJ, TRAN, ABBR, LOCA, HORN, CORE, DISC and FRAC (UNIT
// and TYPE are checked by the parse only; Write makes them anew). Headings
// may come in any order, unknown headings and groups are ignored, missing
// optional headings read as empty. A value that is not a number where one
// is expected is an error at its file, line and heading.
func Read(r io.Reader, name string) (*Data, error) {
	f, err := Parse(r, name)
	if err != nil {
		return nil, err
	}
	d := &Data{}
	var first error
	each := func(group string, fn func(c *cells)) {
		g := f.Group(group)
		if g == nil {
			return
		}
		for i, row := range g.Rows {
			c := &cells{g: g, row: row, file: name, line: g.RowLines[i]}
			fn(c)
			if c.err != nil && first == nil {
				first = c.err
			}
		}
	}
	each("PROJ", func(c *cells) {
		d.Project = Project{c.s("PROJ_ID"), c.s("PROJ_NAME"), c.s("PROJ_LOC"), c.s("PROJ_CLNT"), c.s("PROJ_CONT"), c.s("PROJ_ENG"), c.s("PROJ_MEMO")}
	})
	each("TRAN", func(c *cells) {
		t := Transmission{IssueNo: c.s("TRAN_ISNO"), Producer: c.s("TRAN_PROD"), Status: c.s("TRAN_STAT"), Description: c.s("TRAN_DESC"),
			Recipient: c.s("TRAN_RECV"), Delimiter: c.s("TRAN_DLIM"), Concatenate: c.s("TRAN_RCON"), Remarks: c.s("TRAN_REM")}
		if s := c.s("TRAN_DATE"); s != "" {
			// DT values may carry a time; the date is what TRAN needs.
			dt, err := time.Parse(time.DateOnly, s[:min(len(s), 10)])
			if err != nil {
				c.fail("TRAN_DATE", "%q is not a date yyyy-mm-dd", s)
			}
			t.Date = dt
		}
		d.Transmission = t
	})
	each("ABBR", func(c *cells) {
		d.Abbreviations = append(d.Abbreviations, Abbreviation{c.s("ABBR_HDNG"), c.s("ABBR_CODE"), c.s("ABBR_DESC"), c.s("ABBR_LIST"), c.s("ABBR_REM")})
	})
	each("LOCA", func(c *cells) {
		d.Locations = append(d.Locations, Location{ID: c.s("LOCA_ID"), Type: c.s("LOCA_TYPE"), East: c.n("LOCA_NATE"), North: c.n("LOCA_NATN"),
			GridRef: c.s("LOCA_GREF"), GroundLevel: c.n("LOCA_GL"), Remarks: c.s("LOCA_REM"), FinalDepth: c.n("LOCA_FDEP")})
	})
	each("HORN", func(c *cells) {
		d.Orientations = append(d.Orientations, Orientation{Hole: c.s("LOCA_ID"), Top: c.n("HORN_TOP"), Base: c.n("HORN_BASE"),
			Azimuth: c.n("HORN_ORNT"), Dip: -c.n("HORN_INCL"), Remarks: c.s("HORN_REM")})
	})
	each("CORE", func(c *cells) {
		d.Cores = append(d.Cores, Core{Hole: c.s("LOCA_ID"), Top: c.n("CORE_TOP"), Base: c.n("CORE_BASE"), TotalRecovery: c.n("CORE_PREC"),
			SolidRecovery: c.n("CORE_SREC"), RQD: c.n("CORE_RQD"), Diameter: c.n("CORE_DIAM"), Remarks: c.s("CORE_REM"), Line: c.line})
	})
	each("DISC", func(c *cells) {
		d.Discontinuities = append(d.Discontinuities, Discontinuity{Hole: c.s("LOCA_ID"), Top: c.n("DISC_TOP"), Base: c.n("DISC_BASE"),
			Set: c.s("FRAC_SET"), Number: c.s("DISC_NUMB"), Type: c.s("DISC_TYPE"), Dip: c.n("DISC_DIP"), DipDirection: c.n("DISC_DIR"),
			Remarks: c.s("DISC_REM"), Line: c.line})
	})
	each("FRAC", func(c *cells) {
		d.Spacings = append(d.Spacings, Spacing{Hole: c.s("LOCA_ID"), From: c.n("FRAC_FROM"), To: c.n("FRAC_TO"), Set: c.s("FRAC_SET"),
			Max: c.n("FRAC_IMAX"), Mean: c.n("FRAC_IAVE"), Min: c.n("FRAC_IMIN"), Index: c.n("FRAC_FI"), Remarks: c.s("FRAC_REM")})
	})
	if first != nil {
		return nil, first
	}
	return d, nil
}

// cells reads the fields of one DATA row by heading.
type cells struct {
	g    *Group
	row  []string
	file string
	line int
	err  error
}

func (c *cells) s(h string) string {
	if i := c.g.Index(h); i >= 0 {
		return c.row[i]
	}
	return ""
}

// n reads a number; an empty or missing field is NaN.
func (c *cells) n(h string) float64 {
	s := strings.TrimSpace(c.s(h))
	if s == "" {
		return math.NaN()
	}
	v, err := strconv.ParseFloat(s, 64)
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
		c.fail(h, "%q is not a number", s)
		return math.NaN()
	}
	return v
}

func (c *cells) fail(h, format string, args ...any) {
	if c.err == nil {
		c.err = &ParseError{File: c.file, Line: c.line, Msg: fmt.Sprintf("%s %s: %s", c.g.Name, h, fmt.Sprintf(format, args...))}
	}
}

// SpacingOf computes a FRAC row from the depths of the discontinuities of
// one set (or of all) in the interval [from, to) of a hole: the spacings
// between successive depths along the core in millimetres (largest, mean,
// smallest; NaN with fewer than two discontinuities) and the fracture
// index, the count per metre of the interval (common practice). Depths
// outside the interval are ignored; lengths are in metres.
func SpacingOf(hole, set string, from, to float64, depths []float64) (Spacing, error) {
	if !(to > from) {
		return Spacing{}, fmt.Errorf("hole %s: interval %g-%g m is empty", hole, from, to)
	}
	var in []float64
	for _, z := range depths {
		if z >= from && z < to {
			in = append(in, z)
		}
	}
	slices.Sort(in)
	s := Spacing{Hole: hole, From: from, To: to, Set: set, Max: math.NaN(), Mean: math.NaN(), Min: math.NaN(),
		Index: float64(len(in)) / (to - from)}
	if len(in) >= 2 {
		s.Max, s.Min = math.Inf(-1), math.Inf(1)
		for i := 1; i < len(in); i++ {
			g := (in[i] - in[i-1]) * 1000
			s.Max, s.Min = max(s.Max, g), min(s.Min, g)
		}
		s.Mean = (in[len(in)-1] - in[0]) * 1000 / float64(len(in)-1)
	}
	return s, nil
}
