package service

import (
	"context"
	"io"
	"math"
	"strconv"
	"strings"
	"time"

	"corvane/internal/convert"
	"corvane/internal/csvio"
	"corvane/internal/desurvey"
	"corvane/internal/domain"
	"corvane/internal/uncertainty"
)

// ExportColumns are the columns of the measurements export: the stored
// fields with the converter's input names and the covering run's confidence,
// mismatch and start depth (the structures file's run columns of `corvane
// convert` and `corvane stats`, which the measurements import leaves alone:
// runs import as runs), then the
// derived values in the columns, order and decimals of `corvane convert`
// (convert.OutputColumns, written by convert.WriteResult: one writer).
var ExportColumns = append([]string{
	"id", "hole_id", "depth", "alpha", "beta", "gamma", "apparent_thickness", "type", "comment", "logged_by", "logged_at",
	"run_confidence", "run_mismatch", "run_from",
}, convert.OutputColumns(true)...)

// exportPage is the number of rows read from the store at a time.
const exportPage = 1000

// ExportMeasurements writes the measurements passing q as CSV to w, with
// derived values computed now (read). It streams: memory does not grow with
// the number of rows. Rows come in ID order. The whole export reads one
// snapshot of the store, so an import or edit committed meanwhile shows in
// full or not at all. An error after the header has been written leaves w
// incomplete; the HTTP edge can only cut the response.
func (s *Service) ExportMeasurements(ctx context.Context, projectID int64, q MeasurementQuery, w io.Writer) error {
	return s.store.Snapshot(ctx, func(ctx context.Context, st domain.Store) error {
		return s.exportMeasurements(ctx, st, projectID, q, w)
	})
}

func (s *Service) exportMeasurements(ctx context.Context, st domain.Store, projectID int64, q MeasurementQuery, w io.Writer) error {
	p, _, err := s.project(ctx, st, projectID, domain.RoleRead)
	if err != nil {
		return err
	}
	if err := q.withOutput(&p); err != nil {
		return err
	}
	f, err := filter(ctx, st, projectID, q)
	if err != nil {
		return err
	}
	cw := csvio.NewWriter(w)
	cw.Strings(ExportColumns)
	cw.EndRow()
	d := s.deriver(st, p)
	var scratch []byte
	var warn []string
	var after int64
	for {
		ms, err := st.ListMeasurements(ctx, f, domain.Page{Limit: exportPage, After: after})
		if err != nil {
			return err
		}
		for _, m := range ms {
			hm, err := d.model(ctx, m.HoleID)
			if err != nil {
				return err
			}
			r, hmm, oerr := hm.orient(m.Depth, m.Alpha, m.Beta, m.Gamma, m.ApparentThickness)
			cw.String(strconv.FormatInt(m.ID, 10))
			cw.String(hm.name)
			cw.Float(m.Depth, 3)
			cw.Float(m.Alpha, 2)
			optFloat(cw, m.Beta, 2)
			optFloat(cw, m.Gamma, 2)
			optFloat(cw, m.ApparentThickness, 3)
			cw.Strings([]string{m.TypeCode, m.Comment, m.LoggedBy, m.LoggedAt.UTC().Format(time.RFC3339)})
			if oerr != nil {
				cw.Empty() // run_confidence
				cw.Empty() // run_mismatch
				cw.Empty() // run_from
				convert.WriteError(cw, true, oerr.Error())
			} else {
				warn = warn[:0]
				if s := convert.Warnings(&r, hm.Hole); s != "" {
					warn = append(warn, s)
				}
				var conf string
				conf, warn = hm.runAt(m.Depth, warn)
				cw.String(conf)
				var mismatch, from *float64
				if run := hm.runCovering(m.Depth); run != nil {
					mismatch, from = run.Mismatch, &run.From
				}
				optFloat(cw, mismatch, 2)
				optFloat(cw, from, 3)
				scratch = convert.WriteResult(cw, &r, hm.Hole, true, strings.Join(warn, "; "), nil, scratch, hm.uncertainty(&r, hmm))
				cw.Empty() // error
			}
			cw.EndRow()
		}
		if err := cw.Flush(); err != nil {
			return err
		}
		if len(ms) < exportPage {
			return nil
		}
		after = ms[len(ms)-1].ID
		// The deriver's cache of hole paths is dropped when it grows large, to
		// bound memory; re-reading gives the same holes (one snapshot).
		if len(d.models) > 256 {
			d = s.deriver(st, p)
		}
	}
}

