package csvio

import (
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"reflect"
	"strconv"
	"strings"
	"testing"
	"unsafe"

	"corvane/internal/domain"
	"corvane/internal/localgrid"
	"corvane/internal/uncertainty"
)

func problems(t *testing.T, err error) []*domain.Error {
	t.Helper()
	var de *domain.Error
	if !errors.As(err, &de) {
		t.Fatalf("error %v (%T) is not a *domain.Error", err, err)
	}
	if len(de.Problems) == 0 {
		return []*domain.Error{de}
	}
	return de.Problems
}

func TestReadCollars(t *testing.T) {
	in := "\ufeffHole_ID, Easting ,NORTHING,elevation,dip,azimuth,depth,declination,crs,site\n" +
		"ZR001,512000.5,6123000,410.2,-60,45,250.5,1.5,EPSG:32750,north\n" +
		"ZR002,512100,6123100,412,-75,360,300,,,\n"
	rows, err := ReadCollars(strings.NewReader(in), "c.csv")
	if err != nil {
		t.Fatal(err)
	}
	if len(rows) != 2 || rows[0].HoleID != "ZR001" || rows[0].Collar.East != 512000.5 || rows[0].Collar.Dip != -60 ||
		rows[0].Collar.Azimuth != 45 || rows[0].Collar.Depth != 250.5 || rows[0].Declination != 1.5 || rows[0].CRS != "EPSG:32750" || rows[0].Line != 2 {
		t.Fatalf("rows = %+v", rows)
	}
	if !math.IsNaN(rows[1].Declination) || !math.IsNaN(rows[1].GridConvergence) || rows[1].Line != 3 {
		t.Fatalf("row 2 = %+v", rows[1])
	}
}

func TestReadCollarsErrors(t *testing.T) {
	_, err := ReadCollars(strings.NewReader("hole_id,easting,northing,elevation,azimuth,depth\nA,1,2,3,4,5\n"), "c.csv")
	if err == nil || !strings.Contains(err.Error(), `c.csv:line 1`) || !strings.Contains(err.Error(), `missing column "dip"`) {
		t.Fatalf("missing column: %v", err)
	}
	in := "hole_id,easting,northing,elevation,azimuth,dip,depth\n" +
		"A,1,2,3,4,-60,100\n" +
		"B,x,2,3,4,-60,100\n" + // text in a number
		"C,1,2,3,400,-60,100\n" + // azimuth out of range
		"A,1,2,3,4,-60,100\n" + // duplicate
		"D,1,2,3,4,-60,0\n" + // depth 0
		"E,1,2,3,4,NaN,10\n" + // NaN
		"F,1,2\n" // short row
	_, err = ReadCollars(strings.NewReader(in), "c.csv")
	ps := problems(t, err)
	want := []struct {
		line int
		col  string
		msg  string
	}{{3, "easting", `"x" is not a number`}, {4, "azimuth", "outside 0..360"}, {5, "hole_id", "already on line 2"},
		{6, "depth", "greater than 0"}, {7, "dip", "not a finite number"}, {8, "", "3 fields"}}
	if len(ps) != len(want) {
		t.Fatalf("problems: %v", err)
	}
	for i, w := range want {
		if ps[i].Loc.File != "c.csv" || ps[i].Loc.Line != w.line || ps[i].Loc.Column != w.col || !strings.Contains(ps[i].Msg, w.msg) {
			t.Errorf("problem %d = %v, want line %d column %q %q", i, ps[i], w.line, w.col, w.msg)
		}
	}
	var buf bytes.Buffer
	Report(&buf, err)
	if strings.Count(buf.String(), "\n") != 7 {
		t.Errorf("report:\n%s", buf.String())
	}
	// One problem under a heading of its own (as an import's "1 bad row;
	// nothing was imported") is listed; one that is the message is not
	// repeated.
	one := domain.Errorf(domain.Invalid, "no hole %q", "Q").At(domain.Location{File: "m.csv", Line: 2, Column: "hole_id"})
	for _, c := range []struct {
		err  error
		want string
	}{
		{&domain.Error{Kind: domain.Invalid, Msg: "1 bad row; nothing was imported", Loc: domain.Location{File: "m.csv"}, Problems: []*domain.Error{one}},
			"m.csv: 1 bad row; nothing was imported:\n  m.csv:line 2, column \"hole_id\": no hole \"Q\"\n"},
		{&domain.Error{Kind: domain.Invalid, Msg: one.Msg, Loc: one.Loc, Problems: []*domain.Error{one}},
			"m.csv:line 2, column \"hole_id\": no hole \"Q\"\n"},
	} {
		buf.Reset()
		Report(&buf, c.err)
		if buf.String() != c.want {
			t.Errorf("report of one problem:\n got %q\nwant %q", buf.String(), c.want)
		}
	}
	_, err = ReadCollars(strings.NewReader("hole_id,easting,northing,elevation,azimuth,dip,depth\n\"A,1\n"), "c.csv")
	if err == nil || !strings.Contains(err.Error(), "c.csv:line 2") || !strings.Contains(err.Error(), "broken CSV") {
		t.Fatalf("broken CSV: %v", err)
	}
	if _, err := ReadCollars(strings.NewReader(""), "c.csv"); err == nil {
		t.Fatal("empty file accepted")
	}
	if _, err := ReadCollars(strings.NewReader("hole_id,HOLE_ID\n"), "c.csv"); err == nil || !strings.Contains(err.Error(), "twice") {
		t.Fatalf("duplicate column: %v", err)
	}
}

