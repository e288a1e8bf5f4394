package service

import (
	"bytes"
	"context"
	"errors"
	"io"
	"math"

	"corvane/internal/desurvey"
	"corvane/internal/domain"
	"corvane/internal/exchange"
	"corvane/internal/exchange/ags4"
	"corvane/internal/exchange/transfer"
)

// MaxTransferStructures bounds the structures one transfer export gathers,
// as for statistics; narrow the filter beyond that.
const MaxTransferStructures = MaxStatsMeasurements

// Transfer gathers the programme that the transfer formats (glTF, GeoJSON,
// points with normals, AGS4) are written from (read): the selected holes
// (q.Holes, or every hole of the project) built by the hole model the
// derived values use, their stored core intervals, and the measurements passing q placed in space. A
// measurement without a plane and a position (an error, a vertical hole's
// plane without a dip direction) is skipped and counted; one whose derived
// values carry a warning or an error counts as a QA flag of its hole.
// Colours go to the project's type vocabulary. With withUncertainty each
// structure carries the 95% cone of its pole's uncertainty, as the derived
// values give it (NaN when it has none). The caller writes the files with
// the Programme's methods, as `corvane transfer` does.
func (s *Service) Transfer(ctx context.Context, projectID int64, q MeasurementQuery, withUncertainty bool) (*transfer.Programme, error) {
	p, _, err := s.project(ctx, s.store, projectID, domain.RoleRead)
	if err != nil {
		return nil, err
	}
	f, err := filter(ctx, s.store, projectID, q)
	if err != nil {
		return nil, err
	}
	vocab, err := s.store.ListTypeCodes(ctx, projectID)
	if err != nil {
		return nil, err
	}
	prog := &transfer.Programme{Name: p.Name, Feet: p.LengthUnit == domain.UnitFoot}
	if err := prog.Check(); err != nil {
		return nil, domain.Errorf(domain.Invalid, "%v", err)
	}
	for _, tc := range vocab {
		prog.Types = append(prog.Types, tc.Code)
	}
	prog.Styles = TypeStyles(vocab)
	d := s.deriver(s.store, p)
	addHole := func(h domain.Hole) error {
		m, err := d.model(ctx, h.ID)
		if err != nil {
			return err
		}
		th := transfer.Hole{Name: h.Name, CRS: h.CRS,
			Collar: desurvey.Collar{East: h.East, North: h.North, Elevation: h.Elevation, Azimuth: h.Azimuth, Dip: h.Dip, Depth: h.FinalDepth}}
		if m.Err != nil {
			th.Problem = m.Err.Msg
		} else {
			th.Path = m.Path
		}
		prog.Holes = append(prog.Holes, th)
		ivs, err := s.store.ListCoreIntervals(ctx, h.ID)
		if err != nil {
			return err
		}
		for _, iv := range ivs {
			prog.Intervals = append(prog.Intervals, transfer.Interval{Hole: h.Name, Interval: interval(iv)})
		}
		return nil
	}
	if len(f.HoleIDs) > 0 {
		for _, id := range f.HoleIDs {
			h, err := s.store.GetHole(ctx, id)
			if err != nil {
				return nil, err
			}
			if err := addHole(h); err != nil {
				return nil, err
			}
		}
	} else {
		pg := domain.Page{Limit: domain.MaxLimit}
		for {
			hs, err := s.store.ListHoles(ctx, projectID, pg)
			if err != nil {
				return nil, err
			}
			for _, h := range hs {
				if err := addHole(h); err != nil {
					return nil, err
				}
			}
			if len(hs) < domain.MaxLimit {
				break
			}
			pg.After = hs[len(hs)-1].ID
		}
	}
	var after int64
	for {
		ms, err := s.store.ListMeasurements(ctx, f, domain.Page{Limit: domain.MaxLimit, After: after})
		if err != nil {
			return nil, err
		}
		for i, m := range ms {
			if i%1024 == 0 && ctx.Err() != nil {
				return nil, ctx.Err()
			}
			if len(prog.Structures) >= MaxTransferStructures {
				return nil, domain.Errorf(domain.Invalid, "more than %d measurements match: narrow the filter", MaxTransferStructures)
			}
			hm, err := d.model(ctx, m.HoleID)
			if err != nil {
				return nil, err
			}
			r, hmm, oerr := hm.orient(m.Depth, m.Alpha, m.Beta, m.Gamma, m.ApparentThickness)
			dv := hm.derived(m.Depth, &r, oerr, nil)
			placed := oerr == nil && !math.IsNaN(r.Plane.DipDirection)
			prog.Count(hm.name, placed, dv.Error != "" || len(dv.Warnings) > 0)
			if placed {
				st := exchange.Structure{Hole: hm.name, Depth: m.Depth, Pos: r.Point.Pos, Pole: r.Plane.Normal(),
					Dip: r.Plane.Dip, DipDirection: r.Plane.DipDirection, Type: m.TypeCode, Uncertainty: math.NaN()}
				if withUncertainty {
					if u := hm.uncertainty(&r, hmm); u != nil {
						st.Uncertainty = u.Pole.Region().Cone95
					}
				}
				prog.Structures = append(prog.Structures, st)
			}
		}
		if len(ms) < domain.MaxLimit {
			return prog, nil
		}
		after = ms[len(ms)-1].ID
	}
}

