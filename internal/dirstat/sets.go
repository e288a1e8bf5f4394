package dirstat

import (
	"fmt"
	"math"
	"math/rand/v2"

	"corvane/internal/geom"
)

// Unassigned is the set index of a measurement that falls in no set.
const Unassigned = -1

// Window is a user-defined set: every axis within Cone degrees of the axis
// Centre belongs to it. For planes the centre is the pole.
type Window struct {
	Name   string
	Centre geom.Vec3 // unit vector; either end of the axis
	Cone   float64   // half-angle in degrees, (0, 90]
}

// AssignWindows returns, for each axis in vs, the index of the window it falls
// in, or Unassigned. An axis inside several windows goes to the one whose
// centre is nearest (smallest axial angle); an exact tie goes to the window
// listed first. It returns an error for a window with a bad cone or a zero
// centre.
func AssignWindows(vs []geom.Vec3, ws []Window) ([]int, error) {
	for i, w := range ws {
		if !(w.Cone > 0 && w.Cone <= 90) {
			return nil, fmt.Errorf("dirstat: window %d (%s): cone %v, want (0, 90] degrees", i+1, w.Name, w.Cone)
		}
		if w.Centre.Norm() == 0 {
			return nil, fmt.Errorf("dirstat: window %d (%s): zero centre", i+1, w.Name)
		}
	}
	out := make([]int, len(vs))
	for i, v := range vs {
		best, bestAng := Unassigned, math.Inf(1)
		for j, w := range ws {
			a := geom.AxialAngle(v, w.Centre.Unit())
			if a <= w.Cone && a < bestAng {
				best, bestAng = j, a
			}
		}
		out[i] = best
	}
	return out, nil
}

// Clustering is the result of [ClusterAxes].
type Clustering struct {
	Assign  []int       // set index per axis, 0..k-1
	Centres []geom.Vec3 // principal eigenvector of each set, lower hemisphere
	// Cost is sum w_i (1 - (v_i . c)^2) over all axes: the within-set
	// dispersion the method minimises.
	Cost       float64
	Iterations int // iterations of the best start
}

// ClusterMethod names the automatic set method for reports.
const ClusterMethod = "k-means on axes: distance 1 - (v.c)^2 between an axis v and a set " +
	"centre c (Hammah & Curran 1998), centre = principal eigenvector of the set's " +
	"orientation tensor (Scheidegger 1965), k-means++ seeding (Arthur & Vassilvitskii 2007), " +
	"best of several seeded starts"

// ClusterAxes groups the axes vs (optionally weighted by w) into k sets by
// k-means on the sphere for axial data (see [ClusterMethod]): each axis joins
// the set whose centre axis is nearest, each centre is then recomputed as the
// principal eigenvector of its set's orientation tensor, until no axis moves.
// starts seeded restarts (>= 1) are run and the lowest cost kept. The result
// depends only on the data, k, starts and seed. Sets are numbered by
// decreasing size (sum of weights).
//
// It returns an error when k < 1 or there are fewer axes than k.
func ClusterAxes(vs []geom.Vec3, w []float64, k, starts int, seed uint64) (Clustering, error) {
	if k < 1 {
		return Clustering{}, fmt.Errorf("dirstat: %d sets requested, want at least 1", k)
	}
	if len(vs) < k {
		return Clustering{}, fmt.Errorf("dirstat: %d axes cannot form %d sets: %w", len(vs), k, ErrTooFew)
	}
	if w != nil && len(w) != len(vs) {
		return Clustering{}, fmt.Errorf("dirstat: %d weights for %d vectors", len(w), len(vs))
	}
	if starts < 1 {
		starts = 1
	}
	rng := rand.New(rand.NewPCG(seed, 0x636f7276616e65)) // fixed stream per seed
	var best Clustering
	best.Cost = math.Inf(1)
	for s := 0; s < starts; s++ {
		c, err := kmeansAxes(vs, w, k, rng)
		if err != nil {
			return Clustering{}, err
		}
		if c.Cost < best.Cost-1e-12 {
			best = c
		}
	}
	relabelBySize(&best, w, k)
	return best, nil
}

func wAt(w []float64, i int) float64 {
	if w == nil {
		return 1
	}
	return w[i]
}

func axialDist(v, c geom.Vec3) float64 {
	d := v.Dot(c)
	return 1 - d*d
}

