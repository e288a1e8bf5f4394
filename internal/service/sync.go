package service

import (
	"bytes"
	"context"
	"crypto/rand"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"slices"
	"time"

	"corvane/internal/domain"
)

// SyncRecord is one record as sync carries it between stores: its table,
// global id and version, and its content, or a tombstone (Deleted). Rows
// refer to their hole by its global id (Hole); row ids, project ids and
// timestamps are each store's own and are not compared.
type SyncRecord struct {
	Table    string `json:"table"`
	GlobalID string `json:"global_id"`
	Version  int64  `json:"version"`
	Deleted  bool   `json:"deleted,omitempty"`
	// Hole is the global id of the hole of a survey, run or measurement.
	Hole        string              `json:"hole,omitempty"`
	Type        *domain.TypeCode    `json:"type,omitempty"`
	HoleRecord  *domain.Hole        `json:"hole_record,omitempty"`
	Survey      *domain.SurveySet   `json:"survey,omitempty"`
	KindSet     *domain.KindSet     `json:"kind_set,omitempty"`
	Run         *domain.Run         `json:"run,omitempty"`
	Measurement *domain.Measurement `json:"measurement,omitempty"`
}

// SyncChange is one entry of the change feed: the record as it is now (a
// later version than the entry's when it changed again since).
type SyncChange struct {
	Seq int64 `json:"seq"`
	SyncRecord
}

// SyncPage is one page of the change feed. Next is the cursor to ask from
// next time; More says another page follows at once.
type SyncPage struct {
	Items []SyncChange `json:"items"`
	Next  int64        `json:"next"`
	More  bool         `json:"more"`
}

// PushChange is one change a replica pushes: the record as it is there now
// (or its tombstone), and Base, the version both sides last agreed on (0
// for a record the remote has never had). ChangeID names it for the report.
type PushChange struct {
	ChangeID string `json:"change_id"`
	Base     int64  `json:"base_version"`
	SyncRecord
}

// PushRequest is a batch of changes. BatchID identifies the batch: the
// same id with the same changes again is answered from the first time's
// results and changes nothing; Replica names the pushing store.
type PushRequest struct {
	BatchID string       `json:"batch_id"`
	Replica string       `json:"replica"`
	Changes []PushChange `json:"changes"`
}

// Statuses of a pushed change.
const (
	PushApplied   = "applied"   // stored; Version is the new version
	PushUnchanged = "unchanged" // both sides already hold this content; Version is the agreed one
	PushConflict  = "conflict"  // both sides changed it since Base; kept as ConflictID
	PushRefused   = "refused"   // not allowed or not valid; Reason says why
)

// PushResult reports one pushed change.
type PushResult struct {
	ChangeID   string `json:"change_id"`
	Table      string `json:"table"`
	GlobalID   string `json:"global_id"`
	Status     string `json:"status"`
	Version    int64  `json:"version"`
	ConflictID string `json:"conflict_id,omitempty"`
	Reason     string `json:"reason,omitempty"`
	// Remote is the receiving side's version of a conflicting record.
	Remote *SyncRecord `json:"remote,omitempty"`
}

// PushResponse answers a [PushRequest], one result per change in order.
type PushResponse struct {
	BatchID string       `json:"batch_id"`
	Results []PushResult `json:"results"`
}

// ConflictView is a conflict with the record as the store holds it now
// (Current; a tombstone when it is gone) and its two versions side by side.
type ConflictView struct {
	domain.SyncConflict
	Current *SyncRecord `json:"current"`
	// Fields lines the two versions up field by field.
	Fields []ConflictField `json:"fields"`
}

// Limits of the sync routes.
const (
	SyncPageLimit  = 1000 // change feed entries per page
	SyncBatchLimit = 500  // changes per push
)

// tableEntity names a synced table in the audit trail.
var tableEntity = map[string]string{
	domain.SyncTypes: "type_code", domain.SyncHoles: "hole", domain.SyncSurveys: "survey", domain.SyncKindSets: "survey_set",
	domain.SyncRuns: "run", domain.SyncMeasurements: "measurement",
}

func checkTable(table string) error {
	if _, ok := tableEntity[table]; !ok {
		return domain.FieldErr("table", "%q is not a synced table (one of %v)", table, domain.SyncTables)
	}
	return nil
}

// recordKey identifies a record across stores.
type recordKey struct{ table, gid string }

