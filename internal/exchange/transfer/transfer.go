// Package transfer gathers a programme's holes and placed structures into
// the transfer formats (glTF, GeoJSON, points-with-normals CSV, AGS4): the
// one place that decides what goes into each file, so `corvane transfer`
// and the service's export routes write the same files from the same
// programme. Its callers build the holes with package holemodel (through
// package convert or the service) and hand over the paths; transfer
// desurveys nothing and corrects no north.
//
// transfer knows nothing of HTTP or SQL; it imports the pure writers and
// csvio's points writer.
package transfer

import (
	"archive/zip"
	"errors"
	"fmt"
	"io"
	"math"
	"slices"
	"strings"
	"time"

	"corvane/internal/coreinterval"
	"corvane/internal/csvio"
	"corvane/internal/desurvey"
	"corvane/internal/exchange"
	"corvane/internal/exchange/ags4"
	"corvane/internal/exchange/geojson"
	"corvane/internal/exchange/gltf"
	"corvane/internal/fabric"
	"corvane/internal/geom"
	"corvane/internal/northref"
	"corvane/internal/palette"
	"corvane/internal/utm"
	"corvane/internal/visual"
)

// Hole is one hole of the programme as recorded, with the path its hole
// model built.
type Hole struct {
	Name string
	// Collar is the recorded collar (position, azimuth, dip, final depth).
	Collar desurvey.Collar
	// CRS labels the collar coordinates, "" when unknown.
	CRS string
	// Path is the desurveyed path in the output reference; nil when the
	// hole has a problem (Problem says which). Such a hole has a collar in
	// GeoJSON and LOCA but no trace.
	Path    *desurvey.Path
	Problem string
	// Measurements counts the hole's placed structures, QAFlags its
	// measurements that carry a warning or an error (see [Programme.Count]).
	Measurements, QAFlags int
}

// Programme is what the transfer formats are written from.
type Programme struct {
	// Name of the project (AGS4 PROJ_ID and PROJ_NAME).
	Name string
	// Types is the vocabulary of structure type codes; the codes of the
	// structures when the caller has no vocabulary.
	Types []string
	// Styles are the project's stored type styles (code -> style); nil
	// gives Types the visual language's defaults in code order
	// (palette.New), as a file with no vocabulary gets them.
	Styles map[string]visual.Style
	Holes  []Hole
	// Structures are the measurements with a plane and a position.
	Structures []exchange.Structure
	// Skipped counts the measurements left out: no dip direction (a
	// vertical hole), an error, a lineation alone.
	Skipped int
	// TraceStep is the largest spacing of trace points; 0 means
	// exchange.DefaultTraceStep.
	TraceStep float64
	// Intervals are logged core intervals (AGS4 CORE); their recoveries and
	// RQD come from package coreinterval.
	Intervals []Interval
	// Feet says the programme's lengths are in feet. The transfer formats
	// are metric (glTF metres, AGS4 m, GeoJSON from a metric grid), and
	// collar coordinates of a project in feet are in no known grid, so
	// such a programme is refused ([ErrFeet]) rather than mislabelled.
	Feet bool

	index map[string]int // hole name -> index in Holes, built by Count
	// sets are the set names of LabelSets in set order, bySetType whether
	// they are type codes (sets by type).
	sets      []string
	bySetType bool
}

// ErrFeet refuses a programme in feet (see [Programme].Feet).
var ErrFeet = errors.New("the transfer formats are written in metres and this programme's lengths are in feet; convert the programme to metres first")

// Check reports whether the programme can be written: nil, or [ErrFeet].
func (p *Programme) Check() error {
	if p.Feet {
		return ErrFeet
	}
	return nil
}

// ParseOrigin reads a scene origin written EASTING,NORTHING,ELEVATION
// (metres, finite), as the CLI's --origin and the route's origin take it.
func ParseOrigin(s string) (*[3]float64, error) {
	parts := strings.Split(s, ",")
	if len(parts) != 3 {
		return nil, fmt.Errorf("%q: want EASTING,NORTHING,ELEVATION", s)
	}
	var o [3]float64
	for i, p := range parts {
		x, msg := csvio.ParseNumber(strings.TrimSpace(p))
		if msg != "" {
			return nil, fmt.Errorf("%q: %s", p, msg)
		}
		o[i] = x
	}
	return &o, nil
}

