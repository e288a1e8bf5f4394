// Package demo generates Zelvorra Reach, corvane's fictional demonstration
// prospect: eight inclined, curving diamond holes with magnetic surveys,
// orientation runs rated by confidence, and a few hundred oriented-core
// measurements from four structure sets (bedding, two joint sets and a fault
// set with slickenline lineations).
//
// The scenario is invented: the name is made up, the collars are placed on
// purpose in open ocean (WGS 84 / UTM zone 50S, near 41.55 S 116.18 E in the
// Southern Ocean, far from any coast), and the loggers are L1, L2 and L3.
// Gamma is logged only on the line type (slickenline, the fault plane with
// its lineation); plane types never carry one (the rule of
// domain.CheckKind).
//
// The data are made by forward modelling: true planes and lines are drawn
// around each set's mean (Fisher-distributed), sampled with the bias of a
// drill hole (planes at a low angle to the hole are seldom intersected),
// turned into the alpha, beta and gamma the core would show with
// [coreangle.Angles] and [coreangle.Gamma] on the desurveyed hole, and then
// given a few degrees of logging noise and, on poorly rated runs, a rotation
// of the orientation mark. Survey azimuths are written against magnetic north
// using the declination and grid convergence that package northref computes
// for the collar and survey date, so converting the files with corvane
// recovers grid orientations.
//
// Everything is deterministic: [Programme] returns the same values every
// time, and the CSV files in testdata/zelvorra are exactly what [WriteCSV]
// writes (a test checks it; regenerate with go test ./internal/demo -update).
package demo

import (
	"encoding/csv"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"time"

	"corvane/internal/coreangle"
	"corvane/internal/desurvey"
	"corvane/internal/geom"
	"corvane/internal/northref"
)

// Collar is a hole's collar. Azimuth is against grid north.
type Collar struct {
	HoleID                 string
	East, North, Elevation float64 // metres, WGS 84 / UTM zone 50S
	Azimuth, Dip           float64 // degrees; dip negative downward
	Depth                  float64 // final depth, m
	AzimuthRef             string  // "grid"
	CRS                    string  // "EPSG:32750"
}

// Survey is one downhole survey station; azimuths against magnetic north.
type Survey struct {
	HoleID       string
	Depth        float64
	Azimuth, Dip float64
	AzimuthRef   string // "magnetic"
	Date         string // YYYY-MM-DD
}

// Run is one orientation run.
type Run struct {
	HoleID     string
	From, To   float64
	Confidence string  // good, fair, poor or none
	Mismatch   float64 // degrees at the join with the run above; NaN when not measured
}

// Structure is one logged measurement.
type Structure struct {
	HoleID      string
	Depth       float64
	Alpha, Beta float64
	Gamma       float64 // NaN when there is no lineation
	Type        string  // bedding, joint, fault (planes) or slickenline (a line: fault plane and gamma)
	Comment     string
	LoggedBy    string
	ApparentThk float64 // along-core thickness (fault zones), NaN otherwise
	Set         string  // the set it was drawn from (not written to CSV): S0, J1, J2, F1
	TruePlane   geom.Plane
	TrueLine    geom.Line // when Gamma is set
	HoleDir     geom.Vec3 // grid down-hole direction used in the forward model
	RunRotation float64   // mark rotation of the run applied to beta, degrees
}

// Set is a structure set of the prospect: mean plane and Fisher
// concentration.
type Set struct {
	Name  string // S0, J1, J2, F1
	Type  string
	Mean  geom.Plane
	Kappa float64
	// Pitch of the lineation on the plane, degrees from the strike line
	// (right-hand strike); NaN for sets without lineations.
	Pitch float64
	// LineType is the type code of a measurement of this set that logs the
	// lineation (a line type, with gamma); "" when the set's lineation is
	// not logged.
	LineType string
	share    float64
}

// Data is the whole demonstration programme.
type Data struct {
	Name        string
	Description string
	// Convention words of the programme (those of corvane convert).
	RefLine, BetaApex, GammaSense string
	OutputReference               string // grid
	LengthUnit                    string // m
	// PersistentFabric is the structure type that runs through every hole
	// (the bedding), the project setting QA's fabric checks use.
	PersistentFabric string
	Sets             []Set
	Collars          []Collar
	Surveys          []Survey
	Runs             []Run
	Structures       []Structure
}