func TestReadSurveys(t *testing.T) {
	in := "hole_id,depth,azimuth,dip,azimuth_reference,survey_date\n" +
		"A,0,45,-60,magnetic,2026-03-01\n" +
		"B,0,10,-70,,\n" +
		"A,30,46,-59,Grid,\n"
	rows, err := ReadSurveys(strings.NewReader(in), "s.csv")
	if err != nil {
		t.Fatal(err)
	}
	if len(rows) != 3 || rows[0].AzimuthRef != "magnetic" || rows[0].Date.Year() != 2026 || rows[2].AzimuthRef != "grid" || !rows[1].Date.IsZero() {
		t.Fatalf("rows = %+v", rows)
	}
	bad := "hole_id,depth,azimuth,dip,azimuth_reference,survey_date\n" +
		"A,10,45,-60,,\n" +
		"A,10,45,-60,,\n" + // duplicate depth
		"A,5,45,-60,,\n" + // unsorted
		"A,20,45,-60,north,\n" +
		"A,30,45,-60,,01/02/2026\n"
	_, err = ReadSurveys(strings.NewReader(bad), "s.csv")
	ps := problems(t, err)
	if len(ps) != 4 || !strings.Contains(ps[0].Msg, "repeats line 2") || ps[0].Loc.Column != "depth" ||
		!strings.Contains(ps[1].Msg, "sorted by depth") || ps[1].Loc.Line != 4 ||
		ps[2].Loc.Column != "azimuth_reference" || ps[3].Loc.Column != "survey_date" {
		t.Fatalf("problems: %v", ps)
	}
}

// Station order is checked per survey set, also when the rows of holes and
// sets are interleaved: each set's last good station is remembered whatever
// rows come between.
func TestSurveyOrderInterleavedSets(t *testing.T) {
	in := "hole_id,depth,azimuth,dip,kind\n" +
		"A,0,45,-60,\n" + // 2
		"B,0,45,-60,\n" + // 3
		"A,10,45,-60,\n" + // 4
		"A,0,45,-60,gyro\n" + // 5: another set of A
		"B,5,45,-60,\n" + // 6
		"A,5,45,-60,\n" + // 7: A's set is at 10 (line 4)
		"A,10,45,-60,gyro\n" + // 8
		"B,5,45,-60,\n" + // 9: repeats line 6
		"A,10,45,-60,gyro\n" + // 10: repeats line 8
		"A,20,45,-60,\n" + // 11: fine, after line 4
		"B,abc,45,-60,\n" + // 12: bad, not remembered
		"B,7,45,-60,\n" // 13: fine, after line 6
	_, err := ReadSurveys(strings.NewReader(in), "s.csv")
	ps := problems(t, err)
	var got []string
	for _, p := range ps {
		got = append(got, fmt.Sprintf("%d %s", p.Loc.Line, p.Loc.Column))
	}
	if fmt.Sprint(got) != "[7 depth 9 depth 10 depth 12 depth]" ||
		!strings.Contains(ps[0].Msg, "less than 10 on line 4") || !strings.Contains(ps[1].Msg, "repeats line 6") || !strings.Contains(ps[2].Msg, "repeats line 8") {
		t.Fatalf("problems: %v", ps)
	}
}