// Interval is one logged core interval of a hole.
type Interval struct {
	Hole string
	coreinterval.Interval
}

// Count records one measurement of hole: placed when it has a plane and a
// position (it is then in Structures), flagged when it carries a warning or
// an error. A measurement not placed is counted as skipped.
func (p *Programme) Count(hole string, placed, flagged bool) {
	if len(p.index) != len(p.Holes) {
		p.index = make(map[string]int, len(p.Holes))
		for i, h := range p.Holes {
			p.index[h.Name] = i
		}
	}
	if !placed {
		p.Skipped++
	}
	i, ok := p.index[hole]
	if !ok {
		return
	}
	if placed {
		p.Holes[i].Measurements++
	}
	if flagged {
		p.Holes[i].QAFlags++
	}
}

// LabelSets forms the sets s on the poles of the programme's structures by
// the statistics' own grouping (fabric.PlaneSets: k-means on the axes, one
// set per type code, or windows; the same options as the statistics) and
// writes each structure's set name, "" for a structure in no set. It
// returns the method's description, "" when s asks for no sets, in which
// case the structures keep the sets they came with. The structures are the
// planes placed in space, so the sets are those of the statistics over the
// same selection whenever every plane has a position.
func (p *Programme) LabelSets(s fabric.Sets) (string, error) {
	rows := make([]fabric.Row, len(p.Structures))
	for i, st := range p.Structures {
		rows[i] = fabric.Row{Type: st.Type, HasPlane: true, Plane: geom.Plane{Dip: st.Dip, DipDirection: st.DipDirection}}
	}
	assign, names, method, err := fabric.PlaneSets(rows, s)
	if err != nil || method == "" {
		return "", err
	}
	p.sets, p.bySetType = names, s.ByType
	for i := range p.Structures {
		p.Structures[i].Set = ""
		if j := assign[i]; j >= 0 {
			p.Structures[i].Set = names[j]
		}
	}
	return method, nil
}

// TypesOf returns the sorted, distinct type codes of structures: the
// vocabulary when a caller has none.
func TypesOf(structs []exchange.Structure) []string {
	var types []string
	for _, s := range structs {
		types = append(types, s.Type)
	}
	slices.Sort(types)
	return slices.Compact(types)
}

// Traces samples the path of every hole that has one, in hole order.
func (p *Programme) Traces() ([]exchange.Trace, error) {
	var ts []exchange.Trace
	for _, h := range p.Holes {
		if h.Path == nil {
			continue
		}
		t, err := exchange.TraceFromPath(h.Name, h.Path, p.TraceStep)
		if err != nil {
			return nil, err
		}
		ts = append(ts, t)
	}
	return ts, nil
}

// SceneOptions are the choices of a glTF scene.
type SceneOptions struct {
	// Origin is the local origin (East, North, Up); nil means gltf.OriginOf
	// (the first collar rounded down to whole metres).
	Origin *[3]float64
	// DiscRadius in metres; 0 means gltf.DefaultDiscRadius.
	DiscRadius float64
	// Uncertainty draws each structure's 95% uncertainty cone
	// (gltf.Options.Uncertainty).
	Uncertainty bool
	// BySet groups and colours the discs by the sets of [Programme.LabelSets]
	// (gltf.Options.BySet): set j in the nets' style of set j
	// (visual.Pair), sets by type in their types' colours, the structures in
	// no set grey. It needs sets ([ErrNoSets]).
	BySet bool
}

// setNames returns the sets of [Programme.LabelSets] in set order, or else
// the sets the structures came with, sorted; nil when no structure has one.
func (p *Programme) setNames() []string {
	if len(p.sets) > 0 {
		return p.sets
	}
	var names []string
	for _, s := range p.Structures {
		if s.Set != "" {
			names = append(names, s.Set)
		}
	}
	slices.Sort(names)
	return slices.Compact(names)
}

// HasSets reports whether the structures carry sets (for discs by set).
func (p *Programme) HasSets() bool { return len(p.setNames()) > 0 }

