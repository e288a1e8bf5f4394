package csvio

import (
	"io"
)

// pickColDipDirection is the dip-direction column of a picks file.
const pickColDipDirection = ColDipDirection

// PickRow is one reference pick: the orientation of a plane in a hole from a
// source other than the core (for example an oriented borehole image log),
// at a depth on that source's own depth scale.
type PickRow struct {
	Line         int // line in the file (the header is line 1)
	HoleID       string
	Depth        float64
	Dip          float64 // 0..90
	DipDirection float64 // 0..360
}

// PickColumns are the required columns of a picks file.
var PickColumns = []string{ColHoleID, ColDepth, ColDip, pickColDipDirection}

// ReadPicks reads a whole picks file: hole_id, depth (>= 0), dip (0..90)
// and dip_direction (0..360); other columns are ignored. Errors as for
// [ReadCollars]: a missing column or broken CSV at once, else every bad row
// reported with its file, line and column, and no rows returned.
func ReadPicks(r io.Reader, file string) ([]PickRow, error) {
	return readRows(r, file, "pick", PickColumns, func(rw *row) PickRow {
		line := rw.line
		p := PickRow{Line: line, HoleID: rw.cell(ColHoleID)}
		if p.HoleID == "" {
			rw.fail(ColHoleID, "hole_id is empty")
		}
		var ok bool
		p.Depth, ok = rw.num(ColDepth, true)
		if ok && p.Depth < 0 {
			rw.fail(ColDepth, "depth %g is negative", p.Depth)
		}
		p.Dip, ok = rw.num(ColDip, true)
		rw.inRange(ColDip, p.Dip, ok, 0, 90)
		p.DipDirection, ok = rw.num(pickColDipDirection, true)
		rw.inRange(pickColDipDirection, p.DipDirection, ok, 0, 360)
		return p
	})
}
