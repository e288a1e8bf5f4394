package ags4

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"slices"
	"strings"
	"testing"
	"time"

	"corvane/internal/exchange/exchangetest"
)

// sample is a transfer of the invented Zelvorra Reach prospect: three holes with
// their orientation sections, core runs, discontinuities (one unoriented,
// one with quotes in its remark) and fracture spacing.
func sample(t *testing.T) *Data {
	t.Helper()
	d := &Data{
		Project: Project{ID: "ZR-2026", Name: "Zelvorra Reach prospect", Location: "Zelvorra Reach", Client: "Zelvorra Reach Minerals", Memo: "oriented core, 2026 campaign"},
		Transmission: Transmission{IssueNo: "1", Date: time.Date(2026, 12, 3, 0, 0, 0, 0, time.UTC), Producer: "corvane", Status: "Draft",
			Description: "discontinuities from oriented core", Recipient: "site geotechnical database"},
		Abbreviations: []Abbreviation{
			{Heading: "LOCA_TYPE", Code: "RC", Description: "Rotary core"},
			{Heading: "LOCA_GREF", Code: "EPSG:32750", Description: "WGS 84 / UTM zone 50S"},
		},
	}
	for _, code := range exchangetest.Types {
		d.Abbreviations = append(d.Abbreviations, Abbreviation{Heading: "DISC_TYPE", Code: code, Description: "type " + code + " of the project vocabulary"})
	}
	for _, h := range exchangetest.Holes() {
		c := h.Collar
		d.Locations = append(d.Locations, Location{ID: h.Name, Type: "RC", East: c.East, North: c.North, GridRef: "EPSG:32750", GroundLevel: c.Elevation, FinalDepth: c.Depth})
		top, az, dip := 0.0, c.Azimuth, c.Dip
		for _, s := range h.Stations {
			if s.Depth > top {
				d.Orientations = append(d.Orientations, Orientation{Hole: h.Name, Top: top, Base: s.Depth, Azimuth: az, Dip: dip})
			}
			top, az, dip = s.Depth, s.Azimuth, s.Dip
		}
		if top < c.Depth {
			d.Orientations = append(d.Orientations, Orientation{Hole: h.Name, Top: top, Base: c.Depth, Azimuth: az, Dip: dip, Remarks: "below the last survey station"})
		}
		for z := 0.0; z+3 <= c.Depth; z += 3 {
			d.Cores = append(d.Cores, Core{Hole: h.Name, Top: z, Base: z + 3, TotalRecovery: 98.6, SolidRecovery: 91, RQD: 77.5, Diameter: 63.5})
		}
	}
	d.Cores[1].RQD = math.NaN()
	n := map[string]int{}
	for _, s := range exchangetest.Structures(60) {
		n[s.Hole]++
		d.Discontinuities = append(d.Discontinuities, Discontinuity{Hole: s.Hole, Top: s.Depth, Base: s.Depth, Set: s.Set,
			Number: fmt.Sprint(n[s.Hole]), Type: s.Type, Dip: s.Dip, DipDirection: s.DipDirection})
	}
	d.Discontinuities[3].Dip, d.Discontinuities[3].DipDirection = math.NaN(), math.NaN()
	d.Discontinuities[3].Remarks = "unoriented: core not marked"
	d.Discontinuities[4].Remarks = `logged as "open", 2 mm`
	sp, err := SpacingOf("ZR101", "", 0, 50, []float64{3.1, 9.8, 22.45, 40})
	if err != nil {
		t.Fatal(err)
	}
	d.Spacings = append(d.Spacings, sp)
	return d
}

