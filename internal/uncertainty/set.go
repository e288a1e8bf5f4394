package uncertainty

import (
	"errors"
	"math"
	"math/rand/v2"
	"slices"
	"sync"

	"corvane/internal/dirstat"
	"corvane/internal/geom"
)

// Member is one measurement of a set and the keys of the errors it shares
// with other members: members with the same non-empty Run share one mark
// error (Sigma.Mark of the first of them), members with the same non-empty
// Survey share one survey azimuth and dip error (the hole interval between
// two survey stations; give holes distinct keys). An empty key is an error of
// the member's own.
type Member struct {
	Reading
	Run    string
	Survey string
}

// SetResult is the uncertainty of a set's mean pole.
type SetResult struct {
	N      int     `json:"n"`
	Trend  float64 `json:"trend"` // mean pole (Fisher mean of the axes), lower hemisphere
	Plunge float64 `json:"plunge"`
	// Fisher95 is the classical exact 95% cone of confidence of Fisher
	// (1953) from the scatter of the measured poles: the sampling
	// uncertainty of the mean (NaN for fewer than two poles).
	Fisher95 float64 `json:"fisher_95"`
	// Measurement95 is the 95% cone of the mean moved by the measurement
	// errors alone: readings per member, mark errors per run and survey
	// errors per survey interval (by Monte Carlo: drawn once per trial and
	// shared; by first order: their derivatives summed over the members
	// sharing them).
	Measurement95 float64 `json:"measurement_95"`
	// Shared95 is the same with the shared errors only (marks and surveys).
	// Independent reading errors already show in the scatter the Fisher cone
	// is computed from; shared errors do not, since they move whole runs or
	// intervals together.
	Shared95 float64 `json:"shared_95"`
	// Combined95 is the 95% cone of the mean from sampling and shared errors
	// together. Each trial moves the mean by the shared errors and by a
	// deviation drawn from the Fisher (1953) distribution of the mean (whose
	// 95% quantile is the exact cone), scaled down by
	// sqrt(1 - (SharedIndependent95/Fisher95)^2): the scatter behind the
	// Fisher cone already holds the shared errors once, as if they were
	// independent, and that part is not counted twice.
	Combined95 float64 `json:"combined_95"`
	// SharedIndependent95 is the cone of Shared95 with every member given
	// mark and survey errors of its own: what the Fisher cone already allows
	// for them.
	SharedIndependent95 float64 `json:"shared_independent_95"`
	// Dominant is "sampling" when the Fisher cone is the larger of Fisher95
	// and Measurement95, else "measurement".
	Dominant string `json:"dominant"`
	// Method is SetFirstOrder or SetMonteCarlo; Draws the Monte Carlo
	// trials (0 for first order).
	Method string `json:"method"`
	Draws  int    `json:"draws"`
}

// Methods of a set's measurement cones ([SetResult].Method).
const (
	SetFirstOrder = "first-order"
	SetMonteCarlo = "monte-carlo"
)

// SetMean returns the uncertainty of the mean pole of the members (see
// [SetResult]), by Monte Carlo with mc.Draws trials (at least 100) seeded by
// mc.Seed.
func SetMean(ms []Member, mc MC) (SetResult, error) { return setMean(ms, mc, false) }

// SetMeanLines is [SetMean] for the members' lineations (every member needs
// a gamma): the gamma reading is drawn per member besides alpha and beta.
func SetMeanLines(ms []Member, mc MC) (SetResult, error) { return setMean(ms, mc, true) }

// SetMeanFirstOrder is [SetMean] by first-order propagation (see
// setFirstOrder): no draws, the same figures.
func SetMeanFirstOrder(ms []Member) (SetResult, error) { return setFirstOrder(ms, false) }

// SetMeanLinesFirstOrder is [SetMeanLines] by first-order propagation.
func SetMeanLinesFirstOrder(ms []Member) (SetResult, error) { return setFirstOrder(ms, true) }

// setKeys numbers the shared errors of a set's members: runOf[i] and
// survOf[i] index member i's mark error and survey error, whose standard
// errors (radians, of the first member sharing them) are markSig and
// survSig.
type setKeys struct {
	runs, survs       map[string]int32 // numbered by key
	lastRun, lastSurv string
	prevRun, prevSurv int32
	nRun, nSurv       int32
	runGroup          []int // the index in markSig of each key's number
	survGroup         []int
	runOf, survOf     []int
	markSig           []float64
	survSig           [][2]float64
}

