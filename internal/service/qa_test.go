package service_test

import (
	"bytes"
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"reflect"
	"testing"

	"corvane/internal/coreangle"
	"corvane/internal/demo"
	"corvane/internal/desurvey"
	"corvane/internal/domain"
	"corvane/internal/geom"
	"corvane/internal/qa"
	"corvane/internal/service"
)

// The demo programme through the service's QA: every hole has a report with
// all its stored runs and measurements, the caution is there, the survey
// stations keep their magnetic origin, and every id a finding or suggestion
// carries is the store id of a run or measurement of the project.
func TestQADemoProgramme(t *testing.T) {
	s, ctx := newService(t)
	p, _, err := s.LoadDemo(ctx)
	if err != nil {
		t.Fatal(err)
	}
	rep, err := s.QA(ctx, p.ID, 0, qa.Options{PersistentType: "bedding"})
	if err != nil {
		t.Fatal(err)
	}
	// The demo project's persistent fabric is the bedding: a QA that names
	// none runs the same fabric checks and finds the planted mark error.
	if p.PersistentFabric != "bedding" {
		t.Errorf("demo project persistent fabric %q, want bedding", p.PersistentFabric)
	}
	byDefault := must(s.QA(ctx, p.ID, 0, qa.Options{}))
	if !reflect.DeepEqual(byDefault.Holes, rep.Holes) {
		t.Error("QA without a persistent type differs from QA with the project's persistent fabric")
	}
	if none := must(s.QA(ctx, p.ID, 0, qa.Options{PersistentType: "no-such-type"})); reflect.DeepEqual(none.Holes, rep.Holes) {
		t.Error("the fabric checks found the same with a type no measurement has: the comparison above cannot fail")
	}
	if rep.Caution != qa.Caution || rep.Caution == "" {
		t.Errorf("caution %q, want package qa's", rep.Caution)
	}
	if want := "bottom/downhole/clockwise"; rep.Convention != want { // the demo's convention
		t.Errorf("convention %q, want %q", rep.Convention, want)
	}
	holes := must(s.ListHoles(ctx, p.ID, domain.Page{Limit: 1000})).Items
	d := demo.Programme()
	if len(holes) != len(d.Collars) || len(rep.Holes) != len(holes) || rep.Summary.Holes != len(holes) {
		t.Fatalf("%d holes stored, %d in the demo, %d in the report (summary %d)", len(holes), len(d.Collars), len(rep.Holes), rep.Summary.Holes)
	}
	if rep.Summary.Measurements != len(d.Structures) || rep.Summary.Runs != len(d.Runs) {
		t.Errorf("summary counts %d measurements and %d runs; the demo has %d and %d",
			rep.Summary.Measurements, rep.Summary.Runs, len(d.Structures), len(d.Runs))
	}
	runIDs := map[int64]bool{}
	for _, h := range holes {
		hr := qaHole(t, rep, h.Name)
		runs := must(s.ListRuns(ctx, p.ID, h.ID))
		if len(hr.Runs) != len(runs) {
			t.Errorf("hole %s: %d runs in the report, %d stored", h.Name, len(hr.Runs), len(runs))
		}
		for i, r := range runs {
			runIDs[r.ID] = true
			if i < len(hr.Runs) && hr.Runs[i].ID != r.ID {
				t.Errorf("hole %s run %d: id %d, store id %d", h.Name, i, hr.Runs[i].ID, r.ID)
			}
		}
		ss := must(s.GetSurvey(ctx, p.ID, h.ID))
		if len(hr.Stations) != len(ss.Stations) {
			t.Errorf("hole %s: %d stations in the report, %d stored", h.Name, len(hr.Stations), len(ss.Stations))
		}
		for _, st := range hr.Stations {
			if st.Magnetic != (ss.AzimuthRef == domain.AzimuthMagnetic) {
				t.Errorf("hole %s station %v: magnetic %v, survey set measured against %s", h.Name, st.Depth, st.Magnetic, ss.AzimuthRef)
			}
		}
	}
	idOK := func(id int64, source string) bool {
		if source == "runs" {
			return runIDs[id]
		}
		_, err := s.GetMeasurement(ctx, p.ID, id)
		return err == nil
	}
	for _, f := range rep.Findings {
		if f.ID != 0 && !idOK(f.ID, f.Source) {
			t.Errorf("finding %s at %s %v carries id %d, not a stored %s row", f.Check, f.HoleID, f.Depth, f.ID, f.Source)
		}
	}
	for _, hr := range rep.Holes {
		for _, rr := range hr.Runs {
			for _, sg := range rr.Suggestions {
				if sg.ID == 0 || !idOK(sg.ID, "structures") {
					t.Errorf("suggestion at %s %v carries id %d, not a stored measurement", hr.HoleID, sg.Depth, sg.ID)
				}
			}
		}
	}
	t.Logf("demo QA: %d findings %v", len(rep.Findings), rep.Summary.BySeverity)

	// The demo's surveys are magnetic, its collars placed by crs: the QA
	// stations are in grid azimuths, magnetic + D - C (conventions.md), with
	// the declination and convergence the derived values use, so a
	// measurement at a station depth has the station's azimuth as its hole
	// azimuth. Checked hole by hole, which also runs the one-hole QA.
	for _, h := range holes {
		ss := must(s.GetSurvey(ctx, p.ID, h.ID))
		st := ss.Stations[1]
		v := must(s.CreateMeasurement(ctx, p.ID, domain.Measurement{HoleID: h.ID, Depth: st.Depth, Alpha: 45, Beta: f64(30), TypeCode: "joint"}))
		if v.Derived.Declination == nil || v.Derived.GridConvergence == nil || v.Derived.ConvergenceSource != "computed" {
			t.Fatalf("hole %s: derived corrections %+v", h.Name, v.Derived)
		}
		one := must(s.QA(ctx, p.ID, h.ID, qa.Options{PersistentType: "bedding"}))
		if len(one.Holes) != 1 || one.Holes[0].HoleID != h.Name || one.Caution == "" {
			t.Fatalf("one-hole QA of %s: %d holes", h.Name, len(one.Holes))
		}
		got := one.Holes[0].Stations[1]
		want := geom.NormAzimuth(st.Azimuth + *v.Derived.Declination - *v.Derived.GridConvergence)
		if math.Abs(got.Azimuth-want) > 1e-9 || !got.Magnetic {
			t.Errorf("hole %s station %v: azimuth %.6f magnetic %v, want %.6f from a magnetic shot", h.Name, st.Depth, got.Azimuth, got.Magnetic, want)
		}
		near(t, h.Name+" derived hole azimuth at the station", v.Derived.HoleAzimuth, got.Azimuth, 1e-9)
	}
}

