package service_test

import (
	"context"
	"fmt"
	"strings"
	"sync"
	"testing"

	"corvane/internal/domain"
	"corvane/internal/service"
)

// race runs fn n times at once and returns the errors.
func race(n int, fn func(i int) error) []error {
	errs := make([]error, n)
	var wg sync.WaitGroup
	start := make(chan struct{})
	for i := range n {
		wg.Add(1)
		go func() {
			defer wg.Done()
			<-start
			errs[i] = fn(i)
		}()
	}
	close(start)
	wg.Wait()
	return errs
}

// tally counts the errors by kind ("ok" for nil) and fails on any kind
// outside allowed.
func tally(t *testing.T, what string, errs []error, allowed ...domain.Kind) map[string]int {
	t.Helper()
	got := map[string]int{}
	for _, err := range errs {
		if err == nil {
			got["ok"]++
			continue
		}
		k := domain.KindOf(err)
		got[k.String()]++
		ok := false
		for _, a := range allowed {
			ok = ok || k == a
		}
		if !ok {
			t.Errorf("%s: %v (%v), want one of %v", what, err, k, allowed)
		}
	}
	return got
}

// Writers racing on one row get 412 for a stale version and 409 for a
// clash, never 404 or 500 (PostgreSQL once answered 404 to a survey PUT and
// 412 to a collar import without If-Match).
func checkRaceStatuses(t *testing.T, s *service.Service, ctx context.Context) {
	p := must(s.CreateProject(ctx, domain.Project{Name: "races"}))
	must(doImport(t, s, ctx, p.ID, "collars", collarsCSV, false, ""))
	base := must(s.ListHoles(ctx, p.ID, domain.Page{})).Items[0]
	survey := func(az float64) domain.SurveySet {
		return domain.SurveySet{AzimuthRef: "grid", Stations: []domain.Station{{Depth: 0, Azimuth: az, Dip: -60}, {Depth: 50, Azimuth: az, Dip: -61}}}
	}
	const n = 8
	for round := range 3 {
		// Everyone creates the survey (version 0) of a new hole: one wins, the
		// others hold a stale "none yet".
		nh := base
		nh.Name, nh.GlobalID = fmt.Sprintf("RACE%d", round), "" // a new hole: the store makes its global id
		h := must(s.CreateHole(ctx, p.ID, nh))
		errs := race(n, func(i int) error {
			_, err := s.PutSurvey(ctx, p.ID, h.ID, 0, survey(float64(i)))
			return err
		})
		if c := tally(t, "racing survey creates", errs, domain.PreconditionFailed); c["ok"] != 1 {
			t.Errorf("racing survey creates: %v, want exactly one success", c)
		}
		// Everyone replaces version 1: one wins.
		errs = race(n, func(i int) error {
			_, err := s.PutSurvey(ctx, p.ID, h.ID, 1, survey(float64(10+i)))
			return err
		})
		if c := tally(t, "racing survey updates", errs, domain.PreconditionFailed); c["ok"] != 1 {
			t.Errorf("racing survey updates: %v, want exactly one success", c)
		}
		// Racing hole edits with the same If-Match: one wins, the rest 412.
		cur := must(s.GetHole(ctx, p.ID, h.ID))
		errs = race(n, func(i int) error {
			e := cur
			e.Elevation = float64(300 + i)
			_, err := s.UpdateHole(ctx, p.ID, h.ID, cur.Version, e)
			return err
		})
		if c := tally(t, "racing hole edits", errs, domain.PreconditionFailed); c["ok"] != 1 {
			t.Errorf("racing hole edits: %v, want exactly one success", c)
		}
	}
	// Collar imports (no If-Match) updating the same holes at once: each
	// succeeds or is a clash, never a stale version.
	errs := race(n, func(i int) error {
		body := strings.Replace(collarsCSV, "1000,2000,300", fmt.Sprintf("1000,2000,%d", 300+i), 1)
		_, err := s.Import(ctx, p.ID, service.ImportRequest{Kind: "collars", Body: strings.NewReader(body)})
		return err
	})
	if c := tally(t, "racing collar imports", errs, domain.Conflict); c["ok"] == 0 {
		t.Errorf("racing collar imports: %v, want at least one success", c)
	}
}

func TestRaceStatuses(t *testing.T) {
	s, ctx := newService(t)
	checkRaceStatuses(t, s, ctx)
}