// The instrument belongs to a survey set: each set by kind has its own, the
// hole's survey set (rows without a kind) one, and a second instrument within
// one set is refused at its row, naming the set and the first row.
func TestReadSurveysInstrumentPerSet(t *testing.T) {
	in := "hole_id,depth,azimuth,dip,kind,instrument\n" +
		"A,0,45,-60,,Magnetic\n" +
		"A,0,44,-60,gyro,gyro\n" +
		"A,0,45,-60,magnetic,magnetic\n" +
		"A,30,46,-59,,\n" + // not given: the set's, read as absent
		"A,30,45,-59,gyro,GYRO\n"
	rows, err := ReadSurveys(strings.NewReader(in), "s.csv")
	if err != nil {
		t.Fatal(err)
	}
	want := []uncertainty.Instrument{uncertainty.Magnetic, uncertainty.Gyro, uncertainty.Magnetic, "", uncertainty.Gyro}
	for i, r := range rows {
		if r.Instrument != want[i] {
			t.Errorf("row %d instrument %q, want %q", i+1, r.Instrument, want[i])
		}
	}
	bad := "hole_id,depth,azimuth,dip,kind,instrument\n" +
		"A,0,44,-60,gyro,gyro\n" +
		"A,0,45,-60,,gyro\n" +
		"A,30,45,-59,gyro,magnetic\n" + // a second instrument in the gyro set
		"A,30,46,-59,,unknown\n" + // and in the survey set
		"A,40,46,-59,,compass\n"
	_, err = ReadSurveys(strings.NewReader(bad), "s.csv")
	ps := problems(t, err)
	if len(ps) != 3 || ps[0].Loc.Line != 4 || ps[0].Loc.Column != "instrument" || !strings.Contains(ps[0].Msg, `the gyro survey set of hole "A" differs from "gyro" on line 2`) ||
		ps[1].Loc.Line != 5 || !strings.Contains(ps[1].Msg, `the survey set of hole "A" differs from "gyro" on line 3`) ||
		ps[2].Loc.Line != 6 || !strings.Contains(ps[2].Msg, "want magnetic, gyro or unknown") {
		t.Fatalf("problems: %v", ps)
	}
}

func TestReadRuns(t *testing.T) {
	in := "hole_id,from,to,confidence,mismatch\nA,0,3,good,2.5\nA,3,6,NONE,\nA,6,6,fair,\nA,9,12,great,\nA,12,15,poor,200\n"
	_, err := ReadRuns(strings.NewReader(in), "r.csv")
	ps := problems(t, err)
	if len(ps) != 3 || ps[0].Loc.Column != "to" || ps[1].Loc.Column != "confidence" || ps[2].Loc.Column != "mismatch" {
		t.Fatalf("problems: %v", ps)
	}
	rows, err := ReadRuns(strings.NewReader("hole_id,from,to,confidence\nA,0,3,Good\n"), "r.csv")
	if err != nil || len(rows) != 1 || rows[0].Confidence != "good" || !math.IsNaN(rows[0].Mismatch) {
		t.Fatal(rows, err)
	}
}

func TestStructureReader(t *testing.T) {
	in := "Type,HOLE_ID,depth,alpha,beta,gamma,apparent_thickness\n" +
		"joint,A,10.5,45,120,,0.3\n" +
		"\"fault, main\",A,11,45,120,33,\n" +
		"x,A,12,95,120,,\n" +
		"x,A,12,45,abc,,\n" +
		"x,,12,45,20,,\n" +
		"x,A,12,45\n" +
		"x,A,12,45,20,361,\n" +
		"x,A,-1,45,20,,\n" +
		"x,A,1,,20,,\n"
	sr, err := NewStructureReader(strings.NewReader(in), "m.csv")
	if err != nil {
		t.Fatal(err)
	}
	if !sr.HasThickness() || sr.ThicknessColumn() != "apparent_thickness" {
		t.Fatal("thickness column")
	}
	wantErr := []string{"", "", "alpha", "beta", "HOLE_ID", // the name as written in the file
		"", "gamma", "depth", "alpha"}
	for i, w := range wantErr {
		r, err := sr.Next()
		if err != nil {
			t.Fatal(err)
		}
		if r.Line != i+2 {
			t.Errorf("row %d line %d", i, r.Line)
		}
		switch {
		case w == "" && i < 2:
			if r.Err != nil {
				t.Errorf("row %d: %v", i, r.Err)
			}
		case r.Err == nil:
			t.Errorf("row %d: no error, want one on %q", i, w)
		case r.Err.Loc.Column != w || r.Err.Loc.Line != i+2 || r.Err.Loc.File != "m.csv":
			t.Errorf("row %d: %v, want column %q", i, r.Err, w)
		}
		if i == 0 && (r.HasGamma || !r.HasThickness || r.Thickness != 0.3 || r.Depth != 10.5 || r.Record[0] != "joint") {
			t.Errorf("row 0 = %+v", r)
		}
		if i == 1 && (!r.HasGamma || r.Gamma != 33 || r.HasThickness || r.Record[0] != "fault, main") {
			t.Errorf("row 1 = %+v", r)
		}
	}
	if _, err := sr.Next(); err != io.EOF {
		t.Fatalf("end: %v", err)
	}
	sr, _ = NewStructureReader(strings.NewReader("hole_id,depth,alpha,beta\nA,1,2,3\nA,\"1,2,3\n"), "m.csv")
	sr.Next()
	if _, err := sr.Next(); err == nil || !strings.Contains(err.Error(), "m.csv:line 3") {
		t.Fatalf("broken CSV: %v", err)
	}
	if _, err := NewStructureReader(strings.NewReader("hole_id,depth,alpha\n"), "m.csv"); err == nil || !strings.Contains(err.Error(), `"beta"`) {
		t.Fatalf("missing beta: %v", err)
	}
}