// Sets returns the four structure sets of Zelvorra Reach.
func sets() []Set {
	return []Set{
		{Name: "S0", Type: "bedding", Mean: geom.Plane{Dip: 38, DipDirection: 118}, Kappa: 60, Pitch: 25, share: 0.40},
		{Name: "J1", Type: "joint", Mean: geom.Plane{Dip: 78, DipDirection: 212}, Kappa: 35, Pitch: math.NaN(), share: 0.25},
		{Name: "J2", Type: "joint", Mean: geom.Plane{Dip: 62, DipDirection: 322}, Kappa: 30, Pitch: math.NaN(), share: 0.20},
		{Name: "F1", Type: "fault", Mean: geom.Plane{Dip: 55, DipDirection: 38}, Kappa: 40, Pitch: 80, LineType: LineType, share: 0.15},
	}
}

// LineType is the demo's one line type: a fault plane logged with its
// slickenline (gamma). The other types are planes.
const LineType = "slickenline"

// loggers are neutral tags, not anyone's initials.
var loggers = []string{"L1", "L2", "L3"}

// Kind returns the kind of one of the demo's type codes: "line" for
// LineType, else "plane".
func Kind(typeCode string) string {
	if typeCode == LineType {
		return "line"
	}
	return "plane"
}

// Programme returns the Zelvorra Reach programme. It is deterministic.
func Programme() Data {
	r := rand.New(rand.NewPCG(2026, 1117))
	d := Data{
		Name:            "Zelvorra Reach",
		Description:     "Fictional demonstration prospect: eight oriented diamond holes through folded metasediments cut by two joint sets and a fault set.",
		RefLine:         "bottom",
		BetaApex:        "downhole",
		GammaSense:      "clockwise",
		OutputReference: "grid",
		LengthUnit:      "m",
		Sets:            sets(),
	}
	d.PersistentFabric = d.Sets[0].Type // the bedding
	type plan struct {
		az, dip, depth float64
		date           string
	}
	plans := []plan{
		{20, -60, 250.3, "2026-03-04"}, {35, -55, 312.6, "2026-03-11"}, {300, -65, 185.0, "2026-03-19"},
		{165, -50, 396.4, "2026-04-02"}, {90, -70, 150.2, "2026-04-09"}, {250, -75, 274.8, "2026-04-21"},
		{340, -58, 338.1, "2026-05-05"}, {200, -62, 221.5, "2026-05-14"},
	}
	for i, p := range plans {
		c := Collar{
			HoleID: fmt.Sprintf("ZR%03d", i+1),
			// Open ocean on purpose (about 41.55 S 116.18 E).
			East:      round(431250+float64(i%4)*180+r.Float64()*40, 2),
			North:     round(5400000+float64(i/4)*220+r.Float64()*40, 2),
			Elevation: round(388+r.Float64()*25, 2),
			Azimuth:   p.az, Dip: p.dip, Depth: p.depth,
			AzimuthRef: "grid", CRS: "EPSG:32750",
		}
		d.Collars = append(d.Collars, c)
		date, _ := time.Parse(time.DateOnly, p.date)
		corr, err := northref.Corrections(c.CRS, c.East, c.North, c.Elevation, date, true, true)
		if err != nil {
			panic("demo: corrections for a fixed collar failed: " + err.Error())
		}
		// Grid stations every 30 m from 15 m, the hole lifting and turning
		// slowly; the last station a little above the final depth.
		var grid []desurvey.Station
		az, dip := p.az, p.dip
		turn := 0.5 + r.Float64()*0.8
		if i%2 == 1 {
			turn = -turn
		}
		for md := 15.0; md < p.depth-5; md += 30 {
			az = geom.NormAzimuth(az + turn + r.NormFloat64()*0.3)
			dip = math.Min(-30, dip+0.45+r.NormFloat64()*0.25)
			g := desurvey.Station{Depth: md, Azimuth: round(az, 1), Dip: round(dip, 1)}
			grid = append(grid, g)
			// grid = magnetic + D - C, so magnetic = grid - D + C.
			d.Surveys = append(d.Surveys, Survey{HoleID: c.HoleID, Depth: md,
				Azimuth: round(geom.NormAzimuth(g.Azimuth-corr.Declination+corr.Convergence), 1), Dip: g.Dip,
				AzimuthRef: "magnetic", Date: p.date})
		}
		// The path the converter will rebuild, from the rounded magnetic values.
		var back []desurvey.Station
		for _, s := range d.Surveys[len(d.Surveys)-len(grid):] {
			back = append(back, desurvey.Station{Depth: s.Depth, Azimuth: geom.NormAzimuth(s.Azimuth + corr.Declination - corr.Convergence), Dip: s.Dip})
		}
		path, err := desurvey.New(desurvey.Collar{East: c.East, North: c.North, Elevation: c.Elevation, Azimuth: c.Azimuth, Dip: c.Dip, Depth: c.Depth}, back, desurvey.MinimumCurvature)
		if err != nil {
			panic("demo: desurvey of a fixed hole failed: " + err.Error())
		}
		d.runsAndStructures(r, c, path, i == misreadHole)
	}
	return d
}