// recordReader loads records of one project as sync carries them, caching
// holes (a page of changes names few holes many times).
type recordReader struct {
	st        domain.Store
	projectID int64
	holeByID  map[int64]domain.Hole
	holeByGID map[string]domain.Hole
	vocab     []domain.TypeCode
	vocabOK   bool
}

func newRecordReader(st domain.Store, projectID int64) *recordReader {
	return &recordReader{st: st, projectID: projectID, holeByID: map[int64]domain.Hole{}, holeByGID: map[string]domain.Hole{}}
}

func (r *recordReader) holeID(ctx context.Context, id int64) (domain.Hole, error) {
	if h, ok := r.holeByID[id]; ok {
		return h, nil
	}
	h, err := hole(ctx, r.st, r.projectID, id)
	if err == nil {
		r.holeByID[id], r.holeByGID[h.GlobalID] = h, h
	}
	return h, err
}

// holeGID returns the project's hole with the global id; NotFound when none.
func (r *recordReader) holeGID(ctx context.Context, gid string) (domain.Hole, error) {
	if h, ok := r.holeByGID[gid]; ok {
		return h, nil
	}
	id, _, err := r.st.FindGlobal(ctx, r.projectID, domain.SyncHoles, gid)
	if err != nil {
		return domain.Hole{}, err
	}
	return r.holeID(ctx, id)
}

func (r *recordReader) forget(gid string) {
	if h, ok := r.holeByGID[gid]; ok {
		delete(r.holeByID, h.ID)
		delete(r.holeByGID, gid)
	}
}

func (r *recordReader) types(ctx context.Context) ([]domain.TypeCode, error) {
	if !r.vocabOK {
		v, err := r.st.ListTypeCodes(ctx, r.projectID)
		if err != nil {
			return nil, err
		}
		r.vocab, r.vocabOK = v, true
	}
	return r.vocab, nil
}

// load returns the records of keys as the store holds them now, a
// tombstone for each one that is gone.
func (r *recordReader) load(ctx context.Context, keys []recordKey) (map[recordKey]SyncRecord, error) {
	out := make(map[recordKey]SyncRecord, len(keys))
	var mgids []string
	for _, k := range keys {
		if k.table == domain.SyncMeasurements {
			mgids = append(mgids, k.gid)
			continue
		}
		rec, err := r.one(ctx, k)
		if err != nil {
			return nil, err
		}
		out[k] = rec
	}
	for start := 0; start < len(mgids); start += domain.MaxLimit {
		part := mgids[start:min(len(mgids), start+domain.MaxLimit)]
		ms, err := r.st.MeasurementsByGlobalID(ctx, part)
		if err != nil {
			return nil, err
		}
		for i := range ms {
			if ms[i].ProjectID != r.projectID {
				continue // another project's: not this one's to show or change
			}
			h, err := r.holeID(ctx, ms[i].HoleID)
			if err != nil {
				return nil, err
			}
			m := ms[i]
			out[recordKey{domain.SyncMeasurements, m.GlobalID}] = SyncRecord{Table: domain.SyncMeasurements, GlobalID: m.GlobalID,
				Version: m.Version, Hole: h.GlobalID, Measurement: &m}
		}
	}
	for _, g := range mgids {
		k := recordKey{domain.SyncMeasurements, g}
		if _, ok := out[k]; !ok {
			out[k] = SyncRecord{Table: k.table, GlobalID: g, Deleted: true}
		}
	}
	return out, nil
}

