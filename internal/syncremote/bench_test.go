package syncremote_test

import (
	"context"
	"fmt"
	"testing"
	"time"

	"corvane/internal/domain"
)

// BenchmarkSync measures a sync of 1e5 measurements logged offline on one
// laptop: its push to the centre (PostgreSQL, loopback HTTP) and a second
// laptop's pull of them. Run (README, Benchmarks):
//
//	go test -run '^$' -bench 'Sync' -benchtime 1x ./internal/syncremote
func BenchmarkSync(b *testing.B) {
	const n = 100_000
	for range b.N {
		b.StopTimer()
		c := newCentral(b, true)
		seedCentral(b, c)
		a, z := newLaptop(b, "A"), newLaptop(b, "Z")
		a.mustSync(b, c)
		ctx := context.Background()
		pid := a.project(b)
		h, err := a.svc.Store().GetHoleByName(ctx, pid, "RB001")
		must(b, err)
		ms := make([]domain.Measurement, n)
		at := time.Date(2026, 11, 2, 8, 0, 0, 0, time.UTC)
		for i := range ms {
			beta := float64(i%360) + 0.5
			ms[i] = domain.Measurement{ProjectID: pid, HoleID: h.ID, Depth: float64(i%2900) / 10, Alpha: float64(i % 90), Beta: &beta,
				TypeCode: "JN", LoggedBy: "A", LoggedAt: at.Add(time.Duration(i) * time.Second), Comment: fmt.Sprint("offline ", i)}
		}
		_, err = a.svc.Store().CreateMeasurements(ctx, ms)
		must(b, err)

		b.StartTimer()
		t0 := time.Now()
		rep := a.mustSync(b, c)
		push := time.Since(t0)
		t0 = time.Now()
		repZ := z.mustSync(b, c)
		pull := time.Since(t0)
		b.StopTimer()
		if rep.Applied != n || repZ.Pulled < n {
			b.Fatalf("push %+v, pull %+v: want %d measurements each way", rep, repZ, n)
		}
		b.ReportMetric(push.Seconds(), "push-s")
		b.ReportMetric(pull.Seconds(), "pull-s")
	}
}
