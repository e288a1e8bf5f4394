package service

import (
	"cmp"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"hash"
	"io"
	"math"
	"slices"
	"strings"
	"sync"
	"time"

	"corvane/internal/csvio"
	"corvane/internal/domain"
	"corvane/internal/words"
)

// Import kinds: the CSV files the service accepts, with the converter's
// column names (package csvio).
const (
	ImportCollars      = "collars"      // hole_id, easting, northing, elevation, azimuth, dip, depth [, azimuth_reference, crs, declination, grid_convergence, survey_date, local_grid]
	ImportSurveys      = "surveys"      // hole_id, depth, azimuth, dip [, azimuth_reference, survey_date, kind, instrument, preferred]
	ImportRuns         = "runs"         // hole_id, from, to, confidence [, mismatch]
	ImportMeasurements = "measurements" // hole_id, depth, alpha, beta (empty: unoriented), type [, gamma, apparent_thickness, comment, logged_by, logged_at]
)

// importBatch is the number of measurement rows written per store call.
const importBatch = 5000

// firstRoom is the room for rows a file's import starts with.
const firstRoom = 64

// ImportRequest is one CSV file to import.
type ImportRequest struct {
	Kind string    // one of the Import* kinds
	File string    // file name used in messages; default "<kind>.csv"
	Body io.Reader // the CSV text
	// DryRun checks everything, including holes and type codes in the
	// store, and writes nothing.
	DryRun bool
	// Duplicates says how measurement rows that duplicate a stored row or an
	// earlier row of the file are treated (domain.ParseDuplicates): ""
	// or "refuse" (each is a row problem), "skip" or "keep".
	Duplicates string
	// IdempotencyKey, when not empty, makes a retry of the same request
	// return the first result and write nothing. The same key with another
	// body is a Conflict.
	IdempotencyKey string
}

// ImportResult reports an import.
type ImportResult struct {
	Kind   string `json:"kind"`
	File   string `json:"file"`
	DryRun bool   `json:"dry_run"`
	// Rows is the number of data rows read.
	Rows int `json:"rows"`
	// Created and Updated count holes (collars), survey sets (surveys),
	// runs or measurements; Created counts the core intervals stored
	// (intervals), and the measurements and core intervals together
	// (discontinuities: DISC and CORE rows).
	Created int `json:"created"`
	Updated int `json:"updated"`
	// Duplicates counts the measurement rows that duplicate a stored row or
	// an earlier row of the file (see domain.KeyOf); Skipped those left out
	// (duplicates=skip).
	Duplicates int `json:"duplicates"`
	Skipped    int `json:"skipped"`
	// Replayed is true when the result is the remembered one of an earlier
	// request with the same idempotency key; nothing was written this time.
	Replayed bool `json:"replayed"`
}

// ImportRole is the role an import of kind needs: admin for collars and
// surveys, log for runs, measurements, intervals and discontinuities (AGS4);
// Invalid for an unknown kind.
func ImportRole(kind string) (domain.Role, error) {
	switch kind {
	case ImportCollars, ImportSurveys:
		return domain.RoleAdmin, nil
	case ImportRuns, ImportMeasurements, ImportIntervals, ImportDiscontinuities:
		return domain.RoleLog, nil
	}
	return "", domain.FieldErr("kind", "import kind must be collars, surveys, runs, measurements, intervals or discontinuities, got %q", kind)
}