// one loads a record that is not a measurement.
func (r *recordReader) one(ctx context.Context, k recordKey) (SyncRecord, error) {
	rec := SyncRecord{Table: k.table, GlobalID: k.gid}
	gone := func(err error) (SyncRecord, error) {
		if domain.IsKind(err, domain.NotFound) {
			rec.Deleted = true
			return rec, nil
		}
		return rec, err
	}
	switch k.table {
	case domain.SyncTypes:
		vocab, err := r.types(ctx)
		if err != nil {
			return rec, err
		}
		i := slices.IndexFunc(vocab, func(tc domain.TypeCode) bool { return tc.Code == k.gid })
		if i < 0 {
			rec.Deleted = true
			return rec, nil
		}
		tc := vocab[i]
		rec.Version, rec.Type = tc.Version, &tc
	case domain.SyncHoles:
		h, err := r.holeGID(ctx, k.gid)
		if err != nil {
			return gone(err)
		}
		rec.Version, rec.HoleRecord = h.Version, &h
	case domain.SyncSurveys:
		h, err := r.holeGID(ctx, k.gid)
		if err != nil {
			return gone(err)
		}
		ss, err := r.st.GetSurvey(ctx, h.ID)
		if err != nil {
			return gone(err)
		}
		rec.Version, rec.Hole, rec.Survey = ss.Version, h.GlobalID, &ss
	case domain.SyncKindSets:
		hgid, kind := domain.SplitKindSetGlobalID(k.gid)
		h, err := r.holeGID(ctx, hgid)
		if err != nil {
			return gone(err)
		}
		sets, err := r.st.ListKindSets(ctx, h.ID)
		if err != nil {
			return rec, err
		}
		i := slices.IndexFunc(sets, func(s domain.KindSet) bool { return s.Kind == kind })
		if i < 0 {
			rec.Deleted = true
			return rec, nil
		}
		ks := sets[i]
		rec.Version, rec.Hole, rec.KindSet = ks.Version, h.GlobalID, &ks
	case domain.SyncRuns:
		id, _, err := r.st.FindGlobal(ctx, r.projectID, k.table, k.gid)
		if err != nil {
			return gone(err)
		}
		run, err := r.st.GetRun(ctx, id)
		if err != nil {
			return gone(err)
		}
		h, err := r.holeID(ctx, run.HoleID)
		if err != nil {
			return gone(err)
		}
		rec.Version, rec.Hole, rec.Run = run.Version, h.GlobalID, &run
	case domain.SyncMeasurements:
		id, _, err := r.st.FindGlobal(ctx, r.projectID, k.table, k.gid)
		if err != nil {
			return gone(err)
		}
		m, err := measurement(ctx, r.st, r.projectID, id)
		if err != nil {
			return gone(err)
		}
		h, err := r.holeID(ctx, m.HoleID)
		if err != nil {
			return gone(err)
		}
		rec.Version, rec.Hole, rec.Measurement = m.Version, h.GlobalID, &m
	default:
		return rec, checkTable(k.table)
	}
	return rec, nil
}

// SameContent reports whether two records hold the same content: equal
// fields, whatever each store's row ids, versions and timestamps.
func SameContent(a, b SyncRecord) bool {
	return bytes.Equal(contentJSON(a), contentJSON(b))
}

func contentJSON(r SyncRecord) []byte {
	r.Version = 0
	if r.Type != nil {
		tc := *r.Type
		tc.ProjectID, tc.Version = 0, 0
		r.Type = &tc
	}
	if r.HoleRecord != nil {
		h := *r.HoleRecord
		h.ID, h.ProjectID, h.Version, h.CreatedAt, h.UpdatedAt = 0, 0, 0, time.Time{}, time.Time{}
		r.HoleRecord = &h
	}
	if r.Survey != nil {
		ss := *r.Survey
		ss.HoleID, ss.Version, ss.UpdatedAt = 0, 0, time.Time{}
		if len(ss.Stations) == 0 {
			ss.Stations = nil
		}
		r.Survey = &ss
	}
	if r.KindSet != nil {
		ks := *r.KindSet
		ks.HoleID, ks.Version, ks.UpdatedAt = 0, 0, time.Time{}
		if len(ks.Stations) == 0 {
			ks.Stations = nil
		}
		r.KindSet = &ks
	}
	if r.Run != nil {
		run := *r.Run
		run.ID, run.HoleID, run.Version, run.CreatedAt, run.UpdatedAt = 0, 0, 0, time.Time{}, time.Time{}
		r.Run = &run
	}
	if r.Measurement != nil {
		m := *r.Measurement
		m.ID, m.ProjectID, m.HoleID, m.Version, m.CreatedAt, m.UpdatedAt = 0, 0, 0, 0, time.Time{}, time.Time{}
		m.LoggedAt = m.LoggedAt.UTC()
		r.Measurement = &m
	}
	b, _ := json.Marshal(r)
	return b
}

// ChangesQuery asks for a page of the change feed.
type ChangesQuery struct {
	After int64    // the cursor: Next of the previous page, 0 for all
	Holes []string // hole names: the changes of those holes and the vocabulary; none for all
	Limit int      // entries of the change log per page (at most SyncPageLimit)
	// Replica names the asking store: records whose last change in the
	// page is its own push, unchanged since, are left out (it has them).
	Replica string
}