// The planted mark error: in the hole with index misreadHole, the run that
// contains misreadDepth carries a mark that was misread by misreadRotation
// degrees (every beta in it is off by that much), the logger noticed a large
// step at the run break, and the bedding there was logged closely — so the QA
// can find the rotation from the persistent bedding fabric.
const (
	misreadHole     = 3
	misreadDepth    = 201.0
	misreadRotation = 40.0
	misreadMismatch = 38.5
	misreadBedding  = 7
)

// runsAndStructures adds the orientation runs of a hole and the structures
// logged in them. When misread is true, the run holding misreadDepth gets the
// planted mark error described at misreadHole.
func (d *Data) runsAndStructures(r *rand.Rand, c Collar, path *desurvey.Path, misread bool) {
	from := round(6+r.Float64()*6, 2) // orientation starts below the broken top of hole
	for from < c.Depth-1 {
		to := round(math.Min(c.Depth, from+2.6+r.Float64()*0.8), 2)
		run := Run{HoleID: c.HoleID, From: from, To: to}
		var spread float64
		switch u := r.Float64(); {
		case u < 0.70:
			run.Confidence, spread = "good", 2
			run.Mismatch = round(math.Abs(r.NormFloat64())*2.5, 1)
		case u < 0.88:
			run.Confidence, spread = "fair", 6
			run.Mismatch = round(3+r.Float64()*6.5, 1)
		case u < 0.96:
			run.Confidence, spread = "poor", 15
			run.Mismatch = round(15+r.Float64()*25, 1)
		default:
			run.Confidence = "none"
			run.Mismatch = math.NaN()
		}
		planted := misread && from <= misreadDepth && misreadDepth < to
		if planted {
			run.Confidence, run.Mismatch = "fair", misreadMismatch
		}
		d.Runs = append(d.Runs, run)
		if run.Confidence != "none" {
			rot := r.NormFloat64() * spread
			if planted {
				rot = misreadRotation
			}
			// About 0.2 measurements per metre of oriented core, logged
			// down the run.
			depths := make([]float64, poisson(r, 0.2*(to-from)))
			for i := range depths {
				depths[i] = from + r.Float64()*(to-from)
			}
			if planted {
				// Close logging of bedding in the misread run, drawn from
				// a generator of its own so the rest of the programme is
				// the same as without the planted error.
				r2 := rand.New(rand.NewPCG(7, 40))
				first := len(d.Structures)
				for k := 0; k < misreadBedding; k++ {
					d.structureOf(r2, c, path, round(from+(float64(k)+0.5)*(to-from)/misreadBedding, 2), rot, 0)
				}
				extra := slices.Clone(d.Structures[first:])
				d.Structures = d.Structures[:first]
				defer func() { d.insertSorted(c.HoleID, extra) }()
			}
			slices.Sort(depths)
			for _, md := range depths {
				d.structure(r, c, path, md, rot)
			}
		}
		from = to
	}
}

