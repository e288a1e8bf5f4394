package service

import (
	"corvane/internal/domain"
	"corvane/internal/localgrid"
)

// checkLocalGrid validates a project's local grid declaration (package
// localgrid's Spec as JSON; none when empty) and rewrites it in canonical
// form. The projected grid it names must be one corvane can place collars
// in, so that azimuths can be carried on to true north.
func checkLocalGrid(p *domain.Project) error {
	if len(p.LocalGrid) == 0 {
		return nil
	}
	g, _, err := localgrid.Parse(p.LocalGrid)
	if err != nil {
		return domain.FieldErr("local_grid", "%v", err)
	}
	if p.LengthUnit == domain.UnitFoot {
		return domain.FieldErr("local_grid", "local grid: a project in feet cannot have one (the local grid is in metres)")
	}
	p.LocalGrid = g.JSON()
	return nil
}

// ParseLocalGrid reads and checks a local grid declaration with
// localgrid.Parse, as an Invalid error.
func ParseLocalGrid(doc []byte) (*localgrid.Grid, error) {
	g, _, err := localgrid.Parse(doc)
	if err != nil {
		return nil, domain.Errorf(domain.Invalid, "%v", err)
	}
	return g, nil
}

// checkHoleLocalGrid validates a hole's own local grid declaration as the
// project's (none when empty) and rewrites it in canonical form; the
// project's length unit rules as for the project's grid.
func checkHoleLocalGrid(p domain.Project, h *domain.Hole) error {
	if len(h.LocalGrid) == 0 {
		return nil
	}
	g, _, err := localgrid.Parse(h.LocalGrid)
	if err != nil {
		return domain.FieldErr("local_grid", "%v", err)
	}
	if p.LengthUnit == domain.UnitFoot {
		return domain.FieldErr("local_grid", "local grid: a hole of a project in feet cannot have one (the local grid is in metres)")
	}
	h.LocalGrid = g.JSON()
	return nil
}

// storedGrid is the local grid of a stored declaration (checked when it was
// stored), nil when none or when it no longer reads: holes that need it then
// have the error of a grid they do not have.
func storedGrid(doc []byte) *localgrid.Grid {
	if len(doc) == 0 {
		return nil
	}
	g, _, err := localgrid.Parse(doc)
	if err != nil {
		return nil
	}
	return g
}
