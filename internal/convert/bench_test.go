package convert

import (
	"bufio"
	"context"
	"corvane/internal/holemodel"
	"encoding/csv"
	"fmt"
	"io"
	"math/rand/v2"
	"os"
	"path/filepath"
	"syscall"
	"testing"
)

// cpuTime returns the process's user plus system CPU time in nanoseconds.
// Benchmarks report it per row next to wall time: on a shared machine the
// wall time depends on the other load, the CPU time much less.
func cpuTime(b *testing.B) int64 {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		b.Fatal(err)
	}
	return ru.Utime.Nano() + ru.Stime.Nano()
}

// benchFiles writes a programme of holes holes and rows structure rows into
// dir: collars, surveys every 30 m, and structures with three carried
// columns, in hole order as loggers write them.
func benchFiles(b *testing.B, dir string, holes, rows int) (collars, surveys, structures string) {
	b.Helper()
	collars, surveys, structures = filepath.Join(dir, "c.csv"), filepath.Join(dir, "s.csv"), filepath.Join(dir, "m.csv")
	write := func(name string, fill func(w *bufio.Writer)) {
		f, err := os.Create(name)
		if err != nil {
			b.Fatal(err)
		}
		w := bufio.NewWriter(f)
		fill(w)
		if err := w.Flush(); err != nil {
			b.Fatal(err)
		}
		f.Close()
	}
	r := rand.New(rand.NewPCG(1, 2))
	write(collars, func(w *bufio.Writer) {
		w.WriteString("hole_id,easting,northing,elevation,azimuth,dip,depth\n")
		for i := 0; i < holes; i++ {
			fmt.Fprintf(w, "B%04d,%.2f,%.2f,%.2f,%.1f,%.1f,400\n", i, 400000+r.Float64()*5000, 6500000+r.Float64()*5000, 300+r.Float64()*50, r.Float64()*360, -50-r.Float64()*30)
		}
	})
	write(surveys, func(w *bufio.Writer) {
		w.WriteString("hole_id,depth,azimuth,dip\n")
		for i := 0; i < holes; i++ {
			az, dip := r.Float64()*360, -50-r.Float64()*30
			for d := 0; d < 390; d += 30 {
				fmt.Fprintf(w, "B%04d,%d,%.1f,%.1f\n", i, d, az, dip)
				az += r.NormFloat64()
				if az < 0 {
					az += 360
				}
				if az >= 360 {
					az -= 360
				}
				dip += 0.3 + r.NormFloat64()*0.2
			}
		}
	})
	types := []string{"bedding", "joint", "fault", "vein"}
	write(structures, func(w *bufio.Writer) {
		w.WriteString("hole_id,depth,alpha,beta,gamma,type,comment,logged_by\n")
		per := rows / holes
		for i := 0; i < holes; i++ {
			for k := 0; k < per; k++ {
				g := ""
				if k%4 == 0 {
					g = fmt.Sprintf("%d", r.IntN(360))
				}
				fmt.Fprintf(w, "B%04d,%.2f,%d,%d,%s,%s,core %d,L1\n", i, float64(k)*390/float64(per), r.IntN(91), r.IntN(360), g, types[k%4], k)
			}
		}
	})
	return collars, surveys, structures
}

func open(b *testing.B, name string) *os.File {
	f, err := os.Open(name)
	if err != nil {
		b.Fatal(err)
	}
	return f
}

const benchHoles, benchRows = 2000, 1_000_000

// BenchmarkConvert converts 1,000,000 structure rows on 2,000 holes end to end:
// loading collars and surveys, desurveying, converting, writing the output CSV
// (to io.Discard). Compare with BenchmarkCSVReadWrite. The sub-benchmarks are
// the default (the uncertainty columns) and --no-uncertainty.
func BenchmarkConvert(b *testing.B) {
	c, s, m := benchFiles(b, b.TempDir(), benchHoles, benchRows)
	for _, v := range []struct {
		name string
		opt  Options
	}{{"default", Options{}}, {"no-uncertainty", Options{NoUncertainty: true}}} {
		b.Run(v.name, func(b *testing.B) {
			cpu0 := cpuTime(b)
			for b.Loop() {
				cf, sf, mf := open(b, c), open(b, s), open(b, m)
				hs, err := Load(cf, sf, v.opt)
				if err != nil {
					b.Fatal(err)
				}
				sum, err := hs.Convert(context.Background(), mf, io.Discard)
				if err != nil || sum.Rows != benchRows || sum.BadRows != 0 {
					b.Fatal(err, sum)
				}
				cf.Close()
				sf.Close()
				mf.Close()
			}
			b.ReportMetric(float64(cpuTime(b)-cpu0)/float64(b.N)/benchRows, "cpu-ns/row")
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/benchRows, "ns/row")
		})
	}
}

// BenchmarkCSVReadWrite merely reads the same structures file with
// encoding/csv and writes it back with encoding/csv (to io.Discard): the
// baseline for BenchmarkConvert.
func BenchmarkCSVReadWrite(b *testing.B) {
	_, _, m := benchFiles(b, b.TempDir(), benchHoles, benchRows)
	b.ResetTimer()
	cpu0 := cpuTime(b)
	for b.Loop() {
		mf := open(b, m)
		cr := csv.NewReader(mf)
		cr.ReuseRecord = true
		cw := csv.NewWriter(io.Discard)
		n := 0
		for {
			rec, err := cr.Read()
			if err == io.EOF {
				break
			}
			if err != nil {
				b.Fatal(err)
			}
			if err := cw.Write(rec); err != nil {
				b.Fatal(err)
			}
			n++
		}
		cw.Flush()
		mf.Close()
		if n != benchRows+1 {
			b.Fatal(n)
		}
	}
	b.ReportMetric(float64(cpuTime(b)-cpu0)/float64(b.N)/benchRows, "cpu-ns/row")
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/benchRows, "ns/row")
}

// BenchmarkOrient is one measurement through Orient (hole lookup, depth
// lookup, plane and line conversion).
func BenchmarkOrient(b *testing.B) {
	hs := genHoles(b, 100)
	b.ReportAllocs()
	m := Measurement{HoleID: "G42", Measurement: holemodel.Measurement{Depth: 123.4, Alpha: 40, Beta: 200, Gamma: 30, HasGamma: true}}
	for b.Loop() {
		if _, err := hs.Orient(m); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkLoad loads the collars and surveys of BenchmarkConvert (2,000
// holes, 26,000 stations) and desurveys every hole: the part of Convert's
// time before the first row.
func BenchmarkLoad(b *testing.B) {
	dir := b.TempDir()
	c, s, _ := benchFiles(b, dir, benchHoles, benchHoles)
	b.ReportAllocs()
	for b.Loop() {
		cf, sf := open(b, c), open(b, s)
		if _, err := Load(cf, sf, Options{}); err != nil {
			b.Fatal(err)
		}
		cf.Close()
		sf.Close()
	}
}