// insertSorted places extra structures of one hole among that hole's
// structures in depth order.
func (d *Data) insertSorted(hole string, extra []Structure) {
	for _, s := range extra {
		i := len(d.Structures)
		for i > 0 && d.Structures[i-1].HoleID == hole && d.Structures[i-1].Depth > s.Depth {
			i--
		}
		d.Structures = slices.Insert(d.Structures, i, s)
	}
}

// structure draws one measurement at depth md from a set chosen at random by
// the sets' shares, retrying until the drill-hole sampling bias accepts a plane.
func (d *Data) structure(r *rand.Rand, c Collar, path *desurvey.Path, md, rot float64) {
	d.structureOf(r, c, path, md, rot, -1)
}

// structureOf is structure with the set fixed by its index (-1: drawn by
// share).
func (d *Data) structureOf(r *rand.Rand, c Collar, path *desurvey.Path, md, rot float64, fixed int) {
	pt, err := path.At(md)
	if err != nil {
		panic("demo: depth inside a fixed hole failed: " + err.Error())
	}
	h := pt.Dir
	for {
		k := fixed
		if k < 0 {
			u := r.Float64()
			for k = 0; k < len(d.Sets)-1 && u > d.Sets[k].share; k++ {
				u -= d.Sets[k].share
			}
		}
		set := d.Sets[k]
		pole := fisher(r, set.Mean.Normal(), set.Kappa)
		p := geom.PlaneOf(pole)
		alpha, beta, w := coreangle.Angles(h, p, coreangle.Convention{})
		// Terzaghi-style sampling bias: a plane is cut with probability
		// proportional to sin(alpha).
		if r.Float64() > math.Sin(geom.Rad(alpha)) || w.Has(coreangle.Vertical) {
			continue
		}
		s := Structure{HoleID: c.HoleID, Depth: round(md, 2), Type: set.Type, Set: set.Name,
			TruePlane: p, HoleDir: h, RunRotation: rot,
			Gamma: math.NaN(), ApparentThk: math.NaN(), LoggedBy: loggers[r.IntN(len(loggers))]}
		s.Alpha = clamp(math.Round(alpha+r.NormFloat64()*1.5), 0, 90)
		s.Beta = geom.NormAzimuth(math.Round(beta + rot + r.NormFloat64()*2))
		if !math.IsNaN(set.Pitch) && r.Float64() < 0.6 {
			pitch := set.Pitch + r.NormFloat64()*6
			strike := geom.FromTrendPlunge(p.Strike(), 0)
			dipv := p.DipVector()
			sp, cp := math.Sincos(geom.Rad(pitch))
			l := geom.LineOf(strike.Scale(cp).Add(dipv.Scale(sp)))
			// The draws are made for every set with a pitch (the bedding's
			// lineation is seen but not logged), so the programme's random
			// sequence does not depend on which lineations are logged.
			if g, err := coreangle.Gamma(h, p, l, coreangle.Convention{}); err == nil {
				noise := r.NormFloat64() * 3
				if set.LineType != "" {
					s.TrueLine = l
					s.Gamma = geom.NormAzimuth(math.Round(g + noise))
					s.Type = set.LineType
				}
			}
		}
		switch set.Type {
		case "fault":
			s.ApparentThk = round(0.02+r.ExpFloat64()*0.15, 2)
			s.Comment = []string{"clay gouge", "slickensides", "crush zone, broken core", "chlorite coated"}[r.IntN(4)]
		case "joint":
			s.Comment = []string{"", "", "iron stained", "open", "calcite filled"}[r.IntN(5)]
		default:
			s.Comment = []string{"", "", "graded bed", "laminated siltstone"}[r.IntN(4)]
		}
		d.Structures = append(d.Structures, s)
		return
	}
}

