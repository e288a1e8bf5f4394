package service

import (
	"context"

	"corvane/internal/domain"
	"corvane/internal/visual"
)

// CreateProject creates a project (site admin only) with its conventions;
// empty conventions take the defaults (bottom, downhole, clockwise, m, grid).
func (s *Service) CreateProject(ctx context.Context, p domain.Project) (domain.Project, error) {
	a, err := allow(ctx, domain.AllProjects, domain.RoleAdmin)
	if err != nil {
		return p, err
	}
	if a.ProjectID != domain.AllProjects {
		return p, domain.Errorf(domain.Forbidden, "only a site token may create projects")
	}
	if err := p.Normalize(); err != nil {
		return p, err
	}
	if err := checkLocalGrid(&p); err != nil {
		return p, err
	}
	err = s.store.InTx(ctx, func(ctx context.Context, st domain.Store) error {
		if err := st.CreateProject(ctx, &p); err != nil {
			return nameTaken(err, p.Name)
		}
		return audit(ctx, st, a, p.ID, "project", p.ID, domain.ActionCreate, nil, p)
	})
	return p, err
}

// GetProject returns a project (role read).
func (s *Service) GetProject(ctx context.Context, id int64) (domain.Project, error) {
	p, _, err := s.project(ctx, s.store, id, domain.RoleRead)
	return p, err
}

// ListProjects lists the projects the caller may read: every project for a
// site token, its own for a project token.
func (s *Service) ListProjects(ctx context.Context, pg domain.Page) (List[domain.Project], error) {
	a, ok := ActorFrom(ctx)
	if !ok {
		return List[domain.Project]{}, domain.Errorf(domain.Unauthorized, "a bearer token is required")
	}
	if a.ProjectID != domain.AllProjects {
		// A project token sees a one-item list (empty after its own ID).
		l := List[domain.Project]{Items: []domain.Project{}}
		if pg.After < a.ProjectID {
			p, err := s.store.GetProject(ctx, a.ProjectID)
			if err != nil {
				return List[domain.Project]{}, err
			}
			l.Items = append(l.Items, p)
		}
		return l, nil
	}
	ps, err := s.store.ListProjects(ctx, pg)
	if err != nil {
		return List[domain.Project]{}, err
	}
	return page(ps, pg, func(p domain.Project) int64 { return p.ID }), nil
}

// UpdateProject replaces a project's name, description and conventions
// (admin). Derived values follow at once: they are computed on read.
func (s *Service) UpdateProject(ctx context.Context, id, ifVersion int64, p domain.Project) (domain.Project, error) {
	if err := p.Normalize(); err != nil {
		return p, err
	}
	if err := checkLocalGrid(&p); err != nil {
		return p, err
	}
	err := s.store.InTx(ctx, func(ctx context.Context, st domain.Store) error {
		before, a, err := s.project(ctx, st, id, domain.RoleAdmin)
		if err != nil {
			return err
		}
		p.ID, p.CreatedAt = id, before.CreatedAt
		if err := st.UpdateProject(ctx, &p, ifVersion); err != nil {
			return nameTaken(err, p.Name)
		}
		return audit(ctx, st, a, id, "project", id, domain.ActionUpdate, before, p)
	})
	return p, err
}

// DeleteProject deletes a project and everything in it (site admin only).
func (s *Service) DeleteProject(ctx context.Context, id, ifVersion int64) error {
	return s.store.InTx(ctx, func(ctx context.Context, st domain.Store) error {
		before, a, err := s.project(ctx, st, id, domain.RoleAdmin)
		if err != nil {
			return err
		}
		if a.ProjectID != domain.AllProjects {
			return domain.Errorf(domain.Forbidden, "only a site token may delete projects")
		}
		if err := st.DeleteProject(ctx, id, ifVersion); err != nil {
			return err
		}
		return audit(ctx, st, a, id, "project", id, domain.ActionDelete, before, nil)
	})
}

// PutTypeCode adds or replaces a word of the project's vocabulary (admin);
// created says whether it was new. A code differing only in case from one
// the vocabulary has replaces that one and keeps its spelling (see
// domain.FindTypeCode).
func (s *Service) PutTypeCode(ctx context.Context, projectID int64, tc domain.TypeCode) (_ domain.TypeCode, created bool, err error) {
	tc.ProjectID = projectID
	if err := tc.Normalize(); err != nil {
		return tc, false, err
	}
	err = s.store.InTx(ctx, func(ctx context.Context, st domain.Store) error {
		_, a, err := s.project(ctx, st, projectID, domain.RoleAdmin)
		if err != nil {
			return err
		}
		vocab, err := st.ListTypeCodes(ctx, projectID)
		if err != nil {
			return err
		}
		action := domain.ActionCreate
		var before any
		if old, ok := domain.FindTypeCode(vocab, tc.Code); ok {
			tc.Code, action, before = old.Code, domain.ActionUpdate, old
		}
		created = action == domain.ActionCreate
		styleType(&tc, vocab)
		if err := st.PutTypeCode(ctx, tc); err != nil {
			return err
		}
		return audit(ctx, st, a, projectID, "type_code", tc.Code, action, before, tc)
	})
	return tc, created, err
}

