package service

import (
	"context"
	"encoding/csv"
	"io"
	"strconv"
	"strings"
	"time"

	"corvane/internal/csvio"
	"corvane/internal/domain"
)

// ExportColumns are the columns of the measurements export: the stored
// fields with the converter's input names, then the derived values with the
// converter's output names.
var ExportColumns = []string{
	"id", "hole_id", "depth", "alpha", "beta", "gamma", "apparent_thickness", "type", "comment", "logged_by", "logged_at",
	"hole_azimuth", "hole_dip", "easting", "northing", "elevation", "dip", "dip_direction", "strike",
	"pole_trend", "pole_plunge", "line_trend", "line_plunge", "true_thickness", "azimuth_reference",
	"declination", "declination_source", "grid_convergence", "convergence_source",
	"run_confidence", "warnings", "error",
}

// exportPage is the number of rows read from the store at a time.
const exportPage = 1000

// fmtNum formats a value of the export with prec decimals through the
// project's one CSV number format, csvio.FormatFloat (a value that rounds to
// zero is written without a sign, whatever the store gives back); nil is an
// empty cell.
func fmtNum(p *float64, prec int) string {
	if p == nil {
		return ""
	}
	return csvio.FormatFloat(*p, prec)
}

// ExportMeasurements writes the measurements passing q as CSV to w, with
// derived values computed now (read). It streams: memory does not grow with
// the number of rows. Rows come in ID order. An error after the header has
// been written leaves w incomplete; the HTTP edge can only cut the response.
func (s *Service) ExportMeasurements(ctx context.Context, projectID int64, q MeasurementQuery, w io.Writer) error {
	p, _, err := s.project(ctx, s.store, projectID, domain.RoleRead)
	if err != nil {
		return err
	}
	f, err := filter(ctx, s.store, projectID, q)
	if err != nil {
		return err
	}
	cw := csv.NewWriter(w)
	if err := cw.Write(ExportColumns); err != nil {
		return err
	}
	d := newDeriver(s.store, p)
	rec := make([]string, len(ExportColumns))
	var after int64
	for {
		ms, err := s.store.ListMeasurements(ctx, f, domain.Page{Limit: exportPage, After: after})
		if err != nil {
			return err
		}
		for _, m := range ms {
			v, err := d.view(ctx, m)
			if err != nil {
				return err
			}
			dv := v.Derived
			rec = rec[:0]
			rec = append(rec, strconv.FormatInt(m.ID, 10), v.Hole, fmtNum(&m.Depth, 3), fmtNum(&m.Alpha, 2), fmtNum(&m.Beta, 2),
				fmtNum(m.Gamma, 2), fmtNum(m.ApparentThickness, 3), m.TypeCode, m.Comment, m.LoggedBy, m.LoggedAt.UTC().Format(time.RFC3339),
				fmtNum(dv.HoleAzimuth, 2), fmtNum(dv.HoleDip, 2), fmtNum(dv.East, 3), fmtNum(dv.North, 3), fmtNum(dv.Elevation, 3),
				fmtNum(dv.Dip, 2), fmtNum(dv.DipDirection, 2), fmtNum(dv.Strike, 2), fmtNum(dv.PoleTrend, 2), fmtNum(dv.PolePlunge, 2),
				fmtNum(dv.LineTrend, 2), fmtNum(dv.LinePlunge, 2), fmtNum(dv.TrueThickness, 3), dv.AzimuthRef,
				fmtNum(dv.Declination, 4), dv.DeclinationSource, fmtNum(dv.GridConvergence, 4), dv.ConvergenceSource,
				dv.RunConfidence, strings.Join(dv.Warnings, "; "), dv.Error)
			if err := cw.Write(rec); err != nil {
				return err
			}
		}
		cw.Flush()
		if err := cw.Error(); err != nil {
			return err
		}
		if len(ms) < exportPage {
			return nil
		}
		after = ms[len(ms)-1].ID
		// Holes are re-read per page so a long export does not hold stale paths
		// for ever, but within a page every row sees the same hole state.
		if len(d.models) > 256 {
			d = newDeriver(s.store, p)
		}
	}
}