func qaHole(t *testing.T, rep qa.Report, name string) *qa.HoleReport {
	t.Helper()
	for i := range rep.Holes {
		if rep.Holes[i].HoleID == name {
			return &rep.Holes[i]
		}
	}
	t.Fatalf("no QA report for hole %s", name)
	return nil
}

// qaFixture is a hole built through the service from known geometry.
type qaFixture struct {
	p      domain.Project
	h      domain.Hole
	runs   []domain.Run
	grid   []domain.Station       // the survey in grid azimuths (the truth)
	planes map[float64]geom.Plane // the true plane of each stored measurement, by depth
}

const (
	qaDecl = 5.0 // declination of the survey set, degrees (true = magnetic + D)
	qaConv = 1.5 // the project's grid convergence, degrees (grid = true - C)
)

// buildQAHole stores a 120 m hole (collar 070/-60 grid, curving gently) with
// a magnetic survey every 30 m, 40 runs of 3 m, and in each run six bedding
// planes (050/40 true orientation) and one joint (200/75), 3 degrees of
// noise, turned into alpha/beta by the engine's inverse (coreangle.Angles) on
// the grid path. rotations adds a mark error to the logged betas of a run.
func buildQAHole(t *testing.T, s *service.Service, ctx context.Context, rotations map[int]float64) qaFixture {
	t.Helper()
	var fx qaFixture
	fx.p = must(s.CreateProject(ctx, domain.Project{Name: "Kestrel Flats QA", Convergence: f64(qaConv)}))
	for _, c := range []string{"BD", "JN"} {
		mustPut(s.PutTypeCode(ctx, fx.p.ID, domain.TypeCode{Code: c}))
	}
	fx.h = must(s.CreateHole(ctx, fx.p.ID, domain.Hole{Name: "KF001", East: 5000, North: 8000, Elevation: 420, Azimuth: 70, Dip: -60, FinalDepth: 120}))
	var mag []domain.Station
	var ds []desurvey.Station
	for d := 30.0; d <= 120; d += 30 {
		g := domain.Station{Depth: d, Azimuth: 70 + 0.5*d/30, Dip: -60 + d/30}
		fx.grid = append(fx.grid, g)
		ds = append(ds, desurvey.Station{Depth: g.Depth, Azimuth: g.Azimuth, Dip: g.Dip})
		// Stored as magnetic: magnetic = grid + C - D (conventions.md).
		mag = append(mag, domain.Station{Depth: d, Azimuth: geom.NormAzimuth(g.Azimuth + qaConv - qaDecl), Dip: g.Dip})
	}
	must(s.PutSurvey(ctx, fx.p.ID, fx.h.ID, 0, domain.SurveySet{AzimuthRef: domain.AzimuthMagnetic, Declination: f64(qaDecl), Stations: mag}))
	path, err := desurvey.New(desurvey.Collar{East: 5000, North: 8000, Elevation: 420, Azimuth: 70, Dip: -60, Depth: 120}, ds, desurvey.MinimumCurvature)
	if err != nil {
		t.Fatal(err)
	}
	r := rand.New(rand.NewPCG(7, 11))
	noisy := func(n geom.Vec3) geom.Vec3 {
		sd := geom.Rad(3)
		return n.Add(geom.Vec3{X: sd * r.NormFloat64(), Y: sd * r.NormFloat64(), Z: sd * r.NormFloat64()}).Unit()
	}
	bedding := geom.Plane{Dip: 40, DipDirection: 50}.Normal()
	joint := geom.Plane{Dip: 75, DipDirection: 200}.Normal()
	const runLen, perRun = 3.0, 6
	fx.planes = map[float64]geom.Plane{}
	var csv bytes.Buffer
	csv.WriteString("hole_id,depth,alpha,beta,type\n")
	for k := 0; k < 40; k++ {
		from := float64(k) * runLen
		fx.runs = append(fx.runs, must(s.CreateRun(ctx, fx.p.ID, fx.h.ID, domain.Run{From: from, To: from + runLen, Confidence: "good", Mismatch: f64(0)})))
		for j := 0; j <= perRun; j++ {
			typ, n := "BD", bedding
			if j == perRun {
				typ, n = "JN", joint
			}
			depth := math.Round((from+(float64(j)+0.2+0.6*r.Float64())*runLen/(perRun+1))*100) / 100
			pt, err := path.At(depth)
			if err != nil {
				t.Fatal(err)
			}
			pl := geom.PlaneOf(noisy(n))
			a, b, _ := coreangle.Angles(pt.Dir, pl, coreangle.Convention{})
			b = geom.NormAzimuth(math.Round(geom.NormAzimuth(b+rotations[k])*10) / 10)
			a = math.Round(a*10) / 10
			fmt.Fprintf(&csv, "%s,%.2f,%.1f,%.1f,%s\n", fx.h.Name, depth, a, b, typ)
			fx.planes[depth] = pl
		}
	}
	// One import (one transaction) rather than a request per measurement.
	must(s.Import(ctx, fx.p.ID, service.ImportRequest{Kind: service.ImportMeasurements, File: "kf001.csv", Body: &csv}))
	return fx
}