// fisher draws a unit vector from the Fisher distribution about mean with
// concentration kappa (Fisher 1953; inverse-CDF sampling of the colatitude:
// cos t = 1 + ln(u + (1-u) exp(-2 kappa)) / kappa, azimuth uniform).
func fisher(r *rand.Rand, mean geom.Vec3, kappa float64) geom.Vec3 {
	u := r.Float64()
	w := 1 + math.Log(u+(1-u)*math.Exp(-2*kappa))/kappa
	st := math.Sqrt(math.Max(0, 1-w*w))
	phi := 2 * math.Pi * r.Float64()
	// Orthonormal basis around mean.
	a := geom.Vec3{X: 1}
	if math.Abs(mean.X) > 0.9 {
		a = geom.Vec3{Y: 1}
	}
	e1 := mean.Cross(a).Unit()
	e2 := mean.Cross(e1)
	return mean.Scale(w).Add(e1.Scale(st * math.Cos(phi))).Add(e2.Scale(st * math.Sin(phi)))
}

// poisson draws a Poisson count with mean m (Knuth's method; m is small).
func poisson(r *rand.Rand, m float64) int {
	l, k, p := math.Exp(-m), 0, 1.0
	for {
		p *= r.Float64()
		if p <= l {
			return k
		}
		k++
	}
}

func round(v float64, dec int) float64 {
	s := math.Pow10(dec)
	return math.Round(v*s) / s
}

func clamp(v, lo, hi float64) float64 { return math.Max(lo, math.Min(hi, v)) }

// File names written by WriteCSV.
const (
	CollarsFile    = "collars.csv"
	SurveysFile    = "surveys.csv"
	RunsFile       = "runs.csv"
	StructuresFile = "structures.csv"
)

// WriteCSV writes collars.csv, surveys.csv, runs.csv and structures.csv of d
// into dir.
func (d Data) WriteCSV(dir string) error {
	for name, write := range map[string]func(io.Writer) error{
		CollarsFile: d.writeCollars, SurveysFile: d.writeSurveys, RunsFile: d.writeRuns, StructuresFile: d.writeStructures,
	} {
		f, err := os.Create(filepath.Join(dir, name))
		if err != nil {
			return err
		}
		if err := write(f); err != nil {
			f.Close()
			return fmt.Errorf("%s: %w", name, err)
		}
		if err := f.Close(); err != nil {
			return err
		}
	}
	return nil
}

func num(v float64, dec int) string {
	if math.IsNaN(v) {
		return ""
	}
	return strconv.FormatFloat(v, 'f', dec, 64)
}

func writeAll(w io.Writer, header []string, rows [][]string) error {
	cw := csv.NewWriter(w)
	cw.Write(header)
	cw.WriteAll(rows)
	return cw.Error()
}

func (d Data) writeCollars(w io.Writer) error {
	var rows [][]string
	for _, c := range d.Collars {
		rows = append(rows, []string{c.HoleID, num(c.East, 2), num(c.North, 2), num(c.Elevation, 2), num(c.Azimuth, 1), num(c.Dip, 1), num(c.Depth, 1), c.AzimuthRef, c.CRS})
	}
	return writeAll(w, []string{"hole_id", "easting", "northing", "elevation", "azimuth", "dip", "depth", "azimuth_reference", "crs"}, rows)
}

func (d Data) writeSurveys(w io.Writer) error {
	var rows [][]string
	for _, s := range d.Surveys {
		rows = append(rows, []string{s.HoleID, num(s.Depth, 1), num(s.Azimuth, 1), num(s.Dip, 1), s.AzimuthRef, s.Date})
	}
	return writeAll(w, []string{"hole_id", "depth", "azimuth", "dip", "azimuth_reference", "survey_date"}, rows)
}

func (d Data) writeRuns(w io.Writer) error {
	var rows [][]string
	for _, r := range d.Runs {
		rows = append(rows, []string{r.HoleID, num(r.From, 2), num(r.To, 2), r.Confidence, num(r.Mismatch, 1)})
	}
	return writeAll(w, []string{"hole_id", "from", "to", "confidence", "mismatch"}, rows)
}

func (d Data) writeStructures(w io.Writer) error {
	var rows [][]string
	for _, s := range d.Structures {
		rows = append(rows, []string{s.HoleID, num(s.Depth, 2), num(s.Alpha, 0), num(s.Beta, 0), num(s.Gamma, 0), num(s.ApparentThk, 2), s.Type, s.Comment, s.LoggedBy})
	}
	return writeAll(w, []string{"hole_id", "depth", "alpha", "beta", "gamma", "apparent_thickness", "type", "comment", "logged_by"}, rows)
}
