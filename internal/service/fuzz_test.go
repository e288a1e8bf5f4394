package service_test

import (
	"context"
	"errors"
	"strings"
	"testing"

	"corvane/internal/domain"
	"corvane/internal/service"
)

// FuzzImportMeasurements: any body either imports or is refused with an
// Invalid error whose row problems name the file and a line; a refused
// body writes nothing.
func FuzzImportMeasurements(f *testing.F) {
	f.Add(measurementsCSV)
	f.Add("hole_id,depth,alpha,beta,type\nZR001,1,2,3,BD\n")
	f.Add("hole_id,depth,alpha,beta,type\nZR001,1,200,3,BD\nZR002,\"x,1,2,3,JN\n")
	f.Add("type\n")
	f.Add("")
	s, ctx := newService(f)
	p := must(s.CreateProject(ctx, domain.Project{Name: "fuzz"}))
	putImportTypes(s, ctx, p.ID)
	must(s.Import(ctx, p.ID, service.ImportRequest{Kind: "collars", Body: strings.NewReader(collarsCSV)}))
	f.Fuzz(func(t *testing.T, body string) {
		before := must(s.CountMeasurements(ctx, p.ID, service.MeasurementQuery{}))
		res, err := s.Import(context.WithoutCancel(ctx), p.ID, service.ImportRequest{Kind: "measurements", Body: strings.NewReader(body)})
		after := must(s.CountMeasurements(ctx, p.ID, service.MeasurementQuery{}))
		if err == nil {
			if after-before != int64(res.Created) {
				t.Fatalf("reported %d created, count moved by %d", res.Created, after-before)
			}
			return
		}
		var e *domain.Error
		if !errors.As(err, &e) || e.Kind != domain.Invalid {
			t.Fatalf("refusal is not Invalid: %v", err)
		}
		if after != before {
			t.Fatalf("a refused body wrote %d rows", after-before)
		}
		for _, pr := range e.Problems {
			if pr.Loc.File != "measurements.csv" || pr.Loc.Line < 2 {
				t.Fatalf("row problem without a place: %+v %s", pr.Loc, pr.Msg)
			}
		}
	})
}
