package service

import (
	"context"
	"math"
	"slices"
	"sync"

	"corvane/internal/domain"
	"corvane/internal/fabric"
)

// storedRow is a stored measurement as the statistics, nets, roses,
// geotechnical reports and QA over the store use it: the fields their
// filters and checks read, with its hole's name.
type storedRow struct {
	ID, HoleID   int64
	Hole         string // the hole's name
	Depth, Alpha float64
	Beta         float64 // NaN: unoriented
	LoggedAt     int64   // microseconds since 1970, as the stores compare it
	TypeCode     string
	LoggedBy     string
}

func storedRowOf(m *domain.Measurement, hole string) storedRow {
	beta := math.NaN()
	if m.Beta != nil {
		beta = *m.Beta
	}
	return storedRow{ID: m.ID, HoleID: m.HoleID, Hole: hole, Depth: m.Depth, Alpha: m.Alpha, Beta: beta,
		LoggedAt: m.LoggedAt.UnixMicro(), TypeCode: m.TypeCode, LoggedBy: m.LoggedBy}
}

// matches says whether r passes f, as the stores' WHERE clause of a
// measurement filter does (the project aside: a projectRows holds one).
func matches(f *domain.MeasurementFilter, r *storedRow) bool {
	if len(f.HoleIDs) > 0 && !slices.Contains(f.HoleIDs, r.HoleID) {
		return false
	}
	if f.MinDepth != nil && !(r.Depth >= *f.MinDepth) {
		return false
	}
	if f.MaxDepth != nil && !(r.Depth <= *f.MaxDepth) {
		return false
	}
	if len(f.TypeCodes) > 0 && !slices.Contains(f.TypeCodes, r.TypeCode) {
		return false
	}
	if f.LoggedFrom != nil && r.LoggedAt < f.LoggedFrom.UnixMicro() {
		return false
	}
	if f.LoggedTo != nil && r.LoggedAt > f.LoggedTo.UnixMicro() {
		return false
	}
	return true
}

// rowKey is what a project's kept rows were read at: the key of the hole
// models they were oriented with (modelKey, shared with the model cache)
// and the measurement stamp (the rows themselves).
type rowKey struct {
	modelKey
	measurements int64
}

// rowKey reads the key of p's rows now; read it before anything the rows
// are built from, so that rows kept at a key are never older than it.
func (s *Service) rowKey(ctx context.Context, p domain.Project) (rowKey, error) {
	stamp, err := s.store.ModelStamp(ctx, p.ID)
	if err != nil {
		return rowKey{}, err
	}
	k := rowKey{modelKey: newModelKey(p, stamp)}
	k.measurements, err = s.store.MeasurementStamp(ctx, p.ID)
	return k, err
}

// projectRows are every visible measurement of a project in id order,
// each with its row of the statistics pipeline; fab[i] is rows[i]'s.
// Shared between requests: never changed once kept.
type projectRows struct {
	key  rowKey
	rows []storedRow
	fab  []fabric.Row
}

// maxCachedRows bounds the rows the service keeps, over all projects:
// about 220 bytes a row, so some 110 MB. A project with more rows is read
// from the store on every request; past the bound the projects used least
// recently are dropped.
const maxCachedRows = 500000

// rowCache keeps the rows of the projects used last (see projectRows),
// each at the key it was read at; a request uses them only at the key it
// has just read, so they are never stale. Safe for concurrent use.
type rowCache struct {
	mu   sync.Mutex
	m    map[int64]*cachedRows // by project id
	tick uint64
	rows int
}

type cachedRows struct {
	rows *projectRows
	used uint64
}

func newRowCache() *rowCache { return &rowCache{m: map[int64]*cachedRows{}} }

func (c *rowCache) get(k rowKey) *projectRows {
	c.mu.Lock()
	defer c.mu.Unlock()
	e, ok := c.m[k.project]
	if !ok || e.rows.key != k {
		return nil
	}
	c.tick++
	e.used = c.tick
	return e.rows
}

