package service_test

import (
	"context"
	"fmt"
	"io"
	"os"
	"slices"
	"strconv"
	"strings"
	"testing"
	"time"

	"corvane/internal/domain"
	"corvane/internal/qa"
	"corvane/internal/service"
)

// putSpeedTypes puts the benchmarks' vocabulary: three plane types (bedding,
// joints, veins) and a line type for the rows with a lineation (gamma).
func putSpeedTypes(s *service.Service, ctx context.Context, pid int64) {
	for _, c := range []string{"BD", "JN", "VN"} {
		mustPut(s.PutTypeCode(ctx, pid, domain.TypeCode{Code: c}))
	}
	mustPut(s.PutTypeCode(ctx, pid, domain.TypeCode{Code: "LN", Kind: "line"}))
}

// storedProgramme loads a programme of holes x perHole measurements into s
// through the service's CSV imports: holes of 300 m (azimuth and dip varying
// by hole) with a survey station every 30 m, 3 m orientation runs, and
// measurements of four types (a lineation on one row in five, bedding,
// joints, veins) spread down each hole.
func storedProgramme(b testing.TB, s *service.Service, ctx context.Context, holes, perHole int) domain.Project {
	b.Helper()
	p := must(s.CreateProject(ctx, domain.Project{Name: "speed", PersistentFabric: "BD"}))
	putSpeedTypes(s, ctx, p.ID)
	var col, sur, run, mea strings.Builder
	col.WriteString("hole_id,easting,northing,elevation,azimuth,dip,depth\n")
	sur.WriteString("hole_id,depth,azimuth,dip\n")
	run.WriteString("hole_id,from,to,confidence\n")
	mea.WriteString("hole_id,depth,alpha,beta,gamma,type,logged_by\n")
	types := []string{"BD", "JN", "VN"}
	for i := range holes {
		id := fmt.Sprintf("S%03d", i)
		az, dip := float64((i*37+10)%340), -50-float64(i%25)
		fmt.Fprintf(&col, "%s,%d,%d,400,%g,%g,300\n", id, 1000+i*50, 2000+(i%20)*40, az, dip)
		for d := 0; d <= 300; d += 30 {
			fmt.Fprintf(&sur, "%s,%d,%.1f,%.1f\n", id, d, az+float64(d)*0.01, dip+float64(d)*0.02)
		}
		for d := 0; d < 300; d += 3 {
			fmt.Fprintf(&run, "%s,%d,%d,good\n", id, d, d+3)
		}
		for j := range perHole {
			k := i*perHole + j
			gamma, typ := "", types[k%3]
			if k%5 == 0 {
				gamma, typ = fmt.Sprint(k%180), "LN"
			}
			fmt.Fprintf(&mea, "%s,%.2f,%d,%d,%s,%s,L%d\n", id, 0.5+float64(j)*299/float64(perHole), 10+k%75, (k*37)%360, gamma, typ, k%4)
		}
	}
	for _, f := range []struct{ kind, body string }{{"collars", col.String()}, {"surveys", sur.String()}, {"runs", run.String()}, {"measurements", mea.String()}} {
		if _, err := doImport(b, s, ctx, p.ID, f.kind, f.body, false, ""); err != nil {
			b.Fatalf("%s: %v", f.kind, err)
		}
	}
	return p
}

// BenchmarkStoredFabric: statistics, net and rose over 100,000 stored
// measurements of 200 holes, and QA over the same programme, on the SQLite
// store, warm (the programme is loaded once), and statistics after a
// write.
func BenchmarkStoredFabric(b *testing.B) {
	s, ctx := newService(b)
	p := storedProgramme(b, s, ctx, 200, 500)
	benchStoredFabric(b, s, ctx, p)
}