func newSetKeys(n int) setKeys {
	return setKeys{runs: map[string]int32{}, survs: map[string]int32{}, runOf: make([]int, n), survOf: make([]int, n)}
}

// add numbers member i, m.
func (k *setKeys) add(i int, m *Member) {
	r := key(m.Run, &k.lastRun, k.runs, &k.nRun, k.prevRun)
	k.prevRun = r
	if r < 0 || int(r) == len(k.runGroup) { // an error of its own, or a new key
		if r >= 0 {
			k.runGroup = append(k.runGroup, len(k.markSig))
		}
		k.markSig = append(k.markSig, geom.Rad(m.Sigma.Mark))
		k.runOf[i] = len(k.markSig) - 1
	} else {
		k.runOf[i] = k.runGroup[r]
	}
	s := key(m.Survey, &k.lastSurv, k.survs, &k.nSurv, k.prevSurv)
	k.prevSurv = s
	if s < 0 || int(s) == len(k.survGroup) {
		if s >= 0 {
			k.survGroup = append(k.survGroup, len(k.survSig))
		}
		k.survSig = append(k.survSig, [2]float64{geom.Rad(m.Sigma.Azimuth), geom.Rad(m.Sigma.Dip)})
		k.survOf[i] = len(k.survSig) - 1
	} else {
		k.survOf[i] = k.survGroup[s]
	}
}

// setData is what the Monte Carlo method needs of a set: each member's
// exact model and direction (world, sign towards the mean), the keys of its
// shared errors, and the Fisher mean.
type setData struct {
	setKeys
	models []*model
	poles  []geom.Vec3
	sign   []float64
	f      dirstat.Fisher
	which  int // 0 poles, 1 lines
	res    SetResult
}

func (d *setData) dir(n, l geom.Vec3) geom.Vec3 { return pick(n, l)(d.which) }

// errNoGamma is the error of a set of lines with a member without one.
var errNoGamma = errors.New("uncertainty: a member of a set of lines has no gamma")

// prepareSet reads the members (see setData).
func prepareSet(ms []Member, lines bool) (*setData, error) {
	if len(ms) == 0 {
		return nil, dirstat.ErrTooFew
	}
	block := make([]model, len(ms))
	d := &setData{setKeys: newSetKeys(len(ms)), models: make([]*model, len(ms)), poles: make([]geom.Vec3, len(ms))}
	if lines {
		d.which = 1
	}
	for i := range ms {
		md := &block[i]
		if err := md.init(ms[i].Reading); err != nil {
			return nil, err
		}
		if lines && !md.hasGamma {
			return nil, errNoGamma
		}
		d.models[i] = md
		d.poles[i] = md.world(d.dir(md.eval(0, 0, 0, 0, 0)))
		d.add(i, &ms[i])
	}
	f, err := dirstat.FisherMeanNoSpread(d.poles, nil, true)
	if err != nil {
		return nil, err
	}
	d.f = f
	d.sign = make([]float64, len(ms))
	for i, p := range d.poles {
		d.sign[i] = 1
		if p.Dot(f.Mean) < 0 {
			d.sign[i] = -1
		}
	}
	d.res = setResultOf(len(ms), f)
	return d, nil
}

// setResultOf is the part of a set's result both methods share: the mean
// and its Fisher cone.
func setResultOf(n int, f dirstat.Fisher) SetResult {
	l := geom.LineOf(f.Mean)
	return SetResult{N: n, Trend: l.Trend, Plunge: l.Plunge, Fisher95: f.Cone95}
}

// dominant sets res.Dominant from its cones.
func (r *SetResult) dominant() {
	r.Dominant = "measurement"
	if r.Fisher95 >= r.Measurement95 {
		r.Dominant = "sampling"
	}
}