// A run logged with its mark turned by a known angle (a constant beta
// offset) is found by the QA through the service: the estimated correction
// is minus the injected error within 3 degrees, it is the only flagged run,
// and the finding carries the store id of that run. The survey stations come
// to the QA in grid azimuths: magnetic + D - C (conventions.md), the same as
// the hole direction of the derived values at a station depth.
func TestQAFindsRotatedRun(t *testing.T) {
	s, ctx := newService(t)
	const bad, injected = 17, 30.0
	fx := buildQAHole(t, s, ctx, map[int]float64{bad: injected})

	// A measurement exactly at a station: its derived hole azimuth is the
	// station's azimuth in the output reference.
	atStation := must(s.CreateMeasurement(ctx, fx.p.ID, domain.Measurement{HoleID: fx.h.ID, Depth: 60, Alpha: 40, Beta: f64(20), TypeCode: "JN"}))

	rep, err := s.QA(ctx, fx.p.ID, fx.h.ID, qa.Options{PersistentType: "bd"})
	if err != nil {
		t.Fatal(err)
	}
	hr := qaHole(t, rep, fx.h.Name)
	if len(hr.Stations) != len(fx.grid) {
		t.Fatalf("%d stations, want %d", len(hr.Stations), len(fx.grid))
	}
	for i, st := range hr.Stations {
		if d := math.Abs(st.Azimuth - fx.grid[i].Azimuth); d > 1e-9 || !st.Magnetic {
			t.Errorf("station %v: azimuth %.6f magnetic %v, want grid %.6f from a magnetic shot", st.Depth, st.Azimuth, st.Magnetic, fx.grid[i].Azimuth)
		}
		if st.Depth == 60 {
			near(t, "derived hole azimuth at the station", atStation.Derived.HoleAzimuth, st.Azimuth, 1e-9)
		}
	}
	if math.Abs(hr.Azimuth-70) > 1e-9 {
		t.Errorf("collar azimuth %v, want 70 (grid, as stored)", hr.Azimuth)
	}

	var flagged []int
	for k, rr := range hr.Runs {
		if rr.ID != fx.runs[k].ID {
			t.Fatalf("run %d: id %d, store id %d", k, rr.ID, fx.runs[k].ID)
		}
		if rr.Rotation != nil && rr.Rotation.Flagged {
			flagged = append(flagged, k)
		}
	}
	if len(flagged) != 1 || flagged[0] != bad {
		t.Fatalf("flagged runs %v, want only run %d", flagged, bad)
	}
	est := hr.Runs[bad].Rotation
	if d := math.Abs(math.Remainder(est.Offset+injected, 360)); d > 3 {
		t.Errorf("estimated beta offset %.2f, want %.2f within 3 deg", est.Offset, -injected)
	}
	var found bool
	for _, f := range rep.Findings {
		if f.Check == qa.CheckMarkRotation && f.Severity == qa.SeverityFlag {
			found = true
			if f.ID != fx.runs[bad].ID || f.Source != "runs" || f.Depth != fx.runs[bad].From {
				t.Errorf("rotation finding id %d source %q depth %v, want run id %d at %v", f.ID, f.Source, f.Depth, fx.runs[bad].ID, fx.runs[bad].From)
			}
		}
	}
	if !found {
		t.Error("no mark-rotation flag among the findings")
	}
	// The suggestions carry store ids and the corrected orientation lies
	// near the true plane (the 3 degree logging noise aside).
	byID := map[int64]geom.Plane{}
	for _, m := range must(s.ListMeasurements(ctx, fx.p.ID, service.MeasurementQuery{}, domain.Page{Limit: 1000})).Items {
		if pl, ok := fx.planes[m.Depth]; ok {
			byID[m.ID] = pl
		}
	}
	sg := hr.Runs[bad].Suggestions
	if len(sg) == 0 {
		t.Fatal("flagged run without suggestions")
	}
	for _, x := range sg {
		want, ok := byID[x.ID]
		if !ok {
			t.Fatalf("suggestion id %d is not a stored measurement", x.ID)
		}
		got := geom.Plane{Dip: x.SuggestedDip, DipDirection: x.SuggestedDipDirection}
		if a := geom.AxialAngle(got.Normal(), want.Normal()); a > 15 {
			t.Errorf("suggestion for id %d is %.1f deg from the true plane", x.ID, a)
		}
	}
}