// optFloat writes an optional number, empty when nil.
func optFloat(cw *csvio.Writer, p *float64, prec int) {
	if p == nil {
		cw.Empty()
		return
	}
	cw.Float(*p, prec)
}

// ExportCollars writes the project's holes as a collars file (read), in the
// columns the collars import reads, so that an export imports back to the
// same holes: hole_id, easting, northing, elevation, azimuth, dip, depth,
// declination, grid_convergence, azimuth_reference, crs, survey_date.
// Its pages read one snapshot, like the measurements export.
func (s *Service) ExportCollars(ctx context.Context, projectID int64, w io.Writer) error {
	return s.store.Snapshot(ctx, func(ctx context.Context, st domain.Store) error {
		return s.exportCollars(ctx, st, projectID, w)
	})
}

func (s *Service) exportCollars(ctx context.Context, st domain.Store, projectID int64, w io.Writer) error {
	if _, _, err := s.project(ctx, st, projectID, domain.RoleRead); err != nil {
		return err
	}
	var rows []csvio.CollarRow
	pg := domain.Page{Limit: domain.MaxLimit}
	for {
		hs, err := st.ListHoles(ctx, projectID, pg)
		if err != nil {
			return err
		}
		for _, h := range hs {
			r := csvio.CollarRow{HoleID: h.Name, AzimuthRef: h.AzimuthRef, CRS: h.CRS, Declination: math.NaN(), GridConvergence: math.NaN(),
				Collar: desurvey.Collar{East: h.East, North: h.North, Elevation: h.Elevation, Azimuth: h.Azimuth, Dip: h.Dip, Depth: h.FinalDepth}}
			if h.Declination != nil {
				r.Declination = *h.Declination
			}
			if h.GridConvergence != nil {
				r.GridConvergence = *h.GridConvergence
			}
			r.SurveyDate, _ = time.Parse(time.DateOnly, h.SurveyDate)
			r.LocalGrid = storedGrid(h.LocalGrid)
			rows = append(rows, r)
		}
		if len(hs) < domain.MaxLimit {
			return csvio.WriteCollars(w, rows)
		}
		pg.After = hs[len(hs)-1].ID
	}
}

// ExportSurveys writes the project's surveys as a surveys file (read) that
// the surveys import reads back: each hole's survey set (rows without a
// kind), then its sets by kind (kind column), each with its instrument and
// the preferred set marked (preferred column), in hole order, from one
// snapshot.
func (s *Service) ExportSurveys(ctx context.Context, projectID int64, w io.Writer) error {
	return s.store.Snapshot(ctx, func(ctx context.Context, st domain.Store) error {
		if _, _, err := s.project(ctx, st, projectID, domain.RoleRead); err != nil {
			return err
		}
		var rows []csvio.SurveyRow
		add := func(name string, ss domain.SurveySet, kind string, preferred bool) {
			date, _ := time.Parse(time.DateOnly, ss.SurveyDate)
			// The instrument of the set; unknown, the default, is written
			// as the absent value it reads back from.
			instrument := uncertainty.Instrument(ss.Instrument)
			if instrument == uncertainty.UnknownSurvey {
				instrument = ""
			}
			for _, x := range ss.Stations {
				rows = append(rows, csvio.SurveyRow{HoleID: name, Station: desurvey.Station{Depth: x.Depth, Azimuth: x.Azimuth, Dip: x.Dip},
					AzimuthRef: ss.AzimuthRef, Date: date, Kind: kind, Instrument: instrument, Preferred: preferred})
			}
		}
		pg := domain.Page{Limit: domain.MaxLimit}
		for {
			hs, err := st.ListHoles(ctx, projectID, pg)
			if err != nil {
				return err
			}
			for _, h := range hs {
				ss, err := st.GetSurvey(ctx, h.ID)
				switch {
				case err == nil:
					add(h.Name, ss, "", false)
				case !domain.IsKind(err, domain.NotFound):
					return err
				}
				sets, err := st.ListKindSets(ctx, h.ID)
				if err != nil {
					return err
				}
				for _, k := range sets {
					add(h.Name, k.Survey(), k.Kind, k.Preferred)
				}
			}
			if len(hs) < domain.MaxLimit {
				return csvio.WriteSurveys(w, rows)
			}
			pg.After = hs[len(hs)-1].ID
		}
	})
}