// Import reads a CSV file of one kind (or, for discontinuities, an AGS4
// file whose DISC rows become measurements) into the project, all or nothing: when
// any row is bad nothing is written and the Invalid error lists every bad row
// with its file, line, column and reason in Problems, identical problems
// summarised with their count and lines (domain.ProblemList). Collars and
// surveys need the admin role, runs, measurements and core intervals the log
// role. Collars update holes of the same name; a survey file replaces the
// whole survey set of each hole it names, an intervals file all the core
// intervals of each hole it names; runs and measurements are added. One
// audit entry records each import.
func (s *Service) Import(ctx context.Context, projectID int64, req ImportRequest) (ImportResult, error) {
	res := ImportResult{Kind: req.Kind, File: req.File, DryRun: req.DryRun}
	if res.File == "" {
		res.File = req.Kind + ".csv"
		if req.Kind == ImportDiscontinuities {
			res.File = req.Kind + ".ags"
		}
	}
	role, err := ImportRole(req.Kind)
	if err != nil {
		return res, err
	}
	if err := domain.CheckText("file", res.File, domain.MaxFileNameLen, false); err != nil {
		return res, err
	}
	if err := domain.CheckText("idempotency_key", req.IdempotencyKey, domain.MaxKeyLen, false); err != nil {
		return res, err
	}
	dups, err := domain.ParseDuplicates(req.Duplicates)
	if err != nil {
		return res, err
	}
	a, err := allow(ctx, projectID, role)
	if err != nil {
		return res, err
	}
	// The key's remembered result, the project and its vocabulary in one
	// read (one round trip on PostgreSQL).
	key := req.IdempotencyKey
	remembered := key
	if req.DryRun {
		remembered = ""
	}
	in, err := s.store.ImportInputs(ctx, projectID, remembered)
	if err != nil {
		return res, err
	}
	prev, p := in.Key, in.Project
	if req.Body == nil {
		return res, domain.Errorf(domain.Invalid, "%s: empty request body", res.File)
	}
	h := sha256.New()
	fmt.Fprintf(h, "%s\x00%t\x00", req.Kind, req.DryRun)
	if dups != domain.DuplicatesRefuse {
		fmt.Fprintf(h, "duplicates=%s\x00", dups)
	}
	body := io.TeeReader(req.Body, h)
	if prev != nil {
		if _, err := io.Copy(io.Discard, body); err != nil {
			return res, domain.Errorf(domain.Invalid, "%s: reading the body: %w", res.File, err)
		}
		return replay(*prev, sum(h))
	}
	// A measurements file is checked and written outside the transaction,
	// in batches of importBatch rows, each a short transaction of its own
	// into an import batch whose rows nobody sees; the last transaction
	// below shows them all at once (or, on any failure, the batch is
	// dropped). A logger's single write waits for one batch, not for the
	// whole file; nothing of a failed import is ever seen.
	var staged *stagedImport
	if req.Kind == ImportMeasurements && !req.DryRun {
		staged = &stagedImport{st: s.store, project: projectID}
		defer func() {
			staged.wait() // an import that stopped early: its writer stops too
			if staged.batch != 0 && !staged.committed {
				// Best effort: a batch that cannot be dropped now stays
				// invisible and is removed by a later import (StaleBatch).
				_ = s.store.DropBatch(context.WithoutCancel(ctx), staged.batch)
			}
		}()
		err = s.importMeasurements(ctx, s.store, p, in.Types, a, body, dups, &res, staged)
	}
	if err == nil {
		err = s.store.InTx(ctx, func(ctx context.Context, st domain.Store) error {
			var err error
			switch req.Kind {
			case ImportCollars:
				err = importCollars(ctx, st, p, body, &res)
			case ImportSurveys:
				err = importSurveys(ctx, st, p, body, &res)
			case ImportRuns:
				err = importRuns(ctx, st, p, body, &res)
			case ImportMeasurements:
				if staged != nil {
					err = staged.commit(ctx, st, &res)
				} else {
					err = s.importMeasurements(ctx, st, p, nil, a, body, dups, &res, nil)
				}
			case ImportDiscontinuities:
				err = s.importDiscontinuities(ctx, st, p, a, body, &res)
			case ImportIntervals:
				err = importIntervals(ctx, st, p, body, &res)
			}
			if err != nil {
				return err
			}
			if req.DryRun {
				return errDryRun
			}
			if err := audit(ctx, st, a, projectID, "import", res.File, domain.ActionCreate, nil, res); err != nil {
				return err
			}
			if key == "" {
				return nil
			}
			if _, err := io.Copy(io.Discard, body); err != nil {
				return domain.Errorf(domain.Invalid, "%s: reading the body: %w", res.File, err)
			}
			out, _ := json.Marshal(res)
			return st.PutIdempotency(ctx, domain.Idempotency{ProjectID: projectID, Key: key, RequestHash: sum(h), Result: out})
		})
		if err == nil && staged != nil {
			staged.committed = true
			if staged.batch != 0 {
				s.logLater(staged.batch)
			}
		}
	}
	if domain.IsKind(err, domain.PreconditionFailed) {
		// An import takes no If-Match: a version check that failed inside it
		// is a row another writer changed between the import's read and its
		// write. That is a clash (409), and nothing was imported.
		err = domain.Errorf(domain.Conflict, "%s: another writer changed a row the import was writing; nothing was imported: retry: %w", res.File, err)
	}
	switch {
	case errors.Is(err, errDryRun):
		return res, nil
	case key != "" && (domain.IsKind(err, domain.Conflict) || domain.IsKind(err, domain.Invalid)):
		// Another request with the same key committed first (this one then
		// clashed on the key, or found that request's rows as duplicates).
		if prev, gerr := s.store.GetIdempotency(ctx, projectID, key); gerr == nil {
			return replay(prev, sum(h))
		}
		return res, err
	case err != nil:
		return res, err
	}
	return res, nil
}