// The writer must produce what encoding/csv reads back (the standard library is
// the reference here), for awkward fields too.
func TestWriterRoundTrip(t *testing.T) {
	rows := [][]string{{"a", "b,c", `say "hi"`, "", " lead", "multi\nline", `\.`, "tr\r\nx", "ü"}, {"1"}}
	var buf bytes.Buffer
	w := NewWriter(&buf)
	for _, r := range rows {
		w.Strings(r)
		w.EndRow()
	}
	w.Float(-0.0001, 3)
	w.Float(math.NaN(), 2)
	w.Float(12.3456, 2)
	w.Empty()
	w.EndRow()
	if err := w.Flush(); err != nil {
		t.Fatal(err)
	}
	cr := csv.NewReader(bytes.NewReader(buf.Bytes()))
	cr.FieldsPerRecord = -1
	got, err := cr.ReadAll()
	if err != nil {
		t.Fatal(err, buf.String())
	}
	rows[0][7] = "tr\nx" // encoding/csv reads \r\n inside quotes as \n
	want := append(rows, []string{"0.000", "", "12.35", ""})
	for i := range want {
		if strings.Join(got[i], "|") != strings.Join(want[i], "|") {
			t.Errorf("row %d: %q, want %q", i, got[i], want[i])
		}
	}
	// And the same bytes as encoding/csv writes for the text rows.
	var ref bytes.Buffer
	cw := csv.NewWriter(&ref)
	cw.WriteAll(rows[:1])
	var mine bytes.Buffer
	w = NewWriter(&mine)
	w.Strings(rows[0])
	w.EndRow()
	w.Flush()
	if ref.String() != mine.String() {
		t.Errorf("writer %q, encoding/csv %q", mine.String(), ref.String())
	}
}

func TestParseAzimuthRef(t *testing.T) {
	for in, want := range map[string]string{"TRUE": "true", " grid ": "grid", "Magnetic": "magnetic", "": ""} {
		if got, err := ParseAzimuthRef(in); err != nil || got != want {
			t.Errorf("%q -> %q %v", in, got, err)
		}
	}
	if _, err := ParseAzimuthRef("mag"); err == nil {
		t.Error("mag accepted")
	}
}

