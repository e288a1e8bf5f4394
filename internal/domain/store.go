package domain

import (
	"context"
	"time"
)

// Page asks for one page of a list. Lists are ordered by ID ascending and
// paged by keyset: After is the last ID of the previous page (0 for the first
// page), Limit the page size (the store caps it at [MaxLimit]; 0 means
// [DefaultLimit]). A page shorter than Limit is the last.
type Page struct {
	Limit int
	After int64
}

// Page size bounds.
// StaleBatch is how long an open import batch may go without a write
// before a later import takes it for abandoned (its process died) and
// removes it with its rows.
const StaleBatch = time.Hour

const (
	DefaultLimit = 100
	MaxLimit     = 1000
)

// Norm returns p with Limit set to the default or capped at the maximum.
func (p Page) Norm() Page {
	if p.Limit <= 0 {
		p.Limit = DefaultLimit
	}
	if p.Limit > MaxLimit {
		p.Limit = MaxLimit
	}
	if p.After < 0 {
		p.After = 0
	}
	return p
}

// MeasurementFilter selects measurements of one project. Zero fields do not
// filter. Depth bounds and dates are inclusive.
type MeasurementFilter struct {
	ProjectID  int64
	HoleIDs    []int64
	MinDepth   *float64
	MaxDepth   *float64
	TypeCodes  []string
	LoggedFrom *time.Time
	LoggedTo   *time.Time
}

// LogInputs is what [Store.LogInputs] reads.
type LogInputs struct {
	ModelStamp int64
	Project    Project
	Hole       Hole
	Types      []TypeCode
}

// ImportInputs is what [Store.ImportInputs] reads. Key is nil when no
// result is remembered for the key.
type ImportInputs struct {
	Key     *Idempotency
	Project Project
	Types   []TypeCode
}