var errDryRun = errors.New("dry run: roll back")

func sum(h hash.Hash) string { return hex.EncodeToString(h.Sum(nil)) }

func replay(prev domain.Idempotency, hash string) (ImportResult, error) {
	var res ImportResult
	if prev.RequestHash != hash {
		return res, domain.Errorf(domain.Conflict, "idempotency key %q was used for a different request", prev.Key)
	}
	if err := json.Unmarshal(prev.Result, &res); err != nil {
		return res, domain.Errorf(domain.Internal, "remembered result of key %q: %w", prev.Key, err)
	}
	res.Replayed = true
	return res, nil
}

// problems gathers row problems: all of them, identical ones summarised
// (see [domain.ProblemList]).
type problems struct {
	file string
	pl   domain.ProblemList
	n    int
	// holding keeps problems in held until release: the measurement import
	// checks duplicates of stored rows a batch at a time, after the rows'
	// other checks, yet lists every problem in line order.
	holding bool
	held    []*domain.Error
}

func (ps *problems) add(line int, column, format string, args ...any) {
	e := domain.Errorf(domain.Invalid, format, args...)
	e.Loc = domain.Location{File: ps.file, Line: line, Column: column}
	ps.addErr(e)
}

func (ps *problems) addErr(e *domain.Error) {
	ps.n++
	if ps.holding {
		ps.held = append(ps.held, e)
		return
	}
	ps.pl.Add(e)
}

// release lists the problems held back since holding was set, in the order
// of their lines (problems of one line in the order they were found), as
// though they had been added line by line.
func (ps *problems) release() {
	slices.SortStableFunc(ps.held, func(a, b *domain.Error) int { return cmp.Compare(a.Loc.Line, b.Loc.Line) })
	for _, e := range ps.held {
		ps.pl.Add(e)
	}
	clear(ps.held)
	ps.held = ps.held[:0]
}

// err returns the all-or-nothing error, or nil when there were no problems.
func (ps *problems) err() error {
	if ps.n == 0 {
		return nil
	}
	msg := words.Plural(ps.n, "bad row") + "; nothing was imported"
	if u := ps.pl.Unlisted(); u > 0 {
		msg += fmt.Sprintf(" (%d rows with further kinds of problem are not listed)", u)
	}
	return &domain.Error{Kind: domain.Invalid, Msg: msg, Loc: domain.Location{File: ps.file}, Problems: ps.pl.Errors()}
}

// fileErr makes sure a reader's error names the file and is Invalid.
func fileErr(file string, err error) error {
	var e *domain.Error
	if errors.As(err, &e) {
		return err
	}
	return &domain.Error{Kind: domain.Invalid, Msg: err.Error(), Loc: domain.Location{File: file}}
}

func importCollars(ctx context.Context, st domain.Store, p domain.Project, body io.Reader, res *ImportResult) error {
	rows, err := csvio.ReadCollars(body, res.File)
	if err != nil {
		return fileErr(res.File, err)
	}
	res.Rows = len(rows)
	ps := &problems{file: res.File}
	for _, r := range rows {
		h := domain.Hole{ProjectID: p.ID, Name: r.HoleID, East: r.Collar.East, North: r.Collar.North, Elevation: r.Collar.Elevation,
			Azimuth: r.Collar.Azimuth, AzimuthRef: orDefault(r.AzimuthRef, p.OutputAzimuthRef), Dip: r.Collar.Dip, FinalDepth: r.Collar.Depth, CRS: r.CRS,
			Declination: optNum(r.Declination), GridConvergence: optNum(r.GridConvergence)}
		if !r.SurveyDate.IsZero() {
			h.SurveyDate = r.SurveyDate.Format(time.DateOnly)
		}
		if r.LocalGrid != nil {
			h.LocalGrid = r.LocalGrid.JSON()
		}
		if err := h.Normalize(); err != nil {
			var e *domain.Error
			errors.As(err, &e)
			ps.add(r.Line, e.Loc.Field, "%s", e.Msg)
			continue
		}
		if err := checkHoleLocalGrid(p, &h); err != nil {
			ps.add(r.Line, csvio.ColLocalGrid, "%s", msgOf(err))
			continue
		}
		old, err := st.GetHoleByName(ctx, p.ID, h.Name)
		switch {
		case err == nil:
			if err := checkFinalDepth(ctx, st, old, h.FinalDepth); err != nil {
				if !domain.IsKind(err, domain.Conflict) {
					return err
				}
				ps.add(r.Line, csvio.ColDepth, "%s", msgOf(err))
				continue
			}
			h.ID, h.Started, h.Finished = old.ID, old.Started, old.Finished
			if err := st.UpdateHole(ctx, &h, old.Version); err != nil {
				return err
			}
			res.Updated++
		case domain.IsKind(err, domain.NotFound):
			if err := st.CreateHole(ctx, &h); err != nil {
				return err
			}
			res.Created++
		default:
			return err
		}
	}
	return ps.err()
}