// Transfer formats of [Service.WriteTransfer].
const (
	FormatGLB     = "glb"      // binary glTF 2.0 scene
	FormatGLTFZip = "gltf-zip" // glTF 2.0 scene as .gltf + .bin in a zip archive
	FormatGeoJSON = "geojson"  // RFC 7946 collars and surface traces
	FormatPoints  = "points"   // points with normals CSV
	FormatAGS     = "ags"      // AGS4
)

// Bounds of the transfer options (in metres or the project's length unit).
const (
	MinDiscRadius = 0.001
	MaxDiscRadius = 1000
)

// TransferQuery selects the measurements and holes of a transfer export and
// its options. Zero values mean the defaults of `corvane transfer`.
type TransferQuery struct {
	MeasurementQuery
	// SetQuery, when it asks for sets, labels each structure with its set
	// (transfer.Programme.LabelSets), as the statistics group the planes.
	SetQuery
	// DiscRadius of the glTF discs, MinDiscRadius..MaxDiscRadius.
	DiscRadius float64
	// TraceStep is the largest spacing of trace points, MinPathStep..MaxPathStep.
	TraceStep float64
	// Origin of the glTF scene (East, North, Up); nil means the first collar
	// rounded down to whole metres.
	Origin *[3]float64
	// CRS of the collars for GeoJSON when their own labels are empty.
	CRS string
	// Recipient is the AGS4 TRAN_RECV.
	Recipient string
	// Uncertainty carries each structure's 95% cone of the pole's
	// uncertainty: the points' uncertainty column and, in glTF, a cone per
	// structure (gltf.Options.Uncertainty).
	Uncertainty bool
	// BySet groups and colours the glTF discs by set (transfer.ParseColourBy).
	BySet bool
}

// scene is the glTF options of q.
func (q TransferQuery) scene() transfer.SceneOptions {
	return transfer.SceneOptions{Origin: q.Origin, DiscRadius: q.DiscRadius, Uncertainty: q.Uncertainty, BySet: q.BySet}
}

