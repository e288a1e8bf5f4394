package postgres_test

import (
	"bytes"
	"context"
	"fmt"
	"strconv"
	"testing"
	"time"

	"github.com/jackc/pgx/v5"

	"corvane/internal/domain"
	"corvane/internal/pgtest"
	"corvane/internal/service"
	"corvane/internal/store/postgres"
)

// benchProgramme makes a project with a vocabulary and 100 holes, and the
// CSV text and the rows of n measurements spread over them.
func benchProgramme(b *testing.B, n int) (*service.Service, context.Context, domain.Project, string, []byte, [][]any, func()) {
	b.Helper()
	url := pgtest.DB(b)
	ctx := service.WithActor(context.Background(), service.System)
	st, err := postgres.Open(ctx, url)
	if err != nil {
		b.Fatal(err)
	}
	svc := service.New(st, nil)
	p, err := svc.CreateProject(ctx, domain.Project{Name: "bench"})
	if err != nil {
		b.Fatal(err)
	}
	for _, c := range []string{"BD", "JN", "FLT"} {
		if _, _, err := svc.PutTypeCode(ctx, p.ID, domain.TypeCode{Code: c}); err != nil {
			b.Fatal(err)
		}
	}
	const holes = 100
	ids := make([]int64, holes)
	for i := range holes {
		h, err := svc.CreateHole(ctx, p.ID, domain.Hole{Name: fmt.Sprintf("BH%03d", i), East: float64(i), North: 0, Elevation: 100,
			Azimuth: float64(i * 3 % 360), Dip: -60, FinalDepth: 5000})
		if err != nil {
			b.Fatal(err)
		}
		ids[i] = h.ID
	}
	var csv bytes.Buffer
	csv.WriteString("hole_id,depth,alpha,beta,gamma,type,logged_by\n")
	rows := make([][]any, n)
	codes := []string{"BD", "JN", "FLT"}
	logged := time.Date(2026, 3, 1, 0, 0, 0, 0, time.UTC)
	for i := range n {
		h := i % holes
		depth := float64(i/holes) * 0.004
		alpha, beta := float64(i%89+1), float64(i*7%360)
		code := codes[i%3]
		var gamma any
		gs := ""
		if i%5 == 0 {
			g := float64(i % 180)
			gamma, gs = g, strconv.FormatFloat(g, 'f', -1, 64)
		}
		fmt.Fprintf(&csv, "BH%03d,%s,%s,%s,%s,%s,bench\n", h, strconv.FormatFloat(depth, 'f', 3, 64),
			strconv.FormatFloat(alpha, 'f', -1, 64), strconv.FormatFloat(beta, 'f', -1, 64), gs, code)
		rows[i] = []any{p.ID, ids[h], depth, alpha, beta, gamma, code, nil, "", "bench", logged, int64(1), logged, logged}
	}
	return svc, ctx, p, url, csv.Bytes(), rows, func() { st.Close() }
}

var benchSizes = []int{100000, 1000000}

// BenchmarkImportMeasurements loads measurements through the service's CSV
// import (parse, validate against holes and vocabulary, COPY in batches of
// 5,000 rows into an import batch that the last transaction shows).
func BenchmarkImportMeasurements(b *testing.B) {
	for _, n := range benchSizes {
		b.Run("rows="+strconv.Itoa(n), func(b *testing.B) {
			svc, ctx, p, _, body, _, done := benchProgramme(b, n)
			defer done()
			b.SetBytes(int64(len(body)))
			b.ResetTimer()
			for range b.N {
				res, err := svc.Import(ctx, p.ID, service.ImportRequest{Kind: service.ImportMeasurements, Body: bytes.NewReader(body)})
				if err != nil || res.Created != n {
					b.Fatalf("import: %+v %v", res, err)
				}
			}
			b.ReportMetric(float64(n)*float64(b.N)/b.Elapsed().Seconds(), "rows/s")
		})
	}
}

// BenchmarkImportVsCopy alternates the two loads in every iteration (COPY
// first, then the import, into the same table), so that both meet the same
// machine load, and reports both rates and their ratio.
func BenchmarkImportVsCopy(b *testing.B) {
	for _, n := range benchSizes {
		b.Run("rows="+strconv.Itoa(n), func(b *testing.B) {
			svc, ctx, p, url, body, rows, done := benchProgramme(b, n)
			defer done()
			var tCopy, tImport time.Duration
			for range b.N {
				c, err := pgx.Connect(ctx, url)
				if err != nil {
					b.Fatal(err)
				}
				t0 := time.Now()
				got, err := c.CopyFrom(ctx, pgx.Identifier{"measurements"}, copyCols, pgx.CopyFromRows(rows))
				tCopy += time.Since(t0)
				c.Close(ctx)
				if err != nil || int(got) != n {
					b.Fatalf("copy: %d %v", got, err)
				}
				t0 = time.Now()
				res, err := svc.Import(ctx, p.ID, service.ImportRequest{Kind: service.ImportMeasurements, Body: bytes.NewReader(body)})
				tImport += time.Since(t0)
				if err != nil || res.Created != n {
					b.Fatalf("import: %+v %v", res, err)
				}
			}
			total := float64(n) * float64(b.N)
			b.ReportMetric(total/tCopy.Seconds(), "copy-rows/s")
			b.ReportMetric(total/tImport.Seconds(), "import-rows/s")
			b.ReportMetric(tCopy.Seconds()/tImport.Seconds(), "import/copy")
		})
	}
}

var copyCols = []string{"project_id", "hole_id", "depth", "alpha", "beta", "gamma", "type_code", "apparent_thickness",
	"comment", "logged_by", "logged_at", "version", "created_at", "updated_at"}

// BenchmarkCopyMeasurements is the yardstick: a plain COPY of the same rows,
// already converted to column values, straight into the measurements table.
func BenchmarkCopyMeasurements(b *testing.B) {
	for _, n := range benchSizes {
		b.Run("rows="+strconv.Itoa(n), func(b *testing.B) {
			_, ctx, _, url, body, rows, done := benchProgramme(b, n)
			defer done()
			b.SetBytes(int64(len(body)))
			b.ResetTimer()
			for range b.N {
				b.StopTimer()
				c, err := pgx.Connect(ctx, url)
				if err != nil {
					b.Fatal(err)
				}
				b.StartTimer()
				got, err := c.CopyFrom(ctx, pgx.Identifier{"measurements"}, copyCols, pgx.CopyFromRows(rows))
				if err != nil || int(got) != n {
					b.Fatalf("copy: %d %v", got, err)
				}
				b.StopTimer()
				c.Close(ctx)
				b.StartTimer()
			}
			b.ReportMetric(float64(n)*float64(b.N)/b.Elapsed().Seconds(), "rows/s")
		})
	}
}