// setFirstOrder is the first-order (linear) propagation of the members'
// errors into the mean direction. The mean is S/R with S the sum of the
// sign-aligned directions and R = |S|, so an error e moves it by
// (I - m m^T) dS/de / R; its tangent-plane components at the mean m (two
// perpendicular directions) form J_e, where dS/de sums the derivatives of
// the directions of the members sharing the source (each measurement's
// exact derivatives, model.partials): one mark error per run, one survey
// azimuth and dip error per survey key, alpha, beta (and gamma for lines)
// per member. The covariance of the mean's deviation is the sum of
// J_e J_e^T sigma_e^2; a cone is the radius of the circle about the mean
// that holds 95% of the centred bivariate normal with that covariance
// (cone95, the rule of the per-measurement cones), as the Monte Carlo
// method reports the 95% quantile of the angle to the mean. Combined95 adds
// to the shared covariance an isotropic one whose 95% circle is the Fisher
// cone (per-axis variance Fisher95^2 / chi2(2, 0.95)), scaled by 1 -
// (SharedIndependent95/Fisher95)^2 as in the Monte Carlo method; it equals
// the Fisher cone without shared errors and the shared cone without
// scatter, and treats the Fisher distribution of the mean as normal, which
// narrows its tail for sets of very few members.
func setFirstOrder(ms []Member, lines bool) (SetResult, error) {
	t := NewFirstOrderTerms(lines, len(ms))
	defer t.Release()
	idx := make([]int, len(ms))
	for i := range ms {
		idx[i] = t.Add(&ms[i])
	}
	return t.SetMean(idx)
}

// FirstOrderTerms holds what the first-order method needs of each member of
// sets drawn from one pool of measurements (a report's "all" and each of its
// sets): each member is read once ([FirstOrderTerms.Add]) and the cones of
// any set of them are then sums ([FirstOrderTerms.SetMean]), the same as
// [SetMeanFirstOrder] of those members (or [SetMeanLinesFirstOrder]). Its
// storage is reused after [FirstOrderTerms.Release]. Not safe for
// concurrent use.
type FirstOrderTerms struct {
	lines bool
	terms []term
	bad   map[int]error // the members that could not be read
	// Every run and survey key, numbered in the order first added.
	runs, survs       map[string]int32
	lastRun, lastSurv string // the keys of the member added last
	prevRun, prevSurv int32  // and their numbers
	nRun, nSurv       int32
	// Buffers of SetMean.
	dirs               []geom.Vec3
	markSums, survSums groups
}

// term is what SetMean needs of a member: its direction (world frame), the
// outer products g g^T sigma^2 of its derivatives (model.partials) by its
// reading errors and by its shared errors taken as its own, its derivatives
// by the shared errors (mark, survey azimuth and dip) and their standard
// errors (radians), and the numbers of its run and survey keys (-1 for an
// error of its own).
type term struct {
	dir            geom.Vec3
	reading, indep sym3
	g              [3]geom.Vec3
	sig            [3]float64
	run, surv      int32
}

// groupSum is the sum over a set's members sharing an error of their
// derivatives by it (two for a survey: azimuth and dip), and the standard
// error of the first of them; seen says the set has a member in the group.
type groupSum struct {
	g    [2]geom.Vec3
	sig  [2]float64
	seen bool
}

// groups are the sums of a set's groups of one kind (runs or surveys) by
// key number, and the numbers in use.
type groups struct {
	sums []groupSum
	used []int32
}

// size makes room for n key numbers.
func (gs *groups) size(n int32) {
	if len(gs.sums) < int(n) {
		gs.sums = make([]groupSum, n)
	}
}

// add adds a member's derivatives g by its errors of standard errors sig,
// turned by sgn, to the group numbered k; an error of its own (k < 0) goes
// straight to own as a group of one.
func (gs *groups) add(k int32, g [2]geom.Vec3, sig [2]float64, sgn float64, own *sym3) {
	if k < 0 {
		own.add(g[0], sig[0])
		own.add(g[1], sig[1])
		return
	}
	s := &gs.sums[k]
	if !s.seen {
		*s = groupSum{sig: sig, seen: true}
		gs.used = append(gs.used, k)
	}
	s.g[0] = s.g[0].Add(g[0].Scale(sgn))
	s.g[1] = s.g[1].Add(g[1].Scale(sgn))
}

// flush adds each group's outer products to m and empties the groups.
func (gs *groups) flush(m *sym3) {
	for _, k := range gs.used {
		s := &gs.sums[k]
		m.add(s.g[0], s.sig[0])
		m.add(s.g[1], s.sig[1])
		*s = groupSum{}
	}
	gs.used = gs.used[:0]
}

var termsPool = sync.Pool{New: func() any { return new(FirstOrderTerms) }}