// SyncChanges returns the project's changes after the cursor (read): each
// record changed in the page once, as it is now, in the order of its last
// change.
func (s *Service) SyncChanges(ctx context.Context, projectID int64, q ChangesQuery) (SyncPage, error) {
	after, holes, limit := q.After, q.Holes, q.Limit
	page := SyncPage{Items: []SyncChange{}, Next: after}
	if _, _, err := s.project(ctx, s.store, projectID, domain.RoleRead); err != nil {
		return page, err
	}
	if after < 0 {
		return page, domain.FieldErr("after", "after must be 0 or more, not %d", after)
	}
	if err := s.LogPending(ctx, projectID); err != nil {
		return page, err
	}
	if limit <= 0 || limit > SyncPageLimit {
		limit = SyncPageLimit
	}
	f := domain.ChangeFilter{ProjectID: projectID, After: after, Limit: limit}
	for _, name := range holes {
		h, err := s.store.GetHoleByName(ctx, projectID, name)
		if domain.IsKind(err, domain.NotFound) {
			return page, domain.FieldErr("holes", "no hole %q in project %d", name, projectID)
		}
		if err != nil {
			return page, err
		}
		f.HoleIDs = append(f.HoleIDs, h.ID)
	}
	err := s.store.Snapshot(ctx, func(ctx context.Context, st domain.Store) error {
		changes, err := st.ListChanges(ctx, f)
		if err != nil {
			return err
		}
		if len(changes) == 0 {
			return nil
		}
		last := map[recordKey]domain.Change{}
		for _, c := range changes {
			last[recordKey{c.Table, c.GlobalID}] = c
		}
		var keys []recordKey
		for _, c := range changes {
			k := recordKey{c.Table, c.GlobalID}
			if last[k].Seq == c.Seq {
				keys = append(keys, k)
			}
		}
		recs, err := newRecordReader(st, projectID).load(ctx, keys)
		if err != nil {
			return err
		}
		for _, k := range keys {
			c, rec := last[k], recs[k]
			if q.Replica != "" && c.Origin == q.Replica &&
				((rec.Deleted && c.Op == domain.ActionDelete) || (!rec.Deleted && rec.Version == c.Version)) {
				continue
			}
			page.Items = append(page.Items, SyncChange{Seq: c.Seq, SyncRecord: rec})
		}
		page.Next = changes[len(changes)-1].Seq
		page.More = len(changes) == limit
		return nil
	})
	return page, err
}

// SyncRecordOf returns one record of the project as it is now (read); a
// tombstone when it is gone.
func (s *Service) SyncRecordOf(ctx context.Context, projectID int64, table, gid string) (SyncRecord, error) {
	if _, _, err := s.project(ctx, s.store, projectID, domain.RoleRead); err != nil {
		return SyncRecord{}, err
	}
	if err := checkTable(table); err != nil {
		return SyncRecord{}, err
	}
	recs, err := newRecordReader(s.store, projectID).load(ctx, []recordKey{{table, gid}})
	return recs[recordKey{table, gid}], err
}

// BatchID returns the id a push batch is known by: the hex SHA-256 of its
// replica and changes, so the same batch sent again is recognised.
func BatchID(replica string, changes []PushChange) string {
	b, _ := json.Marshal(struct {
		R string       `json:"r"`
		C []PushChange `json:"c"`
	}{replica, changes})
	sum := sha256.Sum256(b)
	return hex.EncodeToString(sum[:])
}

