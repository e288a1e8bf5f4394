package service

import (
	"context"
	"errors"
	"io"
	"math"

	"corvane/internal/domain"
	"corvane/internal/exchange/ags4"
	"corvane/internal/geom"
	"corvane/internal/holemodel"
)

// ImportDiscontinuities is the import kind of an AGS4 file whose DISC rows
// become core measurements (see importDiscontinuities).
const ImportDiscontinuities = "discontinuities"

// importDiscontinuities adds a measurement for every DISC row of an AGS4
// file, in the import's transaction, all or nothing. A row names an
// existing hole of the project (LOCA_ID), a depth (DISC_TOP), a type of
// the project's vocabulary (DISC_TYPE), and the plane as DISC_DIP and
// DISC_DIR in the project's output north reference; the hole model turns
// the plane into alpha and beta at that depth (holemodel.Hole.CoreAngles),
// so exporting the measurement again gives the same plane. A row without
// dip or dip direction (an unoriented discontinuity) cannot become a core
// measurement and is refused, as is one in a vertical stretch of hole.
// DISC_REM becomes the comment. A project in feet is refused (AGS4 depths
// are metres). Core intervals (CORE) have nowhere to go in
// corvane yet and are not read.
func (s *Service) importDiscontinuities(ctx context.Context, st domain.Store, p domain.Project, a Actor, body io.Reader, res *ImportResult) error {
	if p.LengthUnit == domain.UnitFoot {
		return &domain.Error{Kind: domain.Invalid, Msg: "AGS4 depths are in metres and this project's lengths are in feet; nothing was imported",
			Loc: domain.Location{File: res.File}}
	}
	data, err := ags4.Read(body, res.File)
	if err != nil {
		var pe *ags4.ParseError
		if errors.As(err, &pe) {
			return &domain.Error{Kind: domain.Invalid, Msg: pe.Msg, Loc: domain.Location{File: res.File, Line: pe.Line}}
		}
		return fileErr(res.File, err)
	}
	if len(data.Discontinuities) == 0 {
		return &domain.Error{Kind: domain.Invalid, Msg: "no DISC group: nothing to import", Loc: domain.Location{File: res.File}}
	}
	vocab, err := st.ListTypeCodes(ctx, p.ID)
	if err != nil {
		return err
	}
	holes := newHoleNames(st, p.ID)
	d := newDeriver(st, p)
	ps := &problems{file: res.File}
	now := s.now()
	var batch []domain.Measurement
	for i, r := range data.Discontinuities {
		if i%1024 == 0 {
			if err := ctx.Err(); err != nil {
				return err
			}
		}
		res.Rows++
		h, ok, err := holes.get(ctx, r.Hole)
		if err != nil {
			return err
		}
		if !ok {
			ps.add(r.Line, "LOCA_ID", "no hole %q in the project", r.Hole)
			continue
		}
		if _, ok := domain.FindTypeCode(vocab, r.Type); !ok {
			ps.addErr(domain.UnknownTypeCode("", r.Type, vocab).At(domain.Location{File: res.File, Line: r.Line, Column: "DISC_TYPE"}))
			continue
		}
		if math.IsNaN(r.Dip) || math.IsNaN(r.DipDirection) {
			ps.add(r.Line, "DISC_DIP", "no dip and dip direction: an unoriented discontinuity cannot become a core measurement")
			continue
		}
		if r.Dip < 0 || r.Dip > 90 || r.DipDirection < 0 || r.DipDirection > 360 {
			ps.add(r.Line, "DISC_DIP", "dip %v / dip direction %v: want 0 to 90 and 0 to 360", r.Dip, r.DipDirection)
			continue
		}
		hm, err := d.model(ctx, h.ID)
		if err != nil {
			return err
		}
		alpha, beta, err := hm.CoreAngles(r.Top, geom.Plane{Dip: r.Dip, DipDirection: r.DipDirection})
		if err != nil {
			col := "DISC_TOP"
			var he *holemodel.Error
			if errors.As(err, &he) && he.Field == holemodel.FieldDipDirection {
				col = "DISC_DIR"
			}
			ps.add(r.Line, col, "%v", err)
			continue
		}
		m := domain.Measurement{ProjectID: p.ID, HoleID: h.ID, Depth: r.Top, Alpha: alpha, Beta: &beta, TypeCode: r.Type,
			Comment: r.Remarks, LoggedBy: a.Name, LoggedAt: now}
		if err := checkMeasurement(&m, h, vocab); err != nil {
			var e *domain.Error
			errors.As(err, &e)
			ps.add(r.Line, "DISC_TOP", "%s", e.Msg)
			continue
		}
		batch = append(batch, m)
	}
	if err := ps.err(); err != nil {
		return err
	}
	if res.DryRun {
		res.Created = len(batch)
		return nil
	}
	n, err := st.CreateMeasurements(ctx, batch)
	res.Created = n
	return err
}
