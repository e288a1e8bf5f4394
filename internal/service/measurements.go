package service

import (
	"context"
	"time"

	"corvane/internal/domain"
)

// MeasurementView is a stored measurement with its hole's name and the values
// derived from it on this read.
type MeasurementView struct {
	domain.Measurement
	Hole    string  `json:"hole"`
	Derived Derived `json:"derived"`
}

// MeasurementQuery selects measurements of a project. Zero fields do not
// filter; bounds are inclusive.
type MeasurementQuery struct {
	Holes      []string   // hole names, e.g. "ZR001"
	MinDepth   *float64   // depth >= MinDepth
	MaxDepth   *float64   // depth <= MaxDepth
	Types      []string   // type codes
	LoggedFrom *time.Time // logged_at >= LoggedFrom
	LoggedTo   *time.Time // logged_at <= LoggedTo
	// ByDepth lists in (depth, id) order; the page's After is still the id
	// of the last row of the previous page.
	ByDepth bool
	// Output is the north reference of the derived azimuths when not the
	// project's: grid, true or local (azimuths and coordinates in the local
	// grid, the hole's or the project's); "" is the project's.
	Output string
}

// withOutput sets the project's output reference to q's choice, when q
// makes one (query parameter output_reference).
func (q MeasurementQuery) withOutput(p *domain.Project) error {
	out, err := outputOf(q.Output)
	if err != nil {
		return domain.FieldErr("output_reference", "output_reference: %v", err)
	}
	if out != "" {
		p.OutputAzimuthRef = out
	}
	return nil
}

// filter resolves q's hole names into the store filter.
func filter(ctx context.Context, st domain.Store, projectID int64, q MeasurementQuery) (domain.MeasurementFilter, error) {
	f := domain.MeasurementFilter{ProjectID: projectID, MinDepth: q.MinDepth, MaxDepth: q.MaxDepth,
		LoggedFrom: q.LoggedFrom, LoggedTo: q.LoggedTo}
	if len(q.Types) > 0 {
		// An unknown type is an error, as an unknown hole is.
		vocab, err := st.ListTypeCodes(ctx, projectID)
		if err != nil {
			return f, err
		}
		for _, code := range q.Types {
			tc, ok := domain.FindTypeCode(vocab, code)
			if !ok {
				return f, domain.UnknownTypeCode("type", code, vocab)
			}
			f.TypeCodes = append(f.TypeCodes, tc.Code)
		}
	}
	for _, name := range q.Holes {
		h, err := st.GetHoleByName(ctx, projectID, name)
		if domain.IsKind(err, domain.NotFound) {
			return f, domain.FieldErr("hole", "no hole %q in project %d", name, projectID)
		}
		if err != nil {
			return f, err
		}
		f.HoleIDs = append(f.HoleIDs, h.ID)
	}
	if q.MinDepth != nil && q.MaxDepth != nil && *q.MinDepth > *q.MaxDepth {
		return f, domain.FieldErr("min_depth", "min_depth %v is greater than max_depth %v", *q.MinDepth, *q.MaxDepth)
	}
	return f, nil
}

// checkMeasurement validates m against its hole and the project's vocabulary.
func checkMeasurement(m *domain.Measurement, h domain.Hole, vocab []domain.TypeCode) error {
	if err := m.Normalize(); err != nil {
		return err
	}
	if m.Depth > h.FinalDepth {
		return domain.FieldErr("depth", "depth %v is past the final depth %v of hole %s", m.Depth, h.FinalDepth, h.Name)
	}
	tc, ok := domain.FindTypeCode(vocab, m.TypeCode)
	if !ok {
		return domain.UnknownTypeCode("type", m.TypeCode, vocab)
	}
	m.TypeCode = tc.Code
	return domain.CheckKind(*m, tc)
}

// CreateMeasurement logs a structure measurement (log). LoggedBy defaults to
// the caller's name and LoggedAt to now.
func (s *Service) CreateMeasurement(ctx context.Context, projectID int64, m domain.Measurement) (MeasurementView, error) {
	var hm *holeModel
	var d *deriver
	err := s.store.InTx(ctx, func(ctx context.Context, st domain.Store) error {
		a, err := allow(ctx, projectID, domain.RoleLog)
		if err != nil {
			return err
		}
		// The project, the hole, the vocabulary and the model stamp in one
		// read (one round trip on PostgreSQL).
		in, err := st.LogInputs(ctx, projectID, m.HoleID)
		if err != nil {
			return err
		}
		h, vocab := in.Hole, in.Types
		if h.ProjectID != projectID {
			return holeNotIn(m.HoleID, projectID)
		}
		// The hole model is read before the row is written: a measurement
		// does not change it, and on PostgreSQL the write locks the hole's
		// measurement stamp row until the commit, so the less that follows
		// the write, the shorter other writers of the hole wait.
		d = s.deriver(st, in.Project).stampedAt(in.ModelStamp)
		if hm, err = d.model(ctx, m.HoleID); err != nil {
			return err
		}
		return s.addMeasurement(ctx, st, a, projectID, &m, h, vocab)
	})
	if err != nil {
		return MeasurementView{}, err
	}
	d.keep()
	return hm.view(m), nil
}

// addMeasurement checks m against its hole h and the vocabulary, stores it
// and audits it, in the transaction of st: the one way a measurement is
// created, by the route and by sync. The caller has checked a's role (log).
func (s *Service) addMeasurement(ctx context.Context, st domain.Store, a Actor, projectID int64, m *domain.Measurement, h domain.Hole, vocab []domain.TypeCode) error {
	if err := s.newMeasurement(a, projectID, m, h, vocab); err != nil {
		return err
	}
	if err := st.CreateMeasurement(ctx, m); err != nil {
		return err
	}
	return audit(ctx, st, a, projectID, "measurement", m.ID, domain.ActionCreate, nil, *m)
}