// optNum is nil for a number a file left empty (NaN), else the number.
func optNum(v float64) *float64 {
	if math.IsNaN(v) {
		return nil
	}
	return &v
}

func importSurveys(ctx context.Context, st domain.Store, p domain.Project, body io.Reader, res *ImportResult) error {
	rows, err := csvio.ReadSurveys(body, res.File)
	if err != nil {
		return fileErr(res.File, err)
	}
	res.Rows = len(rows)
	ps := &problems{file: res.File}
	// One set per hole and kind: rows without a kind are the hole's survey
	// set, rows with one its set of that kind.
	type set struct {
		ss   domain.SurveySet
		kind string
		line int
		hole domain.Hole
		// pref is what the file says of the set's preferred flag, nil
		// when it says nothing (the stored flag is kept).
		pref *bool
	}
	var order []string
	sets := map[string]*set{}
	holes := newHoleNames(st, p.ID)
	for _, r := range rows {
		key := r.HoleID + "\x00" + r.Kind
		s := sets[key]
		what := "survey set"
		if r.Kind != "" {
			what = r.Kind + " survey set"
		}
		if s == nil {
			h, ok, err := holes.get(ctx, r.HoleID)
			if err != nil {
				return err
			}
			if !ok {
				ps.add(r.Line, csvio.ColHoleID, "%s", noHoleMsg(r.HoleID))
				continue
			}
			ref := r.AzimuthRef
			if ref == "" { // as the converter: no reference means the output one
				ref = p.OutputAzimuthRef
			}
			s = &set{ss: domain.SurveySet{HoleID: h.ID, AzimuthRef: ref}, kind: r.Kind, line: r.Line, hole: h}
			if !r.Date.IsZero() {
				s.ss.SurveyDate = r.Date.Format(time.DateOnly)
			}
			sets[key] = s
			order = append(order, key)
		}
		if r.AzimuthRef != "" && r.AzimuthRef != s.ss.AzimuthRef {
			ps.add(r.Line, csvio.ColAzimuthRef, "hole %s mixes azimuth references %s and %s; one %s has one reference", r.HoleID, s.ss.AzimuthRef, r.AzimuthRef, what)
			continue
		}
		if date := r.Date.Format(time.DateOnly); !r.Date.IsZero() && s.ss.SurveyDate != date {
			ps.add(r.Line, csvio.ColSurveyDate, "hole %s has survey dates %s and %s; one %s has one date (give the date of each survey in its own file or kind)", r.HoleID, orDefault(s.ss.SurveyDate, "(none)"), date, what)
			continue
		}
		if r.Instrument != "" {
			s.ss.Instrument = string(r.Instrument) // one per set: csvio.ReadSurveys checks
		}
		if r.PreferredSaid {
			yes := r.Preferred // one per set and hole: csvio.ReadSurveys checks
			s.pref = &yes
		}
		if r.Station.Depth > s.hole.FinalDepth {
			ps.add(r.Line, csvio.ColDepth, "station depth %v is past the final depth %v of hole %s", r.Station.Depth, s.hole.FinalDepth, r.HoleID)
			continue
		}
		s.ss.Stations = append(s.ss.Stations, domain.Station{Depth: r.Station.Depth, Azimuth: r.Station.Azimuth, Dip: r.Station.Dip})
	}
	if err := ps.err(); err != nil {
		return err
	}
	for _, key := range order {
		s := sets[key]
		if s.kind != "" {
			if err := putKindSetRows(ctx, st, s.ss, s.kind, s.pref, res); err != nil {
				if e, ok := err.(*domain.Error); ok && e.Kind == domain.Invalid {
					ps.add(s.line, "", "hole %s: %v", s.hole.Name, err)
					continue
				}
				return err
			}
			continue
		}
		if err := s.ss.Normalize(); err != nil {
			ps.add(s.line, "", "hole %s: %v", s.hole.Name, err)
			continue
		}
		cur, err := st.GetSurvey(ctx, s.ss.HoleID)
		var v int64
		switch {
		case err == nil:
			v = cur.Version
			res.Updated++
		case domain.IsKind(err, domain.NotFound):
			res.Created++
		default:
			return err
		}
		if err := st.PutSurvey(ctx, &s.ss, v); err != nil {
			return err
		}
	}
	return ps.err()
}

