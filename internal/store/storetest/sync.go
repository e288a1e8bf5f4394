package storetest

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"slices"
	"testing"
	"time"

	"corvane/internal/domain"
)

// op is the part of a change log entry a test states.
type op struct {
	Table, GlobalID, Op string
	Version             int64
	Origin              string
}

func ops(cs []domain.Change) []op {
	out := make([]op, len(cs))
	for i, c := range cs {
		out[i] = op{c.Table, c.GlobalID, c.Op, c.Version, c.Origin}
	}
	return out
}

// testChangeLog: every create, update and delete of a synced record is in
// the change log, in order, in the transaction of the change; deletions
// leave tombstones; a rolled back transaction leaves nothing; the source
// mark lasts one transaction.
func testChangeLog(t *testing.T, s domain.Store) {
	c := ctx(t)
	p := newProject(t, s, "changes")
	start, err := s.LastChangeSeq(c)
	must(t, err)
	h := newHole(t, s, p.ID, "C1")
	if len(h.GlobalID) != 36 {
		t.Fatalf("hole global id %q: want a UUID", h.GlobalID)
	}
	ss := domain.SurveySet{HoleID: h.ID, AzimuthRef: "true", Stations: []domain.Station{st(0, 45, -60)}}
	must(t, s.PutSurvey(c, &ss, 0))
	r := domain.Run{HoleID: h.ID, From: 0, To: 3, Confidence: "good"}
	must(t, s.CreateRun(c, &r))
	m := domain.Measurement{ProjectID: p.ID, HoleID: h.ID, Depth: 2, Alpha: 30, Beta: f64(10), TypeCode: "JN", LoggedAt: time.Now()}
	must(t, s.CreateMeasurement(c, &m))
	m.Comment = "seen again"
	must(t, s.UpdateMeasurement(c, &m, 1))
	must(t, s.PutTypeCode(c, domain.TypeCode{ProjectID: p.ID, Code: "LN", Kind: "line"}))
	must(t, s.DeleteMeasurement(c, m.ID, 2))
	got, err := s.ListChanges(c, domain.ChangeFilter{ProjectID: p.ID, After: start})
	must(t, err)
	diff(t, "change log", []op{
		{domain.SyncHoles, h.GlobalID, "create", 1, ""},
		{domain.SyncSurveys, h.GlobalID, "create", 1, ""},
		{domain.SyncRuns, r.GlobalID, "create", 1, ""},
		{domain.SyncMeasurements, m.GlobalID, "create", 1, ""},
		{domain.SyncMeasurements, m.GlobalID, "update", 2, ""},
		{domain.SyncTypes, "LN", "create", 1, ""},
		{domain.SyncMeasurements, m.GlobalID, "delete", 2, ""},
	}, ops(got))
	for i := 1; i < len(got); i++ {
		if got[i].Seq <= got[i-1].Seq {
			t.Errorf("seq not rising: %d after %d", got[i].Seq, got[i-1].Seq)
		}
	}
	if got[2].HoleID != h.ID || got[5].HoleID != 0 || got[0].ProjectID != p.ID {
		t.Errorf("hole and project of entries: %+v", got)
	}
	rec, err := s.RecordChanges(c, domain.SyncMeasurements, m.GlobalID)
	must(t, err)
	if len(rec) != 3 || rec[2].Op != "delete" {
		t.Errorf("record changes of the measurement: %+v", rec)
	}

	// A rolled back transaction leaves no entry; a marked one marks only its own.
	last, _ := s.LastChangeSeq(c)
	boom := errors.New("boom")
	err = s.InTx(c, func(c2 ctxT, tx domain.Store) error {
		must(t, tx.SetChangeSource(c2, "remote-x", "sync"))
		r2 := domain.Run{HoleID: h.ID, From: 3, To: 4, Confidence: "fair"}
		must(t, tx.CreateRun(c2, &r2))
		return boom
	})
	if !errors.Is(err, boom) {
		t.Fatal(err)
	}
	if n, _ := s.LastChangeSeq(c); n != last {
		t.Errorf("a rolled back transaction left change log entries (%d, was %d)", n, last)
	}
	var r3 domain.Run
	must(t, s.InTx(c, func(c2 ctxT, tx domain.Store) error {
		must(t, tx.SetChangeSource(c2, "remote-x", "sync"))
		r3 = domain.Run{HoleID: h.ID, From: 3, To: 4, Confidence: "fair", GlobalID: "0193c0de-0000-7000-8000-000000000001"}
		return tx.CreateRun(c2, &r3)
	}))
	r4 := domain.Run{HoleID: h.ID, From: 4, To: 5, Confidence: "fair"}
	must(t, s.CreateRun(c, &r4))
	got, err = s.ListChanges(c, domain.ChangeFilter{ProjectID: p.ID, After: last})
	must(t, err)
	diff(t, "marked entries", []op{
		{domain.SyncRuns, "0193c0de-0000-7000-8000-000000000001", "create", 1, "remote-x"},
		{domain.SyncRuns, r4.GlobalID, "create", 1, ""},
	}, ops(got))
	if got[0].Actor != "sync" || r3.GlobalID != "0193c0de-0000-7000-8000-000000000001" {
		t.Errorf("actor %q, global id kept %q", got[0].Actor, r3.GlobalID)
	}
	local, err := s.ListChanges(c, domain.ChangeFilter{ProjectID: p.ID, After: last, LocalOnly: true})
	must(t, err)
	diff(t, "local entries", []op{{domain.SyncRuns, r4.GlobalID, "create", 1, ""}}, ops(local))
	dup := domain.Run{HoleID: h.ID, From: 5, To: 6, Confidence: "fair", GlobalID: r3.GlobalID}
	wantKind(t, s.CreateRun(c, &dup), domain.Conflict, "a second row with a taken global id")
	if err := s.SetChangeSource(c, "x", "y"); err == nil {
		t.Error("SetChangeSource outside a transaction succeeded")
	}

	// Bulk loads are logged row by row; a hole filter keeps its holes and the vocabulary.
	h2 := newHole(t, s, p.ID, "C2")
	before, _ := s.LastChangeSeq(c)
	ms := []domain.Measurement{
		{ProjectID: p.ID, HoleID: h2.ID, Depth: 1, Alpha: 20, TypeCode: "JN", LoggedAt: time.Now()},
		{ProjectID: p.ID, HoleID: h.ID, Depth: 1, Alpha: 20, TypeCode: "JN", LoggedAt: time.Now()},
	}
	_, err = s.CreateMeasurements(c, ms)
	must(t, err)
	byGID, err := s.MeasurementsByGlobalID(c, []string{ms[0].GlobalID, ms[1].GlobalID, "no-such-id"})
	must(t, err)
	if len(byGID) != 2 || ms[0].GlobalID == "" || ms[0].GlobalID == ms[1].GlobalID {
		t.Errorf("bulk-loaded rows by global id: %d rows, ids %q %q", len(byGID), ms[0].GlobalID, ms[1].GlobalID)
	}
	must(t, s.PutTypeCode(c, domain.TypeCode{ProjectID: p.ID, Code: "FT", Kind: "plane"}))
	got, err = s.ListChanges(c, domain.ChangeFilter{ProjectID: p.ID, After: before, HoleIDs: []int64{h2.ID}})
	must(t, err)
	if len(got) != 2 || got[0].Table != domain.SyncMeasurements || got[0].HoleID != h2.ID || got[1].Table != domain.SyncTypes {
		t.Errorf("bulk load with a hole filter: %+v", ops(got))
	}

	// Deleting a hole leaves its tombstone in the project's log.
	before, _ = s.LastChangeSeq(c)
	hh, err := s.GetHole(c, h2.ID)
	must(t, err)
	must(t, s.DeleteHole(c, h2.ID, hh.Version))
	got, err = s.ListChanges(c, domain.ChangeFilter{ProjectID: p.ID, After: before})
	must(t, err)
	found := false
	for _, g := range got {
		found = found || (g.Table == domain.SyncHoles && g.GlobalID == h2.GlobalID && g.Op == "delete")
	}
	if !found {
		t.Errorf("no tombstone of the deleted hole in %+v", ops(got))
	}
}