func benchStoredFabric(b *testing.B, s *service.Service, ctx context.Context, p domain.Project) {
	var statsOf func(b *testing.B, unc string)
	stats := func(b *testing.B) { statsOf(b, "") }
	statsOf = func(b *testing.B, unc string) {
		rep := must(s.Statistics(ctx, p.ID, service.StatsQuery{SetQuery: service.SetQuery{Sets: "type"}, Uncertainty: unc}))
		if rep.RowsUsed != 100000 {
			b.Fatalf("%d rows used", rep.RowsUsed)
		}
	}
	// Each sub-benchmark makes one request before its timed loop: the
	// figures are those of a warm service (nothing changed since the last
	// request), the state the statistics target is about; stats-after-write
	// times a request after a measurement has changed.
	b.Run("stats", func(b *testing.B) {
		b.ReportAllocs()
		stats(b)
		for b.Loop() {
			stats(b)
		}
	})
	b.Run("stats-without-set-uncertainty", func(b *testing.B) {
		b.ReportAllocs()
		statsOf(b, "false")
		for b.Loop() {
			statsOf(b, "false")
		}
	})
	b.Run("stats-after-write", func(b *testing.B) {
		b.ReportAllocs()
		m := must(s.Store().ListMeasurements(ctx, domain.MeasurementFilter{ProjectID: p.ID}, domain.Page{Limit: 1}))[0]
		for b.Loop() {
			b.StopTimer()
			if err := s.Store().UpdateMeasurement(ctx, &m, m.Version); err != nil {
				b.Fatal(err)
			}
			b.StartTimer()
			stats(b)
		}
	})
	b.Run("net", func(b *testing.B) {
		b.ReportAllocs()
		net := func() {
			if err := s.Net(ctx, p.ID, service.NetQuery{}, io.Discard); err != nil {
				b.Fatal(err)
			}
		}
		net()
		for b.Loop() {
			net()
		}
	})
	b.Run("rose", func(b *testing.B) {
		b.ReportAllocs()
		rose := func() {
			if err := s.Rose(ctx, p.ID, service.RoseQuery{}, io.Discard); err != nil {
				b.Fatal(err)
			}
		}
		rose()
		for b.Loop() {
			rose()
		}
	})
	b.Run("qa", func(b *testing.B) {
		b.ReportAllocs()
		run := func() {
			rep := must(s.QA(ctx, p.ID, 0, qa.Options{}))
			if rep.Summary.Measurements != 100000 {
				b.Fatalf("%d measurements", rep.Summary.Measurements)
			}
		}
		run()
		for b.Loop() {
			run()
		}
	})
}

// benchRows is the number of rows of the import benchmarks:
// CORVANE_BENCH_ROWS, 100,000 by default.
func benchRows(b *testing.B) int {
	n := 100000
	if v := os.Getenv("CORVANE_BENCH_ROWS"); v != "" {
		var err error
		if n, err = strconv.Atoi(v); err != nil || n <= 0 {
			b.Fatalf("CORVANE_BENCH_ROWS=%q: want a positive number", v)
		}
	}
	return n
}

// importProgramme makes a project of 100 holes of 1,000 m without surveys
// and returns it with a measurements file of rows rows over those holes.
func importProgramme(b *testing.B, s *service.Service, ctx context.Context, name string, rows int) (domain.Project, string) {
	p := must(s.CreateProject(ctx, domain.Project{Name: name}))
	putSpeedTypes(s, ctx, p.ID)
	var col strings.Builder
	col.WriteString("hole_id,easting,northing,elevation,azimuth,dip,depth\n")
	for i := range 100 {
		fmt.Fprintf(&col, "I%03d,%d,2000,400,%d,-60,1000\n", i, 1000+i*50, (i*37)%360)
	}
	if _, err := doImport(b, s, ctx, p.ID, "collars", col.String(), false, ""); err != nil {
		b.Fatal(err)
	}
	var mea strings.Builder
	mea.WriteString("hole_id,depth,alpha,beta,gamma,type,logged_by\n")
	types := []string{"BD", "JN", "VN"}
	for k := range rows {
		gamma, typ := "", types[k%3]
		if k%5 == 0 {
			gamma, typ = strconv.Itoa(k%180), "LN"
		}
		fmt.Fprintf(&mea, "I%03d,%.3f,%d,%d,%s,%s,L%d\n", k%100, float64(k/100)*0.0009+0.001, 10+k%75, (k*37)%360, gamma, typ, k%4)
	}
	return p, mea.String()
}