// putKindSetRows stores an imported set of a kind, replacing the hole's set
// of that kind: preferred as pref says (a preferred set makes the hole's
// others not preferred), its stored flag kept when pref is nil.
func putKindSetRows(ctx context.Context, st domain.Store, ss domain.SurveySet, kind string, pref *bool, res *ImportResult) error {
	k := domain.KindSet{HoleID: ss.HoleID, Kind: kind, Instrument: ss.Instrument, AzimuthRef: ss.AzimuthRef, SurveyDate: ss.SurveyDate, Stations: ss.Stations}
	if err := k.Normalize(); err != nil {
		return err
	}
	cur, err := st.ListKindSets(ctx, ss.HoleID)
	if err != nil {
		return err
	}
	var v int64
	for _, c := range cur {
		if c.Kind == kind {
			v, k.Preferred = c.Version, c.Preferred
		}
	}
	if pref != nil {
		k.Preferred = *pref
	}
	if v == 0 {
		res.Created++
	} else {
		res.Updated++
	}
	return st.PutKindSet(ctx, &k, v)
}

func importRuns(ctx context.Context, st domain.Store, p domain.Project, body io.Reader, res *ImportResult) error {
	rows, err := csvio.ReadRuns(body, res.File)
	if err != nil {
		return fileErr(res.File, err)
	}
	res.Rows = len(rows)
	ps := &problems{file: res.File}
	holes := newHoleNames(st, p.ID)
	for _, r := range rows {
		h, ok, err := holes.get(ctx, r.HoleID)
		if err != nil {
			return err
		}
		if !ok {
			ps.add(r.Line, csvio.ColHoleID, "%s", noHoleMsg(r.HoleID))
			continue
		}
		run := domain.Run{HoleID: h.ID, From: r.From, To: r.To, Confidence: r.Confidence}
		if !math.IsNaN(r.Mismatch) {
			mm := r.Mismatch
			run.Mismatch = &mm
		}
		if err := run.Normalize(); err != nil {
			var e *domain.Error
			errors.As(err, &e)
			ps.add(r.Line, e.Loc.Field, "%s", e.Msg)
			continue
		}
		if err := checkRunInHole(run, h); err != nil {
			ps.add(r.Line, csvio.ColTo, "%s", msgOf(err))
			continue
		}
		if ps.n > 0 {
			continue // keep checking, stop writing
		}
		if err := st.CreateRun(ctx, &run); err != nil {
			return err
		}
		res.Created++
	}
	if err := ps.err(); err != nil {
		res.Created = 0
		return err
	}
	return nil
}

// Extra columns of a measurements file.
const (
	colType     = "type"
	colComment  = "comment"
	colLoggedBy = "logged_by"
	colLoggedAt = "logged_at"
)

// parseLoggedAt accepts RFC 3339 or a plain date (midnight UTC).
func parseLoggedAt(s string) (time.Time, bool) {
	if t, err := time.Parse(time.RFC3339Nano, s); err == nil {
		return t, true
	}
	if t, err := time.Parse(time.DateOnly, s); err == nil {
		return t, true
	}
	return time.Time{}, false
}

