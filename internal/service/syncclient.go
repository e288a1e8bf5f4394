package service

import (
	"context"
	"encoding/json"
	"fmt"
	"slices"
	"strings"

	"corvane/internal/domain"
)

// SyncRemote is the central service a store syncs with, as the sync
// client sees it (package syncremote speaks to it over HTTP; tests may
// speak to a Service directly).
type SyncRemote interface {
	// Project returns the remote project named by ref (an id or a name).
	Project(ctx context.Context, ref string) (domain.Project, error)
	Changes(ctx context.Context, projectID int64, q ChangesQuery) (SyncPage, error)
	Push(ctx context.Context, projectID int64, req PushRequest) (PushResponse, error)
	Conflict(ctx context.Context, projectID int64, id string) (ConflictView, error)
	Record(ctx context.Context, projectID int64, table, gid string) (SyncRecord, error)
	Resolve(ctx context.Context, projectID int64, id, keep string) (ConflictView, error)
}

// SyncOptions says what to sync with whom.
type SyncOptions struct {
	// Remote is the remote service's address; cursors and agreed versions
	// are kept per remote.
	Remote string
	// Project names the remote project (id or name); the local project of
	// the same name is made on the first sync when missing.
	Project string
	// Holes are the hole names to pull (none: all). Local changes are
	// pushed whatever their hole.
	Holes []string
	// Batch is the number of local change log entries per push (at most
	// [SyncBatchLimit]; 0 for that).
	Batch int
}

// SyncReport counts what one sync did.
type SyncReport struct {
	Project   string   `json:"project"`
	Pushed    int      `json:"pushed"`    // changes sent
	Applied   int      `json:"applied"`   // of them stored by the remote
	Unchanged int      `json:"unchanged"` // of them the remote held already
	Conflicts int      `json:"conflicts"` // of them kept as conflicts
	Refused   int      `json:"refused"`   // of them refused (the reasons are listed with the conflicts)
	Pulled    int      `json:"pulled"`    // remote records applied here
	Held      int      `json:"held"`      // remote records not applied: changed here too, or not applicable
	Resolved  int      `json:"resolved"`  // conflicts resolved on the remote and taken over here
	Problems  []string `json:"problems,omitempty"`
}

// Sync brings the local project and the remote one together (the local
// command line, admin): first conflicts resolved on the remote are taken
// over, then local changes are pushed in batches, then the remote's
// changes are pulled page by page. Each batch and page is applied here in
// one transaction with the cursor that follows it, so a sync cut off at any
// point resumes where it stopped, and a second sync with nothing new
// changes nothing.
func (s *Service) Sync(ctx context.Context, remote SyncRemote, opt SyncOptions) (SyncReport, error) {
	var rep SyncReport
	if opt.Batch <= 0 || opt.Batch > SyncBatchLimit {
		opt.Batch = SyncBatchLimit
	}
	if _, err := allow(ctx, domain.AllProjects, domain.RoleAdmin); err != nil {
		return rep, err
	}
	rp, err := remote.Project(ctx, opt.Project)
	if err != nil {
		return rep, fmt.Errorf("remote project %q: %w", opt.Project, err)
	}
	rep.Project = rp.Name
	lp, err := s.store.GetProjectByName(ctx, rp.Name)
	if domain.IsKind(err, domain.NotFound) {
		lp = rp
		lp.ID = 0
		err = s.store.CreateProject(ctx, &lp)
	}
	if err != nil {
		return rep, err
	}
	cur, err := s.store.GetSyncCursor(ctx, opt.Remote, rp.Name)
	if domain.IsKind(err, domain.NotFound) {
		cur, err = domain.SyncCursor{Remote: opt.Remote, Project: rp.Name, Replica: newID()}, nil
	}
	if err != nil {
		return rep, err
	}
	holes := strings.Join(opt.Holes, ",")
	if cur.Holes != holes {
		// Another selection of holes: pull from the start (applying is
		// idempotent; records already here are skipped).
		cur.Holes, cur.Pulled = holes, 0
	}
	c := &syncClient{s: s, remote: remote, opt: opt, lp: lp, rp: rp, cur: cur, rep: &rep}
	if err := c.takeResolved(ctx); err != nil {
		return rep, err
	}
	if err := c.push(ctx); err != nil {
		return rep, err
	}
	if err := c.pull(ctx); err != nil {
		return rep, err
	}
	return rep, nil
}