// AppendFloat agrees with strconv's fixed format except on exact ties.
func TestAppendFloat(t *testing.T) {
	for _, c := range []struct {
		v    float64
		prec int
		want string
	}{{0, 2, "0.00"}, {-0.004, 2, "0.00"}, {-0.006, 2, "-0.01"}, {359.999, 2, "360.00"}, {12.3456, 3, "12.346"},
		{-90, 0, "-90"}, {6123456.789, 3, "6123456.789"}, {0.05, 1, "0.1"}, {1e20, 2, "100000000000000000000.00"}, {math.Inf(-1), 2, "-Inf"}, {7.0001, 9, "7.000100000"}} {
		if got := string(AppendFloat(nil, c.v, c.prec)); got != c.want {
			t.Errorf("AppendFloat(%v, %d) = %q, want %q", c.v, c.prec, got, c.want)
		}
	}
	if FormatFloat(math.NaN(), 2) != "" {
		t.Error("NaN not empty")
	}
	r := rand.New(rand.NewPCG(1, 1))
	for i := 0; i < 100000; i++ {
		v := (r.Float64() - 0.5) * math.Pow(10, float64(r.IntN(12)))
		prec := r.IntN(7)
		got := string(AppendFloat(nil, v, prec))
		want := strconv.FormatFloat(v, 'f', prec, 64)
		if want == "-0"+strings.TrimPrefix(want, "-0") && strings.Trim(want, "-0.") == "" {
			want = strings.TrimPrefix(want, "-")
		}
		if got != want {
			// Only a tie after scaling may differ: check the scaled value is within 1e-6 of .5.
			s := math.Abs(v) * math.Pow10(prec)
			if math.Abs(s-math.Floor(s)-0.5) > 1e-6 {
				t.Fatalf("AppendFloat(%v, %d) = %q, strconv %q", v, prec, got, want)
			}
		}
	}
}

// The fast decimal path gives bit-for-bit what strconv.ParseFloat gives.
func TestParseSimpleMatchesStrconv(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 3))
	check := func(s string) {
		got, msg := ParseNumber(s)
		want, err := strconv.ParseFloat(s, 64)
		if err != nil || math.IsInf(want, 0) || math.IsNaN(want) {
			if msg == "" {
				t.Fatalf("%q accepted as %v", s, got)
			}
			return
		}
		if msg != "" || math.Float64bits(got) != math.Float64bits(want) {
			t.Fatalf("%q: %v (%q), strconv %v", s, got, msg, want)
		}
	}
	for _, s := range []string{"0", "-0", "+1", ".5", "5.", "00012.5000", "999999999999999", "9999999999999999", "0.000000000000001",
		"123456.789012345", "1e5", "-", ".", "1..2", "1.2.3", "abc", "0x10", "inf", "NaN", "1_000", "5400043.283"} {
		check(s)
	}
	for i := 0; i < 200000; i++ {
		digits := r.IntN(17) + 1
		var b strings.Builder
		if r.IntN(3) == 0 {
			b.WriteByte('-')
		}
		dot := r.IntN(digits + 1)
		for k := 0; k < digits; k++ {
			if k == dot {
				b.WriteByte('.')
			}
			b.WriteByte(byte('0' + r.IntN(10)))
		}
		check(b.String())
	}
}

// AppendFloat writes, digit for digit, the decimal integer round(|v| 10^prec)
// as strconv.FormatUint formats it, with the point put in and the sign when
// nonzero, after whatever b already holds; and it matches strconv's fixed
// format away from exact ties (checked above).
func TestAppendFloatDigitsMatchStrconv(t *testing.T) {
	r := rand.New(rand.NewPCG(7, 11))
	prefix := []byte("ab,")
	for i := 0; i < 300000; i++ {
		v := sampleFloat(r, i%4, 0)
		prec := r.IntN(10)
		s := math.Round(math.Abs(v) * math.Pow10(prec))
		if !(s < 1<<53) {
			continue
		}
		digits := strconv.FormatUint(uint64(s), 10)
		for len(digits) <= prec {
			digits = "0" + digits
		}
		want := digits
		if prec > 0 {
			want = digits[:len(digits)-prec] + "." + digits[len(digits)-prec:]
		}
		if v < 0 && s != 0 {
			want = "-" + want
		}
		// A prefix in a slice with no spare capacity, and one with plenty.
		b := append(make([]byte, 0, len(prefix)), prefix...)
		if got := string(AppendFloat(b, v, prec)); got != string(prefix)+want {
			t.Fatalf("AppendFloat(%q, %v, %d) = %q, want %q", prefix, v, prec, got, string(prefix)+want)
		}
		b = append(make([]byte, 0, 64), prefix...)
		if got := string(AppendFloat(b, v, prec)); got != string(prefix)+want {
			t.Fatalf("AppendFloat(%q, %v, %d) with room = %q, want %q", prefix, v, prec, got, string(prefix)+want)
		}
	}
}

