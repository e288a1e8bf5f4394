package service

import (
	"context"
	"fmt"

	"corvane/internal/domain"
	"corvane/internal/qa"
	"corvane/internal/uncertainty"
)

// MaxQAMeasurements bounds the measurements one QA request reads; a larger
// project is checked hole by hole.
const MaxQAMeasurements = 500000

// QARequest is a QA run over stored data with what the store does not hold:
// the thresholds and, optionally, reference picks and magnetic zones. An
// empty Options.PersistentType takes the project's persistent fabric and a
// zero Options.Errors the project's error model.
type QARequest struct {
	// Options are the QA thresholds and the persistent structure type.
	// Convention and Feet are always taken from the project.
	Options qa.Options
	// Picks are orientations of the same holes from another source (an
	// oriented borehole image log, for example); HoleID is the hole's name.
	Picks []qa.Pick
	// MagneticZones mark depth intervals where magnetic survey azimuths are
	// unreliable; HoleID is the hole's name.
	MagneticZones []qa.MagneticZone
}

// QA runs the orientation-mark, survey and measurement checks of package qa
// over a project's stored data (read): the whole project when holeID is 0,
// else that hole only. See [Service.QAWith].
func (s *Service) QA(ctx context.Context, projectID, holeID int64, opt qa.Options) (qa.Report, error) {
	return s.QAWith(ctx, projectID, holeID, QARequest{Options: opt})
}

// QAWith is [Service.QA] with reference picks and magnetic zones (read).
//
// The QA input is the store's current state: collars and survey stations
// with their azimuths brought to the project's output reference by the same
// declination and grid convergence the derived values use (a station keeps
// Magnetic when its set was measured against magnetic north), the runs and
// the measurements with their store ids, so findings, suggestions and pick
// matches carry the id of the run or measurement they are about. The core-angle
// convention and the length unit come from the project; the report carries
// the caution of package qa. For one hole, the digit-preference and beta
// 0/360 tests cover that hole's measurements only, and picks or zones naming
// another hole are refused.
func (s *Service) QAWith(ctx context.Context, projectID, holeID int64, req QARequest) (qa.Report, error) {
	opt := req.Options
	if err := checkQAOptions(opt); err != nil {
		return qa.Report{}, err
	}
	p, _, err := s.project(ctx, s.store, projectID, domain.RoleRead)
	if err != nil {
		return qa.Report{}, err
	}
	// The project's settings stand when the request names none: its
	// persistent fabric for the fabric checks and its error model.
	if opt.PersistentType == "" {
		opt.PersistentType = p.PersistentFabric
	}
	if opt.Errors == (uncertainty.Model{}) {
		opt.Errors = p.ErrorModel
	}
	var holes []domain.Hole
	if holeID != 0 {
		h, err := hole(ctx, s.store, projectID, holeID)
		if err != nil {
			return qa.Report{}, err
		}
		holes = []domain.Hole{h}
		for i, pk := range req.Picks {
			if pk.HoleID != h.Name {
				return qa.Report{}, domain.FieldErr(fmt.Sprintf("picks[%d].hole_id", i), "pick of hole %q in a QA of hole %q", pk.HoleID, h.Name)
			}
		}
		for i, z := range req.MagneticZones {
			if z.HoleID != h.Name {
				return qa.Report{}, domain.FieldErr(fmt.Sprintf("magnetic_zones[%d].hole_id", i), "magnetic zone of hole %q in a QA of hole %q", z.HoleID, h.Name)
			}
		}
	} else {
		pg := domain.Page{Limit: domain.MaxLimit}
		for {
			hs, err := s.store.ListHoles(ctx, projectID, pg)
			if err != nil {
				return qa.Report{}, err
			}
			holes = append(holes, hs...)
			if len(hs) < domain.MaxLimit {
				break
			}
			pg.After = hs[len(hs)-1].ID
		}
	}
	in, err := s.qaInput(ctx, p, holes, holeID)
	if err != nil {
		return qa.Report{}, err
	}
	in.Picks, in.MagneticZones = req.Picks, req.MagneticZones
	conv := ConventionsOf(p)
	opt.Convention = conv.core()
	opt.Feet = p.LengthUnit == domain.UnitFoot
	return qa.RunContext(ctx, in, opt)
}

