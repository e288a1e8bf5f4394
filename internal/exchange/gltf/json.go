package gltf

import (
	"io"
	"math"
	"net/url"
	"strconv"
	"unicode/utf8"

	"corvane/internal/palette"
)

// jw writes JSON by hand: the document is written twice for .glb and may
// hold a node per structure, so it is produced straight into the output
// without building a tree.
type jw struct {
	w   io.Writer
	b   []byte
	err error
}

func (j *jw) flush() {
	if j.err == nil && len(j.b) > 0 {
		_, j.err = j.w.Write(j.b)
	}
	j.b = j.b[:0]
}

func (j *jw) raw(s string) {
	j.b = append(j.b, s...)
	if len(j.b) > 32<<10 {
		j.flush()
	}
}

// num writes a double in the shortest form that reads back to the same
// value; the caller has checked that it is finite.
func (j *jw) num(v float64) {
	if v == 0 {
		v = 0 // no "-0"
	}
	j.b = strconv.AppendFloat(j.b, v, 'g', -1, 64)
}

// num32 writes a 32-bit float in the shortest form that reads back to it,
// so that accessor bounds equal the stored values exactly.
func (j *jw) num32(v float32) {
	if v == 0 {
		v = 0
	}
	j.b = strconv.AppendFloat(j.b, float64(v), 'g', -1, 32)
}

func (j *jw) int(v int) { j.b = strconv.AppendInt(j.b, int64(v), 10) }

// str writes s as a JSON string (RFC 8259 escapes; invalid UTF-8 becomes
// U+FFFD).
func (j *jw) str(s string) {
	const hex = "0123456789abcdef"
	j.b = append(j.b, '"')
	for i := 0; i < len(s); {
		c := s[i]
		if c < utf8.RuneSelf {
			switch {
			case c == '"' || c == '\\':
				j.b = append(j.b, '\\', c)
			case c < 0x20:
				j.b = append(j.b, '\\', 'u', '0', '0', hex[c>>4], hex[c&15])
			default:
				j.b = append(j.b, c)
			}
			i++
			continue
		}
		r, n := utf8.DecodeRuneInString(s[i:])
		if r == utf8.RuneError && n == 1 {
			j.b = append(j.b, "\ufffd"...)
		} else {
			j.b = append(j.b, s[i:i+n]...)
		}
		i += n
	}
	j.b = append(j.b, '"')
}

func (j *jw) vec(v [3]float64) {
	j.raw("[")
	for k, x := range v {
		if k > 0 {
			j.raw(",")
		}
		j.num(x)
	}
	j.raw("]")
}

func (j *jw) vec32(v [3]float32) {
	j.raw("[")
	for k, x := range v {
		if k > 0 {
			j.raw(",")
		}
		j.num32(x)
	}
	j.raw("]")
}

// optNum writes v, or null when it is NaN.
func (j *jw) optNum(v float64) {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		j.raw("null")
		return
	}
	j.num(v)
}

