package service

import (
	"context"
	"io"

	"corvane/internal/fabric"
	"corvane/internal/netsvg"
)

// RoseQuery selects the measurements of a rose diagram and how it is drawn;
// the fields are the options of corvane rose.
type RoseQuery struct {
	MeasurementQuery
	// Of is "dip_direction" (default; directed, 0-360), "strike" (right-hand
	// rule, drawn both ways) or "trend" (of lines).
	Of string
	// BinWidth is the petal width in degrees; it must divide 180. nil means
	// fabric.DefaultBin.
	BinWidth *float64
	// MinDip leaves out flatter planes.
	MinDip    float64
	Weighting string
	Title     string // default: the project's name
}

// Rose writes the SVG rose diagram of the measurements passing q to w
// (read), from the same pipeline as corvane rose (package fabric).
// Measurements without a dip direction (vertical holes) or whose derivation
// failed are left out and counted on the sheet.
func (s *Service) Rose(ctx context.Context, projectID int64, q RoseQuery, w io.Writer) error {
	o := fabric.RoseOptions{Title: q.Title}
	var err error
	bin := float64(fabric.DefaultBin)
	if q.BinWidth != nil {
		bin = *q.BinWidth
	}
	if o.Of, o.Bin, o.MinDip, err = fabric.ParseRose(q.Of, bin, q.MinDip); err != nil {
		return optionErr(err)
	}
	if o.Weighting, err = parseWeighting(q.Weighting); err != nil {
		return err
	}
	in, err := s.sheet(ctx, projectID, q.MeasurementQuery, &o.Title, &o.Source, &o.AzimuthRef)
	if err != nil {
		return err
	}
	r, err := fabric.Rose(in, o)
	if err != nil {
		return optionErr(err)
	}
	return netsvg.WriteRose(w, r)
}