// check bounds the options that size work or land in a file, naming the
// query parameter.
func (q TransferQuery) check() error {
	if q.DiscRadius != 0 && !(q.DiscRadius >= MinDiscRadius && q.DiscRadius <= MaxDiscRadius) {
		return domain.FieldErr("disc_radius", "disc_radius %v is out of range; want %v to %v", q.DiscRadius, MinDiscRadius, MaxDiscRadius)
	}
	if q.TraceStep != 0 && !(q.TraceStep >= MinPathStep && q.TraceStep <= MaxPathStep) {
		return domain.FieldErr("trace_step", "trace_step %v is out of range; want %v to %v", q.TraceStep, MinPathStep, MaxPathStep)
	}
	if q.Output != "" {
		return domain.FieldErr("output_reference", "output_reference: the transfer files are in the projected grid of the collars (their own north and coordinates); it cannot be chosen")
	}
	if q.Origin != nil {
		for _, v := range q.Origin {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return domain.FieldErr("origin", "origin: want three finite numbers")
			}
		}
	}
	if err := domain.CheckText("crs", q.CRS, domain.MaxCRSLen, false); err != nil {
		return err
	}
	if err := domain.CheckText("recipient", q.Recipient, domain.MaxNameLen, false); err != nil {
		return err
	}
	return nil
}

// TransferCounts says what a transfer file holds: the structures placed
// and the measurements of the selection left out (no plane and position:
// an error, a vertical hole's plane without a dip direction).
type TransferCounts struct {
	Holes, Structures, Skipped int
}

// WriteTransfer writes the selected programme ([Service.Transfer]) in
// format to w (read); counted, when not nil, is told the counts before the
// first byte is written (the HTTP edge puts them in headers). Nothing is
// written when the options, the selection or the format's own rules refuse
// it (Invalid naming the reason), except that a failure of w itself
// part-way leaves w incomplete.
func (s *Service) WriteTransfer(ctx context.Context, projectID int64, format string, q TransferQuery, w io.Writer, counted func(TransferCounts)) error {
	if err := q.check(); err != nil {
		return err
	}
	switch format {
	case FormatGLB, FormatGLTFZip, FormatGeoJSON, FormatPoints, FormatAGS:
	default:
		return domain.FieldErr("format", "unknown transfer format %q; want glb, gltf-zip, geojson, points or ags", format)
	}
	sets, err := q.SetQuery.parse()
	if err != nil {
		return err
	}
	prog, err := s.Transfer(ctx, projectID, q.MeasurementQuery, q.Uncertainty)
	if err != nil {
		return err
	}
	if _, err := prog.LabelSets(sets); err != nil {
		return optionErr(err)
	}
	if q.BySet && !prog.HasSets() && (format == FormatGLB || format == FormatGLTFZip) {
		return domain.FieldErr("colour_by", "%v", transfer.ErrNoSets)
	}
	prog.TraceStep = q.TraceStep
	if counted != nil {
		counted(TransferCounts{Holes: len(prog.Holes), Structures: len(prog.Structures), Skipped: prog.Skipped})
	}
	switch format {
	case FormatGLB:
		return prog.WriteGLB(w, q.scene())
	case FormatGLTFZip:
		return prog.WriteGLTFZip(w, "scene", q.scene())
	case FormatGeoJSON:
		if _, err := prog.Inverse(q.CRS); err != nil {
			return domain.FieldErr("crs", "GeoJSON needs the collars' coordinate system: %v", err)
		}
		// A map is small (a line per hole); it is made whole before it is
		// sent, so a collar the grid inverse cannot place is refused (Invalid)
		// instead of cutting the answer.
		var buf bytes.Buffer
		if err := prog.WriteGeoJSON(&buf, q.CRS); err != nil {
			return domain.FieldErr("crs", "GeoJSON: %v", err)
		}
		_, err := buf.WriteTo(w)
		return err
	case FormatPoints:
		return prog.WritePoints(w)
	default:
		// The format's rules are checked before anything is written; a breach
		// (non-ASCII text in a name, say) is the caller's data, not a fault.
		f, err := ags4.Build(prog.AGS(transfer.AGSOptions{Recipient: q.Recipient}))
		if err == nil {
			err = errors.Join(ags4.Check(f)...)
		}
		if err != nil {
			return domain.Errorf(domain.Invalid, "the project cannot be written as AGS4: %v", err)
		}
		return f.Encode(w)
	}
}
