// Package gltf writes hole traces and structures as a glTF 2.0 scene (the
// Khronos Group's open 3D transfer format): binary .glb, or .gltf JSON with
// its .bin beside it.
//
// # Scene
//
// Each hole is a node placed at its collar with one mesh of line strips: the
// surveyed part with the material "trace surveyed" and, when the path runs
// on below the last survey station, the extrapolated part as a second
// primitive with the material "trace extrapolated". Each structure is a node
// at its position whose mesh is a flat disc of the configured radius; the
// node's rotation turns the disc's normal onto the structure's pole, so the
// disc lies in the measured plane. Discs share one geometry; there is one
// mesh and one material per structure type, coloured from
// [corvane/internal/palette]. Disc nodes are grouped under one node per type
// and carry hole, depth, dip, dip direction, type, set (and uncertainty) in
// their extras.
//
// # Frame
//
// glTF is right-handed with +Y up. corvane's frame is x = East, y = North,
// z = Up. A point (E, N, U) is written as glTF (E - E0, U - U0, -(N - N0)),
// metres from the local origin (E0, N0, U0) given in [Options.Origin]:
// glTF x = East, y = Up, z = South. That map has determinant +1, so it keeps
// handedness, and the asset's extras say so with the origin. Node
// translations and rotations are written as JSON doubles (exact to the
// nanometre at any grid coordinate); vertex data is 32-bit as glTF requires,
// relative to each node.
//
// # Streaming
//
// Memory does not grow with the number of structures: the layout is fixed
// from the counts, the JSON is produced twice for .glb (once to measure the
// chunk length the header needs, once to write it) and the binary is
// written as it is computed.
package gltf

import (
	"bufio"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"math"
	"slices"

	"corvane/internal/exchange"
	"corvane/internal/geom"
	"corvane/internal/palette"
)

// Options are the choices of a scene.
type Options struct {
	// Origin is the local origin (East, North, Up) that coordinates are
	// written relative to. It is stated in the asset's extras.
	Origin geom.Vec3
	// CRS names the coordinate reference system of the inputs, e.g.
	// "EPSG:32750"; written to the asset's extras when not empty.
	CRS string
	// DiscRadius is the radius of the structure discs in metres; 0 means
	// [DefaultDiscRadius].
	DiscRadius float64
	// DiscSegments is the number of straight edges of a disc's rim; 0
	// means [DefaultDiscSegments]. 3..1000.
	DiscSegments int
	// Colours colours the discs by type (see palette.New).
	Colours palette.Scheme
	// BySet groups and colours the discs by their set instead of their
	// type: one group node, mesh and material per set ("set A", ...; a
	// structure in no set goes to "set (none)"), coloured by Colours looked
	// up with the set's name.
	BySet bool
	// Uncertainty draws, for each structure with an uncertainty below 90
	// degrees, its 95% cone of possible poles: a translucent double cone
	// with its apex at the disc's centre, its axis along the pole, the
	// half-angle of the uncertainty and a slant length of the disc radius
	// (a child node of the disc, one shared mesh scaled per structure).
	Uncertainty bool
}

// Defaults of [Options].
const (
	DefaultDiscRadius   = 1.0
	DefaultDiscSegments = 24
)

// UncertaintyNote is what the asset's extras say of the uncertainty cones.
const UncertaintyNote = "each structure with an uncertainty has a child node \"uncertainty\": a translucent double cone " +
	"about the pole, apex at the disc centre, half-angle = the 95% cone of the pole's uncertainty (extras.cone95, degrees), " +
	"slant length = the disc radius; directions inside it are the poles within the 95% region"

// Frame is the sentence the asset's extras carry about the axes.
const Frame = "glTF axes: x = East, y = Up, z = -North (South); right-handed; metres relative to the origin in extras.origin (easting, northing, elevation of the inputs' frame)"

