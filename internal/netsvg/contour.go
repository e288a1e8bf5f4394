package netsvg

import (
	"math"
	"slices"

	"corvane/internal/density"
	"corvane/internal/geom"
	"corvane/internal/projection"
)

// Contours is a density surface sampled on a square grid over the net, ready
// for filled contouring. Grid[i][j] is the value at net position
// x = -Extent + 2 Extent i/(n-1), y = -Extent + 2 Extent j/(n-1); NaN marks a
// node where no direction projects.
type Contours struct {
	Grid   [][]float64
	Extent float64
	Levels []float64 // ascending; the region >= Levels[k] gets colour k
	Unit   string    // "MUD" or "sigma"
	Method string    // method name for the legend
	Max    float64   // largest value inside the primitive circle
	MaxAt  geom.Vec3 // where it occurs (lower hemisphere)
}

// gridExtent reaches a little beyond the primitive circle so that contours
// run smoothly up to it before being clipped.
const gridExtent = 1.02

// ContourGrid evaluates the estimator e on an n x n grid (n >= 8) over the net
// of projection k, in sigma units when sigma is true and in multiples of
// uniform density otherwise, and chooses default levels (see [NiceLevels]).
// Nodes just outside the primitive circle take the value of the direction
// that projects there from the upper hemisphere, which for axes equals the
// value at its antipode, so contours cross the primitive continuously.
func ContourGrid(k projection.Kind, e *density.Estimator, n int, sigma bool) *Contours {
	if n < 8 {
		n = 8
	}
	c := &Contours{Extent: gridExtent, Unit: "MUD", Method: e.Method().String(), Max: math.Inf(-1)}
	div := e.Expected()
	if sigma {
		c.Unit = "sigma"
		div = e.Sigma()
	}
	c.Grid = make([][]float64, n)
	for i := range c.Grid {
		c.Grid[i] = make([]float64, n)
		x := -gridExtent + 2*gridExtent*float64(i)/float64(n-1)
		for j := range c.Grid[i] {
			y := -gridExtent + 2*gridExtent*float64(j)/float64(n-1)
			v, ok := k.Inverse(projection.Point{X: x, Y: y})
			if !ok {
				c.Grid[i][j] = math.NaN()
				continue
			}
			val := e.Count(v) / div
			c.Grid[i][j] = val
			if math.Hypot(x, y) <= 1 && val > c.Max {
				c.Max, c.MaxAt = val, v.Lower()
			}
		}
	}
	c.Levels = NiceLevels(c.Max, c.Unit)
	return c
}

// NiceLevels returns up to about seven ascending contour levels below max:
// multiples of 2 sigma in sigma units (common practice for Kamb contours),
// and multiples of a round step (1, 2, 2.5 or 5 times a power of ten) in MUD.
func NiceLevels(max float64, unit string) []float64 {
	if !(max > 0) || math.IsInf(max, 0) {
		return nil
	}
	var step float64
	if unit == "sigma" {
		step = 2
		for max/step > 8 {
			step *= 2
		}
	} else {
		raw := max / 7
		p := math.Pow(10, math.Floor(math.Log10(raw)))
		for _, m := range []float64{1, 2, 2.5, 5, 10} {
			step = m * p
			if step >= raw {
				break
			}
		}
	}
	var out []float64
	for l := step; l < max; l += step {
		out = append(out, math.Round(l*1e9)/1e9)
	}
	return out
}

// rings returns the closed boundaries of the region {value >= level} of grid
// (marching squares with the saddle cells resolved by the cell-centre mean),
// as rings of net positions. The grid is padded with a border below every
// level, so every boundary closes; NaN nodes count as below the level. Filled
// with the even-odd rule the rings cover exactly the region, holes included.
func rings(g [][]float64, extent, level float64) [][]projection.Point {
	n := len(g)
	if n < 2 {
		return nil
	}
	m := n + 2 // padded size
	h := 2 * extent / float64(n-1)
	val := func(i, j int) float64 {
		if i == 0 || j == 0 || i == m-1 || j == m-1 {
			return math.Inf(-1)
		}
		v := g[i-1][j-1]
		if math.IsNaN(v) {
			return math.Inf(-1)
		}
		return v
	}
	pos := func(i int) float64 { return -extent + h*float64(i-1) }
	in := func(v float64) bool { return v >= level }
	// edge ids: horizontal edge from node (i,j) to (i+1,j) is 2(i m + j);
	// vertical edge from (i,j) to (i,j+1) is 2(i m + j) + 1.
	hE := func(i, j int) int { return 2 * (i*m + j) }
	vE := func(i, j int) int { return 2*(i*m+j) + 1 }
	nbr := make(map[int][2]int)
	link := func(a, b int) {
		for _, p := range [2][2]int{{a, b}, {b, a}} {
			s, ok := nbr[p[0]]
			if !ok {
				s = [2]int{-1, -1}
			}
			if s[0] < 0 {
				s[0] = p[1]
			} else {
				s[1] = p[1]
			}
			nbr[p[0]] = s
		}
	}
	for i := 0; i < m-1; i++ {
		for j := 0; j < m-1; j++ {
			a, b, c, d := val(i, j), val(i+1, j), val(i+1, j+1), val(i, j+1)
			cs := 0
			if in(a) {
				cs |= 1
			}
			if in(b) {
				cs |= 2
			}
			if in(c) {
				cs |= 4
			}
			if in(d) {
				cs |= 8
			}
			bottom, top, left, right := hE(i, j), hE(i, j+1), vE(i, j), vE(i+1, j)
			switch cs {
			case 0, 15:
			case 1, 14:
				link(left, bottom)
			case 2, 13:
				link(bottom, right)
			case 3, 12:
				link(left, right)
			case 4, 11:
				link(right, top)
			case 6, 9:
				link(bottom, top)
			case 7, 8:
				link(top, left)
			case 5, 10:
				centre := (a + b + c + d) / 4 // -Inf on the border, never a saddle there
				centreIn := in(centre)
				if (cs == 5) == centreIn {
					// the a-c diagonal is connected: cut off b and d
					link(bottom, right)
					link(top, left)
				} else {
					link(left, bottom)
					link(right, top)
				}
			}
		}
	}
	point := func(e int) projection.Point {
		k := e / 2
		i, j := k/m, k%m
		i2, j2 := i+1, j
		if e%2 == 1 {
			i2, j2 = i, j+1
		}
		va, vb := val(i, j), val(i2, j2)
		var t float64
		switch {
		case math.IsInf(va, -1):
			t = 1
		case math.IsInf(vb, -1):
			t = 0
		default:
			t = (level - va) / (vb - va)
		}
		x := pos(i) + t*(pos(i2)-pos(i))
		y := pos(j) + t*(pos(j2)-pos(j))
		return projection.Point{X: x, Y: y}
	}
	seen := make(map[int]bool, len(nbr))
	// deterministic order: walk edges by increasing id
	ids := make([]int, 0, len(nbr))
	for e := range nbr {
		ids = append(ids, e)
	}
	slices.Sort(ids)
	var out [][]projection.Point
	for _, start := range ids {
		if seen[start] {
			continue
		}
		var ring []projection.Point
		prev, cur := -1, start
		for {
			seen[cur] = true
			ring = append(ring, point(cur))
			s := nbr[cur]
			next := s[0]
			if next == prev || seen[next] {
				next = s[1]
			}
			if next < 0 || seen[next] {
				break
			}
			prev, cur = cur, next
		}
		if len(ring) >= 3 {
			out = append(out, ring)
		}
	}
	return out
}