// importMeasurements checks every row of a measurements file and writes the
// good ones while no row is bad: into st in the caller's transaction, or,
// with staged, into its import batch (each batch of rows a transaction of
// its own), remembering the holes the rows belong to. vocab is the project's
// vocabulary as the caller read it; nil: read it from st.
func (s *Service) importMeasurements(ctx context.Context, st domain.Store, p domain.Project, vocab []domain.TypeCode, a Actor, body io.Reader, dups string, res *ImportResult, staged *stagedImport) error {
	sr, err := csvio.NewStructureReader(body, res.File)
	if err != nil {
		return fileErr(res.File, err)
	}
	iType, iComment, iBy, iAt := sr.Header.Index(colType), sr.Header.Index(colComment), sr.Header.Index(colLoggedBy), sr.Header.Index(colLoggedAt)
	if iType < 0 {
		return &domain.Error{Kind: domain.Invalid, Msg: `missing column "type" (a code of the project's vocabulary)`, Loc: domain.Location{File: res.File, Line: 1}}
	}
	if vocab == nil {
		if vocab, err = st.ListTypeCodes(ctx, p.ID); err != nil {
			return err
		}
	}
	holes := newHoleNames(st, p.ID)
	seen := newDuplicates(st, p.ID)
	ps := &problems{file: res.File, holding: true}
	now := s.now()
	// Both slices grow with the file up to a batch: most files are small,
	// and a batch's room (over 2 MB for both) cleared for every file of a
	// few rows was a tenth of the service's CPU under the load generator.
	batch := make([]domain.Measurement, 0, firstRoom)
	// Rows that passed their own checks wait in pending until a batch of
	// them is checked against the stored rows (one read per hole and
	// batch, of the depths the batch covers); then the duplicate rule
	// decides, and the rows kept go into the batch.
	pending := make([]pendingRow, 0, firstRoom)
	decide := func() error {
		stored, err := seen.storedIn(ctx, pending)
		if err != nil {
			return err
		}
		for i, pr := range pending {
			if stored[i] || pr.earlier > 0 {
				res.Duplicates++
				switch {
				case dups == domain.DuplicatesSkip:
					res.Skipped++
					continue
				case dups == domain.DuplicatesKeep:
				case stored[i]:
					ps.add(pr.line, "", "%s", domain.DuplicateStoredMsg)
					continue
				default:
					ps.add(pr.line, "", "same hole, depth, type, alpha, beta and gamma as line %d; %s", pr.earlier, domain.DuplicatesHint)
					continue
				}
			}
			if ps.n > 0 || res.DryRun {
				// A file with a problem writes nothing; a dry run counts
				// the rows it would write.
				if res.DryRun && ps.n == 0 {
					res.Created++
				}
				continue
			}
			batch = append(batch, pr.m)
		}
		clear(pending)
		pending = pending[:0]
		ps.release()
		return nil
	}
	flush := func() error {
		if len(batch) == 0 || ps.n > 0 || res.DryRun {
			batch = batch[:0]
			return nil
		}
		var n int
		var err error
		if staged != nil {
			// The writer owns the rows now; the next ones go into a new slice.
			n, err = staged.stage(ctx, batch)
			batch = make([]domain.Measurement, 0, importBatch)
		} else {
			n, err = st.CreateMeasurements(ctx, batch)
			batch = batch[:0]
		}
		res.Created += n
		return err
	}
	for {
		if res.Rows%4096 == 0 {
			if err := ctx.Err(); err != nil {
				return err
			}
		}
		r, err := sr.Next()
		if err == io.EOF {
			break
		}
		if err != nil {
			return fileErr(res.File, err)
		}
		res.Rows++
		if r.Err != nil {
			ps.addErr(r.Err)
			continue
		}
		cell := func(i int) string {
			if i < 0 || i >= len(r.Record) {
				return ""
			}
			return strings.TrimSpace(r.Record[i])
		}
		h, ok, err := holes.get(ctx, r.HoleID)
		if err != nil {
			return err
		}
		if !ok {
			ps.add(r.Line, csvio.ColHoleID, "%s", noHoleMsg(r.HoleID))
			continue
		}
		m := domain.Measurement{ProjectID: p.ID, HoleID: h.ID, Depth: r.Depth, Alpha: r.Alpha,
			TypeCode: cell(iType), Comment: cell(iComment), LoggedBy: cell(iBy), LoggedAt: now}
		if r.HasBeta {
			b := r.Beta
			m.Beta = &b
		}
		if r.HasGamma {
			g := r.Gamma
			m.Gamma = &g
		}
		if r.HasThickness {
			th := r.Thickness
			m.ApparentThickness = &th
		}
		if m.LoggedBy == "" {
			m.LoggedBy = a.Name
		}
		if v := cell(iAt); v != "" {
			t, ok := parseLoggedAt(v)
			if !ok {
				ps.add(r.Line, colLoggedAt, "logged_at %q is not a date (YYYY-MM-DD) or an RFC 3339 time", v)
				continue
			}
			m.LoggedAt = t
		}
		tc, ok := domain.FindTypeCode(vocab, m.TypeCode)
		if !ok {
			ps.addErr(domain.UnknownTypeCode("", m.TypeCode, vocab).At(domain.Location{File: res.File, Line: r.Line, Column: colType}))
			continue
		}
		m.TypeCode = tc.Code
		err = m.Normalize()
		if err == nil {
			err = domain.CheckKind(m, tc) // the one gamma-vs-kind rule, as for the API
		}
		if err != nil {
			var e *domain.Error
			errors.As(err, &e)
			ps.add(r.Line, e.Loc.Field, "%s", e.Msg)
			continue
		}
		if m.Depth > h.FinalDepth {
			ps.add(r.Line, csvio.ColDepth, "depth %v is past the final depth %v of hole %s", m.Depth, h.FinalDepth, h.Name)
			continue
		}
		pending = append(pending, pendingRow{m: m, line: r.Line, earlier: seen.inFile(m, r.Line)})
		if len(pending) == importBatch {
			if err := decide(); err != nil {
				return err
			}
			if err := flush(); err != nil {
				return err
			}
		}
	}
	if err := decide(); err != nil {
		return err
	}
	if staged != nil {
		// The last rows go in with the import's last transaction.
		staged.rest = batch
		batch = nil
	}
	if err := flush(); err != nil {
		return err
	}
	if staged != nil {
		if err := staged.wait(); err != nil {
			return err
		}
	}
	if err := ps.err(); err != nil {
		res.Created = 0
		return err
	}
	if staged != nil {
		staged.holes = holes
	}
	return nil
}