// OriginOf returns a local origin for traces: the first collar's
// coordinates rounded down to whole metres, or the zero vector when there is
// no trace point.
func OriginOf(traces []exchange.Trace, discs []exchange.Structure) geom.Vec3 {
	for _, t := range traces {
		if len(t.Points) > 0 {
			p := t.Points[0].Pos
			return geom.Vec3{X: math.Floor(p.X), Y: math.Floor(p.Y), Z: math.Floor(p.Z)}
		}
	}
	if len(discs) > 0 {
		p := discs[0].Pos
		return geom.Vec3{X: math.Floor(p.X), Y: math.Floor(p.Y), Z: math.Floor(p.Z)}
	}
	return geom.Vec3{}
}

// ToGLTF converts a vector of corvane's frame (East, North, Up) to glTF's
// axes (x = East, y = Up, z = -North).
func ToGLTF(v geom.Vec3) [3]float64 { return [3]float64{v.X, v.Z, -v.Y} }

// FromGLTF is the inverse of [ToGLTF].
func FromGLTF(a [3]float64) geom.Vec3 { return geom.Vec3{X: a[0], Y: -a[2], Z: a[1]} }

// Rotation returns the unit quaternion (x, y, z, w) that turns glTF's +Y
// (the disc's normal in its mesh) onto the direction n given in corvane's
// frame. n need not be unit length; the zero vector is an error.
func Rotation(n geom.Vec3) ([4]float64, error) {
	l := n.Norm()
	if !(l > 0) || math.IsInf(l, 0) {
		return [4]float64{}, fmt.Errorf("pole %v is not a direction", n)
	}
	b := ToGLTF(n.Scale(1 / l))
	// a = (0, 1, 0): a x b = (b.z, 0, -b.x), a.b = b.y. The half-way
	// quaternion (a x b, 1 + a.b), normalised, rotates a onto b.
	w := 1 + b[1]
	if w < 1e-12 { // b = -Y: half a turn about x
		return [4]float64{1, 0, 0, 0}, nil
	}
	q := [4]float64{b[2], 0, -b[0], w}
	s := math.Sqrt(q[0]*q[0] + q[2]*q[2] + q[3]*q[3])
	return [4]float64{q[0] / s, 0, q[2] / s, q[3] / s}, nil
}

// Rotate applies the unit quaternion q (x, y, z, w) to v.
func Rotate(q [4]float64, v [3]float64) [3]float64 {
	// v' = v + 2w (u x v) + 2 u x (u x v), u = (x, y, z).
	u := [3]float64{q[0], q[1], q[2]}
	cross := func(a, b [3]float64) [3]float64 {
		return [3]float64{a[1]*b[2] - a[2]*b[1], a[2]*b[0] - a[0]*b[2], a[0]*b[1] - a[1]*b[0]}
	}
	t := cross(u, v)
	t2 := cross(u, t)
	return [3]float64{v[0] + 2*(q[3]*t[0]+t2[0]), v[1] + 2*(q[3]*t[1]+t2[1]), v[2] + 2*(q[3]*t[2]+t2[2])}
}

// glTF constants (glTF 2.0 specification, section 5).
const (
	compFloat  = 5126
	compUShort = 5123
	targetVert = 34962 // ARRAY_BUFFER
	targetIdx  = 34963 // ELEMENT_ARRAY_BUFFER
	modeStrip  = 3     // LINE_STRIP
	modeTris   = 4     // TRIANGLES
)

// prim is one line-strip primitive of a trace.
type prim struct {
	from, n    int // first point in the trace, number of points
	material   int
	off        int // byte offset in the trace view
	accessor   int
	minV, maxV [3]float32
}

type traceLayout struct {
	node   int
	origin [3]float64 // collar relative to the scene origin, glTF axes
	prims  []prim
	mesh   int
}

type layout struct {
	o            Options
	traces       []exchange.Trace
	discs        []exchange.Structure
	tl           []traceLayout
	types        []string // disc types present, sorted
	typeIndex    map[string]int
	discBytes    int // disc positions + normals + indices (padded)
	traceOff     int // byte offset of the trace view
	traceBytes   int
	binLen       int
	nAccessors   int
	discAcc      int // first disc accessor (positions, normals, indices)
	traceMeshes0 int
	discMesh0    int
	cones        int // structures drawn with an uncertainty cone
	coneOff      int // byte offset of the cone vertices, then its indices
	coneAcc      int // cone accessors (positions, indices)
}