// syncClient is one run of [Service.Sync].
type syncClient struct {
	s      *Service
	remote SyncRemote
	opt    SyncOptions
	lp, rp domain.Project
	cur    domain.SyncCursor
	rep    *SyncReport
}

// local runs fn in one local transaction whose change log entries are
// marked as brought from the remote.
func (c *syncClient) local(ctx context.Context, fn func(ctx context.Context, st domain.Store, rr *recordReader) error) error {
	return c.s.store.InTx(ctx, func(ctx context.Context, st domain.Store) error {
		if err := st.SetChangeSource(ctx, c.opt.Remote, "sync"); err != nil {
			return err
		}
		return fn(ctx, st, newRecordReader(st, c.lp.ID))
	})
}

// push sends the local changes after the push cursor, batch by batch.
func (c *syncClient) push(ctx context.Context) error {
	if err := c.s.LogPending(ctx, c.lp.ID); err != nil {
		return err
	}
	for {
		changes, err := c.s.store.ListChanges(ctx, domain.ChangeFilter{ProjectID: c.lp.ID, After: c.cur.Pushed, LocalOnly: true, Limit: c.opt.Batch})
		if err != nil {
			return err
		}
		if len(changes) == 0 {
			return nil
		}
		req, err := c.batch(ctx, changes)
		if err != nil {
			return err
		}
		var resp PushResponse
		if len(req.Changes) > 0 {
			if resp, err = c.remote.Push(ctx, c.rp.ID, req); err != nil {
				return fmt.Errorf("push: %w", err)
			}
			if len(resp.Results) != len(req.Changes) {
				return fmt.Errorf("push: %d results for %d changes", len(resp.Results), len(req.Changes))
			}
		}
		next := c.cur
		next.Pushed = changes[len(changes)-1].Seq
		err = c.local(ctx, func(ctx context.Context, st domain.Store, rr *recordReader) error {
			for i, r := range resp.Results {
				if err := c.acknowledge(ctx, st, req.Changes[i], r); err != nil {
					return err
				}
			}
			return st.PutSyncCursor(ctx, next)
		})
		if err != nil {
			return err
		}
		c.cur = next
		c.rep.Pushed += len(req.Changes)
	}
}

// batch makes the push request of a run of local change log entries: each
// record changed in it once, as it is now, dependencies first (types,
// holes, surveys, runs, measurements), skipping records that hold what
// both sides last agreed on.
func (c *syncClient) batch(ctx context.Context, changes []domain.Change) (PushRequest, error) {
	req := PushRequest{Replica: c.cur.Replica, Changes: []PushChange{}}
	first, last := map[recordKey]int64{}, map[recordKey]int64{}
	var keys []recordKey
	for _, ch := range changes {
		k := recordKey{ch.Table, ch.GlobalID}
		if _, ok := first[k]; !ok {
			first[k] = ch.Seq
			keys = append(keys, k)
		}
		last[k] = ch.Seq
	}
	order := func(t string) int { return slices.Index(domain.SyncTables, t) }
	slices.SortStableFunc(keys, func(a, b recordKey) int {
		if d := order(a.table) - order(b.table); d != 0 {
			return d
		}
		return int(first[a] - first[b])
	})
	recs, err := newRecordReader(c.s.store, c.lp.ID).load(ctx, keys)
	if err != nil {
		return req, err
	}
	bases, err := syncBases(ctx, c.s.store, c.opt.Remote, keys)
	if err != nil {
		return req, err
	}
	for _, k := range keys {
		rec, base := recs[k], bases[k]
		if (rec.Deleted && base == 0) || (!rec.Deleted && rec.Version == base) {
			continue
		}
		req.Changes = append(req.Changes, PushChange{ChangeID: fmt.Sprintf("%s:%d", c.cur.Replica, last[k]), Base: base, SyncRecord: rec})
	}
	req.BatchID = BatchID(req.Replica, req.Changes)
	return req, nil
}