// NewFirstOrderTerms returns empty terms for sets of poles or, with lines,
// of lineations, with room for n members.
func NewFirstOrderTerms(lines bool, n int) *FirstOrderTerms {
	t := termsPool.Get().(*FirstOrderTerms)
	t.lines, t.terms, t.bad = lines, slices.Grow(t.terms[:0], n), nil
	if t.runs == nil {
		t.runs, t.survs = map[string]int32{}, map[string]int32{}
	}
	clear(t.runs)
	clear(t.survs)
	t.lastRun, t.lastSurv, t.nRun, t.nSurv = "", "", 0, 0
	return t
}

// Release gives t's storage back for reuse; t is not used after.
func (t *FirstOrderTerms) Release() {
	t.lastRun, t.lastSurv = "", ""
	clear(t.runs)
	clear(t.survs)
	termsPool.Put(t)
}

// Add reads member m and returns its number for SetMean. A member that
// cannot be read (a vertical hole; no gamma in a set of lines) makes every
// set holding it fail with that error, as SetMeanFirstOrder would.
func (t *FirstOrderTerms) Add(m *Member) int {
	i := len(t.terms)
	t.terms = append(t.terms, term{})
	tm := &t.terms[i]
	var md model
	err := md.init(m.Reading)
	if err == nil && t.lines && !md.hasGamma {
		err = errNoGamma
	}
	if err != nil {
		if t.bad == nil {
			t.bad = map[int]error{}
		}
		t.bad[i] = err
		return i
	}
	which := 0
	if t.lines {
		which = 1
	}
	n, l := md.eval(0, 0, 0, 0, 0)
	v, g := md.partials(n, l, which)
	tm.dir = md.world(v)
	sg := m.Sigma
	gb := md.world(g[1])
	tm.reading.add(md.world(g[0]), geom.Rad(sg.Alpha))
	tm.reading.add(gb, geom.Rad(sg.Beta))
	if t.lines {
		tm.reading.add(md.world(g[2]), geom.Rad(sg.Gamma))
	}
	tm.g = [3]geom.Vec3{gb, md.world(g[3]), md.world(g[4])}
	tm.sig = [3]float64{geom.Rad(sg.Mark), geom.Rad(sg.Azimuth), geom.Rad(sg.Dip)}
	for k := range tm.g {
		tm.indep.add(tm.g[k], tm.sig[k])
	}
	// Keys: members of a run or a survey interval usually come one after
	// another, so the previous member's are tried first.
	tm.run = key(m.Run, &t.lastRun, t.runs, &t.nRun, t.prevRun)
	tm.surv = key(m.Survey, &t.lastSurv, t.survs, &t.nSurv, t.prevSurv)
	t.prevRun, t.prevSurv = tm.run, tm.surv
	return i
}

// key returns the number of key k (-1 for ""), numbering a new one n and
// counting it; last and prev are the previous member's key and number,
// tried first, and last becomes k.
func key(k string, last *string, keys map[string]int32, n *int32, prev int32) int32 {
	if k == "" {
		*last = ""
		return -1
	}
	if k == *last {
		return prev
	}
	r, ok := keys[k]
	if !ok {
		r = *n
		*n++
		keys[k] = r
	}
	*last = k
	return r
}