// newMeasurement fills the defaults of a new measurement m (project,
// logged by the caller, now) and checks it against its hole and the
// vocabulary.
func (s *Service) newMeasurement(a Actor, projectID int64, m *domain.Measurement, h domain.Hole, vocab []domain.TypeCode) error {
	m.ProjectID = projectID
	if m.LoggedBy == "" {
		m.LoggedBy = a.Name
	}
	if m.LoggedAt.IsZero() {
		m.LoggedAt = s.now()
	}
	return checkMeasurement(m, h, vocab)
}

// measurement loads a measurement and checks it belongs to the project.
func measurement(ctx context.Context, st domain.Store, projectID, id int64) (domain.Measurement, error) {
	m, err := st.GetMeasurement(ctx, id)
	if err != nil {
		return m, err
	}
	if m.ProjectID != projectID {
		return domain.Measurement{}, domain.Errorf(domain.NotFound, "measurement %d not found in project %d", id, projectID)
	}
	return m, nil
}

// GetMeasurement returns a measurement with its derived values (read).
func (s *Service) GetMeasurement(ctx context.Context, projectID, id int64) (MeasurementView, error) {
	p, _, err := s.project(ctx, s.store, projectID, domain.RoleRead)
	if err != nil {
		return MeasurementView{}, err
	}
	m, err := measurement(ctx, s.store, projectID, id)
	if err != nil {
		return MeasurementView{}, err
	}
	return s.deriver(s.store, p).view(ctx, m)
}

// ListMeasurements returns one page of the measurements passing q, with
// derived values (read).
func (s *Service) ListMeasurements(ctx context.Context, projectID int64, q MeasurementQuery, pg domain.Page) (List[MeasurementView], error) {
	var out List[MeasurementView]
	p, _, err := s.project(ctx, s.store, projectID, domain.RoleRead)
	if err != nil {
		return out, err
	}
	if err := q.withOutput(&p); err != nil {
		return out, err
	}
	f, err := filter(ctx, s.store, projectID, q)
	if err != nil {
		return out, err
	}
	var ms []domain.Measurement
	if q.ByDepth {
		var after float64
		if pg.After > 0 {
			last, err := measurement(ctx, s.store, projectID, pg.After)
			if err != nil {
				return out, domain.FieldErr("after", "after=%d: %v", pg.After, err)
			}
			after = last.Depth
		}
		ms, err = s.store.ListMeasurementsByDepth(ctx, f, after, pg)
	} else {
		ms, err = s.store.ListMeasurements(ctx, f, pg)
	}
	if err != nil {
		return out, err
	}
	d := s.deriver(s.store, p)
	views := make([]MeasurementView, len(ms))
	for i, m := range ms {
		if views[i], err = d.view(ctx, m); err != nil {
			return out, err
		}
	}
	return page(views, pg, func(v MeasurementView) int64 { return v.ID }), nil
}

// CountMeasurements counts the measurements passing q (read).
func (s *Service) CountMeasurements(ctx context.Context, projectID int64, q MeasurementQuery) (int64, error) {
	if _, _, err := s.project(ctx, s.store, projectID, domain.RoleRead); err != nil {
		return 0, err
	}
	f, err := filter(ctx, s.store, projectID, q)
	if err != nil {
		return 0, err
	}
	return s.store.CountMeasurements(ctx, f)
}

// UpdateMeasurement replaces a measurement's fields (log). It may move to
// another hole of the same project. An empty LoggedBy or zero LoggedAt keep
// the stored ones.
func (s *Service) UpdateMeasurement(ctx context.Context, projectID, id, ifVersion int64, m domain.Measurement) (MeasurementView, error) {
	var hm *holeModel
	var d *deriver
	err := s.store.InTx(ctx, func(ctx context.Context, st domain.Store) error {
		p, a, err := s.project(ctx, st, projectID, domain.RoleLog)
		if err != nil {
			return err
		}
		before, err := measurement(ctx, st, projectID, id)
		if err != nil {
			return err
		}
		if m.HoleID == 0 {
			m.HoleID = before.HoleID
		}
		h, err := hole(ctx, st, projectID, m.HoleID)
		if err != nil {
			return err
		}
		vocab, err := st.ListTypeCodes(ctx, projectID)
		if err != nil {
			return err
		}
		m.ID, m.ProjectID, m.CreatedAt = id, projectID, before.CreatedAt
		if m.LoggedBy == "" {
			m.LoggedBy = before.LoggedBy
		}
		if m.LoggedAt.IsZero() {
			m.LoggedAt = before.LoggedAt
		}
		if err := checkMeasurement(&m, h, vocab); err != nil {
			return err
		}
		if err := st.UpdateMeasurement(ctx, &m, ifVersion); err != nil {
			return err
		}
		if err := audit(ctx, st, a, projectID, "measurement", id, domain.ActionUpdate, before, m); err != nil {
			return err
		}
		d = s.deriver(st, p)
		hm, err = d.model(ctx, m.HoleID)
		return err
	})
	if err != nil {
		return MeasurementView{}, err
	}
	d.keep()
	return hm.view(m), nil
}

// DeleteMeasurement deletes a measurement (log).
func (s *Service) DeleteMeasurement(ctx context.Context, projectID, id, ifVersion int64) error {
	return deleteAudited(ctx, s.store, domain.RoleLog, "measurement", projectID, id, ifVersion, measurement, domain.Store.DeleteMeasurement)
}