// syncBases reads the agreed versions of keys with remote, table by table.
func syncBases(ctx context.Context, st domain.Store, remote string, keys []recordKey) (map[recordKey]int64, error) {
	byTable := map[string][]string{}
	for _, k := range keys {
		byTable[k.table] = append(byTable[k.table], k.gid)
	}
	out := make(map[recordKey]int64, len(keys))
	for table, gids := range byTable {
		vs, err := st.SyncBases(ctx, remote, table, gids)
		if err != nil {
			return nil, err
		}
		for g, v := range vs {
			out[recordKey{table, g}] = v
		}
	}
	return out, nil
}

// acknowledge records the remote's answer to one pushed change.
func (c *syncClient) acknowledge(ctx context.Context, st domain.Store, ch PushChange, r PushResult) error {
	switch r.Status {
	case PushApplied, PushUnchanged:
		if r.Status == PushApplied {
			c.rep.Applied++
		} else {
			c.rep.Unchanged++
		}
		if ch.Deleted {
			return st.PutSyncBase(ctx, c.opt.Remote, ch.Table, ch.GlobalID, 0)
		}
		if ch.Version != r.Version {
			// Take the remote's version number, unless the record changed
			// here again meanwhile (that change is pushed next time).
			_, v, err := st.FindGlobal(ctx, c.lp.ID, ch.Table, ch.GlobalID)
			if err != nil {
				return err
			}
			if v == ch.Version {
				if err := st.Restamp(ctx, c.lp.ID, ch.Table, ch.GlobalID, r.Version); err != nil {
					return err
				}
			}
		}
		return st.PutSyncBase(ctx, c.opt.Remote, ch.Table, ch.GlobalID, r.Version)
	case PushConflict:
		c.rep.Conflicts++
		return st.PutConflict(ctx, domain.SyncConflict{ID: r.ConflictID, ProjectID: c.lp.ID, Kind: domain.ConflictEdit,
			Table: ch.Table, GlobalID: ch.GlobalID, Replica: c.cur.Replica, BaseVersion: ch.Base, LocalVersion: ch.Version,
			RemoteVersion: r.Version, LocalData: marshal(ch.SyncRecord), RemoteData: marshal(r.Remote), Status: domain.ConflictOpen,
			CreatedAt: c.s.now().UTC()})
	case PushRefused:
		c.rep.Refused++
		cf := domain.SyncConflict{ID: newID(), ProjectID: c.lp.ID, Kind: domain.ConflictRefused, Table: ch.Table,
			GlobalID: ch.GlobalID, Replica: c.cur.Replica, Status: domain.ConflictOpen, CreatedAt: c.s.now().UTC()}
		open, err := st.ListConflicts(ctx, c.lp.ID, domain.ConflictOpen)
		if err != nil {
			return err
		}
		for _, o := range open {
			if o.Kind == domain.ConflictRefused && o.Table == ch.Table && o.GlobalID == ch.GlobalID {
				cf = o
			}
		}
		cf.BaseVersion, cf.LocalVersion, cf.LocalData, cf.Reason = ch.Base, ch.Version, marshal(ch.SyncRecord), r.Reason
		return st.PutConflict(ctx, cf)
	}
	return fmt.Errorf("push: change %s: unknown status %q", ch.ChangeID, r.Status)
}