// BenchmarkImportMeasurements: the service's CSV import of
// CORVANE_BENCH_ROWS measurements (100,000 by default) into a fresh
// project of the SQLite store, all or nothing.
func BenchmarkImportMeasurements(b *testing.B) {
	s, ctx := newService(b)
	rows := benchRows(b)
	i := 0
	var logged time.Duration
	for b.Loop() {
		b.StopTimer()
		i++
		p, body := importProgramme(b, s, ctx, fmt.Sprintf("import %d", i), rows)
		b.StartTimer()
		res, err := doImport(b, s, ctx, p.ID, "measurements", body, false, "")
		if err != nil || res.Created != rows {
			b.Fatalf("%d created of %d: %v", res.Created, rows, err)
		}
		// The rows' change log entries are written after the import
		// answers; this much longer until the last of them is.
		b.StopTimer()
		t0 := time.Now()
		s.WaitLogging()
		logged += time.Since(t0)
		b.StartTimer()
	}
	b.ReportMetric(float64(rows)*float64(b.N)/b.Elapsed().Seconds(), "rows/s")
	b.ReportMetric(logged.Seconds()/float64(b.N), "log-after-s")
}

// BenchmarkWriteDuringImport: a logger's single write (one measurement,
// as POST .../measurements makes it) every 20 ms while the service imports
// CORVANE_BENCH_ROWS measurements (100,000 by default) on the SQLite store
// and then writes their change log entries; reports the longest and the
// 99th-percentile wait of the writes and the import's time.
func BenchmarkWriteDuringImport(b *testing.B) {
	s, ctx := newService(b)
	rows := benchRows(b)
	i := 0
	var waits []time.Duration
	var imports time.Duration
	for b.Loop() {
		b.StopTimer()
		i++
		p, body := importProgramme(b, s, ctx, fmt.Sprintf("busy %d", i), rows)
		hid := must(s.ResolveHole(ctx, p.ID, "I000"))
		b.StartTimer()
		done := make(chan error, 1)
		start := time.Now()
		go func() {
			_, err := doImport(b, s, ctx, p.ID, "measurements", body, false, "")
			imports += time.Since(start)
			done <- err
		}()
		// The writes go on while the rows' change log entries are written
		// after the import has answered.
		logged := make(chan struct{})
		for n := 0; ; n++ {
			select {
			case err := <-done:
				if err != nil {
					b.Fatal(err)
				}
				go func() { s.WaitLogging(); close(logged) }()
				done = nil
			case <-logged:
				goto next
			case <-time.After(20 * time.Millisecond):
			}
			t0 := time.Now()
			_, err := s.CreateMeasurement(ctx, p.ID, domain.Measurement{HoleID: hid, Depth: 999 - float64(n)*0.001, Alpha: 30, Beta: f64(90), TypeCode: "BD", LoggedBy: "L1", LoggedAt: time.Now()})
			if err != nil {
				b.Fatal(err)
			}
			waits = append(waits, time.Since(t0))
		}
	next:
	}
	slices.Sort(waits)
	if len(waits) > 0 {
		b.ReportMetric(float64(waits[len(waits)-1].Microseconds())/1000, "max-write-ms")
		b.ReportMetric(float64(waits[len(waits)*99/100].Microseconds())/1000, "p99-write-ms")
	}
	b.ReportMetric(float64(len(waits))/float64(b.N), "writes/op")
	b.ReportMetric(imports.Seconds()/float64(b.N), "import-s")
}