// ctxT shortens the callback signatures.
type ctxT = context.Context

// testSyncState: records are found and restamped by global id; cursors,
// agreed versions and conflicts are kept.
func testSyncState(t *testing.T, s domain.Store) {
	c := ctx(t)
	p := newProject(t, s, "sync state")
	h := newHole(t, s, p.ID, "S1")
	id, v, err := s.FindGlobal(c, p.ID, domain.SyncHoles, h.GlobalID)
	must(t, err)
	if id != h.ID || v != 1 {
		t.Errorf("FindGlobal hole: %d v%d", id, v)
	}
	must(t, s.Restamp(c, p.ID, domain.SyncHoles, h.GlobalID, 7))
	got, err := s.GetHole(c, h.ID)
	must(t, err)
	if got.Version != 7 {
		t.Errorf("restamped hole has version %d", got.Version)
	}
	must(t, s.Restamp(c, p.ID, domain.SyncTypes, "JN", 4))
	if _, v, err := s.FindGlobal(c, p.ID, domain.SyncTypes, "JN"); err != nil || v != 4 {
		t.Errorf("type code restamped: v%d %v", v, err)
	}
	ss := domain.SurveySet{HoleID: h.ID, AzimuthRef: "true", Stations: []domain.Station{st(0, 45, -60)}}
	must(t, s.PutSurvey(c, &ss, 0))
	if id, v, err := s.FindGlobal(c, p.ID, domain.SyncSurveys, h.GlobalID); err != nil || id != h.ID || v != 1 {
		t.Errorf("survey by its hole's global id: %d v%d %v", id, v, err)
	}
	_, _, err = s.FindGlobal(c, p.ID, domain.SyncMeasurements, "no-such-id")
	wantKind(t, err, domain.NotFound, "a missing global id")
	wantKind(t, s.Restamp(c, p.ID, domain.SyncRuns, "no-such-id", 2), domain.NotFound, "restamping a missing record")
	_, _, err = s.FindGlobal(c, p.ID, "projects", "1")
	wantKind(t, err, domain.Invalid, "a table sync does not carry")

	_, err = s.GetSyncCursor(c, "http://centre", "P")
	wantKind(t, err, domain.NotFound, "no cursor yet")
	cur := domain.SyncCursor{Remote: "http://centre", Project: "P", Holes: "A,B", Pulled: 12, Pushed: 5, Replica: "r-1"}
	must(t, s.PutSyncCursor(c, cur))
	cur.Pulled = 40
	must(t, s.PutSyncCursor(c, cur))
	back, err := s.GetSyncCursor(c, "http://centre", "P")
	must(t, err)
	diff(t, "cursor", cur, back)

	must(t, s.PutSyncBase(c, "http://centre", domain.SyncHoles, "g1", 3))
	must(t, s.PutSyncBase(c, "http://centre", domain.SyncHoles, "g1", 4))
	must(t, s.PutSyncBase(c, "http://centre", domain.SyncHoles, "g2", 1))
	must(t, s.PutSyncBase(c, "http://other", domain.SyncHoles, "g3", 9))
	if v, err := s.SyncBase(c, "http://centre", domain.SyncHoles, "g1"); err != nil || v != 4 {
		t.Errorf("base g1: %d %v", v, err)
	}
	bases, err := s.SyncBases(c, "http://centre", domain.SyncHoles, []string{"g1", "g2", "g3", "g4"})
	must(t, err)
	diff(t, "bases", map[string]int64{"g1": 4, "g2": 1}, bases)
	must(t, s.PutSyncBase(c, "http://centre", domain.SyncHoles, "g1", 0))
	if v, err := s.SyncBase(c, "http://centre", domain.SyncHoles, "g1"); err != nil || v != 0 {
		t.Errorf("forgotten base g1: %d %v", v, err)
	}

	at := time.Date(2026, 12, 1, 10, 0, 0, 0, time.UTC)
	cf := domain.SyncConflict{ID: "c-1", ProjectID: p.ID, Kind: domain.ConflictEdit, Table: domain.SyncMeasurements, GlobalID: "g9",
		Replica: "r-1", Actor: "logger", BaseVersion: 2, LocalVersion: 3, RemoteVersion: 4,
		LocalData: json.RawMessage(`{"a":1}`), RemoteData: json.RawMessage(`{"a":2}`), Status: domain.ConflictOpen, CreatedAt: at}
	must(t, s.PutConflict(c, cf))
	ref := domain.SyncConflict{ID: "c-2", ProjectID: p.ID, Kind: domain.ConflictRefused, Table: domain.SyncHoles, GlobalID: "g8",
		Reason: "needs admin", Status: domain.ConflictOpen, CreatedAt: at.Add(time.Minute)}
	must(t, s.PutConflict(c, ref))
	back1, err := s.GetConflict(c, "c-1")
	must(t, err)
	diff(t, "conflict", cf, back1)
	done := at.Add(time.Hour)
	cf.Status, cf.Kept, cf.ResolvedBy, cf.ResolvedAt = domain.ConflictResolved, domain.KeepLocal, "manager", &done
	must(t, s.PutConflict(c, cf))
	open, err := s.ListConflicts(c, p.ID, domain.ConflictOpen)
	must(t, err)
	all, err := s.ListConflicts(c, p.ID, "")
	must(t, err)
	if len(open) != 1 || open[0].ID != "c-2" || len(all) != 2 || all[0].ID != "c-1" || all[0].Kept != domain.KeepLocal {
		t.Errorf("conflicts: open %+v, all %+v", open, all)
	}
	_, err = s.GetConflict(c, "c-3")
	wantKind(t, err, domain.NotFound, "a missing conflict")
}