// pull applies the remote's changes after the pull cursor, page by page.
func (c *syncClient) pull(ctx context.Context) error {
	for {
		page, err := c.remote.Changes(ctx, c.rp.ID, ChangesQuery{After: c.cur.Pulled, Holes: c.opt.Holes, Limit: SyncPageLimit, Replica: c.cur.Replica})
		if err != nil {
			return fmt.Errorf("pull: %w", err)
		}
		next := c.cur
		next.Pulled = page.Next
		err = c.local(ctx, func(ctx context.Context, st domain.Store, rr *recordReader) error {
			keys := make([]recordKey, len(page.Items))
			for i, it := range page.Items {
				keys[i] = recordKey{it.Table, it.GlobalID}
			}
			locals, err := rr.load(ctx, keys)
			if err != nil {
				return err
			}
			bases, err := syncBases(ctx, st, c.opt.Remote, keys)
			if err != nil {
				return err
			}
			// New measurements, the bulk of a pull, are stored at once.
			var pending []domain.Measurement
			var pendingRecs []SyncRecord
			flush := func() error {
				if len(pending) == 0 {
					return nil
				}
				if _, err := st.CreateMeasurements(ctx, pending); err != nil {
					return err
				}
				for _, rec := range pendingRecs {
					if rec.Version != 1 {
						if err := st.Restamp(ctx, c.lp.ID, rec.Table, rec.GlobalID, rec.Version); err != nil {
							return err
						}
					}
					if err := st.PutSyncBase(ctx, c.opt.Remote, rec.Table, rec.GlobalID, rec.Version); err != nil {
						return err
					}
				}
				c.rep.Pulled += len(pending)
				pending, pendingRecs = nil, nil
				return nil
			}
			for i, it := range page.Items {
				here, base := locals[keys[i]], bases[keys[i]]
				if it.Table == domain.SyncMeasurements && !it.Deleted && it.Measurement != nil && here.Deleted && base == 0 {
					if h, err := rr.holeGID(ctx, it.Hole); err == nil {
						m := *it.Measurement
						m.ProjectID, m.HoleID, m.GlobalID = c.lp.ID, h.ID, it.GlobalID
						pending, pendingRecs = append(pending, m), append(pendingRecs, it.SyncRecord)
						continue
					}
				}
				if err := flush(); err != nil {
					return err
				}
				applied, err := c.adopt(ctx, st, rr, it.SyncRecord, here, base, false)
				if err != nil {
					return err
				}
				if applied {
					c.rep.Pulled++
				}
			}
			if err := flush(); err != nil {
				return err
			}
			return st.PutSyncCursor(ctx, next)
		})
		if err != nil {
			return err
		}
		c.cur = next
		if !page.More {
			return nil
		}
	}
}

// adopt makes the local record rec (the remote's version), unless the local
// one (here) has changes of its own not yet pushed and force is false. It
// reports whether it changed anything here.
func (c *syncClient) adopt(ctx context.Context, st domain.Store, rr *recordReader, rec, here SyncRecord, base int64, force bool) (bool, error) {
	remoteName := c.opt.Remote
	agree := func() (bool, error) {
		if !rec.Deleted && !here.Deleted && here.Version != rec.Version {
			if err := st.Restamp(ctx, c.lp.ID, rec.Table, rec.GlobalID, rec.Version); err != nil {
				return false, err
			}
		}
		v := rec.Version
		if rec.Deleted {
			v = 0
		}
		return false, st.PutSyncBase(ctx, remoteName, rec.Table, rec.GlobalID, v)
	}
	if rec.Deleted && here.Deleted {
		return agree()
	}
	if !rec.Deleted && !here.Deleted && SameContent(rec, here) {
		return agree()
	}
	clean := (here.Deleted && base == 0) || (!here.Deleted && here.Version == base)
	if !clean && !force {
		c.rep.Held++
		return false, nil
	}
	v, err := c.write(ctx, st, rr, rec, here)
	if err != nil {
		if domain.IsKind(err, domain.Internal) || domain.IsKind(err, domain.Unavailable) {
			return false, err
		}
		c.rep.Held++
		c.rep.Problems = append(c.rep.Problems, fmt.Sprintf("%s %s from the remote not applied here: %v", rec.Table, rec.GlobalID, err))
		return false, nil
	}
	if rec.Deleted {
		return true, st.PutSyncBase(ctx, remoteName, rec.Table, rec.GlobalID, 0)
	}
	if v != rec.Version {
		if err := st.Restamp(ctx, c.lp.ID, rec.Table, rec.GlobalID, rec.Version); err != nil {
			return false, err
		}
	}
	return true, st.PutSyncBase(ctx, remoteName, rec.Table, rec.GlobalID, rec.Version)
}