// SyncPush applies a batch of changes pushed by a replica, in one
// transaction, each as the route of its kind would (the same role checks,
// validation and audit). A change whose record moved on here since its base
// by a change from anywhere but the pushing replica is not applied: both
// versions are kept as a conflict. A change the caller may not make, or one
// that is not valid, is refused with the reason. The batch is remembered by
// its id: sent again, it is answered from the first time and changes
// nothing.
func (s *Service) SyncPush(ctx context.Context, projectID int64, req PushRequest) (PushResponse, error) {
	resp := PushResponse{BatchID: req.BatchID, Results: []PushResult{}}
	if _, err := allow(ctx, projectID, domain.RoleRead); err != nil {
		return resp, err
	}
	if req.Replica == "" {
		return resp, domain.FieldErr("replica", "the pushing replica must be named")
	}
	if len(req.Changes) > SyncBatchLimit {
		return resp, domain.FieldErr("changes", "%d changes in one batch; at most %d", len(req.Changes), SyncBatchLimit)
	}
	if want := BatchID(req.Replica, req.Changes); req.BatchID != want {
		return resp, domain.FieldErr("batch_id", "batch_id %q is not the batch's hash %s", req.BatchID, want)
	}
	for i, c := range req.Changes {
		if err := checkTable(c.Table); err != nil {
			return resp, domain.FieldErr(fmt.Sprintf("changes[%d].table", i), "%v", err)
		}
		if c.GlobalID == "" {
			return resp, domain.FieldErr(fmt.Sprintf("changes[%d].global_id", i), "a global id is required")
		}
	}
	key := "sync:" + req.BatchID
	err := s.store.InTx(ctx, func(ctx context.Context, st domain.Store) error {
		a, err := allow(ctx, projectID, domain.RoleRead)
		if err != nil {
			return err
		}
		if _, err := st.GetProject(ctx, projectID); err != nil {
			return err
		}
		if prev, err := st.GetIdempotency(ctx, projectID, key); err == nil {
			return json.Unmarshal(prev.Result, &resp)
		} else if !domain.IsKind(err, domain.NotFound) {
			return err
		}
		if err := st.SetChangeSource(ctx, req.Replica, a.Name); err != nil {
			return err
		}
		ap := &applier{s: &Service{store: st, log: s.log, now: s.now}, st: st, a: a, projectID: projectID,
			rr: newRecordReader(st, projectID), replica: req.Replica, batchID: req.BatchID}
		// The records as they are here, read at once: a batch names each
		// record once (a second mention meets a version that moved on).
		keys := make([]recordKey, len(req.Changes))
		for i, c := range req.Changes {
			keys[i] = recordKey{c.Table, c.GlobalID}
		}
		curs, err := ap.rr.load(ctx, keys)
		if err != nil {
			return err
		}
		for _, c := range req.Changes {
			cur := curs[recordKey{c.Table, c.GlobalID}]
			if c.Table != domain.SyncMeasurements || c.Deleted || !cur.Deleted {
				if err := ap.flush(ctx); err != nil {
					return err
				}
			}
			r, err := ap.push(ctx, c, cur)
			if err != nil {
				return err
			}
			resp.Results = append(resp.Results, r)
		}
		if err := ap.flush(ctx); err != nil {
			return err
		}
		body, err := json.Marshal(resp)
		if err != nil {
			return err
		}
		return st.PutIdempotency(ctx, domain.Idempotency{ProjectID: projectID, Key: key, RequestHash: req.BatchID, Result: body})
	})
	return resp, err
}

// applier applies pushed changes in one transaction.
type applier struct {
	s         *Service // bound to st: its use cases run in the transaction
	st        domain.Store
	a         Actor
	projectID int64
	rr        *recordReader
	replica   string
	batchID   string
	// pending are new measurements checked and waiting to be stored at
	// once (see flush).
	pending []domain.Measurement
}

// flush stores the pending new measurements in one bulk insert and audits
// them as one entry, as an import is audited.
func (ap *applier) flush(ctx context.Context) error {
	if len(ap.pending) == 0 {
		return nil
	}
	if _, err := ap.st.CreateMeasurements(ctx, ap.pending); err != nil {
		return err
	}
	gids := make([]string, len(ap.pending))
	for i, m := range ap.pending {
		gids[i] = m.GlobalID
	}
	ap.pending = nil
	return audit(ctx, ap.st, ap.a, ap.projectID, "measurement", "sync:"+ap.batchID, domain.ActionCreate, nil,
		map[string]any{"replica": ap.replica, "created": len(gids), "global_ids": gids})
}

// push decides and applies one change to the record as it is here (cur). Errors that are the change's fault
// come back as a refused result; others fail the batch.
func (ap *applier) push(ctx context.Context, c PushChange, cur SyncRecord) (PushResult, error) {
	res := PushResult{ChangeID: c.ChangeID, Table: c.Table, GlobalID: c.GlobalID}
	clean := (cur.Deleted && c.Base == 0) || (!cur.Deleted && cur.Version == c.Base)
	switch {
	case c.Deleted && cur.Deleted:
		res.Status = PushUnchanged
		return res, nil
	case !c.Deleted && !cur.Deleted && SameContent(c.SyncRecord, cur):
		res.Status, res.Version = PushUnchanged, cur.Version
		return res, nil
	}
	if !clean {
		own, err := ap.ownMoves(ctx, c)
		if err != nil {
			return res, err
		}
		if !own {
			return ap.conflict(ctx, c, cur)
		}
	}
	v, err := ap.apply(ctx, c, cur)
	if err != nil {
		if domain.IsKind(err, domain.Internal) || domain.IsKind(err, domain.Unavailable) {
			return res, err
		}
		res.Status, res.Reason = PushRefused, err.Error()
		return res, nil
	}
	res.Status, res.Version = PushApplied, v
	return res, nil
}