// testKindSetLog: survey sets by kind are in the change log under
// "<hole global id>/<kind>", found and restamped by it.
func testKindSetLog(t *testing.T, s domain.Store) {
	c := ctx(t)
	p := newProject(t, s, "kind sets")
	h := newHole(t, s, p.ID, "K1")
	before, _ := s.LastChangeSeq(c)
	k := domain.KindSet{HoleID: h.ID, Kind: domain.SurveyGyro, AzimuthRef: "true", Stations: []domain.Station{st(0, 45, -60)}}
	must(t, s.PutKindSet(c, &k, 0))
	gid := domain.KindSetGlobalID(h.GlobalID, domain.SurveyGyro)
	got, err := s.ListChanges(c, domain.ChangeFilter{ProjectID: p.ID, After: before})
	must(t, err)
	diff(t, "kind set entries", []op{{domain.SyncKindSets, gid, "create", 1, ""}}, ops(got))
	must(t, s.Restamp(c, p.ID, domain.SyncKindSets, gid, 5))
	if id, v, err := s.FindGlobal(c, p.ID, domain.SyncKindSets, gid); err != nil || id != h.ID || v != 5 {
		t.Errorf("kind set by global id: %d v%d %v", id, v, err)
	}
	if hg, kind := domain.SplitKindSetGlobalID(gid); hg != h.GlobalID || kind != domain.SurveyGyro {
		t.Errorf("split %q: %q %q", gid, hg, kind)
	}
}

