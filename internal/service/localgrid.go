package service

import (
	"bytes"
	"encoding/json"

	"corvane/internal/domain"
	"corvane/internal/localgrid"
	"corvane/internal/northref"
)

// checkLocalGrid validates a project's local grid declaration (package
// localgrid's Spec as JSON; none when empty) and rewrites it in canonical
// form. The projected grid it names must be one corvane can place collars
// in, so that azimuths can be carried on to true north.
func checkLocalGrid(p *domain.Project) error {
	if len(p.LocalGrid) == 0 {
		return nil
	}
	spec, err := ParseLocalGrid(p.LocalGrid)
	if err != nil {
		return domain.FieldErr("local_grid", "%v", err)
	}
	if p.LengthUnit == domain.UnitFoot {
		return domain.FieldErr("local_grid", "local grid: a project in feet cannot have one (the local grid is in metres)")
	}
	canon, err := json.Marshal(spec)
	if err != nil {
		return err
	}
	p.LocalGrid = canon
	return nil
}

// ParseLocalGrid reads and checks a local grid declaration: unknown fields
// are errors, the transformation must resolve (parameters or at least two
// control points) and grid_crs must be a supported projected grid. The CLI
// reads its --local-grid file with it, so a file and a project setting obey
// one rule.
func ParseLocalGrid(doc []byte) (localgrid.Spec, error) {
	var spec localgrid.Spec
	dec := json.NewDecoder(bytes.NewReader(doc))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&spec); err != nil {
		return spec, domain.Errorf(domain.Invalid, "local grid: not a local grid declaration: %v", err)
	}
	if _, _, err := spec.Resolve(); err != nil {
		return spec, domain.Errorf(domain.Invalid, "%v", err)
	}
	if _, err := northref.ParseCRS(spec.GridCRS); err != nil {
		return spec, domain.Errorf(domain.Invalid, "local grid: grid_crs: %v", err)
	}
	return spec, nil
}