// TestHeaderAliases: a header may name a column as the JSON field does
// (hole for hole_id, azimuth_ref for azimuth_reference; one vocabulary),
// with the same rows as a result; both names of one column are refused.
func TestHeaderAliases(t *testing.T) {
	canon := "hole_id,depth,azimuth,dip,azimuth_reference\nTM001,0,45,-60,magnetic\nTM001,30,46,-59,magnetic\n"
	alias := "Hole,depth,azimuth,dip,azimuth_ref\nTM001,0,45,-60,magnetic\nTM001,30,46,-59,magnetic\n"
	a, err := ReadSurveys(strings.NewReader(canon), "a.csv")
	if err != nil {
		t.Fatal(err)
	}
	b, err := ReadSurveys(strings.NewReader(alias), "b.csv")
	if err != nil {
		t.Fatal(err)
	}
	if len(b) != 2 || !reflect.DeepEqual(a, b) || b[1].HoleID != "TM001" || b[1].AzimuthRef != RefMagnetic {
		t.Errorf("aliased header read %+v, canonical %+v", b, a)
	}
	_, err = ReadSurveys(strings.NewReader("hole_id,hole,depth,azimuth,dip\nTM001,TM001,0,45,-60\n"), "c.csv")
	var de *domain.Error
	if !errors.As(err, &de) || de.Loc.Line != 1 || !strings.Contains(err.Error(), "same column") {
		t.Errorf("both names of one column: %v", err)
	}
}

// testGrid is an invented local grid on GDA2020 / MGA zone 50.
func testGrid(theta, scale float64) *localgrid.Grid {
	g, _, err := localgrid.NewGrid(localgrid.Spec{Name: "mine", GridCRS: "EPSG:7850", Rotation: &theta, Scale: &scale,
		Origin: &localgrid.Origin{X: 5000, Y: 10000, Easting: 391250, Northing: 6465480}})
	if err != nil {
		panic(err)
	}
	return g
}

// A collar's own local grid is a JSON declaration in its local_grid cell,
// read by the one rule of localgrid.Parse; a bad one is refused at its
// cell.
func TestReadCollarsLocalGrid(t *testing.T) {
	in := "hole_id,easting,northing,elevation,azimuth,dip,depth,crs,local_grid\n" +
		`A,5100,10200,300,45,-60,100,local,"{""grid_crs"": ""EPSG:7850"", ""rotation"": -37.25, ""origin"": {""local_easting"": 5000, ""local_northing"": 10000, ""easting"": 391250, ""northing"": 6465480}}"` + "\n" +
		"B,391000,6465000,300,45,-60,100,EPSG:7850,\n"
	rows, err := ReadCollars(strings.NewReader(in), "c.csv")
	if err != nil {
		t.Fatal(err)
	}
	if rows[0].LocalGrid == nil || rows[0].LocalGrid.T.Rotation != -37.25 || rows[0].LocalGrid.T.Scale != 1 || rows[1].LocalGrid != nil {
		t.Fatalf("local grids %+v %+v", rows[0].LocalGrid, rows[1].LocalGrid)
	}
	bad := "hole_id,easting,northing,elevation,azimuth,dip,depth,local_grid\n" +
		`A,5100,10200,300,45,-60,100,"{""grid_crs"": ""EPSG:7850"", ""rotation"": 10}"` + "\n" +
		`B,5100,10200,300,45,-60,100,"{""grid_crs"": ""EPSG:99999"", ""rotation"": 10, ""origin"": {""local_easting"": 0, ""local_northing"": 0, ""easting"": 0, ""northing"": 0}}"` + "\n" +
		"C,5100,10200,300,45,-60,100,not json\n"
	_, err = ReadCollars(strings.NewReader(bad), "c.csv")
	ps := problems(t, err)
	if len(ps) != 3 || ps[0].Loc.Line != 2 || ps[0].Loc.Column != "local_grid" || !strings.Contains(ps[0].Msg, "give rotation and origin") ||
		ps[1].Loc.Line != 3 || !strings.Contains(ps[1].Msg, "grid_crs") || ps[2].Loc.Line != 4 || !strings.Contains(ps[2].Msg, "not a local grid declaration") {
		t.Fatalf("problems: %v", ps)
	}
}

