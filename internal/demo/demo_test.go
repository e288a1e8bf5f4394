package demo

import (
	"bytes"
	"context"
	"flag"
	"io"
	"math"
	"os"
	"path/filepath"
	"sort"
	"testing"

	"corvane/internal/convert"
	"corvane/internal/csvio"
	"corvane/internal/domain"
	"corvane/internal/geom"
)

var update = flag.Bool("update", false, "rewrite testdata/zelvorra from the generator")

const dir = "../../testdata/zelvorra"

// The committed CSV files are exactly what the generator writes.
func TestCommittedCSV(t *testing.T) {
	d := Programme()
	if *update {
		if err := os.MkdirAll(dir, 0o755); err != nil {
			t.Fatal(err)
		}
		if err := d.WriteCSV(dir); err != nil {
			t.Fatal(err)
		}
	}
	tmp := t.TempDir()
	if err := d.WriteCSV(tmp); err != nil {
		t.Fatal(err)
	}
	for _, name := range []string{CollarsFile, SurveysFile, RunsFile, StructuresFile} {
		want, err := os.ReadFile(filepath.Join(tmp, name))
		if err != nil {
			t.Fatal(err)
		}
		got, err := os.ReadFile(filepath.Join(dir, name))
		if err != nil {
			t.Fatalf("%v (regenerate with go test ./internal/demo -update)", err)
		}
		if !bytes.Equal(got, want) {
			t.Errorf("%s differs from the generator's output (regenerate with go test ./internal/demo -update)", name)
		}
	}
}

func TestDeterministicAndShaped(t *testing.T) {
	a, b := Programme(), Programme()
	if len(a.Structures) != len(b.Structures) || a.Structures[17].Beta != b.Structures[17].Beta || a.Surveys[5] != b.Surveys[5] {
		t.Fatal("Programme is not deterministic")
	}
	if len(a.Collars) != 8 || len(a.Structures) < 200 || len(a.Structures) > 800 {
		t.Fatalf("%d holes, %d structures", len(a.Collars), len(a.Structures))
	}
	lines := 0
	for _, s := range a.Structures {
		if !math.IsNaN(s.Gamma) {
			lines++
		}
	}
	if lines < 20 {
		t.Fatalf("only %d lineations", lines)
	}
	for _, c := range a.Collars {
		if c.Depth < 150 || c.Depth > 400 || c.Dip > -50 || c.Dip < -75 {
			t.Fatalf("collar %+v outside the intended ranges", c)
		}
	}
	for _, r := range a.Runs {
		if r.To-r.From > 3.5 || r.To <= r.From {
			t.Fatalf("run %+v", r)
		}
	}
}

// Converting the committed files with the converter recovers the true planes the
// generator drew: every row converts, the median misfit on good runs is within
// the logging noise, and the means of the sets sit on their defined means.
func TestConvertRecoversSets(t *testing.T) {
	d := Programme()
	open := func(n string) *os.File {
		f, err := os.Open(filepath.Join(dir, n))
		if err != nil {
			t.Fatal(err)
		}
		t.Cleanup(func() { f.Close() })
		return f
	}
	hs, err := convert.Load(open(CollarsFile), open(SurveysFile), convert.Options{})
	if err != nil {
		t.Fatal(err)
	}
	var out bytes.Buffer
	sum, err := hs.Convert(context.Background(), open(StructuresFile), &out)
	if err != nil || sum.BadRows != 0 || sum.Rows != len(d.Structures) {
		t.Fatalf("%+v %v", sum, err)
	}
	sr, err := csvio.NewStructureReader(&out, "out")
	if err != nil {
		t.Fatal(err)
	}
	col := func(n string) int { return sr.Header.Index(n) }
	var misfit []float64
	sums := map[string]geom.Vec3{}
	rows := 0
	for i := 0; ; i++ {
		row, err := sr.Next()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatalf("converted row %d: %v", i+1, err)
		}
		rows++
		dip, _ := csvio.ParseNumber(row.Record[col("dip")])
		dd, _ := csvio.ParseNumber(row.Record[col("dip_direction")])
		got := geom.Plane{Dip: dip, DipDirection: dd}
		s := d.Structures[i]
		if a := geom.AxialAngle(got.Normal(), s.TruePlane.Normal()); math.Abs(s.RunRotation) < 3 {
			misfit = append(misfit, a)
		}
		n := got.Normal()
		if ref := sums[s.Set]; ref.Dot(n) < 0 {
			n = n.Neg()
		}
		sums[s.Set] = sums[s.Set].Add(n)
	}
	if rows != len(d.Structures) {
		t.Fatalf("read back %d converted rows, want %d", rows, len(d.Structures))
	}
	sort.Float64s(misfit)
	if med := misfit[len(misfit)/2]; med > 4 {
		t.Errorf("median misfit on well-oriented runs %.2f degrees", med)
	}
	for _, set := range d.Sets {
		if a := geom.AxialAngle(sums[set.Name], set.Mean.Normal()); a > 6 {
			t.Errorf("set %s: converted mean %.1f degrees from %v", set.Name, a, set.Mean)
		}
	}
}

// The demo keeps the one gamma-vs-kind rule (domain.CheckKind): gamma only on
// its line type, the line type always with gamma; and its loggers are the
// neutral tags L1, L2, L3.
func TestKindsAndLoggers(t *testing.T) {
	lines := 0
	for _, s := range Programme().Structures {
		m := domain.Measurement{TypeCode: s.Type}
		if !math.IsNaN(s.Gamma) {
			g := s.Gamma
			m.Gamma = &g
			lines++
		}
		if err := domain.CheckKind(m, domain.TypeCode{Code: s.Type, Kind: Kind(s.Type)}); err != nil {
			t.Fatalf("%s %.2f: %v", s.HoleID, s.Depth, err)
		}
		if s.LoggedBy != "L1" && s.LoggedBy != "L2" && s.LoggedBy != "L3" {
			t.Fatalf("%s %.2f: logger %q, want L1..L3", s.HoleID, s.Depth, s.LoggedBy)
		}
	}
	if lines == 0 {
		t.Fatal("no lineations: the line type is never logged")
	}
}