// SetMean returns the first-order uncertainty of the mean of the members
// idx (numbers from Add): see setFirstOrder.
func (t *FirstOrderTerms) SetMean(idx []int) (SetResult, error) {
	if len(idx) == 0 {
		return SetResult{}, dirstat.ErrTooFew
	}
	if t.bad != nil {
		for _, i := range idx {
			if err := t.bad[i]; err != nil {
				return SetResult{}, err
			}
		}
	}
	dirs := grow(t.dirs, len(idx))
	t.dirs = dirs
	for j, i := range idx {
		dirs[j] = t.terms[i].dir
	}
	f, err := dirstat.FisherMeanNoSpread(dirs, nil, true)
	if err != nil {
		return SetResult{}, err
	}
	// The reading errors, and the shared errors taken per member, enter as
	// outer products g g^T sigma^2, which depend neither on the member's sign
	// towards the mean nor on the tangent plane at it. The shared sources'
	// derivatives are summed over the members sharing them, each member
	// turned towards the mean; an error of a member's own is a group of one.
	var reading, indep, own sym3
	t.markSums.size(t.nRun)
	t.survSums.size(t.nSurv)
	for _, i := range idx {
		tm := &t.terms[i]
		for k := range reading {
			reading[k] += tm.reading[k]
			indep[k] += tm.indep[k]
		}
		sgn := 1.0
		if tm.dir.Dot(f.Mean) < 0 {
			sgn = -1
		}
		t.markSums.add(tm.run, [2]geom.Vec3{tm.g[0]}, [2]float64{tm.sig[0]}, sgn, &own)
		t.survSums.add(tm.surv, [2]geom.Vec3{tm.g[1], tm.g[2]}, [2]float64{tm.sig[1], tm.sig[2]}, sgn, &own)
	}
	shared := own
	t.markSums.flush(&shared)
	t.survSums.flush(&shared)
	// The tangent-plane components at the mean, divided by R.
	p := perpendicular(f.Mean)
	t1, t2 := p.Scale(1/f.R), f.Mean.Cross(p).Scale(1/f.R)
	deg2 := geom.Deg(1) * geom.Deg(1)
	type cov struct{ a, b, c float64 }
	proj := func(m *sym3) cov { return cov{m.quad(t1, t1), m.quad(t1, t2), m.quad(t2, t2)} }
	cone := func(c cov) float64 { return cone95(c.a*deg2, c.b*deg2, c.c*deg2) }
	sh, rd, in := proj(&shared), proj(&reading), proj(&indep)
	res := setResultOf(len(idx), f)
	res.Method = SetFirstOrder
	res.Measurement95 = cone(cov{sh.a + rd.a, sh.b + rd.b, sh.c + rd.c})
	res.Shared95 = cone(sh)
	res.SharedIndependent95 = cone(in)
	res.Combined95 = res.Shared95
	if f.N >= 2 && res.Fisher95 > 0 {
		v := (1 - math.Pow(res.SharedIndependent95/res.Fisher95, 2)) * res.Fisher95 * res.Fisher95 / chi2q95
		v = math.Max(0, v) / deg2
		res.Combined95 = cone(cov{sh.a + v, sh.b, sh.c + v})
	}
	res.dominant()
	return res, nil
}

// grow returns s resliced to length n, reallocated if its capacity is short.
func grow[T any](s []T, n int) []T { return slices.Grow(s[:0], n)[:n] }

// sym3 is a symmetric 3x3 matrix: xx, xy, xz, yy, yz, zz.
type sym3 [6]float64

// add adds s^2 g g^T.
func (m *sym3) add(g geom.Vec3, s float64) {
	x, y, z := g.X*s, g.Y*s, g.Z*s
	m[0] += x * x
	m[1] += x * y
	m[2] += x * z
	m[3] += y * y
	m[4] += y * z
	m[5] += z * z
}

// quad returns a^T m b.
func (m *sym3) quad(a, b geom.Vec3) float64 {
	return a.X*(m[0]*b.X+m[1]*b.Y+m[2]*b.Z) + a.Y*(m[1]*b.X+m[3]*b.Y+m[4]*b.Z) + a.Z*(m[2]*b.X+m[4]*b.Y+m[5]*b.Z)
}

