package domain

import (
	"context"
	"encoding/json"
	"strings"
	"time"
)

// The tables sync carries, as the change log names them. Type codes are
// known across machines by their code, survey sets by their hole's global
// id, survey sets by kind by it and their kind ([KindSetGlobalID]); holes,
// runs and measurements by their own global id.
const (
	SyncTypes        = "type_codes"
	SyncHoles        = "holes"
	SyncSurveys      = "survey_sets"
	SyncKindSets     = "kind_survey_sets" // known by "<hole global id>/<kind>"
	SyncRuns         = "runs"
	SyncMeasurements = "measurements"
)

// SyncTables lists the synced tables in the order a record's dependencies
// come first (a hole before its runs; a type before the measurements).
var SyncTables = []string{SyncTypes, SyncHoles, SyncSurveys, SyncKindSets, SyncRuns, SyncMeasurements}

// KindSetGlobalID is the global id of a hole's survey set by kind.
func KindSetGlobalID(holeGlobalID, kind string) string { return holeGlobalID + "/" + kind }

// SplitKindSetGlobalID is the inverse of [KindSetGlobalID].
func SplitKindSetGlobalID(gid string) (holeGlobalID, kind string) {
	i := strings.LastIndexByte(gid, '/')
	if i < 0 {
		return gid, ""
	}
	return gid[:i], gid[i+1:]
}

// Change is one entry of a store's change log: a record of a synced table
// was created, updated or deleted (a tombstone) at a version. The store
// writes it in the transaction of the change; Seq orders the entries of a
// project as their transactions committed. ProjectID and HoleID are this
// store's row ids (HoleID 0 for type codes; ProjectID 0 for the rows of a
// hole deleted with it, which its own tombstone covers).
type Change struct {
	Seq       int64     `json:"seq"`
	ProjectID int64     `json:"project_id"`
	HoleID    int64     `json:"hole_id"`
	Table     string    `json:"table"`
	GlobalID  string    `json:"global_id"`
	Op        string    `json:"op"` // ActionCreate, ActionUpdate or ActionDelete
	Version   int64     `json:"version"`
	Origin    string    `json:"origin"` // "" when made here, else where sync brought it from
	Actor     string    `json:"actor"`
	At        time.Time `json:"at"`
}

// ChangeFilter selects change log entries of one project after a seq.
type ChangeFilter struct {
	ProjectID int64
	After     int64
	// HoleIDs keeps the entries of these holes and those of no hole (type
	// codes); none keeps all.
	HoleIDs []int64
	// LocalOnly keeps the entries made here (origin "").
	LocalOnly bool
	Limit     int
}

// SyncCursor is where sync with one remote service stands for one project:
// the remote's last change pulled and applied here, and this store's last
// change pushed and acknowledged. Holes is the hole selection Pulled belongs
// to (names joined by commas, "" for all). Replica names this store to the
// remote (a random id made on the first sync).
type SyncCursor struct {
	Remote  string `json:"remote"`
	Project string `json:"project"`
	Holes   string `json:"holes"`
	Pulled  int64  `json:"pulled"`
	Pushed  int64  `json:"pushed"`
	Replica string `json:"replica"`
}

// Kinds and states of a [SyncConflict].
const (
	ConflictEdit    = "conflict" // both sides changed the record since their last sync
	ConflictRefused = "refused"  // the remote refused the change (role, validation)

	ConflictOpen     = "open"
	ConflictResolved = "resolved"

	KeepLocal  = "local"
	KeepRemote = "remote"
)

// SyncConflict keeps both versions of a record that two sides changed since
// they last agreed (or a change that was refused), until a person chooses.
// LocalData is the version pushed (the side that met the conflict),
// RemoteData the version the receiving store held; both are sync records as
// JSON, with "deleted": true for a tombstone.
type SyncConflict struct {
	ID            string          `json:"id"`
	ProjectID     int64           `json:"project_id"`
	Kind          string          `json:"kind"`
	Table         string          `json:"table"`
	GlobalID      string          `json:"global_id"`
	Replica       string          `json:"replica"`
	Actor         string          `json:"actor"`
	BaseVersion   int64           `json:"base_version"`
	LocalVersion  int64           `json:"local_version"`
	RemoteVersion int64           `json:"remote_version"`
	LocalData     json.RawMessage `json:"local"`
	RemoteData    json.RawMessage `json:"remote"`
	Reason        string          `json:"reason"`
	Status        string          `json:"status"`
	Kept          string          `json:"kept"`
	ResolvedBy    string          `json:"resolved_by"`
	CreatedAt     time.Time       `json:"created_at"`
	ResolvedAt    *time.Time      `json:"resolved_at"`
}

// SyncStore is the part of the [Store] contract sync uses.
type SyncStore interface {
	// SetChangeSource marks the change log entries the rest of the current
	// transaction writes with origin and actor (only inside [Store.InTx]).
	SetChangeSource(ctx context.Context, origin, actor string) error
	// ListChanges lists change log entries by seq.
	ListChanges(ctx context.Context, f ChangeFilter) ([]Change, error)
	// RecordChanges lists every change log entry of one record by seq.
	RecordChanges(ctx context.Context, table, globalID string) ([]Change, error)
	// LastChangeSeq returns the highest seq of the change log (0 when empty).
	LastChangeSeq(ctx context.Context) (int64, error)
	// FindGlobal returns the row id and version of the record of table
	// with the global id (for type codes, the code of project projectID;
	// their id is 0); NotFound when there is none.
	FindGlobal(ctx context.Context, projectID int64, table, globalID string) (id, version int64, err error)
	// MeasurementsByGlobalID returns the measurements with the global ids
	// (those there are), in no particular order.
	MeasurementsByGlobalID(ctx context.Context, globalIDs []string) ([]Measurement, error)
	// Restamp sets the version of a record to the one another store gave it
	// (the content is already equal), without other change.
	Restamp(ctx context.Context, projectID int64, table, globalID string, version int64) error

	// GetSyncCursor returns the cursor of (remote, project), NotFound when none.
	GetSyncCursor(ctx context.Context, remote, project string) (SyncCursor, error)
	PutSyncCursor(ctx context.Context, c SyncCursor) error
	// SyncBase returns the version this store and remote last agreed on for
	// the record, 0 when none.
	SyncBase(ctx context.Context, remote, table, globalID string) (int64, error)
	// SyncBases returns the agreed versions of the records of table with
	// the global ids (those without one are absent).
	SyncBases(ctx context.Context, remote, table string, globalIDs []string) (map[string]int64, error)
	// PutSyncBase records it; version 0 forgets it.
	PutSyncBase(ctx context.Context, remote, table, globalID string, version int64) error

	// PutConflict creates or replaces the conflict with c.ID.
	PutConflict(ctx context.Context, c SyncConflict) error
	GetConflict(ctx context.Context, id string) (SyncConflict, error)
	// ListConflicts lists the project's conflicts in the given status ("" for
	// all), oldest first.
	ListConflicts(ctx context.Context, projectID int64, status string) ([]SyncConflict, error)
}