// ownMoves reports whether every change of the record here since the
// state both sides agreed on (the last change at the base version; the
// beginning for base 0) came from the pushing replica: its own earlier
// pushes, say of a push cut off before its answer arrived, which its newer
// state replaces.
func (ap *applier) ownMoves(ctx context.Context, c PushChange) (bool, error) {
	log, err := ap.st.RecordChanges(ctx, c.Table, c.GlobalID)
	if err != nil {
		return false, err
	}
	from := 0
	if c.Base > 0 {
		from = -1
		for i, e := range log {
			if e.Version == c.Base && e.Op != domain.ActionDelete {
				from = i + 1
			}
		}
		if from < 0 {
			return false, nil
		}
	}
	for _, e := range log[from:] {
		if e.Origin != ap.replica {
			return false, nil
		}
	}
	return true, nil
}

// newID returns a new random id (128 random bits from crypto/rand, as 26
// base32 characters) for a conflict or a replica. (The stores make the
// records' UUIDs; google/uuid reaches database/sql, which this package may
// not.)
func newID() string { return rand.Text() }

// conflict keeps both versions; an open conflict of the same record from
// the same replica is brought up to date instead of doubled.
func (ap *applier) conflict(ctx context.Context, c PushChange, cur SyncRecord) (PushResult, error) {
	res := PushResult{ChangeID: c.ChangeID, Table: c.Table, GlobalID: c.GlobalID, Status: PushConflict, Version: cur.Version, Remote: &cur}
	open, err := ap.st.ListConflicts(ctx, ap.projectID, domain.ConflictOpen)
	if err != nil {
		return res, err
	}
	cf := domain.SyncConflict{ID: newID(), ProjectID: ap.projectID, Kind: domain.ConflictEdit, Table: c.Table, GlobalID: c.GlobalID,
		Replica: ap.replica, Status: domain.ConflictOpen, CreatedAt: ap.s.now().UTC()}
	for _, o := range open {
		if o.Table == c.Table && o.GlobalID == c.GlobalID && o.Replica == ap.replica && o.Kind == domain.ConflictEdit {
			cf = o
		}
	}
	cf.Actor, cf.BaseVersion, cf.LocalVersion, cf.RemoteVersion = ap.a.Name, c.Base, c.Version, cur.Version
	cf.LocalData, cf.RemoteData = marshal(c.SyncRecord), marshal(cur)
	if err := ap.st.PutConflict(ctx, cf); err != nil {
		return res, err
	}
	res.ConflictID = cf.ID
	return res, nil
}