// write stores the remote's record here over the local one (here), through
// the store (the remote checked it when it was made), and returns the
// version it has here now (0 once deleted).
func (c *syncClient) write(ctx context.Context, st domain.Store, rr *recordReader, rec, here SyncRecord) (int64, error) {
	pid := c.lp.ID
	if rec.Deleted {
		switch rec.Table {
		case domain.SyncTypes:
			rr.vocabOK = false
			return 0, st.DeleteTypeCode(ctx, pid, rec.GlobalID)
		case domain.SyncHoles:
			rr.forget(rec.GlobalID)
			return 0, st.DeleteHole(ctx, here.HoleRecord.ID, here.Version)
		case domain.SyncSurveys:
			return 0, st.DeleteSurvey(ctx, here.Survey.HoleID, here.Version)
		case domain.SyncKindSets:
			return 0, st.DeleteKindSet(ctx, here.KindSet.HoleID, here.KindSet.Kind, here.Version)
		case domain.SyncRuns:
			return 0, st.DeleteRun(ctx, here.Run.ID, here.Version)
		case domain.SyncMeasurements:
			return 0, st.DeleteMeasurement(ctx, here.Measurement.ID, here.Version)
		}
		return 0, checkTable(rec.Table)
	}
	if err := rec.check(); err != nil {
		return 0, err
	}
	var h domain.Hole
	if rec.Table == domain.SyncSurveys || rec.Table == domain.SyncKindSets || rec.Table == domain.SyncRuns || rec.Table == domain.SyncMeasurements {
		var err error
		if h, err = rr.holeGID(ctx, rec.Hole); err != nil {
			return 0, fmt.Errorf("its hole %s: %w", rec.Hole, err)
		}
	}
	var err error
	switch rec.Table {
	case domain.SyncTypes:
		tc := *rec.Type
		tc.ProjectID, tc.Code = pid, rec.GlobalID
		rr.vocabOK = false
		if err := st.PutTypeCode(ctx, tc); err != nil {
			return 0, err
		}
		_, v, err := st.FindGlobal(ctx, pid, rec.Table, rec.GlobalID)
		return v, err
	case domain.SyncHoles:
		hr := *rec.HoleRecord
		hr.ProjectID, hr.GlobalID = pid, rec.GlobalID
		rr.forget(rec.GlobalID)
		if here.Deleted {
			err = st.CreateHole(ctx, &hr)
		} else {
			hr.ID = here.HoleRecord.ID
			err = st.UpdateHole(ctx, &hr, here.Version)
		}
		return hr.Version, err
	case domain.SyncSurveys:
		ss := *rec.Survey
		ss.HoleID = h.ID
		err = st.PutSurvey(ctx, &ss, here.Version)
		return ss.Version, err
	case domain.SyncKindSets:
		ks := *rec.KindSet
		ks.HoleID = h.ID
		err = st.PutKindSet(ctx, &ks, here.Version)
		return ks.Version, err
	case domain.SyncRuns:
		r := *rec.Run
		r.HoleID, r.GlobalID = h.ID, rec.GlobalID
		if here.Deleted {
			err = st.CreateRun(ctx, &r)
		} else {
			r.ID = here.Run.ID
			err = st.UpdateRun(ctx, &r, here.Version)
		}
		return r.Version, err
	case domain.SyncMeasurements:
		m := *rec.Measurement
		m.ProjectID, m.HoleID, m.GlobalID = pid, h.ID, rec.GlobalID
		if here.Deleted {
			err = st.CreateMeasurement(ctx, &m)
		} else {
			m.ID = here.Measurement.ID
			err = st.UpdateMeasurement(ctx, &m, here.Version)
		}
		return m.Version, err
	}
	return 0, checkTable(rec.Table)
}

