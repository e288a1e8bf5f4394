// Package storekit holds what the SQL stores share that does not depend on
// the SQL dialect: how driver errors become *domain.Error values, the
// messages for missing rows and stale versions, argument conversions, and
// the checks around a schema migration (schema.go). Each store keeps its own SQL text and
// driver calls.
package storekit

import (
	"encoding/json"
	"errors"
	"fmt"
	"strconv"
	"strings"
	"time"

	"github.com/google/uuid"

	"corvane/internal/domain"
	"corvane/internal/uncertainty"
)

// Violation names the class of a schema constraint a driver error broke.
type Violation int

// The constraint classes a store tells apart; None is any other error.
const (
	None       Violation = iota
	Unique               // a unique or primary key
	ForeignKey           // a reference to a missing row, or a row still referenced
	Rule                 // a check or not-null constraint, or a value out of range
	Clash                // a concurrent transaction won (serialization failure, deadlock)
	Down                 // the database cannot be reached, is shutting down, or is full
)

// Translate turns a driver error into a *domain.Error once: one that already
// is passes through, noRows (the driver's "no rows" error) becomes NotFound,
// a constraint violation that classify names becomes Conflict or Invalid,
// a lost race Conflict, an unreachable database Unavailable (the service
// answers 503 and recovers when the database is back), and anything else
// Internal, prefixed with the driver's name.
func Translate(err error, driver string, noRows error, classify func(error) Violation) error {
	if err == nil {
		return nil
	}
	var de *domain.Error
	if errors.As(err, &de) {
		return err
	}
	if errors.Is(err, noRows) {
		return domain.Errorf(domain.NotFound, "not found")
	}
	switch classify(err) {
	case Unique:
		return domain.Errorf(domain.Conflict, "already exists: %w", err)
	case ForeignKey:
		return domain.Errorf(domain.Conflict, "refers to a missing row or is still referenced: %w", err)
	case Rule:
		return domain.Errorf(domain.Invalid, "breaks a rule of the schema: %w", err)
	case Clash:
		return domain.Errorf(domain.Conflict, "a concurrent change got there first: retry: %w", err)
	case Down:
		return domain.Errorf(domain.Unavailable, "the database is unavailable: retry later: %w", err)
	}
	return domain.Errorf(domain.Internal, "%s: %w", driver, err)
}

// NotFound returns a NotFound error naming the entity and key.
func NotFound(entity string, key any) error {
	return domain.Errorf(domain.NotFound, "%s %v not found", entity, key)
}

// Stale returns the PreconditionFailed error of a version-checked write
// that found the row at version have instead of want.
func Stale(entity string, id any, have, want int64) error {
	return domain.Errorf(domain.PreconditionFailed, "%s %v is at version %d, not %d: reload and retry", entity, id, have, want)
}

// SurveyCreateFailed explains a failed insert of a hole's first survey set
// (translated is the store's translation of the driver error, v its class):
// a unique clash is a set another writer created since this one looked, so
// the caller's "none yet" (version 0) is stale (412); a foreign-key failure
// is a missing hole (404).
func SurveyCreateFailed(translated error, v Violation, holeID int64) error {
	switch v {
	case Unique:
		return domain.Errorf(domain.PreconditionFailed, "hole %d got a survey from another writer meanwhile: reload and retry", holeID)
	case ForeignKey:
		return NotFound("hole", holeID)
	}
	return translated
}

// SurveyMoved explains a version-checked survey update that touched no row,
// given what versionGone found: another writer moved the set on (412), or
// deleted it, which for the caller's version is stale too (412, not 404).
func SurveyMoved(gone error, holeID, ifVersion int64) error {
	if !domain.IsKind(gone, domain.NotFound) {
		return gone
	}
	return domain.Errorf(domain.PreconditionFailed, "hole %d has no survey at version %d any more: reload and retry", holeID, ifVersion)
}

// KeyCol is the key column of a versioned table.
func KeyCol(table string) string {
	if table == "survey_sets" {
		return "hole_id"
	}
	return "id"
}

// Now is the time a store writes: UTC, to the microsecond both databases keep.
func Now() time.Time { return time.Now().UTC().Truncate(time.Microsecond) }

// NullFloat converts an optional float for a query argument.
func NullFloat(p *float64) any {
	if p == nil {
		return nil
	}
	return *p
}

// ProjectArg converts a token's project for a query argument: NULL for a
// site-wide token.
func ProjectArg(id int64) any {
	if id == domain.AllProjects {
		return nil
	}
	return id
}

// ModelText is the stored text of a project's error model: "" for the
// defaults (the zero model), else its JSON.
func ModelText(m uncertainty.Model) string {
	if m == (uncertainty.Model{}) {
		return ""
	}
	b, _ := json.Marshal(m) // a struct of numbers always marshals
	return string(b)
}

// ModelOf reads the stored text of a project's error model.
func ModelOf(s string) (uncertainty.Model, error) {
	if s == "" {
		return uncertainty.Model{}, nil
	}
	return uncertainty.ReadModel(strings.NewReader(s))
}

// Instrument is the stored survey instrument kind: "unknown" for "" (a set
// written without one).
func Instrument(s string) string {
	if s == "" {
		return string(uncertainty.UnknownSurvey)
	}
	return s
}

// NullInt converts an optional count for a query argument.
func NullInt(p *int) any {
	if p == nil {
		return nil
	}
	return int64(*p)
}