// ConeOf reports whether structure d gets an uncertainty cone under o, and
// the node scale that turns the shared unit double cone (apex at the
// origin, rims of radius 1 at y = +-1) into the cone of half-angle
// d.Uncertainty with slant length o.DiscRadius.
func ConeOf(d exchange.Structure, o Options) ([3]float64, bool) {
	if !o.Uncertainty || !d.HasUncertainty() || !(d.Uncertainty > 0 && d.Uncertainty < 90) {
		return [3]float64{}, false
	}
	r := o.DiscRadius
	if r == 0 {
		r = DefaultDiscRadius
	}
	sn, cs := math.Sincos(geom.Rad(d.Uncertainty))
	return [3]float64{r * sn, r * cs, r * sn}, true
}

// coneVertex returns vertex k of the unit double cone: 0 the apex, 1..s the
// upper rim, s+1..2s the lower rim.
func coneVertex(k, segs int) [3]float32 {
	if k == 0 {
		return [3]float32{}
	}
	y := float32(1)
	if k > segs {
		k -= segs
		y = -1
	}
	a := 2 * math.Pi * float64(k-1) / float64(segs)
	return [3]float32{float32(math.Cos(a)), y, float32(-math.Sin(a))}
}

func (L *layout) coneVertexBytes() int { return 12 * (2*L.o.DiscSegments + 1) }
func (L *layout) coneIndexCount() int  { return 6 * L.o.DiscSegments }

func (o *Options) fill() error {
	if o.DiscRadius == 0 {
		o.DiscRadius = DefaultDiscRadius
	}
	if !(o.DiscRadius > 0) || math.IsInf(o.DiscRadius, 0) {
		return fmt.Errorf("disc radius %v: want a positive number of metres", o.DiscRadius)
	}
	if o.DiscSegments == 0 {
		o.DiscSegments = DefaultDiscSegments
	}
	if o.DiscSegments < 3 || o.DiscSegments > 1000 {
		return fmt.Errorf("disc segments %d: want 3 to 1000", o.DiscSegments)
	}
	for _, v := range []float64{o.Origin.X, o.Origin.Y, o.Origin.Z} {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("origin %v is not finite", o.Origin)
		}
	}
	return nil
}

func finite(v geom.Vec3) bool {
	return !math.IsNaN(v.X+v.Y+v.Z) && !math.IsInf(v.X+v.Y+v.Z, 0)
}