func (c *rowCache) put(pr *projectRows) {
	n := len(pr.rows)
	if n > maxCachedRows {
		return
	}
	c.mu.Lock()
	defer c.mu.Unlock()
	if e, ok := c.m[pr.key.project]; ok {
		c.rows -= len(e.rows.rows)
		delete(c.m, pr.key.project)
	}
	for c.rows+n > maxCachedRows {
		var lru int64
		var at uint64 = math.MaxUint64
		for id, e := range c.m {
			if e.used < at {
				lru, at = id, e.used
			}
		}
		c.rows -= len(c.m[lru].rows.rows)
		delete(c.m, lru)
	}
	c.tick++
	c.m[pr.key.project] = &cachedRows{rows: pr, used: c.tick}
	c.rows += n
}

// projectRows returns every visible measurement of p with its pipeline
// row, from the cache when it holds them at the key read now, else read
// from the store and oriented, and kept; nil (and no error) when the
// project has more than maxCachedRows measurements.
func (s *Service) projectRows(ctx context.Context, p domain.Project) (*projectRows, error) {
	k, err := s.rowKey(ctx, p)
	if err != nil {
		return nil, err
	}
	if pr := s.rows.get(k); pr != nil {
		return pr, nil
	}
	f := domain.MeasurementFilter{ProjectID: p.ID}
	c, err := s.store.CountMeasurements(ctx, f)
	if err != nil || c > maxCachedRows {
		return nil, err
	}
	pr := &projectRows{key: k, rows: make([]storedRow, 0, c), fab: make([]fabric.Row, 0, c)}
	err = s.orientStored(ctx, p, f, func(m *domain.Measurement, hole string, r fabric.Row) error {
		if len(pr.rows) >= maxCachedRows {
			return errTooMany
		}
		pr.rows = append(pr.rows, storedRowOf(m, hole))
		pr.fab = append(pr.fab, r)
		return nil
	})
	if err == errTooMany {
		return nil, nil
	}
	if err != nil {
		return nil, err
	}
	pr.rows, pr.fab = slices.Clip(pr.rows), slices.Clip(pr.fab)
	s.rows.put(pr)
	return pr, nil
}

var errTooMany = domain.Errorf(domain.Invalid, "too many rows to keep")

// orientStored reads the measurements passing f page by page in id order
// and hands each to fn with its hole's name and its row of the statistics
// pipeline, oriented with the project's hole models; an error of fn stops.
// The rows come straight from the hole model's result: the statistics,
// nets, roses and geotechnical reports need the planes, lines and hole
// directions only, not the rest of the derived values (the 95% regions of
// each measurement, a Monte Carlo run each, took most of a request's time).
func (s *Service) orientStored(ctx context.Context, p domain.Project, f domain.MeasurementFilter, fn func(m *domain.Measurement, hole string, r fabric.Row) error) error {
	d := s.deriver(s.store, p)
	var after int64
	for {
		ms, err := s.store.ListMeasurements(ctx, f, domain.Page{Limit: domain.MaxLimit, After: after})
		if err != nil {
			return err
		}
		for i := range ms {
			m := &ms[i]
			if i%1024 == 0 && ctx.Err() != nil {
				return ctx.Err()
			}
			hm, err := d.model(ctx, m.HoleID)
			if err != nil {
				return err
			}
			r, _, oerr := hm.orient(m.Depth, m.Alpha, m.Beta, m.Gamma, m.ApparentThickness)
			row := fabricRow(m.TypeCode, &r, oerr)
			row.Errors = hm.rowErrors(p.ErrorModel, m.Depth)
			if err := fn(m, hm.name, row); err != nil {
				return err
			}
		}
		if len(ms) < domain.MaxLimit {
			return nil
		}
		after = ms[len(ms)-1].ID
	}
}