// apply makes the change through the use case of its kind and returns the
// record's new version (0 once deleted).
func (ap *applier) apply(ctx context.Context, c PushChange, cur SyncRecord) (int64, error) {
	s, pid := ap.s, ap.projectID
	if c.Deleted {
		switch c.Table {
		case domain.SyncTypes:
			n, err := ap.st.CountMeasurements(ctx, domain.MeasurementFilter{ProjectID: pid, TypeCodes: []string{c.GlobalID}})
			if err != nil {
				return 0, err
			}
			if n > 0 {
				return 0, domain.Errorf(domain.Conflict, "type code %q is still used by %d measurements", c.GlobalID, n)
			}
			return 0, s.DeleteTypeCode(ctx, pid, c.GlobalID)
		case domain.SyncHoles:
			ap.rr.forget(c.GlobalID)
			return 0, s.DeleteHole(ctx, pid, cur.HoleRecord.ID, cur.Version)
		case domain.SyncSurveys:
			return 0, domain.Errorf(domain.Invalid, "a survey set is not deleted on its own here (only with its hole)")
		case domain.SyncKindSets:
			return 0, s.DeleteKindSet(ctx, pid, cur.KindSet.HoleID, cur.KindSet.Kind, cur.Version)
		case domain.SyncRuns:
			return 0, s.DeleteRun(ctx, pid, cur.Run.ID, cur.Version)
		case domain.SyncMeasurements:
			return 0, s.DeleteMeasurement(ctx, pid, cur.Measurement.ID, cur.Version)
		}
	}
	if err := c.check(); err != nil {
		return 0, err
	}
	var h domain.Hole
	if c.Table == domain.SyncSurveys || c.Table == domain.SyncKindSets || c.Table == domain.SyncRuns || c.Table == domain.SyncMeasurements {
		var err error
		if h, err = ap.rr.holeGID(ctx, c.Hole); domain.IsKind(err, domain.NotFound) {
			return 0, domain.FieldErr("hole", "hole %s is not in project %d here", c.Hole, pid)
		} else if err != nil {
			return 0, err
		}
	}
	switch c.Table {
	case domain.SyncTypes:
		tc := *c.Type
		tc.Code = c.GlobalID
		if _, _, err := s.PutTypeCode(ctx, pid, tc); err != nil {
			return 0, err
		}
		ap.rr.vocabOK = false
	case domain.SyncHoles:
		hr := *c.HoleRecord
		hr.GlobalID = c.GlobalID
		if other, err := ap.st.GetHoleByName(ctx, pid, hr.Name); err == nil && other.GlobalID != c.GlobalID {
			return 0, domain.Errorf(domain.Conflict, "another hole named %q (global id %s) is in project %d", hr.Name, other.GlobalID, pid)
		}
		ap.rr.forget(c.GlobalID)
		if cur.Deleted {
			if _, err := s.CreateHole(ctx, pid, hr); err != nil {
				return 0, err
			}
		} else if _, err := s.UpdateHole(ctx, pid, cur.HoleRecord.ID, cur.Version, hr); err != nil {
			return 0, err
		}
	case domain.SyncSurveys:
		if c.GlobalID != c.Hole {
			return 0, domain.FieldErr("global_id", "a survey set is known by its hole's global id %s, not %s", c.Hole, c.GlobalID)
		}
		if _, err := s.PutSurvey(ctx, pid, h.ID, cur.Version, *c.Survey); err != nil {
			return 0, err
		}
	case domain.SyncKindSets:
		if hg, kind := domain.SplitKindSetGlobalID(c.GlobalID); hg != c.Hole || kind != c.KindSet.Kind {
			return 0, domain.FieldErr("global_id", "a survey set by kind is known as %s, not %s", domain.KindSetGlobalID(c.Hole, c.KindSet.Kind), c.GlobalID)
		}
		if _, err := s.PutKindSet(ctx, pid, h.ID, c.KindSet.Kind, cur.Version, *c.KindSet); err != nil {
			return 0, err
		}
	case domain.SyncRuns:
		r := *c.Run
		r.GlobalID = c.GlobalID
		if cur.Deleted {
			if _, err := s.CreateRun(ctx, pid, h.ID, r); err != nil {
				return 0, err
			}
		} else {
			if cur.Run.HoleID != h.ID {
				return 0, domain.FieldErr("hole", "a run does not move to another hole")
			}
			if _, err := s.UpdateRun(ctx, pid, cur.Run.ID, cur.Version, r); err != nil {
				return 0, err
			}
		}
	case domain.SyncMeasurements:
		m := *c.Measurement
		m.GlobalID, m.HoleID = c.GlobalID, h.ID
		if cur.Deleted {
			// The route's role and checks; stored with the batch's other
			// new measurements by flush.
			if _, err := allow(ctx, pid, domain.RoleLog); err != nil {
				return 0, err
			}
			vocab, err := ap.rr.types(ctx)
			if err != nil {
				return 0, err
			}
			if err := s.newMeasurement(ap.a, pid, &m, h, vocab); err != nil {
				return 0, err
			}
			ap.pending = append(ap.pending, m)
			return 1, nil
		}
		if _, err := s.UpdateMeasurement(ctx, pid, cur.Measurement.ID, cur.Version, m); err != nil {
			return 0, err
		}
	}
	_, v, err := ap.st.FindGlobal(ctx, pid, c.Table, c.GlobalID)
	return v, err
}

// check says whether a record carries the content its table needs.
func (r SyncRecord) check() error {
	ok := false
	switch r.Table {
	case domain.SyncTypes:
		ok = r.Type != nil
	case domain.SyncHoles:
		ok = r.HoleRecord != nil
	case domain.SyncSurveys:
		ok = r.Survey != nil && r.Hole != ""
	case domain.SyncKindSets:
		ok = r.KindSet != nil && r.Hole != ""
	case domain.SyncRuns:
		ok = r.Run != nil && r.Hole != ""
	case domain.SyncMeasurements:
		ok = r.Measurement != nil && r.Hole != ""
	}
	if !ok {
		return domain.FieldErr(r.Table, "the record %s of %s has no content", r.GlobalID, r.Table)
	}
	return nil
}

