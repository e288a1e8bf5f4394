package csvio

import (
	"io"

	"corvane/internal/exchange"
)

// Decimals of corvane's CSV outputs: angles to 0.01 degree, positions and
// lengths to 0.001 of the length unit, unit-vector components to 1e-6
// (about 0.00006 degree).
const (
	AngleDecimals  = 2
	LengthDecimals = 3
	UnitDecimals   = 6
)

// Columns of the points-with-normals file.
const (
	ColX, ColY, ColZ    = "x", "y", "z"
	ColNX, ColNY, ColNZ = "nx", "ny", "nz"
	ColDipDirection     = "dip_direction"
	ColType             = "type"
	ColSet              = "set"
	ColUncertainty      = "uncertainty"
)

// PointColumns are the columns of the points-with-normals file, in order;
// [ColUncertainty] follows when the file has it.
var PointColumns = []string{ColX, ColY, ColZ, ColNX, ColNY, ColNZ, ColDip, ColDipDirection, ColType, ColSet, ColHoleID, ColDepth}

// PointsWriter streams structures as points with normals for implicit
// modelling: position x = easting, y = northing, z = elevation; the unit
// normal (nx, ny, nz) is the plane's lower-hemisphere pole in the same
// frame; then dip, dip direction, type, set, hole and depth, and the
// uncertainty in degrees when the file has that column (empty for a
// structure without one).
type PointsWriter struct {
	cw          *Writer
	uncertainty bool
}

// NewPointsWriter writes the header to w and returns the writer; with
// uncertainty the file has the uncertainty column.
func NewPointsWriter(w io.Writer, uncertainty bool) *PointsWriter {
	p := &PointsWriter{cw: NewWriter(w), uncertainty: uncertainty}
	p.cw.Strings(PointColumns)
	if uncertainty {
		p.cw.String(ColUncertainty)
	}
	p.cw.EndRow()
	return p
}

// Write writes one structure.
func (p *PointsWriter) Write(s exchange.Structure) {
	cw := p.cw
	cw.Float(s.Pos.X, LengthDecimals)
	cw.Float(s.Pos.Y, LengthDecimals)
	cw.Float(s.Pos.Z, LengthDecimals)
	cw.Float(s.Pole.X, UnitDecimals)
	cw.Float(s.Pole.Y, UnitDecimals)
	cw.Float(s.Pole.Z, UnitDecimals)
	cw.Float(s.Dip, AngleDecimals)
	cw.Float(s.DipDirection, AngleDecimals)
	cw.String(s.Type)
	cw.String(s.Set)
	cw.String(s.Hole)
	cw.Float(s.Depth, LengthDecimals)
	if p.uncertainty {
		cw.Float(s.Uncertainty, AngleDecimals) // NaN: empty
	}
	cw.EndRow()
}

// Flush writes what is buffered and returns the first write error.
func (p *PointsWriter) Flush() error { return p.cw.Flush() }

// WritePoints writes structures as a points-with-normals file, with the
// uncertainty column when any structure has an uncertainty.
func WritePoints(w io.Writer, structures []exchange.Structure) error {
	unc := false
	for _, s := range structures {
		unc = unc || s.HasUncertainty()
	}
	p := NewPointsWriter(w, unc)
	for _, s := range structures {
		p.Write(s)
	}
	return p.Flush()
}