func write(t *testing.T, d *Data) []byte {
	t.Helper()
	var b bytes.Buffer
	if err := Write(&b, d); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

// TestRoundTrip: export -> import -> export gives the same bytes, and the
// imported discontinuities and core runs are the exported ones to the
// precision of their types.
func TestRoundTrip(t *testing.T) {
	d := sample(t)
	b1 := write(t, d)
	d2, err := Read(bytes.NewReader(b1), "sample.ags")
	if err != nil {
		t.Fatal(err)
	}
	b2 := write(t, d2)
	if !bytes.Equal(b1, b2) {
		t.Fatalf("second export differs:\n%s\n----\n%s", b1, b2)
	}
	if len(d2.Discontinuities) != len(d.Discontinuities) || len(d2.Cores) != len(d.Cores) {
		t.Fatalf("read %d DISC, %d CORE rows; wrote %d, %d", len(d2.Discontinuities), len(d2.Cores), len(d.Discontinuities), len(d.Cores))
	}
	same := func(a, b, tol float64) bool { return math.IsNaN(a) && math.IsNaN(b) || math.Abs(a-b) <= tol }
	for i, x := range d.Discontinuities {
		y := d2.Discontinuities[i]
		dd := math.Abs(x.DipDirection - y.DipDirection)
		if x.Hole != y.Hole || x.Set != y.Set || x.Number != y.Number || x.Type != y.Type || x.Remarks != y.Remarks ||
			!same(x.Top, y.Top, 0.005) || !same(x.Base, y.Base, 0.005) || !same(x.Dip, y.Dip, 0.5) ||
			!(math.IsNaN(x.DipDirection) && math.IsNaN(y.DipDirection) || dd <= 0.5 || dd >= 359.5) {
			t.Errorf("DISC %d: wrote %+v, read %+v", i, x, y)
		}
	}
	for i, x := range d.Cores {
		y := d2.Cores[i]
		if x.Hole != y.Hole || !same(x.Top, y.Top, 0.005) || !same(x.Base, y.Base, 0.005) || !same(x.TotalRecovery, y.TotalRecovery, 0.5) ||
			!same(x.SolidRecovery, y.SolidRecovery, 0.5) || !same(x.RQD, y.RQD, 0.5) || !same(x.Diameter, y.Diameter, 0.5) {
			t.Errorf("CORE %d: wrote %+v, read %+v", i, x, y)
		}
	}
	if d2.Transmission.Date != d.Transmission.Date || d2.Project != d.Project {
		t.Errorf("PROJ/TRAN read back as %+v %+v", d2.Project, d2.Transmission)
	}
}

// lines splits a written file at CR LF.
func lines(b []byte) []string {
	return strings.Split(strings.TrimSuffix(string(b), "\r\n"), "\r\n")
}

// hasRule reports whether errs holds a breach of rule.
func hasRule(errs []error, rule string) bool {
	for _, e := range errs {
		var re *RuleError
		if errors.As(e, &re) && re.Rule == rule {
			return true
		}
	}
	return false
}

func writeErr(t *testing.T, d *Data, rule string) {
	t.Helper()
	var b bytes.Buffer
	err := Write(&b, d)
	if err == nil || !strings.Contains(err.Error(), "AGS4 rule "+rule+":") {
		t.Errorf("Write: error %v, want a breach of AGS4 rule %s", err, rule)
	}
	if b.Len() != 0 {
		t.Errorf("Write wrote %d bytes of a file that breaks rule %s", b.Len(), rule)
	}
}

func checkErr(t *testing.T, f *File, rule string) {
	t.Helper()
	if errs := Check(f); !hasRule(errs, rule) {
		t.Errorf("Check: %v, want a breach of AGS4 rule %s", errs, rule)
	}
}

func built(t *testing.T) *File {
	t.Helper()
	f, err := Build(sample(t))
	if err != nil {
		t.Fatal(err)
	}
	if errs := Check(f); errs != nil {
		t.Fatalf("the sample breaks rules: %v", errs)
	}
	return f
}

func parseErr(t *testing.T, text, rule string) {
	t.Helper()
	_, err := Parse(strings.NewReader(text), "x.ags")
	if err == nil || !strings.Contains(err.Error(), "AGS4 rule "+rule) {
		t.Errorf("Parse(%q): %v, want a breach of AGS4 rule %s", text, err, rule)
	}
}

// AGS4 rule 1: ASCII only.
func TestRule1ASCII(t *testing.T) {
	b := write(t, sample(t))
	for i, c := range b {
		if c >= 0x80 {
			t.Fatalf("byte %d is 0x%02x", i, c)
		}
	}
	d := sample(t)
	d.Discontinuities[0].Remarks = "dip 45°"
	writeErr(t, d, "1")
	parseErr(t, "\"GROUP\",\"PRÖJ\"\r\n", "1")
}

// AGS4 rule 2: one or more groups, each with one or more DATA rows; groups
// without rows are not written.
func TestRule2GroupsHaveData(t *testing.T) {
	d := sample(t)
	d.Spacings = nil
	b := write(t, d)
	if bytes.Contains(b, []byte(`"GROUP","FRAC"`)) {
		t.Error("an empty FRAC group was written")
	}
	f, err := Parse(bytes.NewReader(b), "x.ags")
	if err != nil {
		t.Fatal(err)
	}
	for _, g := range f.Groups {
		if len(g.Rows) == 0 {
			t.Errorf("group %s has no DATA row", g.Name)
		}
	}
	parseErr(t, "\"GROUP\",\"PROJ\"\r\n\"HEADING\",\"PROJ_ID\"\r\n\"UNIT\",\"\"\r\n\"TYPE\",\"ID\"\r\n", "2")
}

// AGS4 rule 2a: every line ends with CR LF.
func TestRule2aCRLF(t *testing.T) {
	b := write(t, sample(t))
	if !bytes.HasSuffix(b, []byte("\r\n")) {
		t.Error("the last line does not end in CR LF")
	}
	for i, c := range b {
		if c == '\n' && (i == 0 || b[i-1] != '\r') {
			t.Fatalf("bare LF at byte %d", i)
		}
	}
}

// AGS4 rule 2b: UNIT and TYPE rows right after HEADING at the start of each
// group. AGS4 rule 3: every line starts with a data descriptor.
func TestRule2bAnd3Descriptors(t *testing.T) {
	ls := lines(write(t, sample(t)))
	var prev string
	for i, l := range ls {
		if l == "" {
			prev = ""
			continue
		}
		desc, _, _ := strings.Cut(l, ",")
		desc = strings.Trim(desc, `"`)
		want := map[string]string{"GROUP": "", "HEADING": "GROUP", "UNIT": "HEADING", "TYPE": "UNIT"}
		switch desc {
		case "GROUP", "HEADING", "UNIT", "TYPE":
			if prev != want[desc] {
				t.Errorf("line %d: %s after %q", i+1, desc, prev)
			}
		case "DATA":
			if prev != "TYPE" && prev != "DATA" {
				t.Errorf("line %d: DATA after %q", i+1, prev)
			}
		default:
			t.Errorf("line %d starts with %q (rule 3)", i+1, desc)
		}
		prev = desc
	}
	parseErr(t, "\"GROUP\",\"PROJ\"\r\n\"UNIT\",\"\"\r\n", "2b")
	parseErr(t, "\"GROUP\",\"PROJ\"\r\n\"HEADER\",\"PROJ_ID\"\r\n", "3")
}

// AGS4 rule 4: a GROUP row holds only the group name; UNIT, TYPE and DATA
// rows have one field per heading.
func TestRule4FieldCounts(t *testing.T) {
	f, err := Parse(bytes.NewReader(write(t, sample(t))), "x.ags")
	if err != nil {
		t.Fatal(err)
	}
	for _, g := range f.Groups {
		for _, r := range g.Rows {
			if len(r) != len(g.Headings) || len(g.Units) != len(g.Headings) || len(g.Types) != len(g.Headings) {
				t.Errorf("group %s: %d headings, row of %d", g.Name, len(g.Headings), len(r))
			}
		}
	}
	parseErr(t, "\"GROUP\",\"PROJ\",\"TRAN\"\r\n", "4")
	parseErr(t, "\"GROUP\",\"PROJ\"\r\n\"HEADING\",\"PROJ_ID\",\"PROJ_NAME\"\r\n\"UNIT\",\"\"\r\n", "4")
	parseErr(t, "\"GROUP\",\"PROJ\"\r\n\"HEADING\",\"PROJ_ID\"\r\n\"UNIT\",\"\"\r\n\"TYPE\",\"ID\"\r\n\"DATA\",\"A\",\"B\"\r\n", "4")
}

// AGS4 rule 5: every field in double quotes, a quote inside doubled. AGS4
// rule 6: fields separated by commas, no line break inside a field.
func TestRule5And6Quoting(t *testing.T) {
	b := write(t, sample(t))
	if !bytes.Contains(b, []byte(`"logged as ""open"", 2 mm"`)) {
		t.Error(`the remark with quotes and a comma is not written as "logged as ""open"", 2 mm"`)
	}
	for i, l := range lines(b) {
		if l != "" && (!strings.HasPrefix(l, `"`) || !strings.HasSuffix(l, `"`)) {
			t.Errorf("line %d is not made of quoted fields: %s", i+1, l)
		}
	}
	parseErr(t, "GROUP,\"PROJ\"\r\n", "5")
	parseErr(t, "\"GROUP\",\"PROJ\r\n", "5")
	parseErr(t, "\"GROUP\";\"PROJ\"\r\n", "6")
	d := sample(t)
	d.Cores[0].Remarks = "broken\r\nzone"
	writeErr(t, d, "6")
}

// AGS4 rule 7: headings in the dictionary's order, no duplicates.
func TestRule7Order(t *testing.T) {
	f := built(t)
	for _, g := range f.Groups {
		def := Def(g.Name)
		var want []string
		for _, h := range def.Headings {
			want = append(want, h.Name)
		}
		if !slices.Equal(g.Headings, want) {
			t.Errorf("%s headings %v, dictionary order %v", g.Name, g.Headings, want)
		}
	}
	g := f.Group("DISC")
	swap := func(s []string) { s[6], s[7] = s[7], s[6] }
	swap(g.Headings)
	swap(g.Units)
	swap(g.Types)
	for _, r := range g.Rows {
		swap(r)
	}
	checkErr(t, f, "7")
	f = built(t)
	g = f.Group("PROJ")
	g.Headings[1] = "PROJ_ID"
	checkErr(t, f, "7")
}

// AGS4 rule 8: values in the unit and type the group states: 2DP with
// exactly two decimals, 0DP whole, DT yyyy-mm-dd, HORN_INCL positive
// downward.
func TestRule8Types(t *testing.T) {
	d := sample(t)
	d.Cores = []Core{{Hole: "ZR101", Top: 5, Base: 8.004999, TotalRecovery: 99.5, SolidRecovery: -0.2, RQD: math.NaN(), Diameter: 63.5}}
	d.Orientations = []Orientation{{Hole: "ZR101", Top: 0, Base: 15, Azimuth: 359.7, Dip: -60.4}}
	b := string(write(t, d))
	for _, want := range []string{
		`"DATA","ZR101","5.00","8.00","100","0","","64",""`, // 2DP and 0DP; -0 written as 0, a missing RQD empty
		`"DATA","ZR101","0.00","15.00","0","60",""`,         // azimuth 359.7 rounds to 360 = 0; dip -60.4 is HORN_INCL 60
		`"DATA","1","2026-12-03","corvane"`,                 // TRAN_DATE as DT yyyy-mm-dd
		`"UNIT","","yyyy-mm-dd","",`,
	} {
		if !strings.Contains(b, want) {
			t.Errorf("missing %s", want)
		}
	}
	d = sample(t)
	d.Locations[0].East = math.Inf(1)
	writeErr(t, d, "8") // "+Inf" is not a 2DP value
	d = sample(t)
	d.Discontinuities[0].Dip = math.Inf(-1)
	if err := Write(&bytes.Buffer{}, d); err == nil || !strings.Contains(err.Error(), "DISC row 1") {
		t.Errorf("infinite DISC_DIP (type X): %v", err)
	}
	f := built(t)
	f.Group("CORE").Rows[0][1] = "5.0"
	checkErr(t, f, "8")
	f = built(t)
	f.Group("TRAN").Rows[0][1] = "03/12/2026"
	checkErr(t, f, "8")
	f = built(t)
	f.Group("CORE").Types[3] = "1DP"
	checkErr(t, f, "8")
}

// AGS4 rule 9: group and heading names from the standard dictionary (or a
// DICT group, which this package does not write).
func TestRule9Dictionary(t *testing.T) {
	f := built(t)
	g := f.Group("DISC")
	g.Headings = append(g.Headings, "DISC_ALPH")
	g.Units = append(g.Units, "deg")
	g.Types = append(g.Types, "0DP")
	for i := range g.Rows {
		g.Rows[i] = append(g.Rows[i], "45")
	}
	checkErr(t, f, "9")
	f = built(t)
	f.Groups = append(f.Groups, &Group{Name: "ORNT", Headings: []string{"LOCA_ID"}, Units: []string{""}, Types: []string{"ID"}, Rows: [][]string{{"ZR101"}}})
	checkErr(t, f, "9")
}

// AGS4 rule 10a: KEY fields present and no duplicate key combination; 10b:
// REQUIRED fields present and filled; 10c: each child row has its parent.
func TestRule10Keys(t *testing.T) {
	d := sample(t)
	d.Discontinuities[1] = d.Discontinuities[0]
	writeErr(t, d, "10a")
	d = sample(t)
	d.Locations[0].ID = ""
	writeErr(t, d, "10b")
	d = sample(t)
	d.Project.ID = ""
	writeErr(t, d, "10b")
	d = sample(t)
	d.Cores[0].Hole = "TM999"
	writeErr(t, d, "10c")
	f := built(t)
	g := f.Group("HORN")
	g.Headings, g.Units, g.Types = g.Headings[:2], g.Units[:2], g.Types[:2]
	for i := range g.Rows {
		g.Rows[i] = g.Rows[i][:2]
	}
	checkErr(t, f, "10a") // HORN_BASE is a KEY heading
}

// AGS4 rules 13 and 14: exactly one PROJ and one TRAN row, required fields
// filled.
func TestRule13And14(t *testing.T) {
	f := built(t)
	g := f.Group("PROJ")
	g.Rows = append(g.Rows, slices.Clone(g.Rows[0]))
	checkErr(t, f, "13")
	f = built(t)
	f.Groups = slices.DeleteFunc(f.Groups, func(g *Group) bool { return g.Name == "TRAN" })
	checkErr(t, f, "14")
	d := sample(t)
	d.Transmission.Recipient = ""
	writeErr(t, d, "10b")
	if b := string(write(t, sample(t))); !strings.Contains(b, `"4.1.1","site geotechnical database","|","+"`) {
		t.Error("TRAN_AGS, TRAN_DLIM, TRAN_RCON not written as 4.1.1, |, +")
	}
}

// AGS4 rule 15: a UNIT group listing every unit used; rule 17: a TYPE group
// listing every data type used.
func TestRule15And17UnitsTypes(t *testing.T) {
	f := built(t)
	units, types := map[string]bool{}, map[string]bool{}
	for _, r := range f.Group("UNIT").Rows {
		units[r[0]] = true
	}
	for _, r := range f.Group("TYPE").Rows {
		types[r[0]] = true
		if r[1] == "" {
			t.Errorf("type %s has no description", r[0])
		}
	}
	for _, g := range f.Groups {
		for i := range g.Headings {
			if u := g.Units[i]; u != "" && !units[u] {
				t.Errorf("unit %q of %s is not listed", u, g.Headings[i])
			}
			if !types[g.Types[i]] {
				t.Errorf("type %q of %s is not listed", g.Types[i], g.Headings[i])
			}
		}
	}
	g := f.Group("UNIT")
	g.Rows = slices.DeleteFunc(g.Rows, func(r []string) bool { return r[0] == "mm" })
	checkErr(t, f, "15")
	f = built(t)
	g = f.Group("TYPE")
	g.Rows = slices.DeleteFunc(g.Rows, func(r []string) bool { return r[0] == "2DP" })
	checkErr(t, f, "17")
}

// AGS4 rule 16: every abbreviation (PA value) defined in ABBR.
func TestRule16Abbreviations(t *testing.T) {
	d := sample(t)
	d.Discontinuities[0].Type = "SHR"
	writeErr(t, d, "16")
	d = sample(t)
	d.Locations[0].GridRef = "EPSG:28350"
	writeErr(t, d, "16")
}

// AGS4 rules 19, 19a, 19b: group names four upper-case letters; headings
// upper-case letters, digits and _, at most 9 characters, starting with
// their group's name (or, for a heading taken from another group such as
// LOCA_ID or FRAC_SET, that group's).
func TestRule19Names(t *testing.T) {
	for _, def := range Dictionary {
		if !reGroup.MatchString(def.Name) {
			t.Errorf("group %q", def.Name)
		}
		for _, h := range def.Headings {
			pre, _, _ := strings.Cut(h.Name, "_")
			if !reHeading.MatchString(h.Name) || (pre != def.Name && Def(pre) == nil) {
				t.Errorf("heading %q of %s", h.Name, def.Name)
			}
		}
	}
	f := built(t)
	f.Group("CORE").Name = "Core"
	checkErr(t, f, "19")
	f = built(t)
	f.Group("CORE").Headings[7] = "CORE_REMARK"
	checkErr(t, f, "19a")
	f = built(t)
	f.Group("CORE").Headings[7] = "COREREM"
	checkErr(t, f, "19b")
}

func TestReadErrors(t *testing.T) {
	b := write(t, sample(t))
	bad := bytes.Replace(b, []byte(`"DATA","ZR101","5.00"`), []byte(`"DATA","ZR101","five"`), 1)
	if bytes.Equal(bad, b) {
		// The sample's first ZR101 DISC row may start elsewhere; spoil a CORE row instead.
		bad = bytes.Replace(b, []byte(`"DATA","ZR101","0.00","3.00"`), []byte(`"DATA","ZR101","zero","3.00"`), 1)
	}
	_, err := Read(bytes.NewReader(bad), "bad.ags")
	var pe *ParseError
	if !errors.As(err, &pe) || pe.File != "bad.ags" || pe.Line == 0 || !strings.Contains(pe.Msg, "CORE CORE_TOP") {
		t.Errorf("error %v, want one at bad.ags:line naming CORE CORE_TOP", err)
	}
	// LF line ends are accepted on import.
	if _, err := Read(bytes.NewReader(bytes.ReplaceAll(b, []byte("\r\n"), []byte("\n"))), "lf.ags"); err != nil {
		t.Errorf("LF file: %v", err)
	}
}

// TestSpacingOf checks a fracture spacing worked by hand: discontinuities
// at 1.0, 1.2 and 1.5 m in the interval 1-2 m give spacings of 200 and
// 300 mm (mean 250) and a fracture index of 3 per metre (common practice:
// count per metre of core).
func TestSpacingOf(t *testing.T) {
	s, err := SpacingOf("H", "1", 1, 2, []float64{1.5, 2.0, 1.2, 0.9, 1.0})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(s.Max-300) > 1e-9 || math.Abs(s.Min-200) > 1e-9 || math.Abs(s.Mean-250) > 1e-9 || s.Index != 3 {
		t.Errorf("%+v", s)
	}
	s, _ = SpacingOf("H", "", 0, 4, []float64{2})
	if !math.IsNaN(s.Mean) || s.Index != 0.25 {
		t.Errorf("one fracture: %+v", s)
	}
	if _, err := SpacingOf("H", "", 2, 2, nil); err == nil {
		t.Error("an empty interval was accepted")
	}
}