// Store is the persistence contract. Both stores (SQLite and PostgreSQL)
// implement it and pass the one conformance suite in package storetest.
//
// Rules every implementation keeps:
//   - ctx first; every public method owns its transaction unless the Store is
//     the one handed to an [Store.InTx] callback, which runs in that transaction;
//   - a missing row is a NotFound *Error, never a zero value with a nil error;
//   - a unique or foreign-key clash is a Conflict *Error;
//   - Create methods set ID, Version = 1 and the timestamps on the value passed;
//   - Update and Delete methods take the version the caller last saw and fail
//     with PreconditionFailed when the row has moved on (NotFound when it is
//     gone); Update bumps Version and sets UpdatedAt on the value passed;
//   - lists follow [Page]; filters are SQL parameters, never spliced text.
//
// A Store is safe for concurrent use.
type Store interface {
	// Ping checks the database is reachable.
	Ping(ctx context.Context) error
	// Close releases the database handle.
	Close() error
	// InTx runs fn in one transaction with a Store bound to it. The
	// transaction commits when fn returns nil and rolls back otherwise.
	// Calling InTx on a bound Store runs fn in the same transaction.
	InTx(ctx context.Context, fn func(ctx context.Context, tx Store) error) error
	// Snapshot runs fn with a Store whose reads all see one consistent
	// state of the database, the one committed when the first read ran,
	// however long fn takes and whatever commits meanwhile (a long paged
	// export never shows part of an import). Writes through it fail. On a
	// bound Store it runs fn in the same transaction.
	Snapshot(ctx context.Context, fn func(ctx context.Context, st Store) error) error
	// Exclusive runs fn while holding the lock called name, which every
	// process sharing the database respects (PostgreSQL: an advisory lock;
	// SQLite, one process: a lock of the process). Start-up work that
	// replicas must not do at once (the demo load) runs inside it.
	Exclusive(ctx context.Context, name string, fn func(ctx context.Context) error) error

	// ModelStamp returns the project's model stamp: a number that changes
	// whenever anything a hole model is built from changes (the project's
	// settings, its holes, survey sets, survey sets by kind, runs), by any
	// writer; NotFound for no such project.
	ModelStamp(ctx context.Context, projectID int64) (int64, error)
	// MeasurementStamp returns the project's measurement stamp: a number
	// that changes whenever the project's visible measurements change (a
	// measurement inserted, updated or deleted, an import batch committed),
	// by any writer; 0 for a project whose measurements never changed.
	MeasurementStamp(ctx context.Context, projectID int64) (int64, error)
	// LogInputs reads what logging one measurement into a hole checks: the
	// project's model stamp (read first, as a hole model needs), the
	// project, the hole (of any project: the caller checks it is the
	// project's) and the project's vocabulary. Its errors are those of
	// GetProject, GetHole, ListTypeCodes and ModelStamp, in that order.
	// PostgreSQL sends the four reads in one round trip.
	LogInputs(ctx context.Context, projectID, holeID int64) (LogInputs, error)
	// ImportInputs reads what an import checks first: the remembered
	// result of its idempotency key (none for key "" or a key not
	// remembered), the project and the project's vocabulary. Its errors
	// are those of GetIdempotency (but NotFound), GetProject and
	// ListTypeCodes, in that order. PostgreSQL sends the reads in one round
	// trip.
	ImportInputs(ctx context.Context, projectID int64, key string) (ImportInputs, error)
	CreateProject(ctx context.Context, p *Project) error
	GetProject(ctx context.Context, id int64) (Project, error)
	GetProjectByName(ctx context.Context, name string) (Project, error)
	ListProjects(ctx context.Context, page Page) ([]Project, error)
	UpdateProject(ctx context.Context, p *Project, ifVersion int64) error
	// DeleteProject deletes the project and everything in it.
	DeleteProject(ctx context.Context, id, ifVersion int64) error

	// PutTypeCode creates or replaces a vocabulary entry.
	PutTypeCode(ctx context.Context, tc TypeCode) error
	ListTypeCodes(ctx context.Context, projectID int64) ([]TypeCode, error)
	// DeleteTypeCode fails with Conflict while measurements use the code.
	DeleteTypeCode(ctx context.Context, projectID int64, code string) error

	CreateHole(ctx context.Context, h *Hole) error
	GetHole(ctx context.Context, id int64) (Hole, error)
	GetHoleByName(ctx context.Context, projectID int64, name string) (Hole, error)
	ListHoles(ctx context.Context, projectID int64, page Page) ([]Hole, error)
	UpdateHole(ctx context.Context, h *Hole, ifVersion int64) error
	// DeleteHole deletes the hole with its survey, runs and measurements.
	DeleteHole(ctx context.Context, id, ifVersion int64) error

	// GetSurvey returns the hole's survey set; NotFound when it has none.
	GetSurvey(ctx context.Context, holeID int64) (SurveySet, error)
	// PutSurvey replaces the hole's whole survey set. ifVersion is the version
	// last seen, or 0 to create a set where none exists (PreconditionFailed
	// when one does). On success s.Version is the new version.
	PutSurvey(ctx context.Context, s *SurveySet, ifVersion int64) error
	DeleteSurvey(ctx context.Context, holeID, ifVersion int64) error

	// ListKindSets returns the hole's survey sets by kind (gyro, magnetic,
	// planned, other order), stations in depth order; none is an empty list.
	ListKindSets(ctx context.Context, holeID int64) ([]KindSet, error)
	// PutKindSet replaces the hole's set of k.Kind whole, like PutSurvey
	// (ifVersion 0 creates). When k.Preferred, the hole's other sets stop
	// being preferred (their versions move on).
	PutKindSet(ctx context.Context, k *KindSet, ifVersion int64) error
	DeleteKindSet(ctx context.Context, holeID int64, kind string, ifVersion int64) error

	CreateRun(ctx context.Context, r *Run) error
	GetRun(ctx context.Context, id int64) (Run, error)
	// ListRuns lists the hole's runs ordered by From depth (all of them; a
	// hole has few).
	ListRuns(ctx context.Context, holeID int64) ([]Run, error)
	UpdateRun(ctx context.Context, r *Run, ifVersion int64) error
	DeleteRun(ctx context.Context, id, ifVersion int64) error

	CreateMeasurement(ctx context.Context, m *Measurement) error
	// CreateMeasurements inserts many rows at once (PostgreSQL: by COPY). It
	// sets IDs on ms only when the store can do so cheaply; callers that need
	// IDs use CreateMeasurement.
	CreateMeasurements(ctx context.Context, ms []Measurement) (int, error)
	// A batch lets a long import write its measurements in short
	// transactions of their own, outside any transaction of the caller, so
	// other writers wait at most for one of them, while the rows stay
	// invisible to every read (list, count, get, update, delete) until the
	// batch commits: all or nothing, as one transaction would be.
	// OpenBatch starts a batch for the project (and first removes the
	// batches of any project left open for StaleBatch: a crashed import);
	// StageMeasurements writes ms into it, each call one transaction (it
	// sets IDs on ms only when the store can do so cheaply); CommitBatch,
	// called inside the import's last transaction, shows every staged row at
	// once (NotFound when the batch is gone); DropBatch removes the batch and
	// its rows, in short transactions. A committed batch's rows reach the
	// change log afterwards, LogBatch writing the entries of the next rows
	// (at most rows, one transaction; more reports whether rows are left),
	// so that no transaction logs a whole file; UnloggedBatches lists the
	// committed batches of a project (0: of all) not wholly logged yet.
	// Whoever reads the change log logs them first (see the service).
	OpenBatch(ctx context.Context, projectID int64) (int64, error)
	StageMeasurements(ctx context.Context, batch int64, ms []Measurement) (int, error)
	CommitBatch(ctx context.Context, batch int64) error
	DropBatch(ctx context.Context, batch int64) error
	LogBatch(ctx context.Context, batch int64, rows int) (more bool, err error)
	UnloggedBatches(ctx context.Context, projectID int64) ([]int64, error)
	GetMeasurement(ctx context.Context, id int64) (Measurement, error)
	ListMeasurements(ctx context.Context, f MeasurementFilter, page Page) ([]Measurement, error)
	// ListMeasurementsByDepth lists in (depth, id) order, paged by keyset:
	// with page.After > 0 it starts after the row (afterDepth, page.After).
	ListMeasurementsByDepth(ctx context.Context, f MeasurementFilter, afterDepth float64, page Page) ([]Measurement, error)
	CountMeasurements(ctx context.Context, f MeasurementFilter) (int64, error)
	// MeasurementKeys returns the duplicate keys (KeyOf) of the
	// measurements that pass f, in no order, in one read of the key's
	// columns: what an import checks its rows against.
	MeasurementKeys(ctx context.Context, f MeasurementFilter) ([]MeasurementKey, error)
	UpdateMeasurement(ctx context.Context, m *Measurement, ifVersion int64) error
	DeleteMeasurement(ctx context.Context, id, ifVersion int64) error

	// ListCoreIntervals lists the hole's core intervals ordered by From
	// (all of them).
	ListCoreIntervals(ctx context.Context, holeID int64) ([]CoreInterval, error)
	// PutCoreIntervals replaces all the hole's core intervals with ivs (none
	// deletes them) in one transaction and sets their IDs and HoleID.
	PutCoreIntervals(ctx context.Context, holeID int64, ivs []CoreInterval) error

	AppendAudit(ctx context.Context, e *AuditEntry) error
	// ListAudit lists the entries of one project (AllProjects: of the site's
	// own actions), whether or not the project still exists.
	ListAudit(ctx context.Context, projectID int64, page Page) ([]AuditEntry, error)
	// ListAuditAll lists every entry: all projects, deleted ones too, and the
	// site's.
	ListAuditAll(ctx context.Context, page Page) ([]AuditEntry, error)

	CreateToken(ctx context.Context, t *Token) error
	// TokenByHash returns the token with the given hex SHA-256; NotFound if none.
	TokenByHash(ctx context.Context, hash string) (Token, error)
	// GetToken returns the token with the given id; NotFound if none.
	GetToken(ctx context.Context, id int64) (Token, error)
	ListTokens(ctx context.Context, projectID int64) ([]Token, error)
	// DeleteToken revokes a token; NotFound if there is none with that id.
	DeleteToken(ctx context.Context, id int64) error

	// GetIdempotency returns the remembered result for (projectID, key);
	// NotFound when none.
	GetIdempotency(ctx context.Context, projectID int64, key string) (Idempotency, error)
	// PutIdempotency remembers a result; Conflict when the key is taken.
	PutIdempotency(ctx context.Context, r Idempotency) error

	SyncStore
}