// ListConflicts lists the project's sync conflicts and refused changes in
// the given status ("" for all), each with the record as it is now (read).
func (s *Service) ListConflicts(ctx context.Context, projectID int64, status string) ([]ConflictView, error) {
	if _, _, err := s.project(ctx, s.store, projectID, domain.RoleRead); err != nil {
		return nil, err
	}
	if status != "" && status != domain.ConflictOpen && status != domain.ConflictResolved {
		return nil, domain.FieldErr("status", "status is open or resolved, not %q", status)
	}
	cs, err := s.store.ListConflicts(ctx, projectID, status)
	if err != nil {
		return nil, err
	}
	rr := newRecordReader(s.store, projectID)
	out := make([]ConflictView, 0, len(cs))
	for _, c := range cs {
		v, err := conflictView(ctx, rr, c)
		if err != nil {
			return nil, err
		}
		out = append(out, v)
	}
	return out, nil
}

// GetConflict returns one conflict with the record as it is now (read).
func (s *Service) GetConflict(ctx context.Context, projectID int64, id string) (ConflictView, error) {
	if _, _, err := s.project(ctx, s.store, projectID, domain.RoleRead); err != nil {
		return ConflictView{}, err
	}
	c, err := s.store.GetConflict(ctx, id)
	if err != nil {
		return ConflictView{}, err
	}
	if c.ProjectID != projectID {
		return ConflictView{}, domain.Errorf(domain.NotFound, "conflict %s not found in project %d", id, projectID)
	}
	return conflictView(ctx, newRecordReader(s.store, projectID), c)
}

func conflictView(ctx context.Context, rr *recordReader, c domain.SyncConflict) (ConflictView, error) {
	recs, err := rr.load(ctx, []recordKey{{c.Table, c.GlobalID}})
	if err != nil {
		return ConflictView{}, err
	}
	cur := recs[recordKey{c.Table, c.GlobalID}]
	return ConflictView{SyncConflict: c, Current: &cur, Fields: conflictFields(c)}, nil
}

// ResolveConflict resolves an open conflict as a person chose: keep
// "remote" leaves the record as this store holds it; keep "local" writes
// the pushed version over it (the caller needs the role that change needs).
// The audit trail records who chose what.
func (s *Service) ResolveConflict(ctx context.Context, projectID int64, id, keep string) (ConflictView, error) {
	var out ConflictView
	if keep != domain.KeepLocal && keep != domain.KeepRemote {
		return out, domain.FieldErr("keep", "keep is local or remote, not %q", keep)
	}
	err := s.store.InTx(ctx, func(ctx context.Context, st domain.Store) error {
		_, a, err := s.project(ctx, st, projectID, domain.RoleLog)
		if err != nil {
			return err
		}
		c, err := st.GetConflict(ctx, id)
		if err != nil {
			return err
		}
		if c.ProjectID != projectID {
			return domain.Errorf(domain.NotFound, "conflict %s not found in project %d", id, projectID)
		}
		if c.Status != domain.ConflictOpen {
			return domain.Errorf(domain.Conflict, "conflict %s was resolved already (kept %s, by %s)", id, c.Kept, c.ResolvedBy)
		}
		before := c
		rr := newRecordReader(st, projectID)
		if keep == domain.KeepLocal && c.Kind == domain.ConflictEdit {
			var local SyncRecord
			if err := json.Unmarshal(c.LocalData, &local); err != nil {
				return domain.Errorf(domain.Internal, "conflict %s: stored version: %v", id, err)
			}
			recs, err := rr.load(ctx, []recordKey{{c.Table, c.GlobalID}})
			if err != nil {
				return err
			}
			cur := recs[recordKey{c.Table, c.GlobalID}]
			if !(local.Deleted && cur.Deleted) && !(!local.Deleted && !cur.Deleted && SameContent(local, cur)) {
				if err := st.SetChangeSource(ctx, c.Replica, a.Name); err != nil {
					return err
				}
				ap := &applier{s: &Service{store: st, log: s.log, now: s.now}, st: st, a: a, projectID: projectID, rr: rr,
					replica: c.Replica, batchID: "resolve:" + id}
				if _, err := ap.apply(ctx, PushChange{ChangeID: id, Base: cur.Version, SyncRecord: local}, cur); err != nil {
					return err
				}
				if err := ap.flush(ctx); err != nil {
					return err
				}
				rr = newRecordReader(st, projectID)
			}
		}
		t := s.now().UTC()
		c.Status, c.Kept, c.ResolvedBy, c.ResolvedAt = domain.ConflictResolved, keep, a.Name, &t
		if err := st.PutConflict(ctx, c); err != nil {
			return err
		}
		if err := audit(ctx, st, a, projectID, "sync_conflict", id, domain.ActionUpdate, before, c); err != nil {
			return err
		}
		out, err = conflictView(ctx, rr, c)
		return err
	})
	return out, err
}
