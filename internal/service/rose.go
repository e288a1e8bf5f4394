package service

import (
	"context"
	"fmt"
	"io"
	"math"

	"corvane/internal/domain"
	"corvane/internal/geom"
	"corvane/internal/netsvg"
)

// RoseQuery selects the measurements of a rose diagram and how it is drawn.
type RoseQuery struct {
	MeasurementQuery
	// Of is "dip_direction" (default; directed, 0-360) or "strike" (right-hand
	// rule, drawn both ways).
	Of string
	// BinWidth is the petal width in degrees; it must divide 180. 0 means 10.
	BinWidth float64
	Title    string
}

// Rose writes an SVG rose diagram of the dip directions or strikes of the
// planes passing q to w (read), from their derived values. Planes without a
// dip direction (in a vertical hole's axis, or whose conversion failed) are
// left out and counted on the sheet.
func (s *Service) Rose(ctx context.Context, projectID int64, q RoseQuery, w io.Writer) error {
	of := q.Of
	if of == "" {
		of = "dip_direction"
	}
	if of != "dip_direction" && of != "strike" {
		return domain.FieldErr("of", "of=%q: want dip_direction or strike", q.Of)
	}
	bw := q.BinWidth
	if bw == 0 {
		bw = 10
	}
	if r := 180 / bw; !(bw > 0) || math.IsInf(r, 0) || math.Abs(r-math.Round(r)) > 1e-9 {
		return domain.FieldErr("bin", "bin width %v degrees does not divide 180", q.BinWidth)
	}
	p, poles, _, matched, skipped, err := s.gather(ctx, projectID, q.MeasurementQuery)
	if err != nil {
		return err
	}
	r := netsvg.Rose{Title: q.Title, BinWidth: bw, Caution: Caution, Quantity: "dip direction"}
	if r.Title == "" {
		r.Title = p.Name
	}
	r.Subtitle = describe(q.MeasurementQuery) + "; azimuths " + p.OutputAzimuthRef
	r.Azimuths = make([]float64, len(poles))
	for i, sm := range poles {
		r.Azimuths[i] = sm.dipDir
		if of == "strike" {
			r.Azimuths[i] = geom.Plane{DipDirection: sm.dipDir}.Strike()
		}
	}
	if of == "strike" {
		r.Axial, r.Quantity = true, "strike (right-hand rule)"
	}
	r.Notes = []string{fmt.Sprintf("%d measurements matched", matched)}
	if skipped > 0 {
		r.Notes = append(r.Notes, fmt.Sprintf("%d without a dip direction, left out", skipped))
	}
	return netsvg.WriteRose(w, r)
}