func plan(traces []exchange.Trace, discs []exchange.Structure, o Options) (*layout, error) {
	if err := o.fill(); err != nil {
		return nil, err
	}
	if len(traces) == 0 && len(discs) == 0 {
		return nil, errors.New("nothing to write: no hole traces and no structures")
	}
	L := &layout{o: o, traces: traces, discs: discs, typeIndex: map[string]int{}}
	acc := 0
	off := 0
	for _, t := range traces {
		if len(t.Points) < 2 {
			return nil, fmt.Errorf("hole %q: a trace needs at least two points, has %d", t.Hole, len(t.Points))
		}
		for i, p := range t.Points {
			if !finite(p.Pos) {
				return nil, fmt.Errorf("hole %q: trace point %d (depth %g) is not finite", t.Hole, i+1, p.Depth)
			}
		}
		c := t.Points[0].Pos
		tl := traceLayout{origin: ToGLTF(c.Sub(o.Origin))}
		surveyed, extra := t.Split()
		add := func(from, n, material int) {
			if n < 2 {
				return
			}
			p := prim{from: from, n: n, material: material, off: off, accessor: acc}
			for k := 0; k < 3; k++ {
				p.minV[k], p.maxV[k] = float32(math.Inf(1)), float32(math.Inf(-1))
			}
			for _, pt := range t.Points[from : from+n] {
				v := vertex(pt.Pos, c)
				for k := 0; k < 3; k++ {
					p.minV[k] = min(p.minV[k], v[k])
					p.maxV[k] = max(p.maxV[k], v[k])
				}
			}
			tl.prims = append(tl.prims, p)
			off += 12 * n
			acc++
		}
		add(0, len(surveyed), 0)
		add(len(t.Points)-len(extra), len(extra), 1)
		if len(tl.prims) == 0 {
			return nil, fmt.Errorf("hole %q: nothing to draw", t.Hole)
		}
		L.tl = append(L.tl, tl)
	}
	L.traceBytes = off
	for i, d := range discs {
		if !finite(d.Pos) {
			return nil, fmt.Errorf("structure %d (hole %q, depth %g): position is not finite", i+1, d.Hole, d.Depth)
		}
		if _, err := Rotation(d.Pole); err != nil {
			return nil, fmt.Errorf("structure %d (hole %q, depth %g): %w", i+1, d.Hole, d.Depth, err)
		}
		if _, ok := L.typeIndex[L.group(d)]; !ok {
			L.typeIndex[L.group(d)] = 0
			L.types = append(L.types, L.group(d))
		}
	}
	slices.Sort(L.types)
	for i, t := range L.types {
		L.typeIndex[t] = i
	}
	if len(discs) > 0 {
		nv := o.DiscSegments + 1
		L.discBytes = 24*nv + pad4(2*3*o.DiscSegments)
		L.discAcc = acc
		acc += 3
	}
	L.traceOff = L.discBytes
	L.binLen = L.discBytes + L.traceBytes
	for _, d := range discs {
		if _, ok := ConeOf(d, o); ok {
			L.cones++
		}
	}
	if L.cones > 0 {
		L.coneOff = L.binLen
		L.coneAcc = acc
		acc += 2
		L.binLen += L.coneVertexBytes() + pad4(2*L.coneIndexCount())
	}
	L.nAccessors = acc
	// Meshes: one per trace, then one per disc type.
	L.traceMeshes0 = 0
	L.discMesh0 = len(traces)
	return L, nil
}

func pad4(n int) int { return (n + 3) &^ 3 }

// NoSet is the group of the structures in no set when discs go by set.
const NoSet = "(none)"

// group returns the group of disc d: its type, or its set with BySet.
func (L *layout) group(d exchange.Structure) string {
	if !L.o.BySet {
		return d.Type
	}
	if d.Set == "" {
		return NoSet
	}
	return d.Set
}

// meshName is the name of the disc mesh of group g.
func (L *layout) meshName(g string) string {
	if L.o.BySet {
		return "disc set " + g
	}
	return "disc " + g
}

// groupWord names what the disc groups are ("type" or "set").
func (L *layout) groupWord() string {
	if L.o.BySet {
		return "set"
	}
	return "type"
}

// vertex returns p relative to base in glTF axes as 32-bit floats.
func vertex(p, base geom.Vec3) [3]float32 {
	g := ToGLTF(p.Sub(base))
	return [3]float32{float32(g[0]), float32(g[1]), float32(g[2])}
}

// WriteGLB writes the scene as one binary glTF (.glb) file to w.
func WriteGLB(w io.Writer, traces []exchange.Trace, discs []exchange.Structure, o Options) error {
	L, err := plan(traces, discs, o)
	if err != nil {
		return err
	}
	var cnt counter
	if err := L.writeJSON(&cnt, ""); err != nil {
		return err
	}
	jsonLen := pad4(int(cnt))
	total := 12 + 8 + jsonLen + 8 + L.binLen
	if total > math.MaxUint32 {
		return fmt.Errorf("scene of %d bytes is too large for one .glb (4 GiB); write .gltf + .bin", total)
	}
	bw := bufio.NewWriterSize(w, 64<<10)
	var hdr [20]byte
	copy(hdr[0:4], "glTF")
	binary.LittleEndian.PutUint32(hdr[4:], 2)
	binary.LittleEndian.PutUint32(hdr[8:], uint32(total))
	binary.LittleEndian.PutUint32(hdr[12:], uint32(jsonLen))
	copy(hdr[16:20], "JSON")
	bw.Write(hdr[:])
	if err := L.writeJSON(bw, ""); err != nil {
		return err
	}
	for i := int(cnt); i < jsonLen; i++ {
		bw.WriteByte(' ')
	}
	binary.LittleEndian.PutUint32(hdr[0:], uint32(L.binLen))
	copy(hdr[4:8], "BIN\x00")
	bw.Write(hdr[:8])
	if err := L.writeBin(bw); err != nil {
		return err
	}
	return bw.Flush()
}

