package uncertainty

import (
	"errors"
	"math"
	"math/rand/v2"

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

// setData is what both methods need of a set: each member's direction
// (world, sign towards the mean), the keys of its shared errors and their
// standard errors (radians), and the Fisher mean; the Monte Carlo method
// also keeps each member's exact model (the first-order one rebuilds a
// member's model when it needs it, which costs less than keeping them).
type setData struct {
	models        []*model // Monte Carlo only
	poles         []geom.Vec3
	sign          []float64
	runOf, survOf []int
	markSig       []float64
	survSig       [][2]float64
	f             dirstat.Fisher
	which         int // 0 poles, 1 lines
	res           SetResult
}

func (d *setData) dir(n, l geom.Vec3) geom.Vec3 { return pick(n, l)(d.which) }

// prepareSet reads the members (see setData); keep keeps their models.
func prepareSet(ms []Member, lines, keep bool) (*setData, error) {
	if len(ms) == 0 {
		return nil, dirstat.ErrTooFew
	}
	var block []model
	d := &setData{poles: make([]geom.Vec3, len(ms)), runOf: make([]int, len(ms)), survOf: make([]int, len(ms))}
	if keep {
		block, d.models = make([]model, len(ms)), make([]*model, len(ms))
	}
	if lines {
		d.which = 1
	}
	runs, survs := map[string]int{}, map[string]int{}
	var one model
	for i, m := range ms {
		md := &one
		if keep {
			md = &block[i]
			d.models[i] = md
		}
		if err := md.init(m.Reading); err != nil {
			return nil, err
		}
		if lines && !md.hasGamma {
			return nil, errors.New("uncertainty: a member of a set of lines has no gamma")
		}
		d.poles[i] = md.world(d.dir(md.eval(0, 0, 0, 0, 0)))
		k, ok := runs[m.Run]
		if !ok || m.Run == "" {
			k = len(d.markSig)
			d.markSig = append(d.markSig, geom.Rad(m.Sigma.Mark))
			if m.Run != "" {
				runs[m.Run] = k
			}
		}
		d.runOf[i] = k
		k, ok = survs[m.Survey]
		if !ok || m.Survey == "" {
			k = len(d.survSig)
			d.survSig = append(d.survSig, [2]float64{geom.Rad(m.Sigma.Azimuth), geom.Rad(m.Sigma.Dip)})
			if m.Survey != "" {
				survs[m.Survey] = k
			}
		}
		d.survOf[i] = k
	}
	f, err := dirstat.FisherMean(d.poles, nil, true)
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
	l := geom.LineOf(f.Mean)
	d.res = SetResult{N: len(ms), Trend: l.Trend, Plunge: l.Plunge, Fisher95: f.Cone95}
	return d, nil
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
// (coneOf, the rule of the per-measurement cones), as the Monte Carlo
// method reports the 95% quantile of the angle to the mean. Combined95 adds
// to the shared covariance an isotropic one whose 95% circle is the Fisher
// cone (per-axis variance Fisher95^2 / chi2(2, 0.95)), scaled by 1 -
// (SharedIndependent95/Fisher95)^2 as in the Monte Carlo method; it equals
// the Fisher cone without shared errors and the shared cone without
// scatter, and treats the Fisher distribution of the mean as normal, which
// narrows its tail for sets of very few members.
func setFirstOrder(ms []Member, lines bool) (SetResult, error) {
	d, err := prepareSet(ms, lines, false)
	if err != nil {
		return SetResult{}, err
	}
	mean := d.f.Mean
	t1 := perpendicular(mean)
	t2 := mean.Cross(t1)
	type cov struct{ a, b, c float64 }
	add := func(c *cov, j [2]float64, s float64) {
		c.a += j[0] * j[0] * s * s
		c.b += j[0] * j[1] * s * s
		c.c += j[1] * j[1] * s * s
	}
	marks := make([][2]float64, len(d.markSig))
	survs := make([][2][2]float64, len(d.survSig))
	var reading, indep cov
	var md model
	for i := range ms {
		if err := md.init(ms[i].Reading); err != nil {
			return SetResult{}, err
		}
		// The derivatives of the member's direction (model.partials, frame
		// coordinates) dotted with the tangent directions at the mean taken
		// to the member's frame, scaled by sign / R.
		n, l := md.eval(0, 0, 0, 0, 0)
		_, g := md.partials(n, l, d.which)
		sc := d.sign[i] / d.f.R
		a1, a2 := md.frameOf(t1).Scale(sc), md.frameOf(t2).Scale(sc)
		var js [5][2]float64
		for k := range js {
			js[k] = [2]float64{g[k].Dot(a1), g[k].Dot(a2)}
		}
		sig := ms[i].Sigma
		add(&reading, js[0], geom.Rad(sig.Alpha))
		add(&reading, js[1], geom.Rad(sig.Beta))
		if lines {
			add(&reading, js[2], geom.Rad(sig.Gamma))
		}
		add(&indep, js[1], geom.Rad(sig.Mark))
		add(&indep, js[3], geom.Rad(sig.Azimuth))
		add(&indep, js[4], geom.Rad(sig.Dip))
		r, s := d.runOf[i], d.survOf[i]
		for x := 0; x < 2; x++ {
			marks[r][x] += js[1][x]
			survs[s][0][x] += js[3][x]
			survs[s][1][x] += js[4][x]
		}
	}
	var shared cov
	for r, j := range marks {
		add(&shared, j, d.markSig[r])
	}
	for s, j := range survs {
		add(&shared, j[0], d.survSig[s][0])
		add(&shared, j[1], d.survSig[s][1])
	}
	deg2 := geom.Deg(1) * geom.Deg(1)
	cone := func(c cov) float64 { return cone95(c.a*deg2, c.b*deg2, c.c*deg2) }
	res := d.res
	res.Method = SetFirstOrder
	res.Measurement95 = cone(cov{shared.a + reading.a, shared.b + reading.b, shared.c + reading.c})
	res.Shared95 = cone(shared)
	res.SharedIndependent95 = cone(indep)
	res.Combined95 = res.Shared95
	if d.f.N >= 2 && res.Fisher95 > 0 {
		v := (1 - math.Pow(res.SharedIndependent95/res.Fisher95, 2)) * res.Fisher95 * res.Fisher95 / chi2q95
		v = math.Max(0, v) / deg2
		res.Combined95 = cone(cov{shared.a + v, shared.b, shared.c + v})
	}
	res.dominant()
	return res, nil
}

func setMean(ms []Member, mc MC, lines bool) (SetResult, error) {
	if len(ms) == 0 {
		return SetResult{}, dirstat.ErrTooFew
	}
	if mc.Draws < 100 {
		return SetResult{}, errors.New("uncertainty: a set needs at least 100 Monte Carlo draws")
	}
	d, err := prepareSet(ms, lines, true)
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