// noHoleMsg is the problem of an imported row naming a hole the project
// does not have, with what to do about it, the same for every import.
func noHoleMsg(name string) string {
	return fmt.Sprintf("no hole %q in the project (import its collar first)", name)
}

// stagedImport is a measurements import written into an import batch: each
// full batch of importBatch rows in a transaction of its own, the last rows
// with the import's last transaction. A file of one batch or less opens no
// batch and is written in that one transaction. The batches are written by
// a goroutine of their own, in order, while the next rows are read and
// checked (one batch ahead at most), so reading and writing use both cores.
type stagedImport struct {
	st        domain.Store
	project   int64
	batch     int64                // 0 until the first full batch of rows
	rest      []domain.Measurement // the rows of the last transaction
	holes     *holeNames           // the holes the rows belong to, as read
	committed bool

	work   chan []domain.Measurement // batches for the writer; nil until the first
	done   chan struct{}             // closed when the writer has stopped
	mu     sync.Mutex
	werr   error // the writer's first error
	closed bool
}

// stage hands ms to the writer, opening the import batch and starting the
// writer first. It returns the writer's error if it has failed.
func (si *stagedImport) stage(ctx context.Context, ms []domain.Measurement) (int, error) {
	if si.work == nil {
		b, err := si.st.OpenBatch(ctx, si.project)
		if err != nil {
			return 0, err
		}
		si.batch = b
		si.work, si.done = make(chan []domain.Measurement, 1), make(chan struct{})
		go si.write(ctx)
	}
	if err := si.err(); err != nil {
		return 0, err
	}
	si.work <- ms
	return len(ms), nil
}

// write stages the batches in order until the work is closed; after an
// error it stages nothing more.
func (si *stagedImport) write(ctx context.Context) {
	defer close(si.done)
	for ms := range si.work {
		if si.err() != nil {
			continue
		}
		if _, err := si.st.StageMeasurements(ctx, si.batch, ms); err != nil {
			si.mu.Lock()
			si.werr = err
			si.mu.Unlock()
		}
	}
}

func (si *stagedImport) err() error {
	si.mu.Lock()
	defer si.mu.Unlock()
	return si.werr
}

// wait lets the writer finish the batches handed to it and returns its
// error. It may be called more than once.
func (si *stagedImport) wait() error {
	if si.work == nil {
		return nil
	}
	if !si.closed {
		close(si.work)
		si.closed = true
	}
	<-si.done
	return si.err()
}

// commit writes the last rows and shows the batch's rows in the import's
// last transaction st, after checking that no hole the rows belong to
// changed or went while they were written (its final depth, say, or a
// delete that took the rows with it): that is a clash, and nothing is
// imported. It adds the last rows to res.Created.
func (si *stagedImport) commit(ctx context.Context, st domain.Store, res *ImportResult) error {
	for name, h := range si.holes.seen {
		if h == nil {
			continue
		}
		now, err := st.GetHole(ctx, h.ID)
		if err != nil && !domain.IsKind(err, domain.NotFound) {
			return err
		}
		if err != nil || now.Version != h.Version {
			return domain.Errorf(domain.Conflict, "hole %s changed while its measurements were imported; nothing was imported: retry", name)
		}
	}
	if len(si.rest) > 0 {
		n, err := st.CreateMeasurements(ctx, si.rest)
		res.Created += n
		if err != nil {
			return err
		}
	}
	if si.batch == 0 {
		return nil
	}
	return st.CommitBatch(ctx, si.batch)
}

// holeNames finds a project's holes by name for an import, asking the store
// once per name, whether the hole exists or not.
type holeNames struct {
	st        domain.Store
	projectID int64
	seen      map[string]*domain.Hole // nil: no such hole
}