// ParseColourBy reads how the discs are grouped and coloured, as the CLI's
// --colour-by and the route's colour_by take it: "" or "type" (false),
// "set" (true).
func ParseColourBy(s string) (bySet bool, err error) {
	switch strings.TrimSpace(s) {
	case "", "type":
		return false, nil
	case "set":
		return true, nil
	}
	return false, fmt.Errorf("%q: want type or set", s)
}

// ErrNoSets refuses discs by set when no sets were formed.
var ErrNoSets = errors.New("colouring the discs by set needs sets: give the set options (automatic, by type code or windows)")

// colours is the one type colour scheme of p's scene: its stored styles,
// or the defaults of its vocabulary.
func (p *Programme) colours() palette.Scheme {
	if p.Styles != nil {
		return palette.FromStyles(p.Styles)
	}
	return palette.New(p.Types)
}

func (p *Programme) scene(o SceneOptions) ([]exchange.Trace, gltf.Options, error) {
	if err := p.Check(); err != nil {
		return nil, gltf.Options{}, err
	}
	traces, err := p.Traces()
	if err != nil {
		return nil, gltf.Options{}, err
	}
	g := gltf.Options{Origin: gltf.OriginOf(traces, p.Structures), DiscRadius: o.DiscRadius, Colours: p.colours(), Uncertainty: o.Uncertainty, BySet: o.BySet}
	if o.BySet {
		names := p.setNames()
		if len(names) == 0 {
			return nil, gltf.Options{}, ErrNoSets
		}
		if !p.bySetType {
			styles := make(map[string]visual.Style, len(names))
			for j, name := range names {
				styles[name] = visual.Pair(j)
			}
			g.Colours = palette.FromStyles(styles)
		}
	}
	if o.Origin != nil {
		g.Origin.X, g.Origin.Y, g.Origin.Z = o.Origin[0], o.Origin[1], o.Origin[2]
	}
	if len(p.Holes) > 0 {
		g.CRS = p.Holes[0].CRS
	}
	return traces, g, nil
}

// WriteGLB writes the programme as a binary glTF scene.
func (p *Programme) WriteGLB(w io.Writer, o SceneOptions) error {
	traces, g, err := p.scene(o)
	if err != nil {
		return err
	}
	return gltf.WriteGLB(w, traces, p.Structures, g)
}

// WriteGLTF writes the programme as a .gltf JSON to jsonW and its buffer to
// binW, which the JSON names binName.
func (p *Programme) WriteGLTF(jsonW, binW io.Writer, binName string, o SceneOptions) error {
	traces, g, err := p.scene(o)
	if err != nil {
		return err
	}
	return gltf.WriteGLTF(jsonW, binW, binName, traces, p.Structures, g)
}

