package convert

import (
	"strings"

	"corvane/internal/holemodel"
	"corvane/internal/localgrid"
)

// LocalCRS is the crs label of a collar given in a project's local grid.
const LocalCRS = "local"

// IsLocal reports whether a collar's crs label says it is in the local grid
// ("local" in any case).
func IsLocal(crs string) bool { return strings.EqualFold(strings.TrimSpace(crs), LocalCRS) }

// LocalGrid is a declared local (mine) grid with its resolved transformation.
type LocalGrid struct {
	Spec localgrid.Spec
	T    localgrid.Transform
}

// Apply carries a hole whose collar crs is "local" from the local grid into
// its projected grid, before the hole model builds it; other holes are left
// alone (false). On such a hole:
//
//   - the collar's easting and northing are local coordinates: they become
//     projected coordinates by the transformation, and the crs label becomes
//     Spec.GridCRS, so corrections are computed at the true place;
//   - every azimuth referenced to grid (reference "grid", or none when the
//     output reference is grid) is a local-grid azimuth: it becomes a
//     projected-grid azimuth, grid = local + rotation, and is marked grid.
//
// True and magnetic azimuths and elevations are not changed. Positions and
// grid azimuths out are then in the projected grid. corvane convert
// --local-grid and the service's project setting local_grid both use it.
func (g *LocalGrid) Apply(in *holemodel.Input, output string) bool {
	if g == nil || !IsLocal(in.CRS) {
		return false
	}
	if output == "" {
		output = holemodel.Grid
	}
	isGrid := func(ref string) bool {
		r, _ := holemodel.ParseRef(ref)
		return r == holemodel.Grid || r == "" && output == holemodel.Grid
	}
	in.Collar.East, in.Collar.North = g.T.ToGrid(in.Collar.East, in.Collar.North)
	in.CRS = g.Spec.GridCRS
	if isGrid(in.CollarRef) {
		in.Collar.Azimuth, in.CollarRef = g.T.LocalToGridAzimuth(in.Collar.Azimuth), holemodel.Grid
	}
	st := make([]holemodel.Station, len(in.Stations))
	for i, s := range in.Stations {
		if isGrid(s.Ref) {
			s.Azimuth, s.Ref = g.T.LocalToGridAzimuth(s.Azimuth), holemodel.Grid
		}
		st[i] = s
	}
	in.Stations = st
	return true
}