func newHoleNames(st domain.Store, projectID int64) *holeNames {
	return &holeNames{st: st, projectID: projectID, seen: map[string]*domain.Hole{}}
}

// get returns the hole called name; ok is false when the project has none.
func (hn *holeNames) get(ctx context.Context, name string) (h domain.Hole, ok bool, err error) {
	if p, seen := hn.seen[name]; seen {
		if p == nil {
			return domain.Hole{}, false, nil
		}
		return *p, true, nil
	}
	h, err = hn.st.GetHoleByName(ctx, hn.projectID, name)
	switch {
	case err == nil:
		hn.seen[name] = &h
		return h, true, nil
	case domain.IsKind(err, domain.NotFound):
		hn.seen[name] = nil
		return domain.Hole{}, false, nil
	default:
		return domain.Hole{}, false, err
	}
}

// orDefault returns s, or def when s is empty.
func orDefault(s, def string) string {
	if s == "" {
		return def
	}
	return s
}

// duplicates finds, for an import, the measurements that repeat a stored row
// or an earlier row of the file (domain.KeyOf). The stored rows are read a
// batch of the file's rows at a time, per hole only at the depths the batch
// covers (the index on hole and depth), so an import of a few rows into a
// long hole reads a few rows; a hole asked about more than twice, or named
// in a full batch (a large file: its batches would read most of the hole
// again and again), has all its stored rows read once instead.
type duplicates struct {
	st        domain.Store
	projectID int64
	asked     map[int64]int                            // reads by depth, by hole id
	whole     map[int64]map[domain.MeasurementKey]bool // every stored key, by hole id
	file      map[domain.MeasurementKey]int            // line of the first row with the key
}

// pendingRow is a row of a measurement import waiting for the duplicate
// rule: earlier is the line of the earlier row of the file it repeats (0
// when none).
type pendingRow struct {
	m       domain.Measurement
	line    int
	earlier int
}

// wholeAfter is how many reads by depth a hole gets before all its stored
// rows are read at once.
const wholeAfter = 2

func newDuplicates(st domain.Store, projectID int64) *duplicates {
	return &duplicates{st: st, projectID: projectID, asked: map[int64]int{},
		whole: map[int64]map[domain.MeasurementKey]bool{}, file: map[domain.MeasurementKey]int{}}
}

// inFile returns the line of the earlier row of the file m repeats (0 when
// none), remembering the first row with a key at line.
func (d *duplicates) inFile(m domain.Measurement, line int) int {
	k := domain.KeyOf(m)
	earlier := d.file[k]
	if earlier == 0 {
		d.file[k] = line
	}
	return earlier
}

// storedIn reports, for each row, whether it repeats a stored measurement.
func (d *duplicates) storedIn(ctx context.Context, rows []pendingRow) ([]bool, error) {
	out := make([]bool, len(rows))
	type span struct{ lo, hi float64 }
	spans := map[int64]*span{}
	for _, r := range rows {
		if sp := spans[r.m.HoleID]; sp != nil {
			sp.lo, sp.hi = min(sp.lo, r.m.Depth), max(sp.hi, r.m.Depth)
		} else {
			spans[r.m.HoleID] = &span{r.m.Depth, r.m.Depth}
		}
	}
	keys := map[int64]map[domain.MeasurementKey]bool{}
	for hole, sp := range spans {
		if k, ok := d.whole[hole]; ok {
			keys[hole] = k
			continue
		}
		f := domain.MeasurementFilter{ProjectID: d.projectID, HoleIDs: []int64{hole}}
		if d.asked[hole] < wholeAfter && len(rows) < importBatch {
			d.asked[hole]++
			f.MinDepth, f.MaxDepth = &sp.lo, &sp.hi
		}
		k, err := d.read(ctx, f)
		if err != nil {
			return nil, err
		}
		if f.MinDepth == nil {
			d.whole[hole] = k
		}
		keys[hole] = k
	}
	for i, r := range rows {
		out[i] = keys[r.m.HoleID][domain.KeyOf(r.m)]
	}
	return out, nil
}

// read returns the keys of the stored measurements that pass f, reading
// only the key columns.
func (d *duplicates) read(ctx context.Context, f domain.MeasurementFilter) (map[domain.MeasurementKey]bool, error) {
	stored, err := d.st.MeasurementKeys(ctx, f)
	if err != nil {
		return nil, err
	}
	keys := make(map[domain.MeasurementKey]bool, len(stored))
	for _, k := range stored {
		keys[k] = true
	}
	return keys, nil
}