// qaInput reads the holes' collars, surveys, runs and measurements from the
// store. holeID 0 reads every measurement of the project, else those of that
// hole.
func (s *Service) qaInput(ctx context.Context, p domain.Project, holes []domain.Hole, holeID int64) (qa.Input, error) {
	var in qa.Input
	conv := ConventionsOf(p)
	names := make(map[int64]string, len(holes))
	for _, h := range holes {
		names[h.ID] = h.Name
		ss, used, sets, err := usedSurvey(ctx, s.store, h.ID, p.SurveyPriority)
		if err != nil {
			return in, err
		}
		// Each set by kind goes to QA in the output reference through the
		// hole model, so a magnetic and a gyro set can be compared; a set the
		// model cannot build is left out of the comparison.
		for _, k := range sets {
			ks := k.Survey()
			km := newHoleModel(conv, h, &ks, k.Kind, nil)
			if km.Err != nil {
				continue
			}
			qs := qa.SurveySet{HoleID: h.Name, Kind: k.Kind, Instrument: k.Instrument}
			for i, st := range km.Stations {
				qs.Stations = append(qs.Stations, qa.Station{HoleID: h.Name, Depth: st.Depth, Azimuth: st.Azimuth, Dip: st.Dip, Magnetic: km.Magnetic[i]})
			}
			in.SurveySets = append(in.SurveySets, qs)
		}
		runs, err := s.store.ListRuns(ctx, h.ID)
		if err != nil {
			return in, err
		}
		// The QA collar and stations are the hole model's path input, with
		// the same corrections as the derived values; a hole the model
		// cannot build is reported once, as in corvane qa.
		m := newHoleModel(conv, h, ss, used, runs)
		c := m.Collar
		qc := qa.Collar{HoleID: h.Name, East: c.East, North: c.North, Elevation: c.Elevation, Azimuth: c.Azimuth, Dip: c.Dip, Depth: c.Depth, Path: m.Path, DeclinationSource: m.DeclinationSource()}
		if m.Err != nil {
			qc.Problem, qc.ProblemSource = m.Err.Msg, "collars"
			if m.Err.Station >= 0 {
				qc.ProblemSource = "surveys"
			}
		} else {
			for i, st := range m.Stations {
				in.Surveys = append(in.Surveys, qa.Station{HoleID: h.Name, Depth: st.Depth, Azimuth: st.Azimuth, Dip: st.Dip,
					Magnetic: m.Magnetic[i]})
			}
		}
		in.Collars = append(in.Collars, qc)
		for _, r := range runs {
			in.Runs = append(in.Runs, qa.OrientationRun{HoleID: h.Name, From: r.From, To: r.To, Confidence: r.Confidence,
				Mismatch: r.Mismatch, ID: r.ID})
		}
	}
	add := func(m *storedRow) error {
		name, ok := names[m.HoleID]
		if !ok {
			// A hole created after the holes were listed: its collar
			// is not in this run, so its measurements wait for the next.
			return nil
		}
		if len(in.Measurements) >= MaxQAMeasurements {
			return domain.Errorf(domain.Invalid, "more than %d measurements in project %d: run the QA hole by hole", MaxQAMeasurements, p.ID)
		}
		in.Measurements = append(in.Measurements, qa.Measurement{HoleID: name, Depth: m.Depth, Alpha: m.Alpha, Beta: m.Beta,
			Type: m.TypeCode, Logger: m.LoggedBy, ID: m.ID})
		return nil
	}
	if holeID == 0 {
		// The whole project: its kept rows (see projectRows).
		pr, err := s.projectRows(ctx, p)
		if err != nil {
			return in, err
		}
		if pr != nil {
			in.Measurements = make([]qa.Measurement, 0, len(pr.rows))
			for i := range pr.rows {
				if err := add(&pr.rows[i]); err != nil {
					return in, err
				}
			}
			return in, nil
		}
	}
	f := domain.MeasurementFilter{ProjectID: p.ID}
	if holeID != 0 {
		f.HoleIDs = []int64{holeID}
	}
	pg := domain.Page{Limit: domain.MaxLimit}
	for {
		ms, err := s.store.ListMeasurements(ctx, f, pg)
		if err != nil {
			return in, err
		}
		for i := range ms {
			r := storedRowOf(&ms[i], "")
			if err := add(&r); err != nil {
				return in, err
			}
		}
		if len(ms) < domain.MaxLimit {
			return in, nil
		}
		pg.After = ms[len(ms)-1].ID
	}
}

// checkQAOptions refuses options qa cannot use (see [qa.Options.Check]),
// naming the option by its JSON name.
func checkQAOptions(o qa.Options) error {
	err := o.Check()
	if e, ok := err.(*qa.OptionError); ok {
		return domain.FieldErr(e.Option, "%s", e.Msg)
	}
	return err
}