// WriteGLTF writes the scene as .gltf JSON to jsonW and its binary buffer to
// binW; binName is the .bin file's name as the JSON refers to it (a relative
// URI, e.g. "holes.bin").
func WriteGLTF(jsonW, binW io.Writer, binName string, traces []exchange.Trace, discs []exchange.Structure, o Options) error {
	if binName == "" {
		return errors.New("the .bin file needs a name")
	}
	L, err := plan(traces, discs, o)
	if err != nil {
		return err
	}
	bw := bufio.NewWriterSize(binW, 64<<10)
	if err := L.writeBin(bw); err != nil {
		return err
	}
	if err := bw.Flush(); err != nil {
		return err
	}
	jw := bufio.NewWriterSize(jsonW, 64<<10)
	if err := L.writeJSON(jw, binName); err != nil {
		return err
	}
	return jw.Flush()
}

type counter int64

func (c *counter) Write(p []byte) (int, error) { *c += counter(len(p)); return len(p), nil }

// discGeometry returns the disc's rim point k (k = 0 is the centre) in the
// mesh's frame: the disc lies in the x-z plane, normal +Y, and its triangles
// (0, k, k+1) turn counter-clockwise seen from +Y (glTF's front face).
func discVertex(k, segs int, r float64) [3]float32 {
	if k == 0 {
		return [3]float32{}
	}
	a := 2 * math.Pi * float64(k-1) / float64(segs)
	return [3]float32{float32(r * math.Cos(a)), 0, float32(-r * math.Sin(a))}
}

func (L *layout) writeBin(w *bufio.Writer) error {
	var b [12]byte
	put := func(v [3]float32) {
		for k := 0; k < 3; k++ {
			binary.LittleEndian.PutUint32(b[4*k:], math.Float32bits(v[k]))
		}
		w.Write(b[:])
	}
	if len(L.discs) > 0 {
		s := L.o.DiscSegments
		for k := 0; k <= s; k++ {
			put(discVertex(k, s, L.o.DiscRadius))
		}
		for k := 0; k <= s; k++ {
			put([3]float32{0, 1, 0})
		}
		for k := 1; k <= s; k++ {
			next := k + 1
			if next > s {
				next = 1
			}
			for _, i := range []int{0, k, next} {
				binary.LittleEndian.PutUint16(b[:], uint16(i))
				w.Write(b[:2])
			}
		}
		for i := 2 * 3 * s; i < pad4(2*3*s); i++ {
			w.WriteByte(0)
		}
	}
	for ti, t := range L.traces {
		c := t.Points[0].Pos
		for _, p := range L.tl[ti].prims {
			for _, pt := range t.Points[p.from : p.from+p.n] {
				put(vertex(pt.Pos, c))
			}
		}
	}
	if L.cones > 0 {
		s := L.o.DiscSegments
		for k := 0; k <= 2*s; k++ {
			put(coneVertex(k, s))
		}
		for k := 1; k <= s; k++ {
			next := k%s + 1
			// upper and lower sheet, both seen from outside
			for _, i := range []int{0, next, k, 0, s + k, s + next} {
				binary.LittleEndian.PutUint16(b[:], uint16(i))
				w.Write(b[:2])
			}
		}
		for i := 2 * L.coneIndexCount(); i < pad4(2*L.coneIndexCount()); i++ {
			w.WriteByte(0)
		}
	}
	return nil
}