// Reference picks and magnetic zones pass through to the QA: matched picks
// carry the store id of the core measurement, a magnetic shot in a marked
// zone is flagged, and picks of another hole are refused in a one-hole QA.
func TestQAPicksAndMagneticZones(t *testing.T) {
	s, ctx := newService(t)
	fx := buildQAHole(t, s, ctx, nil)
	ms := must(s.ListMeasurements(ctx, fx.p.ID, service.MeasurementQuery{}, domain.Page{Limit: 1000})).Items
	ids := map[int64]bool{}
	var picks []qa.Pick
	for _, m := range ms {
		ids[m.ID] = true
		if pl := fx.planes[m.Depth]; m.Depth >= 30 && m.Depth < 60 { // true planes, grid azimuths, same depth scale
			picks = append(picks, qa.Pick{HoleID: fx.h.Name, Depth: m.Depth, Dip: pl.Dip, DipDirection: pl.DipDirection})
		}
	}
	rep, err := s.QAWith(ctx, fx.p.ID, 0, service.QARequest{Options: qa.Options{PersistentType: "BD"}, Picks: picks,
		MagneticZones: []qa.MagneticZone{{HoleID: fx.h.Name, From: 85, To: 95}}})
	if err != nil {
		t.Fatal(err)
	}
	hp := qaHole(t, rep, fx.h.Name).Picks
	if hp == nil || hp.Matched < len(picks)*9/10 {
		t.Fatalf("picks: %+v, want most of %d matched", hp, len(picks))
	}
	if math.Abs(hp.Shift) > 0.05 {
		t.Errorf("depth shift %.3f, the picks are on the core's own depths", hp.Shift)
	}
	for _, m := range hp.Matches {
		if !ids[m.MeasurementID] {
			t.Errorf("pick match carries measurement id %d, not a stored row", m.MeasurementID)
		}
	}
	var zone bool
	for _, f := range rep.Findings {
		zone = zone || (f.Check == qa.CheckMagneticZone && f.Depth == 90 && f.Station == 3)
	}
	if !zone {
		t.Error("the magnetic shot at 90 m in the marked zone is not flagged")
	}
	_, err = s.QAWith(ctx, fx.p.ID, fx.h.ID, service.QARequest{Picks: []qa.Pick{{HoleID: "KF999", Depth: 5, Dip: 10, DipDirection: 20}}})
	wantKind(t, err, domain.Invalid, "pick of another hole in a one-hole QA")
	if e, ok := err.(*domain.Error); !ok || e.Loc.Field != "picks[0].hole_id" {
		t.Errorf("error %v does not name picks[0].hole_id", err)
	}
	_, err = s.QA(ctx, fx.p.ID, 0, qa.Options{Reference: "sideways"})
	wantKind(t, err, domain.Invalid, "unknown fabric reference")
	_, err = s.QA(ctx, fx.p.ID, 0, qa.Options{DoglegThreshold: math.NaN()})
	wantKind(t, err, domain.Invalid, "dogleg threshold not a number")
}