// takeResolved takes over the conflicts a person resolved on the remote:
// the remote's record as it is now replaces the local one, unless the local
// one changed again since the conflict (then that newer change is pushed
// over it, from the agreed version).
func (c *syncClient) takeResolved(ctx context.Context) error {
	open, err := c.s.store.ListConflicts(ctx, c.lp.ID, domain.ConflictOpen)
	if err != nil {
		return err
	}
	for _, o := range open {
		if o.Kind != domain.ConflictEdit {
			continue
		}
		v, err := c.remote.Conflict(ctx, c.rp.ID, o.ID)
		if err != nil {
			return fmt.Errorf("conflict %s: %w", o.ID, err)
		}
		if v.Status != domain.ConflictResolved || v.Current == nil {
			continue
		}
		if err := c.settle(ctx, o, *v.Current, v.Kept, v.ResolvedBy); err != nil {
			return err
		}
		c.rep.Resolved++
	}
	return nil
}

// settle closes the local copy of a conflict or refusal with the remote's
// record rec as the agreed state.
func (c *syncClient) settle(ctx context.Context, o domain.SyncConflict, rec SyncRecord, kept, by string) error {
	return c.local(ctx, func(ctx context.Context, st domain.Store, rr *recordReader) error {
		heres, err := rr.load(ctx, []recordKey{{o.Table, o.GlobalID}})
		if err != nil {
			return err
		}
		here := heres[recordKey{o.Table, o.GlobalID}]
		unchanged := (here.Deleted && o.LocalVersion == 0) || (!here.Deleted && here.Version == o.LocalVersion)
		if unchanged || (kept == domain.KeepRemote && o.Kind == domain.ConflictRefused) {
			base, err := st.SyncBase(ctx, c.opt.Remote, o.Table, o.GlobalID)
			if err != nil {
				return err
			}
			if _, err := c.adopt(ctx, st, rr, rec, here, base, true); err != nil {
				return err
			}
		} else {
			v := rec.Version
			if rec.Deleted {
				v = 0
			}
			if err := st.PutSyncBase(ctx, c.opt.Remote, o.Table, o.GlobalID, v); err != nil {
				return err
			}
		}
		t := c.s.now().UTC()
		o.Status, o.Kept, o.ResolvedBy, o.ResolvedAt = domain.ConflictResolved, kept, by, &t
		return st.PutConflict(ctx, o)
	})
}

// ResolveSynced resolves a conflict or refusal listed here (the local
// command line): a conflict is resolved on the remote (which records who
// chose what) and the result taken over here; a refused change kept local
// stays here unpushed, kept remote is replaced by the remote's record.
func (s *Service) ResolveSynced(ctx context.Context, remote SyncRemote, opt SyncOptions, id, keep string) (ConflictView, error) {
	var out ConflictView
	if _, err := allow(ctx, domain.AllProjects, domain.RoleAdmin); err != nil {
		return out, err
	}
	if keep != domain.KeepLocal && keep != domain.KeepRemote {
		return out, domain.FieldErr("keep", "keep is local or remote, not %q", keep)
	}
	o, err := s.store.GetConflict(ctx, id)
	if err != nil {
		return out, err
	}
	if o.Status != domain.ConflictOpen {
		return out, domain.Errorf(domain.Conflict, "conflict %s was resolved already (kept %s, by %s)", id, o.Kept, o.ResolvedBy)
	}
	lp, err := s.store.GetProject(ctx, o.ProjectID)
	if err != nil {
		return out, err
	}
	rp, err := remote.Project(ctx, opt.Project)
	if err != nil {
		return out, fmt.Errorf("remote project %q: %w", opt.Project, err)
	}
	if rp.Name != lp.Name {
		return out, domain.FieldErr("project", "conflict %s is of project %q here, not %q", id, lp.Name, rp.Name)
	}
	cur, err := s.store.GetSyncCursor(ctx, opt.Remote, rp.Name)
	if err != nil {
		return out, err
	}
	c := &syncClient{s: s, remote: remote, opt: opt, lp: lp, rp: rp, cur: cur, rep: &SyncReport{}}
	a, _ := ActorFrom(ctx)
	var rec SyncRecord
	kept, by := keep, a.Name
	if o.Kind == domain.ConflictEdit {
		v, err := remote.Resolve(ctx, rp.ID, id, keep)
		if err != nil {
			return out, err
		}
		rec, kept, by = *v.Current, v.Kept, v.ResolvedBy
	} else if keep == domain.KeepRemote {
		if rec, err = remote.Record(ctx, rp.ID, o.Table, o.GlobalID); err != nil {
			return out, err
		}
	}
	if o.Kind == domain.ConflictRefused && keep == domain.KeepLocal {
		t := s.now().UTC()
		o.Status, o.Kept, o.ResolvedBy, o.ResolvedAt = domain.ConflictResolved, keep, by, &t
		if err := s.store.PutConflict(ctx, o); err != nil {
			return out, err
		}
	} else if err := c.settle(ctx, o, rec, kept, by); err != nil {
		return out, err
	}
	return s.GetConflict(ctx, lp.ID, id)
}