// JoinPieces is the stored text of a core interval's piece lengths: the
// shortest exact decimals separated by ';' ("" for none). SplitPieces
// reads it back.
func JoinPieces(ps []float64) string {
	var b []byte
	for i, p := range ps {
		if i > 0 {
			b = append(b, ';')
		}
		b = strconv.AppendFloat(b, p, 'g', -1, 64)
	}
	return string(b)
}

// SplitPieces reads the text [JoinPieces] wrote; "" is no pieces (nil).
func SplitPieces(s string) ([]float64, error) {
	if s == "" {
		return nil, nil
	}
	parts := strings.Split(s, ";")
	out := make([]float64, len(parts))
	for i, p := range parts {
		v, err := strconv.ParseFloat(p, 64)
		if err != nil {
			return nil, fmt.Errorf("stored core pieces %q: %w", s, err)
		}
		out[i] = v
	}
	return out, nil
}

// JSONText is the column text of an optional JSON document: "" when none.
func JSONText(doc json.RawMessage) string {
	if len(doc) == 0 || string(doc) == "null" {
		return ""
	}
	return string(doc)
}

// JSONFromText is the inverse of JSONText: nil for "".
func JSONFromText(s string) json.RawMessage {
	if s == "" {
		return nil
	}
	return json.RawMessage(s)
}

// KindOrder orders survey sets by kind: gyro, magnetic, planned, other.
const KindOrder = `CASE kind WHEN 'gyro' THEN 1 WHEN 'magnetic' THEN 2 WHEN 'planned' THEN 3 ELSE 4 END`

// KindSetMissing is a version-checked write of a hole's set of a kind that
// does not exist (any more): the caller's version is stale (412).
func KindSetMissing(holeID int64, kind string, ifVersion int64) error {
	return domain.Errorf(domain.PreconditionFailed, "hole %d has no %s survey at version %d: reload and retry", holeID, kind, ifVersion)
}

// KindSetStale is a write of a hole's set of a kind at the wrong version.
func KindSetStale(holeID int64, kind string, have, want int64) error {
	return domain.Errorf(domain.PreconditionFailed, "%s survey of hole %d is at version %d, not %d: reload and retry", kind, holeID, have, want)
}

// GlobalID returns gid, or a new global id when gid is empty: a UUID of
// version 7 (RFC 9562), random but rising with time, so rows made on any
// machine never collide and the unique index stays local to its newest
// pages. google/uuid makes it (a small, well-kept library; the random bits
// come from crypto/rand).
func GlobalID(gid string) string {
	if gid != "" {
		return gid
	}
	return uuid.Must(uuid.NewV7()).String()
}

// FindGlobalSQL returns the query, in the dialect whose n-th placeholder is
// ph(n), that reads (id, version) of the synced record of table with the
// global id: type codes by their code in the project (id 0), survey sets by
// their hole's global id (id: the hole's), the rest by their own.
func FindGlobalSQL(table string, projectID int64, gid string, ph func(int) string) (string, []any, error) {
	switch table {
	case domain.SyncTypes:
		return `SELECT 0, version FROM type_codes WHERE project_id = ` + ph(1) + ` AND code = ` + ph(2), []any{projectID, gid}, nil
	case domain.SyncSurveys:
		return `SELECT s.hole_id, s.version FROM survey_sets s JOIN holes h ON h.id = s.hole_id WHERE h.global_id = ` + ph(1), []any{gid}, nil
	case domain.SyncKindSets:
		hole, kind := domain.SplitKindSetGlobalID(gid)
		return `SELECT k.hole_id, k.version FROM kind_survey_sets k JOIN holes h ON h.id = k.hole_id WHERE h.global_id = ` + ph(1) +
			` AND k.kind = ` + ph(2), []any{hole, kind}, nil
	case domain.SyncHoles, domain.SyncRuns, domain.SyncMeasurements:
		return `SELECT id, version FROM ` + table + ` WHERE global_id = ` + ph(1), []any{gid}, nil
	}
	return "", nil, domain.FieldErr("table", "%q is not a synced table", table)
}

// RestampSQL returns the statement that sets the version of a synced record
// (see [FindGlobalSQL]).
func RestampSQL(table string, projectID int64, gid string, version int64, ph func(int) string) (string, []any, error) {
	switch table {
	case domain.SyncTypes:
		return `UPDATE type_codes SET version = ` + ph(1) + ` WHERE project_id = ` + ph(2) + ` AND code = ` + ph(3), []any{version, projectID, gid}, nil
	case domain.SyncSurveys:
		return `UPDATE survey_sets SET version = ` + ph(1) + ` WHERE hole_id = (SELECT id FROM holes WHERE global_id = ` + ph(2) + `)`, []any{version, gid}, nil
	case domain.SyncKindSets:
		hole, kind := domain.SplitKindSetGlobalID(gid)
		return `UPDATE kind_survey_sets SET version = ` + ph(1) + ` WHERE hole_id = (SELECT id FROM holes WHERE global_id = ` + ph(2) + `) AND kind = ` + ph(3),
			[]any{version, hole, kind}, nil
	case domain.SyncHoles, domain.SyncRuns, domain.SyncMeasurements:
		return `UPDATE ` + table + ` SET version = ` + ph(1) + ` WHERE global_id = ` + ph(2), []any{version, gid}, nil
	}
	return "", nil, domain.FieldErr("table", "%q is not a synced table", table)
}