func (L *layout) writeJSON(w io.Writer, binName string) error {
	j := &jw{w: w, b: make([]byte, 0, 40<<10)}
	o := L.o
	j.raw(`{"asset":{"version":"2.0","generator":"corvane","extras":{"frame":`)
	j.str(Frame)
	j.raw(`,"origin":{"easting":`)
	j.num(o.Origin.X)
	j.raw(`,"northing":`)
	j.num(o.Origin.Y)
	j.raw(`,"elevation":`)
	j.num(o.Origin.Z)
	j.raw(`},"units":"metre"`)
	if o.CRS != "" {
		j.raw(`,"crs":`)
		j.str(o.CRS)
	}
	if len(L.discs) > 0 {
		j.raw(`,"disc_radius":`)
		j.num(o.DiscRadius)
	}
	if L.cones > 0 {
		j.raw(`,"uncertainty":`)
		j.str(UncertaintyNote)
	}
	j.raw(`}},"scene":0,"scenes":[{"name":"corvane","nodes":[`)

	// Nodes: [holes group] [structures group] trace nodes, type nodes, disc nodes.
	n := 0
	holesNode, discsNode := -1, -1
	if len(L.traces) > 0 {
		holesNode = n
		n++
	}
	if len(L.discs) > 0 {
		discsNode = n
		n++
	}
	trace0 := n
	n += len(L.traces)
	type0 := n
	n += len(L.types)
	disc0 := n
	cone0 := disc0 + len(L.discs)
	cone := 0 // cone nodes written so far
	if holesNode >= 0 {
		j.int(holesNode)
	}
	if discsNode >= 0 {
		if holesNode >= 0 {
			j.raw(",")
		}
		j.int(discsNode)
	}
	j.raw(`]}],"nodes":[`)
	first := true
	sep := func() {
		if !first {
			j.raw(",")
		}
		first = false
	}
	children := func(from, count int) {
		j.raw(`,"children":[`)
		for i := 0; i < count; i++ {
			if i > 0 {
				j.raw(",")
			}
			j.int(from + i)
		}
		j.raw("]")
	}
	if holesNode >= 0 {
		sep()
		j.raw(`{"name":"holes"`)
		children(trace0, len(L.traces))
		j.raw("}")
	}
	if discsNode >= 0 {
		sep()
		j.raw(`{"name":"structures"`)
		children(type0, len(L.types))
		j.raw("}")
	}
	for i, t := range L.traces {
		sep()
		j.raw(`{"name":`)
		j.str(t.Hole)
		j.raw(`,"mesh":`)
		j.int(L.traceMeshes0 + i)
		j.raw(`,"translation":`)
		j.vec(L.tl[i].origin)
		j.raw("}")
	}
	// Disc nodes are numbered by type, in input order within a type.
	perType := make([]int, len(L.types))
	for _, d := range L.discs {
		perType[L.typeIndex[L.group(d)]]++
	}
	start := make([]int, len(L.types))
	for i := 1; i < len(L.types); i++ {
		start[i] = start[i-1] + perType[i-1]
	}
	for i, t := range L.types {
		sep()
		j.raw(`{"name":`)
		j.str(L.groupWord() + " " + t)
		children(disc0+start[i], perType[i])
		j.raw("}")
	}
	for ti := range L.types {
		for _, d := range L.discs {
			if L.typeIndex[L.group(d)] != ti {
				continue
			}
			sep()
			q, _ := Rotation(d.Pole) // checked in plan
			j.raw(`{"name":`)
			j.str(d.Hole + " " + strconv.FormatFloat(d.Depth, 'f', -1, 64))
			j.raw(`,"mesh":`)
			j.int(L.discMesh0 + ti)
			j.raw(`,"translation":`)
			j.vec(ToGLTF(d.Pos.Sub(o.Origin)))
			j.raw(`,"rotation":[`)
			for k, x := range q {
				if k > 0 {
					j.raw(",")
				}
				j.num(x)
			}
			j.raw(`],"extras":{"hole":`)
			j.str(d.Hole)
			j.raw(`,"depth":`)
			j.optNum(d.Depth)
			j.raw(`,"dip":`)
			j.optNum(d.Dip)
			j.raw(`,"dip_direction":`)
			j.optNum(d.DipDirection)
			j.raw(`,"type":`)
			j.str(d.Type)
			j.raw(`,"set":`)
			j.str(d.Set)
			if d.HasUncertainty() {
				j.raw(`,"uncertainty":`)
				j.optNum(d.Uncertainty)
			}
			j.raw("}")
			if _, ok := ConeOf(d, o); ok {
				j.raw(`,"children":[`)
				j.int(cone0 + cone)
				j.raw("]")
				cone++
			}
			j.raw("}")
		}
	}
	// Cone nodes, in the order of their discs.
	for ti := range L.types {
		for _, d := range L.discs {
			sc, ok := ConeOf(d, o)
			if L.typeIndex[L.group(d)] != ti || !ok {
				continue
			}
			sep()
			j.raw(`{"name":`)
			j.str(d.Hole + " " + strconv.FormatFloat(d.Depth, 'f', -1, 64) + " uncertainty")
			j.raw(`,"mesh":`)
			j.int(L.discMesh0 + len(L.types))
			j.raw(`,"scale":`)
			j.vec(sc)
			j.raw(`,"extras":{"cone95":`)
			j.num(d.Uncertainty)
			j.raw("}}")
		}
	}

	// Meshes.
	typeMat0 := 0
	if len(L.traces) > 0 {
		typeMat0 = 2
	}
	j.raw(`],"meshes":[`)
	first = true
	for i, t := range L.traces {
		sep()
		j.raw(`{"name":`)
		j.str(t.Hole)
		j.raw(`,"primitives":[`)
		for k, p := range L.tl[i].prims {
			if k > 0 {
				j.raw(",")
			}
			j.raw(`{"attributes":{"POSITION":`)
			j.int(p.accessor)
			j.raw(`},"mode":`)
			j.int(modeStrip)
			j.raw(`,"material":`)
			j.int(p.material)
			j.raw("}")
		}
		j.raw("]}")
	}
	for i, t := range L.types {
		sep()
		j.raw(`{"name":`)
		j.str(L.meshName(t))
		j.raw(`,"primitives":[{"attributes":{"POSITION":`)
		j.int(L.discAcc)
		j.raw(`,"NORMAL":`)
		j.int(L.discAcc + 1)
		j.raw(`},"indices":`)
		j.int(L.discAcc + 2)
		j.raw(`,"mode":`)
		j.int(modeTris)
		j.raw(`,"material":`)
		j.int(typeMat0 + i)
		j.raw("}]}")
	}
	if L.cones > 0 {
		sep()
		j.raw(`{"name":"uncertainty cone","primitives":[{"attributes":{"POSITION":`)
		j.int(L.coneAcc)
		j.raw(`},"indices":`)
		j.int(L.coneAcc + 1)
		j.raw(`,"mode":`)
		j.int(modeTris)
		j.raw(`,"material":`)
		j.int(typeMat0 + len(L.types))
		j.raw("}]}")
	}

	// Materials: the two trace materials (when there are traces), then one
	// per type.
	j.raw(`],"materials":[`)
	material := func(name string, c palette.RGB, doubleSided bool) {
		l := c.Linear()
		j.raw(`{"name":`)
		j.str(name)
		j.raw(`,"pbrMetallicRoughness":{"baseColorFactor":[`)
		for _, x := range l {
			j.num(x)
			j.raw(",")
		}
		j.raw(`1],"metallicFactor":0,"roughnessFactor":1}`)
		if doubleSided {
			j.raw(`,"doubleSided":true`)
		}
		j.raw("}")
	}
	first = true
	if len(L.traces) > 0 {
		sep()
		material("trace surveyed", palette.Trace, false)
		sep()
		material("trace extrapolated", palette.TraceExtrapolated, false)
	}
	for _, t := range L.types {
		sep()
		material(L.groupWord()+" "+t, o.Colours.Colour(t), true)
	}
	if L.cones > 0 {
		sep()
		j.raw(`{"name":"uncertainty 95%","pbrMetallicRoughness":{"baseColorFactor":[`)
		for _, x := range palette.Uncertainty.Linear() {
			j.num(x)
			j.raw(",")
		}
		j.raw(`0.35],"metallicFactor":0,"roughnessFactor":1},"alphaMode":"BLEND","doubleSided":true}`)
	}

	// Accessors: trace primitives, then the disc's positions, normals, indices.
	j.raw(`],"accessors":[`)
	first = true
	views := 0
	discView, traceView := -1, -1
	if len(L.discs) > 0 {
		discView = views
		views += 3
	}
	if L.traceBytes > 0 {
		traceView = views
		views++
	}
	coneView := views
	if L.cones > 0 {
		views += 2
	}
	for i := range L.traces {
		for _, p := range L.tl[i].prims {
			sep()
			j.raw(`{"bufferView":`)
			j.int(traceView)
			j.raw(`,"byteOffset":`)
			j.int(p.off)
			j.raw(`,"componentType":`)
			j.int(compFloat)
			j.raw(`,"count":`)
			j.int(p.n)
			j.raw(`,"type":"VEC3","min":`)
			j.vec32(p.minV)
			j.raw(`,"max":`)
			j.vec32(p.maxV)
			j.raw("}")
		}
	}
	s := o.DiscSegments
	if len(L.discs) > 0 {
		var lo, hi [3]float32
		for k := 0; k <= s; k++ {
			v := discVertex(k, s, o.DiscRadius)
			for c := 0; c < 3; c++ {
				lo[c] = min(lo[c], v[c])
				hi[c] = max(hi[c], v[c])
			}
		}
		sep()
		j.raw(`{"bufferView":`)
		j.int(discView)
		j.raw(`,"componentType":`)
		j.int(compFloat)
		j.raw(`,"count":`)
		j.int(s + 1)
		j.raw(`,"type":"VEC3","min":`)
		j.vec32(lo)
		j.raw(`,"max":`)
		j.vec32(hi)
		j.raw(`},{"bufferView":`)
		j.int(discView + 1)
		j.raw(`,"componentType":`)
		j.int(compFloat)
		j.raw(`,"count":`)
		j.int(s + 1)
		j.raw(`,"type":"VEC3"},{"bufferView":`)
		j.int(discView + 2)
		j.raw(`,"componentType":`)
		j.int(compUShort)
		j.raw(`,"count":`)
		j.int(3 * s)
		j.raw(`,"type":"SCALAR","min":[0],"max":[`)
		j.int(s)
		j.raw(`]}`)
	}
	if L.cones > 0 {
		sep()
		j.raw(`{"bufferView":`)
		j.int(coneView)
		j.raw(`,"componentType":`)
		j.int(compFloat)
		j.raw(`,"count":`)
		j.int(2*s + 1)
		var lo, hi [3]float32
		for k := 0; k <= 2*s; k++ {
			v := coneVertex(k, s)
			for c := 0; c < 3; c++ {
				lo[c] = min(lo[c], v[c])
				hi[c] = max(hi[c], v[c])
			}
		}
		j.raw(`,"type":"VEC3","min":`)
		j.vec32(lo)
		j.raw(`,"max":`)
		j.vec32(hi)
		j.raw(`},{"bufferView":`)
		j.int(coneView + 1)
		j.raw(`,"componentType":`)
		j.int(compUShort)
		j.raw(`,"count":`)
		j.int(L.coneIndexCount())
		j.raw(`,"type":"SCALAR","min":[0],"max":[`)
		j.int(2 * s)
		j.raw(`]}`)
	}

	// Buffer views and the buffer.
	j.raw(`],"bufferViews":[`)
	first = true
	view := func(off, length, target int) {
		sep()
		j.raw(`{"buffer":0,"byteOffset":`)
		j.int(off)
		j.raw(`,"byteLength":`)
		j.int(length)
		if target == targetVert {
			// Trace primitives share the view, which then needs a
			// stride (glTF 2.0 section 3.6.2.4).
			j.raw(`,"byteStride":12`)
		}
		j.raw(`,"target":`)
		j.int(target)
		j.raw("}")
	}
	if len(L.discs) > 0 {
		nv := 12 * (s + 1)
		view(0, nv, targetVert)
		view(nv, nv, targetVert)
		view(2*nv, 2*3*s, targetIdx)
	}
	if L.traceBytes > 0 {
		view(L.traceOff, L.traceBytes, targetVert)
	}
	if L.cones > 0 {
		view(L.coneOff, L.coneVertexBytes(), targetVert)
		view(L.coneOff+L.coneVertexBytes(), 2*L.coneIndexCount(), targetIdx)
	}
	j.raw(`],"buffers":[{"byteLength":`)
	j.int(L.binLen)
	if binName != "" {
		j.raw(`,"uri":`)
		j.str(url.PathEscape(binName))
	}
	j.raw("}]}")
	j.flush()
	return j.err
}