// The preferred set of a hole comes from the preferred column: yes on the
// rows of one set with a kind. Two preferred sets on one hole, a preferred
// survey set without a kind, a set that says both, and a word that is not
// yes or no are each refused at their cell.
func TestReadSurveysPreferred(t *testing.T) {
	in := "hole_id,depth,azimuth,dip,kind,preferred\n" +
		"A,0,45,-60,gyro,\n" +
		"A,0,45,-60,magnetic,Yes\n" +
		"A,30,45,-60,magnetic,\n" +
		"A,30,45,-60,gyro,no\n" +
		"B,0,45,-60,other,true\n"
	rows, err := ReadSurveys(strings.NewReader(in), "s.csv")
	if err != nil {
		t.Fatal(err)
	}
	want := []bool{false, true, false, false, true}
	said := []bool{false, true, false, true, true}
	for i, r := range rows {
		if r.Preferred != want[i] || r.PreferredSaid != said[i] {
			t.Errorf("row %d preferred %v said %v, want %v %v", i+2, r.Preferred, r.PreferredSaid, want[i], said[i])
		}
	}
	bad := "hole_id,depth,azimuth,dip,kind,preferred\n" +
		"A,0,45,-60,gyro,yes\n" +
		"A,0,45,-60,magnetic,yes\n" + // a second preferred set on A
		"B,0,45,-60,,yes\n" + // the survey set has no kind
		"C,0,45,-60,gyro,yes\n" +
		"C,30,45,-60,gyro,no\n" + // the gyro set says both
		"D,0,45,-60,gyro,maybe\n"
	_, err = ReadSurveys(strings.NewReader(bad), "s.csv")
	ps := problems(t, err)
	if len(ps) != 4 || ps[0].Loc.Line != 3 || ps[0].Loc.Column != "preferred" || !strings.Contains(ps[0].Msg, `hole "A" has two preferred survey sets: the magnetic set here and the gyro set on line 2`) ||
		ps[1].Loc.Line != 4 || !strings.Contains(ps[1].Msg, "has no kind") ||
		ps[2].Loc.Line != 6 || !strings.Contains(ps[2].Msg, "differs from line 5") ||
		ps[3].Loc.Line != 7 || !strings.Contains(ps[3].Msg, `"maybe" is not yes or no`) {
		t.Fatalf("problems: %v", ps)
	}
}

// checkParseUnquoted: on the text of a row without quotes, ParseUnquoted
// either declines, keeping the row's line and text, or gives exactly what
// Parse gave (r, read by Next), the fields aside.
func checkParseUnquoted(t *testing.T, sr *StructureReader, r *StructureRow) {
	t.Helper()
	if bytes.IndexByte(r.Raw, '"') >= 0 {
		return
	}
	// Without a hole id to share, with this row's (given as another
	// string), and with another one.
	for _, same := range []string{"", strings.Clone(r.HoleID), "other"} {
		got := StructureRow{Line: r.Line, Raw: r.Raw, HoleID: "stale", Record: []string{"stale"}}
		if !sr.ParseUnquoted(&got, r.Raw, same) {
			if got.Line != r.Line || string(got.Raw) != string(r.Raw) {
				t.Fatalf("line %d %q: declined and lost the line or text", r.Line, r.Raw)
			}
			return
		}
		want := *r
		want.Record = nil
		if fmt.Sprintf("%#v", got) != fmt.Sprintf("%#v", want) {
			t.Fatalf("line %d %q: ParseUnquoted %+v, Parse %+v", r.Line, r.Raw, got, want)
		}
		if same == r.HoleID && unsafe.StringData(got.HoleID) != unsafe.StringData(same) {
			t.Fatalf("line %d %q: hole id %q not shared", r.Line, r.Raw, same)
		}
	}
}