func kmeansAxes(vs []geom.Vec3, w []float64, k int, rng *rand.Rand) (Clustering, error) {
	n := len(vs)
	// k-means++ seeding with the axial distance.
	centres := make([]geom.Vec3, 0, k)
	centres = append(centres, vs[rng.IntN(n)].Unit())
	dmin := make([]float64, n)
	for i := range dmin {
		dmin[i] = axialDist(vs[i], centres[0])
	}
	for len(centres) < k {
		var tot float64
		for i, d := range dmin {
			tot += wAt(w, i) * d
		}
		pick := 0
		if tot > 0 {
			u := rng.Float64() * tot
			for i, d := range dmin {
				u -= wAt(w, i) * d
				if u <= 0 {
					pick = i
					break
				}
				pick = i
			}
		} else {
			pick = rng.IntN(n)
		}
		c := vs[pick].Unit()
		centres = append(centres, c)
		for i := range dmin {
			if d := axialDist(vs[i], c); d < dmin[i] {
				dmin[i] = d
			}
		}
	}
	assign := make([]int, n)
	for i := range assign {
		assign[i] = -1
	}
	var cost float64
	it := 0
	for ; it < 200; it++ {
		changed := false
		cost = 0
		for i, v := range vs {
			bj, bd := 0, math.Inf(1)
			for j, c := range centres {
				if d := axialDist(v, c); d < bd {
					bj, bd = j, d
				}
			}
			if assign[i] != bj {
				assign[i] = bj
				changed = true
			}
			cost += wAt(w, i) * bd
		}
		if !changed && it > 0 {
			break
		}
		// Recompute centres from each set's orientation tensor.
		ts := make([][6]float64, k)
		sw := make([]float64, k)
		for i, v := range vs {
			j, wi := assign[i], wAt(w, i)
			ts[j][0] += wi * v.X * v.X
			ts[j][1] += wi * v.X * v.Y
			ts[j][2] += wi * v.X * v.Z
			ts[j][3] += wi * v.Y * v.Y
			ts[j][4] += wi * v.Y * v.Z
			ts[j][5] += wi * v.Z * v.Z
			sw[j] += wi
		}
		for j := range centres {
			if sw[j] == 0 {
				// Empty set: restart it on the axis farthest from its centre.
				far, fd := 0, -1.0
				for i, v := range vs {
					if d := axialDist(v, centres[assign[i]]); d > fd {
						far, fd = i, d
					}
				}
				centres[j] = vs[far].Unit()
				continue
			}
			e, err := tensorEigen(ts[j], sw[j])
			if err != nil {
				return Clustering{}, err
			}
			centres[j] = e.Vectors[0]
		}
	}
	for j := range centres {
		centres[j] = centres[j].Lower()
	}
	return Clustering{Assign: assign, Centres: centres, Cost: cost, Iterations: it}, nil
}

// relabelBySize renumbers sets by decreasing total weight (ties by the
// centre's trend, so the order is stable).
func relabelBySize(c *Clustering, w []float64, k int) {
	size := make([]float64, k)
	for i, j := range c.Assign {
		size[j] += wAt(w, i)
	}
	order := make([]int, k)
	for i := range order {
		order[i] = i
	}
	// insertion sort: k is small
	for i := 1; i < k; i++ {
		for j := i; j > 0; j-- {
			a, b := order[j-1], order[j]
			ta, _ := c.Centres[a].TrendPlunge()
			tb, _ := c.Centres[b].TrendPlunge()
			if size[b] > size[a] || (size[b] == size[a] && tb < ta) {
				order[j-1], order[j] = b, a
			} else {
				break
			}
		}
	}
	newIdx := make([]int, k)
	cent := make([]geom.Vec3, k)
	for newI, old := range order {
		newIdx[old] = newI
		cent[newI] = c.Centres[old]
	}
	for i, j := range c.Assign {
		c.Assign[i] = newIdx[j]
	}
	c.Centres = cent
}

// DefaultTerzaghiCap is the default largest Terzaghi weight: 1/cos(70 deg) =
// 2.9238. Brady & Brown (2004, Rock Mechanics for Underground Mining, 3rd ed.),
// citing Goodman (1976), apply the correction only where the angle between the
// sampling line and the pole is at most 70 degrees.
var DefaultTerzaghiCap = 1 / math.Cos(geom.Rad(70))

// TerzaghiWeight returns the Terzaghi (1965) sampling-bias weight of a plane
// with unit pole n sampled along a line (a hole) with unit direction h:
// w = 1/|cos delta|, delta the angle between n and h, capped at maxW (>= 1).
// A plane parallel to the line (cos delta = 0) gets maxW. It panics if
// maxW < 1, a programmer error; callers validate user input first.
func TerzaghiWeight(n, h geom.Vec3, maxW float64) float64 {
	if !(maxW >= 1) {
		panic("dirstat: Terzaghi cap below 1")
	}
	c := math.Abs(n.Dot(h))
	if c*maxW <= 1 {
		return maxW
	}
	return 1 / c
}