func setMean(ms []Member, mc MC, lines bool) (SetResult, error) {
	if len(ms) == 0 {
		return SetResult{}, dirstat.ErrTooFew
	}
	if mc.Draws < 100 {
		return SetResult{}, errors.New("uncertainty: a set needs at least 100 Monte Carlo draws")
	}
	d, err := prepareSet(ms, lines)
	if err != nil {
		return SetResult{}, err
	}
	dir, models, sign, f := d.dir, d.models, d.sign, d.f
	runOf, survOf, markSig, survSig := d.runOf, d.survOf, d.markSig, d.survSig
	mean := f.Mean
	res := d.res
	res.Method, res.Draws = SetMonteCarlo, mc.Draws

	r := rand.New(rand.NewPCG(mc.Seed, 0x736574)) // stream: "set"
	all, shared, indep, comb := make([]float64, mc.Draws), make([]float64, mc.Draws), make([]float64, mc.Draws), make([]float64, mc.Draws)
	sms := make([]geom.Vec3, mc.Draws)
	devs := make([][3]float64, mc.Draws) // Fisher deviation: cos, and the direction's cos, sin
	nf := float64(f.N)
	var markSC [][2]float64
	var survSC [][4]float64
	for t := 0; t < mc.Draws; t++ {
		// One draw per run and per survey interval, shared by their members.
		markSC, survSC = markSC[:0], survSC[:0]
		for _, s := range markSig {
			sn, c := sincos(s * r.NormFloat64())
			markSC = append(markSC, [2]float64{sn, c})
		}
		for _, s := range survSig {
			sa, ca := sincos(s[0] * r.NormFloat64())
			sd, cd := sincos(s[1] * r.NormFloat64())
			survSC = append(survSC, [4]float64{sa, ca, sd, cd})
		}
		var sumAll, sumShared, sumIndep geom.Vec3
		for i, md := range models {
			sv, mk := survSC[survOf[i]], markSC[runOf[i]]
			sig := ms[i].Sigma
			// Shared errors only: the mark and the survey interval's.
			tab := [10]float64{0, 1, mk[0], mk[1], 0, 1, sv[0], sv[1], sv[2], sv[3]}
			sumShared = sumShared.Add(md.world(dir(md.evalSC(&tab))).Scale(sign[i]))
			// All errors: the member's readings added to the shared ones
			// (beta reading and mark add as angles).
			tab[0], tab[1] = sincos(geom.Rad(sig.Alpha) * r.NormFloat64())
			sb, cb := sincos(geom.Rad(sig.Beta) * r.NormFloat64())
			tab[2], tab[3] = sb*mk[1]+cb*mk[0], cb*mk[1]-sb*mk[0]
			if lines {
				tab[4], tab[5] = sincos(geom.Rad(sig.Gamma) * r.NormFloat64())
			}
			sumAll = sumAll.Add(md.world(dir(md.evalSC(&tab))).Scale(sign[i]))
			// The shared sources drawn for this member alone.
			v := dir(md.eval(0, geom.Rad(sig.Mark)*r.NormFloat64(), 0, geom.Rad(sig.Azimuth)*r.NormFloat64(), geom.Rad(sig.Dip)*r.NormFloat64()))
			sumIndep = sumIndep.Add(md.world(v).Scale(sign[i]))
		}
		all[t] = geom.Angle(sumAll, mean)
		sms[t] = sumShared.Unit()
		shared[t] = geom.Angle(sms[t], mean)
		indep[t] = geom.Angle(sumIndep, mean)
		// Sampling deviation: invert the exact cone, cos a = 1 - (N-R)/R
		// ((1/p)^(1/(N-1)) - 1), at p = U uniform, so that P(angle > a_p) = p;
		// its direction about the mean is uniform.
		devs[t][0] = 1
		if f.N >= 2 && f.R < nf {
			c := 1 - (nf-f.R)/f.R*(math.Pow(1/r.Float64(), 1/(nf-1))-1)
			devs[t][0] = math.Max(-1, math.Min(1, c))
		}
		devs[t][2], devs[t][1] = math.Sincos(2 * math.Pi * r.Float64())
	}
	k := quantileRank(mc.Draws, 0.95)
	var buf []float64
	res.Measurement95 = kthLargest(all, k, math.Inf(-1), &buf)
	res.Shared95 = kthLargest(shared, k, math.Inf(-1), &buf)
	res.SharedIndependent95 = kthLargest(indep, k, math.Inf(-1), &buf)
	scale := 1.0
	if f.N >= 2 && res.Fisher95 > 0 {
		scale = math.Sqrt(math.Max(0, 1-math.Pow(res.SharedIndependent95/res.Fisher95, 2)))
	}
	for t, sm := range sms {
		a := scale * math.Acos(devs[t][0])
		s, c := math.Sincos(a)
		t1 := perpendicular(sm)
		t2 := sm.Cross(t1)
		dev := sm.Scale(c).Add(t1.Scale(s * devs[t][1])).Add(t2.Scale(s * devs[t][2]))
		comb[t] = geom.Angle(dev, mean)
	}
	res.Combined95 = kthLargest(comb, k, math.Inf(-1), &buf)
	res.dominant()
	return res, nil
}

// perpendicular returns a unit vector perpendicular to the unit vector v.
func perpendicular(v geom.Vec3) geom.Vec3 {
	a := geom.Vec3{Z: 1}
	if math.Abs(v.Z) > 0.9 {
		a = geom.Vec3{X: 1}
	}
	return a.Sub(v.Scale(a.Dot(v))).Unit()
}