// ParseUnquoted takes the common rows and gives what Parse gives; it
// declines every row with a problem, and the forms it leaves to Parse.
func TestParseUnquotedMatchesParse(t *testing.T) {
	r := rand.New(rand.NewPCG(9, 9))
	cells := map[string][]string{
		"num":  {"", " ", "0", "12", "12.5", " 7.25 ", "-3", "+4", "1e2", "abc", "NaN", "Inf", "95", "360", "361", "180", "181", "-0", "0012.50", "1234567890123456", "\u00a012", "7.5\t"},
		"id":   {"", " ", "A", " B1 ", "hole 7", "\u3000C9", "D-1\u00a0"},
		"conf": {"", "good", "Good", " poor ", "none", "bad", "FAIR"},
		"text": {"", "x", "joint", " a b "},
	}
	for _, header := range []string{
		"hole_id,depth,alpha,beta",
		"hole_id,depth,alpha,beta,gamma,type,comment",
		"note,beta,alpha,depth,hole_id,apparent_thickness,run_confidence,run_mismatch,gamma",
		"Hole_ID,Depth,ALPHA,beta,thickness",
	} {
		names := strings.Split(header, ",")
		kinds := make([]string, len(names))
		for i, n := range names {
			switch strings.ToLower(n) {
			case "hole_id":
				kinds[i] = "id"
			case "run_confidence":
				kinds[i] = "conf"
			case "type", "comment", "note":
				kinds[i] = "text"
			default:
				kinds[i] = "num"
			}
		}
		var in strings.Builder
		in.WriteString(header + "\n")
		for k := 0; k < 20000; k++ {
			n := len(names)
			switch r.IntN(30) {
			case 0:
				n-- // too few fields
			case 1:
				n++ // too many
			}
			for i := 0; i < n; i++ {
				if i > 0 {
					in.WriteByte(',')
				}
				kind := "text"
				if i < len(kinds) {
					kind = kinds[i]
				}
				vals := cells[kind]
				if kind == "num" && r.IntN(3) > 0 {
					in.WriteString(strconv.FormatFloat(r.Float64()*100, 'f', r.IntN(4), 64))
					continue
				}
				in.WriteString(vals[r.IntN(len(vals))])
			}
			in.WriteByte('\n')
		}
		sr, err := NewStructureReader(strings.NewReader(in.String()), "s.csv")
		if err != nil {
			t.Fatal(err)
		}
		taken := 0
		for {
			row, err := sr.Next()
			if err == io.EOF {
				break
			}
			if err != nil {
				t.Fatal(err)
			}
			checkParseUnquoted(t, sr, row)
			got := StructureRow{Line: row.Line, Raw: row.Raw}
			if sr.ParseUnquoted(&got, row.Raw, "") {
				taken++
				if row.Err != nil {
					t.Fatalf("%q: taken, but Parse finds %v", row.Raw, row.Err)
				}
			}
		}
		if taken < 1000 {
			t.Fatalf("%s: ParseUnquoted took only %d rows", header, taken)
		}
	}
}

// decimalLen counts digits as strconv.FormatUint writes them, at every
// power of ten and its neighbours.
func TestDecimalLen(t *testing.T) {
	check := func(n uint64) {
		if got, want := decimalLen(n), len(strconv.FormatUint(n, 10)); got != want {
			t.Fatalf("decimalLen(%d) = %d, want %d", n, got, want)
		}
	}
	check(0)
	check(math.MaxUint64)
	for p := uint64(1); p <= 1e19; p *= 10 {
		check(p - 1)
		check(p)
		check(p + 1)
		if p == 1e19 {
			break
		}
	}
	r := rand.New(rand.NewPCG(5, 5))
	for i := 0; i < 100000; i++ {
		check(r.Uint64() >> r.IntN(64))
	}
}

// TestReadRowsManyChunks reads a surveys file longer than several chunks
// of readRows, of a length that is not a multiple of a chunk or a piece,
// with a bad row in the middle and at the end: every good row comes back
// once, in file order, with its own line and values.
func TestReadRowsManyChunks(t *testing.T) {
	for _, n := range []int{rowChunk - 1, rowChunk, rowChunk + 1, 3*rowChunk + rowPiece + 7} {
		var sb strings.Builder
		sb.WriteString("hole_id,depth,azimuth,dip\n")
		for i := 0; i < n; i++ {
			fmt.Fprintf(&sb, "H%d,%d,%d.5,-60\n", i/10, i%10*3, i%360)
		}
		rows, err := ReadSurveys(strings.NewReader(sb.String()), "s.csv")
		if err != nil {
			t.Fatal(n, err)
		}
		if len(rows) != n {
			t.Fatalf("%d rows: got %d", n, len(rows))
		}
		for i, r := range rows {
			if r.Line != i+2 || r.HoleID != fmt.Sprintf("H%d", i/10) || r.Station.Depth != float64(i%10*3) || r.Station.Azimuth != float64(i%360)+0.5 {
				t.Fatalf("%d rows: row %d is %+v", n, i, r)
			}
		}
		// A bad last row fails the whole file and names its line.
		bad := strings.Replace(sb.String(), fmt.Sprintf("H%d,%d,%d.5", (n-1)/10, (n-1)%10*3, (n-1)%360), "H0,x,1", 1)
		if _, err := ReadSurveys(strings.NewReader(bad), "s.csv"); err == nil || !strings.Contains(err.Error(), fmt.Sprintf("s.csv:line %d,", n+1)) {
			t.Fatalf("%d rows, the last bad: %v", n, err)
		}
	}
}
