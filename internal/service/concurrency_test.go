package service_test

import (
	"context"
	"strings"
	"sync"
	"testing"

	"corvane/internal/domain"
	"corvane/internal/service"
)

// Retries of one upload racing each other write the rows once; every
// caller gets the same result, all but one marked as replayed.
func TestConcurrentRetriesWriteOnce(t *testing.T) {
	s, ctx := newService(t)
	checkRetries(t, s, ctx)
}

func checkRetries(t *testing.T, s *service.Service, ctx context.Context) {
	p := must(s.CreateProject(ctx, domain.Project{Name: "race"}))
	putImportTypes(s, ctx, p.ID)
	must(doImport(t, s, ctx, p.ID, "collars", collarsCSV, false, ""))
	const callers = 6
	var wg sync.WaitGroup
	results := make([]service.ImportResult, callers)
	errs := make([]error, callers)
	for i := range callers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			results[i], errs[i] = s.Import(ctx, p.ID, service.ImportRequest{Kind: "measurements",
				Body: strings.NewReader(measurementsCSV), IdempotencyKey: "rig2-batch-17"})
		}()
	}
	wg.Wait()
	fresh := 0
	for i := range callers {
		if errs[i] != nil {
			t.Fatalf("caller %d: %v", i, errs[i])
		}
		if results[i].Created != 3 {
			t.Errorf("caller %d saw %+v", i, results[i])
		}
		if !results[i].Replayed {
			fresh++
		}
	}
	if fresh != 1 {
		t.Errorf("%d callers wrote, want exactly 1", fresh)
	}
	if n := must(s.CountMeasurements(ctx, p.ID, service.MeasurementQuery{})); n != 3 {
		t.Fatalf("%d rows after racing retries, want 3", n)
	}
}

// Loggers on several rigs logging at once: nothing lost.
func TestConcurrentLoggers(t *testing.T) {
	s, ctx := newService(t)
	p, h := programme(t, s, ctx, domain.Project{})
	const loggers, each = 8, 20
	var wg sync.WaitGroup
	fail := make(chan error, loggers*each)
	for l := range loggers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range each {
				_, err := s.CreateMeasurement(ctx, p.ID, domain.Measurement{HoleID: h.ID, Depth: float64(l*each + i), Alpha: 40, Beta: f64(100), TypeCode: "JN"})
				if err != nil {
					fail <- err
				}
			}
		}()
	}
	wg.Wait()
	close(fail)
	for err := range fail {
		t.Fatal(err)
	}
	if n := must(s.CountMeasurements(ctx, p.ID, service.MeasurementQuery{})); n != loggers*each {
		t.Fatalf("%d rows, want %d", n, loggers*each)
	}
}
