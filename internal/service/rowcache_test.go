package service_test

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"strings"
	"testing"
	"time"

	"corvane/internal/domain"
	"corvane/internal/qa"
	"corvane/internal/service"
)

// fabricViews are the statistics (sets by type), the net, the rose and the
// QA report of the whole project, as JSON and SVG text.
func fabricViews(t *testing.T, s *service.Service, ctx context.Context, pid int64, q service.MeasurementQuery) string {
	t.Helper()
	var b bytes.Buffer
	rep := must(s.Statistics(ctx, pid, service.StatsQuery{MeasurementQuery: q, SetQuery: service.SetQuery{Sets: "type"}}))
	rep.Input = "" // says in words which filter was used
	must(0, json.NewEncoder(&b).Encode(rep))
	if err := s.Net(ctx, pid, service.NetQuery{MeasurementQuery: q, Title: "t", Density: "kamb", Grid: 40}, &b); err != nil {
		t.Fatal(err)
	}
	if err := s.Rose(ctx, pid, service.RoseQuery{MeasurementQuery: q, Title: "t"}, &b); err != nil {
		t.Fatal(err)
	}
	if len(q.Holes) == 0 && q.MinDepth == nil && len(q.Types) == 0 && q.LoggedFrom == nil {
		must(0, json.NewEncoder(&b).Encode(must(s.QA(ctx, pid, 0, qa.Options{}))))
	}
	return strings.ReplaceAll(b.String(), "holes ZR001, ZR002; ", "")
}

// The rows kept between requests for statistics, nets, roses and QA are
// never used stale: after each change of a measurement (logged, edited,
// its type changed, deleted, an import of several batches, writes straight
// into the store as another replica would) and of a hole, the reports
// equal those of a service that keeps nothing yet, and they changed. The
// kept rows filtered in memory give what the store's filter gives.
func TestRowCacheNeverStale(t *testing.T) {
	s, ctx := newService(t)
	checkRowCacheNeverStale(t, s, ctx)
}

func checkRowCacheNeverStale(t *testing.T, s *service.Service, ctx context.Context) {
	p, h := programme(t, s, ctx, domain.Project{})
	h2 := must(s.CreateHole(ctx, p.ID, domain.Hole{Name: "ZR002", East: 1100, North: 2000, Elevation: 300, Azimuth: 90, Dip: -70, FinalDepth: 200}))
	day := time.Date(2026, 3, 2, 0, 0, 0, 0, time.UTC)
	var ms []service.MeasurementView
	for i := range 30 {
		m := domain.Measurement{HoleID: h.ID, Depth: float64(5 + i*5), Alpha: float64(20 + i*2), Beta: f64(float64(i * 23 % 360)), TypeCode: "BD", LoggedAt: day.Add(time.Duration(i) * time.Hour)}
		if i%3 == 0 {
			m.HoleID, m.TypeCode = h2.ID, "JN"
		}
		if i%7 == 0 {
			m.TypeCode, m.Gamma = "LN", f64(float64(i))
		}
		ms = append(ms, must(s.CreateMeasurement(ctx, p.ID, m)))
	}
	last := ""
	check := func(what string) {
		t.Helper()
		got := fabricViews(t, s, ctx, p.ID, service.MeasurementQuery{})
		fresh := fabricViews(t, service.New(s.Store(), nil), ctx, p.ID, service.MeasurementQuery{})
		if got != fresh {
			t.Fatalf("%s: reports of the kept rows\n%s\nwant those of a fresh service\n%s", what, got, fresh)
		}
		if got == last {
			t.Fatalf("%s: the reports did not change", what)
		}
		last = got
		// Filtered in memory against filtered by the store (a query
		// naming the holes reads them from the store).
		lo, hi, from := 20.0, 120.0, day.Add(5*time.Hour)
		q := service.MeasurementQuery{MinDepth: &lo, MaxDepth: &hi, Types: []string{"bd", "LN"}, LoggedFrom: &from}
		kept := fabricViews(t, s, ctx, p.ID, q)
		q.Holes = []string{"ZR001", "ZR002"}
		if stored := fabricViews(t, s, ctx, p.ID, q); kept != stored {
			t.Fatalf("%s: filtered kept rows\n%s\nwant the store's filter\n%s", what, kept, stored)
		}
	}
	check("first")
	fabricViews(t, s, ctx, p.ID, service.MeasurementQuery{}) // warm

	m := ms[1].Measurement
	ms[1] = must(s.CreateMeasurement(ctx, p.ID, domain.Measurement{HoleID: h.ID, Depth: 77, Alpha: 55, Beta: f64(200), TypeCode: "BD", LoggedAt: day}))
	check("measurement logged")

	m.Alpha = 80
	m = must(s.UpdateMeasurement(ctx, p.ID, m.ID, m.Version, m)).Measurement
	check("measurement edited")

	m.TypeCode = "JN"
	m = must(s.UpdateMeasurement(ctx, p.ID, m.ID, m.Version, m)).Measurement
	check("type changed")

	if err := s.DeleteMeasurement(ctx, p.ID, m.ID, m.Version); err != nil {
		t.Fatal(err)
	}
	check("measurement deleted")

	// More than one import batch (5,000 rows): staged, then committed.
	var csv strings.Builder
	csv.WriteString("hole_id,depth,alpha,beta,gamma,type,logged_by\n")
	for i := range 5200 {
		fmt.Fprintf(&csv, "ZR002,%.3f,%d,%d,,JN,L\n", 1+float64(i)*0.03, 10+i%70, i*7%360)
	}
	if r, err := doImport(t, s, ctx, p.ID, "measurements", csv.String(), false, ""); err != nil || r.Created != 5200 {
		t.Fatalf("import: %+v %v", r, err)
	}
	check("import of two batches")

	// Another replica's writes, straight into the store.
	w := domain.Measurement{ProjectID: p.ID, HoleID: h.ID, Depth: 33, Alpha: 12, Beta: f64(300), TypeCode: "BD", LoggedAt: day.Add(9 * time.Hour)}
	if err := s.Store().CreateMeasurement(ctx, &w); err != nil {
		t.Fatal(err)
	}
	check("a measurement written straight into the store")
	w.Beta = f64(10)
	if err := s.Store().UpdateMeasurement(ctx, &w, w.Version); err != nil {
		t.Fatal(err)
	}
	check("a measurement edited straight in the store")

	h = must(s.GetHole(ctx, p.ID, h.ID))
	h.Azimuth = 40
	must(s.UpdateHole(ctx, p.ID, h.ID, h.Version, h))
	check("collar azimuth")
}
