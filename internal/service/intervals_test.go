package service_test

import (
	"bytes"
	"context"
	"errors"
	"strings"
	"testing"

	"corvane/internal/domain"
	"corvane/internal/service"
)

func ip(n int) *int { return &n }

// A hole's core intervals are replaced as a whole after every rule of
// package coreinterval is checked; every broken rule is listed at its field
// and nothing is stored.
func TestPutCoreIntervals(t *testing.T) {
	s, ctx := newService(t)
	p, h := programme(t, s, ctx, domain.Project{}) // final depth 200
	good := []domain.CoreInterval{
		{From: 3, To: 6, Recovered: f64(3), Sound: f64(2.2), NaturalBreaks: ip(3)},
		{From: 0, To: 3, Recovered: f64(2.9), Solid: f64(2.5), Pieces: []float64{0.5, 0.05, 1.2}, NaturalBreaks: ip(4), Confidence: "good"},
	}
	got := must(s.PutCoreIntervals(ctx, p.ID, h.ID, good))
	if len(got) != 2 || got[0].From != 0 || got[0].ID == 0 || got[0].HoleID != h.ID {
		t.Fatalf("stored %+v", got)
	}
	listed := must(s.CoreIntervals(ctx, p.ID, h.ID))
	if len(listed) != 2 || listed[1].Sound == nil || *listed[1].Sound != 2.2 || len(listed[0].Pieces) != 3 {
		t.Fatalf("listed %+v", listed)
	}
	bad := []domain.CoreInterval{
		{From: 0, To: 3, Recovered: f64(3.5)},     // recovered > length
		{From: 2, To: 5},                          // overlaps the first
		{From: 190, To: 210},                      // past the final depth 200
		{From: 6, To: 5},                          // to < from
		{From: 10, To: 11, Confidence: "meh"},     // unknown confidence
		{From: 12, To: 13, InducedBreaks: ip(-2)}, // negative count
	}
	_, err := s.PutCoreIntervals(ctx, p.ID, h.ID, bad)
	var de *domain.Error
	if !errors.As(err, &de) || de.Kind != domain.Invalid {
		t.Fatalf("bad intervals: %v", err)
	}
	fields := map[string]bool{}
	for _, pr := range de.Problems {
		fields[pr.Loc.Field] = true
	}
	for _, f := range []string{"intervals[0].recovered", "intervals[1].from", "intervals[2].to", "intervals[3].to", "intervals[4].confidence", "intervals[5].induced_breaks"} {
		if !fields[f] {
			t.Errorf("no problem at %s; problems %v", f, de.Problems)
		}
	}
	if after := must(s.CoreIntervals(ctx, p.ID, h.ID)); len(after) != 2 {
		t.Errorf("a refused replacement changed the intervals: %+v", after)
	}
	// An empty list deletes them.
	must(s.PutCoreIntervals(ctx, p.ID, h.ID, nil))
	if after := must(s.CoreIntervals(ctx, p.ID, h.ID)); len(after) != 0 {
		t.Errorf("after delete: %+v", after)
	}
	// A reader may list, not replace.
	secret, _ := mustToken(t, s, ctx, p.ID, domain.RoleRead)
	rctx := service.WithActor(context.Background(), must(s.Authenticate(ctx, secret)))
	_, err = s.PutCoreIntervals(rctx, p.ID, h.ID, good)
	wantKind(t, err, domain.Forbidden, "reader replacing intervals")
	must(s.CoreIntervals(rctx, p.ID, h.ID))
}

// The intervals import replaces the intervals of each hole the file names,
// all or nothing with every bad row located; the export reads back to the
// same file.
func TestImportExportIntervals(t *testing.T) {
	s, ctx := newService(t)
	p, h := programme(t, s, ctx, domain.Project{})
	must(s.PutCoreIntervals(ctx, p.ID, h.ID, []domain.CoreInterval{{From: 50, To: 51}}))
	file := "hole_id,from,to,recovered,solid,sound,pieces,natural_breaks,induced_breaks,confidence\n" +
		"ZR001,0,3,2.9,2.5,,0.5;0.05;1.2,4,2,good\n" +
		"ZR001,3,6,3,2.8,2.2,,3,,\n"
	res := must(s.Import(ctx, p.ID, service.ImportRequest{Kind: service.ImportIntervals, File: "iv.csv", Body: strings.NewReader(file)}))
	if res.Rows != 2 || res.Created != 2 {
		t.Errorf("result %+v", res)
	}
	if got := must(s.CoreIntervals(ctx, p.ID, h.ID)); len(got) != 2 || got[1].From != 3 {
		t.Errorf("after import (replacing 50-51): %+v", got)
	}
	var out bytes.Buffer
	if err := s.ExportIntervals(ctx, p.ID, &out); err != nil {
		t.Fatal(err)
	}
	if out.String() != file {
		t.Errorf("export\n%s\nwant\n%s", out.String(), file)
	}
	bad := "hole_id,from,to\nZR001,0,3\nNOPE,0,1\nZR001,150,250\nZR001,2,4\n"
	_, err := s.Import(ctx, p.ID, service.ImportRequest{Kind: service.ImportIntervals, File: "bad.csv", Body: strings.NewReader(bad)})
	var de *domain.Error
	if !errors.As(err, &de) || de.Kind != domain.Invalid {
		t.Fatalf("bad file: %v", err)
	}
	msg := domain.Public(err)
	for _, e := range de.Problems {
		msg += "\n" + domain.Public(e)
	}
	// The overlap is found within the file; the unknown hole and the
	// interval past the final depth against the store (a second pass, once
	// the file's own rules hold).
	if !strings.Contains(msg, "bad.csv:line 5") || !strings.Contains(msg, "overlaps") {
		t.Errorf("overlap not located: %s", msg)
	}
	bad = "hole_id,from,to\nZR001,0,3\nNOPE,0,1\nZR001,150,250\n"
	_, err = s.Import(ctx, p.ID, service.ImportRequest{Kind: service.ImportIntervals, File: "bad.csv", Body: strings.NewReader(bad)})
	errors.As(err, &de)
	msg = ""
	for _, e := range de.Problems {
		msg += "\n" + domain.Public(e)
	}
	if !strings.Contains(msg, `bad.csv:line 3, column "hole_id"`) || !strings.Contains(msg, `bad.csv:line 4, column "to"`) {
		t.Errorf("unknown hole and depth past the hole not located: %s", msg)
	}
	if got := must(s.CoreIntervals(ctx, p.ID, h.ID)); len(got) != 2 {
		t.Errorf("a refused import changed the intervals: %+v", got)
	}
}
