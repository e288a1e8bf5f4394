// Package service holds corvane's use cases: projects, holes, surveys, runs
// and structure measurements with their derived values computed on every read,
// stateless conversion, CSV import and export, tokens and the audit trail.
//
// The service sits between the HTTP edge and a [domain.Store]. It imports no
// HTTP and no SQL package. Every method takes ctx first; the caller is the
// [Actor] carried by ctx (see [WithActor]): a method fails with Unauthorized
// when ctx has none and Forbidden when its role or project does not allow the
// call. Errors are *domain.Error values with a kind the HTTP edge maps to a
// status code.
//
// Optimistic concurrency: every editable row has a version; update and delete
// methods take the version the caller last saw (the HTTP edge reads it from
// If-Match) and fail with PreconditionFailed when the row has moved on.
//
// Pagination: lists are ordered by ID and paged by keyset ([domain.Page]):
// pass the Next value of one page as After of the following one; Next is 0 on
// the last page.
//
// A Service is safe for concurrent use.
package service

import (
	"context"
	"encoding/json"
	"log/slog"
	"strconv"
	"sync"
	"time"

	"corvane/internal/domain"
)

// Service runs corvane's use cases over a store.
type Service struct {
	store domain.Store
	log   *slog.Logger
	now   func() time.Time
	// models keeps hole models between requests (see modelCache).
	models *modelCache
	// rows keeps each project's oriented measurements between requests
	// (see projectRows).
	rows *rowCache
	// logging counts the imports' change logs being written in the
	// background (see logLater).
	logging sync.WaitGroup
}

// New returns a Service over st. A nil log discards.
func New(st domain.Store, log *slog.Logger) *Service {
	if log == nil {
		log = slog.New(slog.DiscardHandler)
	}
	return &Service{store: st, log: log, now: time.Now, models: newModelCache(), rows: newRowCache()}
}

// Store returns the underlying store (for the composition root and tests).
func (s *Service) Store() domain.Store { return s.store }

// Ping checks the store is reachable (readiness).
func (s *Service) Ping(ctx context.Context) error { return s.store.Ping(ctx) }

// Actor is the caller of a use case: a token's owner, or the local command line.
type Actor struct {
	TokenID   int64       `json:"token_id"` // 0 for System
	Name      string      `json:"name"`
	ProjectID int64       `json:"project_id"` // domain.AllProjects for a site token
	Role      domain.Role `json:"role"`
}

// System is the actor of the local command line and the demo loader: admin of
// every project.
var System = Actor{Name: "system", ProjectID: domain.AllProjects, Role: domain.RoleAdmin}

type actorKey struct{}

// WithActor returns ctx carrying a as the caller.
func WithActor(ctx context.Context, a Actor) context.Context {
	return context.WithValue(ctx, actorKey{}, a)
}

// ActorFrom returns the caller carried by ctx.
func ActorFrom(ctx context.Context) (Actor, bool) {
	a, ok := ctx.Value(actorKey{}).(Actor)
	return a, ok
}

// allow returns the caller if it may act with role in projectID.
func allow(ctx context.Context, projectID int64, role domain.Role) (Actor, error) {
	a, ok := ActorFrom(ctx)
	if !ok {
		return a, domain.Errorf(domain.Unauthorized, "a bearer token is required")
	}
	if a.ProjectID != domain.AllProjects && a.ProjectID != projectID {
		return a, domain.Errorf(domain.Forbidden, "token %q is not valid for project %d", a.Name, projectID)
	}
	if a.Role.Rank() < role.Rank() {
		return a, domain.Errorf(domain.Forbidden, "token %q has role %s; this needs %s", a.Name, a.Role, role)
	}
	return a, nil
}

// Authorize checks, before any work, that the caller carried by ctx may act
// with role in projectID (domain.AllProjects: site-wide): Unauthorized
// without a caller, Forbidden for the wrong project or too low a role. Every
// use case checks this itself; a front end calls it first so that nothing a
// caller may not do is even read (a request body, an upload).
func Authorize(ctx context.Context, projectID int64, role domain.Role) error {
	_, err := allow(ctx, projectID, role)
	return err
}

// Authenticated checks that ctx carries a caller of any role and project
// (the stateless conversion needs no more).
func Authenticated(ctx context.Context) error {
	if _, ok := ActorFrom(ctx); !ok {
		return domain.Errorf(domain.Unauthorized, "a bearer token is required")
	}
	return nil
}

// audit appends one audit entry through st (the transaction of the change).
func audit(ctx context.Context, st domain.Store, a Actor, projectID int64, entity string, id any, action string, before, after any) error {
	e := domain.AuditEntry{ProjectID: projectID, ActorName: a.Name, TokenID: a.TokenID, Entity: entity,
		EntityID: idString(id), Action: action, Before: marshal(before), After: marshal(after)}
	return st.AppendAudit(ctx, &e)
}

func idString(id any) string {
	switch v := id.(type) {
	case int64:
		return strconv.FormatInt(v, 10)
	case string:
		return v
	}
	b, _ := json.Marshal(id)
	return string(b)
}

func marshal(v any) json.RawMessage {
	if v == nil {
		return nil
	}
	b, err := json.Marshal(v)
	if err != nil {
		return nil
	}
	return b
}

// project loads a project the caller may act on with role.
func (s *Service) project(ctx context.Context, st domain.Store, projectID int64, role domain.Role) (domain.Project, Actor, error) {
	a, err := allow(ctx, projectID, role)
	if err != nil {
		return domain.Project{}, a, err
	}
	p, err := st.GetProject(ctx, projectID)
	return p, a, err
}

// deleteAudited deletes, in one transaction of store, the row id of the
// project at version ifVersion with del, and audits the delete of entity.
// The caller needs role; get reads the row as it was and refuses one that is
// not the project's.
func deleteAudited[T any](ctx context.Context, store domain.Store, role domain.Role, entity string, projectID, id, ifVersion int64,
	get func(context.Context, domain.Store, int64, int64) (T, error),
	del func(domain.Store, context.Context, int64, int64) error) error {
	return store.InTx(ctx, func(ctx context.Context, st domain.Store) error {
		a, err := allow(ctx, projectID, role)
		if err != nil {
			return err
		}
		before, err := get(ctx, st, projectID, id)
		if err != nil {
			return err
		}
		if err := del(st, ctx, id, ifVersion); err != nil {
			return err
		}
		return audit(ctx, st, a, projectID, entity, id, domain.ActionDelete, before, nil)
	})
}

// hole loads a hole and checks it belongs to projectID (a hole of another
// project is reported as not found).
func hole(ctx context.Context, st domain.Store, projectID, holeID int64) (domain.Hole, error) {
	h, err := st.GetHole(ctx, holeID)
	if err != nil {
		return h, err
	}
	if h.ProjectID != projectID {
		return domain.Hole{}, holeNotIn(holeID, projectID)
	}
	return h, nil
}

// holeNotIn is the error of a hole of another project: not found.
func holeNotIn(holeID, projectID int64) error {
	return domain.Errorf(domain.NotFound, "hole %d not found in project %d", holeID, projectID)
}

// List is one page of a list. Next is the After value of the next page, 0 on
// the last page.
type List[T any] struct {
	Items []T   `json:"items"`
	Next  int64 `json:"next"`
}

func page[T any](items []T, p domain.Page, id func(T) int64) List[T] {
	p = p.Norm()
	l := List[T]{Items: items}
	if l.Items == nil {
		l.Items = []T{}
	}
	if len(items) == p.Limit && len(items) > 0 {
		l.Next = id(items[len(items)-1])
	}
	return l
}