// SyncConflictText renders one conflict for a person, the two versions side
// by side field by field ([ConflictView.Fields]), * marking the fields that
// differ.
func SyncConflictText(v ConflictView) string {
	var b strings.Builder
	fmt.Fprintf(&b, "%s  %s %s %s  %s", v.ID, v.Kind, v.Table, v.GlobalID, v.Status)
	if v.Status == domain.ConflictResolved {
		fmt.Fprintf(&b, " (kept %s, by %s)", v.Kept, v.ResolvedBy)
	}
	b.WriteString("\n")
	if v.Reason != "" {
		fmt.Fprintf(&b, "  reason: %s\n", v.Reason)
	}
	fmt.Fprintf(&b, "  %-20s %-28s %s\n", "field", "local (v"+fmt.Sprint(v.LocalVersion)+")", "remote (v"+fmt.Sprint(v.RemoteVersion)+")")
	for _, f := range v.Fields {
		mark := " "
		if f.Differs {
			mark = "*"
		}
		fmt.Fprintf(&b, "%s %-20s %-28s %s\n", mark, f.Field, f.Local, f.Remote)
	}
	return b.String()
}

// ConflictField is one field of a conflict's two versions, side by side:
// the value of each as JSON text ("" when that version has no such field).
type ConflictField struct {
	Field   string `json:"field"`
	Local   string `json:"local"`
	Remote  string `json:"remote"`
	Differs bool   `json:"differs"`
}

// conflictFields lines up the fields of the two versions of a conflict, by
// name; each store's own fields (row ids, versions, timestamps) are left out.
func conflictFields(c domain.SyncConflict) []ConflictField {
	local, remote := fieldsOf(c.LocalData), fieldsOf(c.RemoteData)
	var names []string
	for k := range local {
		names = append(names, k)
	}
	for k := range remote {
		if _, ok := local[k]; !ok {
			names = append(names, k)
		}
	}
	slices.Sort(names)
	out := make([]ConflictField, len(names))
	for i, k := range names {
		out[i] = ConflictField{Field: k, Local: local[k], Remote: remote[k], Differs: local[k] != remote[k]}
	}
	return out
}

// fieldsOf flattens a sync record's content into field -> JSON text.
func fieldsOf(doc json.RawMessage) map[string]string {
	out := map[string]string{}
	if len(doc) == 0 {
		return out
	}
	var rec map[string]json.RawMessage
	if json.Unmarshal(doc, &rec) != nil {
		return out
	}
	if string(rec["deleted"]) == "true" {
		out["(deleted)"] = "yes"
		return out
	}
	for _, part := range []string{"type", "hole_record", "survey", "kind_set", "run", "measurement"} {
		var fields map[string]json.RawMessage
		if json.Unmarshal(rec[part], &fields) != nil {
			continue
		}
		for k, v := range fields {
			switch k {
			case "id", "project_id", "hole_id", "version", "created_at", "updated_at":
				continue
			}
			out[k] = string(v)
		}
	}
	return out
}