// WriteGLTFZip writes the programme as a zip archive of name.gltf and the
// buffer name.bin it refers to (beside it, by that relative name): the
// .gltf + .bin pair in one file, as one HTTP answer can carry it. The
// buffer is streamed into the archive first, then the JSON.
func (p *Programme) WriteGLTFZip(w io.Writer, name string, o SceneOptions) error {
	if name == "" || strings.ContainsAny(name, `/\`) {
		return fmt.Errorf("scene name %q: want a plain file name", name)
	}
	zw := zip.NewWriter(w)
	when := time.Now().UTC()
	entry := func(file string) (io.Writer, error) {
		return zw.CreateHeader(&zip.FileHeader{Name: file, Method: zip.Deflate, Modified: when})
	}
	bin, err := entry(name + ".bin")
	if err != nil {
		return err
	}
	js := &lazyEntry{open: func() (io.Writer, error) { return entry(name + ".gltf") }}
	if err := p.WriteGLTF(js, bin, name+".bin", o); err != nil {
		return err
	}
	if js.w == nil { // nothing written: still a .gltf entry
		if _, err := js.Write(nil); err != nil {
			return err
		}
	}
	return zw.Close()
}

// lazyEntry opens its zip entry at the first write, so that an entry
// written before it (the buffer) is complete when it starts.
type lazyEntry struct {
	open func() (io.Writer, error)
	w    io.Writer
}

func (l *lazyEntry) Write(b []byte) (int, error) {
	if l.w == nil {
		w, err := l.open()
		if err != nil {
			return 0, err
		}
		l.w = w
	}
	return l.w.Write(b)
}

// WritePoints writes the structures as points with normals (csvio.WritePoints).
func (p *Programme) WritePoints(w io.Writer) error {
	if err := p.Check(); err != nil {
		return err
	}
	return csvio.WritePoints(w, p.Structures)
}

// Inverse returns the grid inverse of the collars' coordinate system: crs
// when not empty, else the collars' labels, which must then name one system.
func (p *Programme) Inverse(crs string) (geojson.Inverse, error) {
	c, err := p.grid(crs)
	if err != nil {
		return nil, err
	}
	return inverseOf(c), nil
}

// grid returns the coordinate system of [Programme.Inverse].
func (p *Programme) grid(crs string) (northref.CRS, error) {
	label := strings.TrimSpace(crs)
	if label == "" {
		for _, h := range p.Holes {
			switch {
			case h.CRS == "":
			case label == "":
				label = h.CRS
			case !strings.EqualFold(label, h.CRS):
				return northref.CRS{}, fmt.Errorf("collars are in %s and %s; write one coordinate system at a time or name one", label, h.CRS)
			}
		}
	}
	return northref.ParseCRS(label)
}

func inverseOf(c northref.CRS) geojson.Inverse {
	if c.Grid != nil {
		return geojson.Grid(c.Grid) // any supported EPSG family, on its own ellipsoid
	}
	return geojson.UTM(c.Zone)
}

// WriteGeoJSON writes collars and surface traces in WGS 84 through the
// grid inverse of crs (see [Programme.Inverse]); the file names the grid
// and says that its datum is taken as WGS 84 (see [geojson.Datum]).
func (p *Programme) WriteGeoJSON(w io.Writer, crs string) error {
	if err := p.Check(); err != nil {
		return err
	}
	c, err := p.grid(crs)
	if err != nil {
		return err
	}
	traces, err := p.Traces()
	if err != nil {
		return err
	}
	gh := make([]geojson.Hole, 0, len(p.Holes))
	k := 0
	for _, h := range p.Holes {
		c := h.Collar
		g := geojson.Hole{Name: h.Name, East: c.East, North: c.North, Elevation: c.Elevation, Azimuth: c.Azimuth, Dip: c.Dip,
			Depth: c.Depth, Measurements: h.Measurements, QAFlags: h.QAFlags, Trace: exchange.Trace{Hole: h.Name}}
		if h.Path != nil {
			g.Trace = traces[k]
			k++
		}
		gh = append(gh, g)
	}
	name := c.Name
	if name == "" {
		name = c.String()
	} else {
		name += " (" + c.String() + ")"
	}
	return geojson.Write(w, inverseOf(c), geojson.DatumOf(name, c.Grid == nil || c.Grid.Ellipsoid == utm.EllipsoidWGS84), gh)
}

// AGSOptions are the transmission details of an AGS4 file.
type AGSOptions struct {
	Recipient string    // TRAN_RECV; "" means "geotechnical database"
	Date      time.Time // TRAN_DATE; zero means now (UTC)
}

// AGS returns the AGS4 transfer: LOCA from the collars, HORN from each
// path between survey stations (direction at the top of each section, in
// the output reference), CORE from the core intervals (recoveries and RQD
// by package coreinterval), DISC from the structures numbered per hole in
// order, FRAC from the structures in each core interval (see spacings).
func (p *Programme) AGS(o AGSOptions) *ags4.Data {
	if o.Recipient == "" {
		o.Recipient = "geotechnical database"
	}
	if o.Date.IsZero() {
		o.Date = time.Now().UTC()
	}
	name := p.Name
	if name == "" {
		name = "corvane"
	}
	d := &ags4.Data{
		Project: ags4.Project{ID: name, Name: name},
		Transmission: ags4.Transmission{IssueNo: "1", Date: o.Date, Producer: "corvane", Status: "Draft",
			Description: "oriented core discontinuities", Recipient: o.Recipient},
		Abbreviations: []ags4.Abbreviation{{Heading: "LOCA_TYPE", Code: "RC", Description: "Rotary core"}},
	}
	grefs := map[string]bool{}
	for _, h := range p.Holes {
		gref := strings.ToUpper(strings.TrimSpace(h.CRS))
		if gref != "" && !grefs[gref] {
			grefs[gref] = true
			d.Abbreviations = append(d.Abbreviations, ags4.Abbreviation{Heading: "LOCA_GREF", Code: gref, Description: "coordinate reference system " + gref})
		}
		d.Locations = append(d.Locations, ags4.Location{ID: h.Name, Type: "RC", East: h.Collar.East, North: h.Collar.North, GridRef: gref,
			GroundLevel: h.Collar.Elevation, FinalDepth: h.Collar.Depth})
		if h.Path == nil {
			continue
		}
		tops := []float64{0}
		for _, iv := range h.Path.Intervals() {
			tops = append(tops, iv.To)
		}
		tops = append(tops, h.Path.Depth())
		slices.Sort(tops)
		tops = slices.Compact(tops)
		for i := 0; i+1 < len(tops); i++ {
			pt, err := h.Path.At(tops[i])
			if err != nil {
				continue
			}
			az, dip := pt.Dir.AzimuthDip()
			rem := ""
			if tops[i] >= h.Path.LastStation() && tops[i] < h.Path.Depth() {
				rem = "below the last survey station"
			}
			d.Orientations = append(d.Orientations, ags4.Orientation{Hole: h.Name, Top: tops[i], Base: tops[i+1], Azimuth: az, Dip: dip, Remarks: rem})
		}
	}
	for _, iv := range p.Intervals {
		dv := coreinterval.Derive(iv.Interval, coreinterval.MinPiece)
		d.Cores = append(d.Cores, ags4.Core{Hole: iv.Hole, Top: iv.From, Base: iv.To, TotalRecovery: dv.TCR, SolidRecovery: dv.SCR,
			RQD: dv.RQD, Diameter: math.NaN()})
	}
	for _, t := range TypesOf(p.Structures) {
		d.Abbreviations = append(d.Abbreviations, ags4.Abbreviation{Heading: "DISC_TYPE", Code: t, Description: "structure type " + t})
	}
	n := map[string]int{}
	byHole := map[string][]exchange.Structure{}
	for _, s := range p.Structures {
		n[s.Hole]++
		d.Discontinuities = append(d.Discontinuities, ags4.Discontinuity{Hole: s.Hole, Top: s.Depth, Base: s.Depth, Set: s.Set,
			Number: fmt.Sprint(n[s.Hole]), Type: s.Type, Dip: s.Dip, DipDirection: s.DipDirection})
		byHole[s.Hole] = append(byHole[s.Hole], s)
	}
	d.Spacings = spacings(p.Intervals, byHole)
	return d
}

// spacings returns the FRAC rows of the core intervals (ags4.SpacingOf):
// over each interval [From, To), one row per set of the hole's structures
// in it, sorted by set. FRAC_SET is the structures' set name; it is empty
// for the structures assigned to no set, so a hole whose structures carry
// no set has one row per interval covering all of them (an interval with
// none has that row with fracture index 0). Set names are not empty, so
// the KEY fields (LOCA_ID, FRAC_FROM, FRAC_TO, FRAC_SET) never repeat
// within one interval (AGS4 rule 10a). Every placed structure counts,
// whatever its type; an interval that is empty (To <= From, refused by the
// interval rules) has no row.
func spacings(ivs []Interval, byHole map[string][]exchange.Structure) []ags4.Spacing {
	var out []ags4.Spacing
	for _, iv := range ivs {
		depths := map[string][]float64{}
		var sets []string
		for _, s := range byHole[iv.Hole] {
			if s.Depth < iv.From || s.Depth >= iv.To {
				continue
			}
			if _, ok := depths[s.Set]; !ok {
				sets = append(sets, s.Set)
			}
			depths[s.Set] = append(depths[s.Set], s.Depth)
		}
		if len(sets) == 0 {
			sets = []string{""}
		}
		slices.Sort(sets)
		for _, set := range sets {
			sp, err := ags4.SpacingOf(iv.Hole, set, iv.From, iv.To, depths[set])
			if err != nil {
				continue
			}
			out = append(out, sp)
		}
	}
	return out
}

// WriteAGS writes the AGS4 file of [Programme.AGS].
func (p *Programme) WriteAGS(w io.Writer, o AGSOptions) error {
	if err := p.Check(); err != nil {
		return err
	}
	return ags4.Write(w, p.AGS(o))
}