// ListTypeCodes returns the project's vocabulary (read).
func (s *Service) ListTypeCodes(ctx context.Context, projectID int64) ([]domain.TypeCode, error) {
	if _, _, err := s.project(ctx, s.store, projectID, domain.RoleRead); err != nil {
		return nil, err
	}
	vocab, err := s.store.ListTypeCodes(ctx, projectID)
	return styled(vocab), err
}

// styleType completes tc's colour and mark: a part left empty keeps what the
// stored entry has, else takes the next default the rest of the vocabulary
// (defaults filled) does not use.
func styleType(tc *domain.TypeCode, vocab []domain.TypeCode) {
	var used []visual.Style
	for _, v := range styled(vocab) {
		if v.Code == tc.Code {
			if tc.Colour == "" {
				tc.Colour = v.Colour
			}
			if tc.Mark == "" {
				tc.Mark = v.Mark
			}
			continue
		}
		used = append(used, visual.Style{Colour: v.Colour, Mark: v.Mark})
	}
	if tc.Colour == "" || tc.Mark == "" {
		nx := visual.Next(used)
		if tc.Colour == "" {
			tc.Colour = nx.Colour
		}
		if tc.Mark == "" {
			tc.Mark = nx.Mark
		}
	}
}

// styled gives types stored without a colour or mark (before they could be
// chosen) the defaults of the visual language, in code order.
func styled(vocab []domain.TypeCode) []domain.TypeCode {
	st := make([]visual.Style, len(vocab))
	for i, v := range vocab {
		st[i] = visual.Style{Colour: v.Colour, Mark: v.Mark}
	}
	visual.Fill(st)
	for i := range vocab {
		vocab[i].Colour, vocab[i].Mark = st[i].Colour, st[i].Mark
	}
	return vocab
}

// TypeStyles maps each type code of the project to how it is drawn.
func TypeStyles(vocab []domain.TypeCode) map[string]visual.Style {
	m := make(map[string]visual.Style, len(vocab))
	for _, v := range styled(vocab) {
		m[v.Code] = visual.Style{Colour: v.Colour, Mark: v.Mark}
	}
	return m
}

// DeleteTypeCode removes a word of the vocabulary (admin); Conflict while in use.
func (s *Service) DeleteTypeCode(ctx context.Context, projectID int64, code string) error {
	return s.store.InTx(ctx, func(ctx context.Context, st domain.Store) error {
		_, a, err := s.project(ctx, st, projectID, domain.RoleAdmin)
		if err != nil {
			return err
		}
		vocab, err := st.ListTypeCodes(ctx, projectID)
		if err != nil {
			return err
		}
		if tc, ok := domain.FindTypeCode(vocab, code); ok {
			code = tc.Code
		}
		if err := st.DeleteTypeCode(ctx, projectID, code); err != nil {
			return err
		}
		return audit(ctx, st, a, projectID, "type_code", code, domain.ActionDelete, nil, nil)
	})
}

// ListAudit returns one page of the project's audit trail, oldest first (admin).
func (s *Service) ListAudit(ctx context.Context, projectID int64, pg domain.Page) (List[domain.AuditEntry], error) {
	if _, _, err := s.project(ctx, s.store, projectID, domain.RoleAdmin); err != nil {
		return List[domain.AuditEntry]{}, err
	}
	es, err := s.store.ListAudit(ctx, projectID, pg)
	if err != nil {
		return List[domain.AuditEntry]{}, err
	}
	return page(es, pg, func(e domain.AuditEntry) int64 { return e.ID }), nil
}

// ListSiteAudit returns one page of the audit trail across projects, for a
// site admin (a token valid in every project): every entry when projectID
// is nil, else those of that project, which may have been deleted (its own
// audit route then answers 404), or with AllProjects those of the site's own
// actions (site tokens).
func (s *Service) ListSiteAudit(ctx context.Context, projectID *int64, pg domain.Page) (List[domain.AuditEntry], error) {
	a, err := allow(ctx, domain.AllProjects, domain.RoleAdmin)
	if err != nil {
		return List[domain.AuditEntry]{}, err
	}
	if a.ProjectID != domain.AllProjects {
		return List[domain.AuditEntry]{}, domain.Errorf(domain.Forbidden, "token %q is a project token; the audit across projects needs a site admin token", a.Name)
	}
	var es []domain.AuditEntry
	if projectID == nil {
		es, err = s.store.ListAuditAll(ctx, pg)
	} else {
		es, err = s.store.ListAudit(ctx, *projectID, pg)
	}
	if err != nil {
		return List[domain.AuditEntry]{}, err
	}
	return page(es, pg, func(e domain.AuditEntry) int64 { return e.ID }), nil
}

// nameTaken explains a Conflict on a project's unique name.
func nameTaken(err error, name string) error {
	if domain.IsKind(err, domain.Conflict) {
		return domain.Errorf(domain.Conflict, "a project named %q already exists", name)
	}
	return err
}