// testImportBatchChangeLog: rows staged into an import batch are not in the
// change log (nobody sees them) until the batch commits; then each is
// logged once, as created, in the order of its id, after the entries of
// writes that committed while it was staged. A dropped batch leaves no
// entry. Rows of a committed batch are logged as any other when changed.
func testImportBatchChangeLog(t *testing.T, s domain.Store) {
	c := ctx(t)
	p := newProject(t, s, "batch changes")
	h := newHole(t, s, p.ID, "L1")
	gid := func(i int) string { return fmt.Sprintf("0193c0de-0000-7000-8000-%012d", i) }
	rows := func(from, n int) []domain.Measurement {
		ms := make([]domain.Measurement, n)
		for i := range ms {
			ms[i] = domain.Measurement{ProjectID: p.ID, HoleID: h.ID, Depth: float64(1 + from + i), Alpha: 30, Beta: f64(10),
				TypeCode: "BD", LoggedAt: time.Date(2026, 3, 2, 0, 0, 0, 0, time.UTC), GlobalID: gid(from + i)}
		}
		return ms
	}
	start, err := s.LastChangeSeq(c)
	must(t, err)
	changes := func() []domain.Change {
		t.Helper()
		got, err := s.ListChanges(c, domain.ChangeFilter{ProjectID: p.ID, After: start})
		must(t, err)
		return got
	}

	b, err := s.OpenBatch(c, p.ID)
	must(t, err)
	_, err = s.StageMeasurements(c, b, rows(1, 2))
	must(t, err)
	_, err = s.StageMeasurements(c, b, rows(3, 1))
	must(t, err)
	diff(t, "change log while staging", []op{}, ops(changes()))
	one := rows(10, 1)[0]
	must(t, s.CreateMeasurement(c, &one))
	// A dropped batch is never logged.
	d, err := s.OpenBatch(c, p.ID)
	must(t, err)
	_, err = s.StageMeasurements(c, d, rows(20, 3))
	must(t, err)
	must(t, s.DropBatch(c, d))
	diff(t, "change log after a write beside the batch and a dropped batch", []op{
		{domain.SyncMeasurements, gid(10), "create", 1, ""},
	}, ops(changes()))

	must(t, s.InTx(c, func(c ctxT, tx domain.Store) error { return tx.CommitBatch(c, b) }))
	// The commit shows the rows; their entries are written afterwards, a
	// chunk of rows per LogBatch, and the batch is listed until then.
	diff(t, "change log after the commit", []op{
		{domain.SyncMeasurements, gid(10), "create", 1, ""},
	}, ops(changes()))
	unlogged := func(project int64) []int64 {
		t.Helper()
		ids, err := s.UnloggedBatches(c, project)
		must(t, err)
		return ids
	}
	if got := unlogged(p.ID); len(got) != 1 || got[0] != b {
		t.Errorf("unlogged batches of the project after the commit: %v, want [%d]", got, b)
	}
	if got := unlogged(0); !slices.Contains(got, b) {
		t.Errorf("unlogged batches of all projects after the commit: %v, want %d among them", got, b)
	}
	more, err := s.LogBatch(c, b, 2)
	must(t, err)
	if !more {
		t.Error("LogBatch of 2 of 3 rows: nothing left, want more")
	}
	diff(t, "change log after the first chunk", []op{
		{domain.SyncMeasurements, gid(10), "create", 1, ""},
		{domain.SyncMeasurements, gid(1), "create", 1, ""},
		{domain.SyncMeasurements, gid(2), "create", 1, ""},
	}, ops(changes()))
	for i := range 2 {
		more, err = s.LogBatch(c, b, 2)
		must(t, err)
		if more {
			t.Errorf("LogBatch %d after the last row: more left", i+2)
		}
	}
	got := changes()
	diff(t, "change log once logged", []op{
		{domain.SyncMeasurements, gid(10), "create", 1, ""},
		{domain.SyncMeasurements, gid(1), "create", 1, ""},
		{domain.SyncMeasurements, gid(2), "create", 1, ""},
		{domain.SyncMeasurements, gid(3), "create", 1, ""},
	}, ops(got))
	if got := unlogged(p.ID); len(got) != 0 {
		t.Errorf("unlogged batches once logged: %v", got)
	}
	if got[1].HoleID != h.ID || got[1].ProjectID != p.ID {
		t.Errorf("hole and project of a committed row's entry: %+v", got[1])
	}

	byGID, err := s.MeasurementsByGlobalID(c, []string{gid(2)})
	must(t, err)
	if len(byGID) != 1 {
		t.Fatalf("committed row by global id: %+v", byGID)
	}
	m := byGID[0]
	m.Comment = "checked"
	must(t, s.UpdateMeasurement(c, &m, 1))
	must(t, s.DeleteMeasurement(c, m.ID, 2))
	diff(t, "a committed row changed and deleted", []op{
		{domain.SyncMeasurements, gid(2), "update", 2, ""},
		{domain.SyncMeasurements, gid(2), "delete", 2, ""},
	}, ops(changes()[4:]))
}