// QA is a read: a read token of the project may run it; a token of another
// project is refused, a hole of another project is not found, and a caller
// without a token is unauthorised — as for the other service methods.
func TestQARolesAndProjects(t *testing.T) {
	s, admin := newService(t)
	p, h := programme(t, s, admin, domain.Project{})
	q, qh := programme(t, s, admin, domain.Project{Name: "other"})
	must(s.CreateMeasurement(admin, p.ID, domain.Measurement{HoleID: h.ID, Depth: 10, Alpha: 40, Beta: f64(100), TypeCode: "BD"}))
	secret, _ := mustToken(t, s, admin, p.ID, domain.RoleRead)
	rctx := service.WithActor(context.Background(), must(s.Authenticate(admin, secret)))

	for _, hid := range []int64{0, h.ID} {
		rep, err := s.QA(rctx, p.ID, hid, qa.Options{})
		if err != nil {
			t.Fatalf("read token, hole %d: %v", hid, err)
		}
		if len(rep.Holes) != 1 || rep.Holes[0].HoleID != h.Name || rep.Summary.Measurements != 1 || rep.Caution == "" {
			t.Errorf("read token, hole %d: holes %d, measurements %d", hid, len(rep.Holes), rep.Summary.Measurements)
		}
	}
	_, err := s.QA(rctx, q.ID, 0, qa.Options{})
	wantKind(t, err, domain.Forbidden, "read token of another project")
	_, err = s.QA(rctx, q.ID, qh.ID, qa.Options{})
	wantKind(t, err, domain.Forbidden, "read token, hole of another project")
	_, err = s.QA(admin, p.ID, qh.ID, qa.Options{})
	wantKind(t, err, domain.NotFound, "hole of another project through this project")
	_, err = s.QA(context.Background(), p.ID, 0, qa.Options{})
	wantKind(t, err, domain.Unauthorized, "no actor")
	_, err = s.QA(admin, 999999, 0, qa.Options{})
	wantKind(t, err, domain.NotFound, "no such project")
	// The project's own hole count matters: the other project's hole is not
	// in this project's report.
	rep := must(s.QA(admin, q.ID, 0, qa.Options{}))
	if len(rep.Holes) != 1 || rep.Holes[0].HoleID != qh.Name || rep.Summary.Measurements != 0 {
		t.Errorf("project %d report: %d holes, %d measurements", q.ID, len(rep.Holes), rep.Summary.Measurements)
	}
}
