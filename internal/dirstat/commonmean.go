package dirstat

import (
	"fmt"

	"gonum.org/v1/gonum/stat/distuv"

	"corvane/internal/geom"
)

// CommonMean is the result of [CommonMeanTest].
type CommonMean struct {
	Samples int     // number of samples r
	N       int     // total count
	SumR    float64 // sum of the samples' resultant lengths
	R       float64 // resultant length of all samples pooled
	F       float64 // the test statistic
	DF1     int     // 2(r - 1)
	DF2     int     // 2(N - r)
	P       float64 // P(F(DF1, DF2) >= F): small values reject a common mean
}

// CommonMeanMethod names the test for reports.
const CommonMeanMethod = "test for a common mean direction of Fisher samples with a common concentration " +
	"(Watson 1956; Fisher, Lewis & Embleton 1987, Statistical Analysis of Spherical Data, section 7.2): " +
	"F = (N - r)(sum R_i - R) / ((r - 1)(N - sum R_i)) against F(2(r-1), 2(N-r)); " +
	"it assumes Fisher-distributed samples sharing one concentration, and is approximate for small concentrations"

// CommonMeanTest tests whether the samples (r >= 2, each of at least 2 unit
// vectors) share one mean direction, assuming each is Fisher distributed
// with the same concentration (see [CommonMeanMethod]). For axes (poles of
// planes, lines; axial true) every vector is first turned to the hemisphere
// of the principal axis of all samples pooled, so that the sense in which an
// axis was given does not matter; this suits sets that lie well away from
// the plane normal to that axis.
func CommonMeanTest(samples [][]geom.Vec3, axial bool) (CommonMean, error) {
	r := len(samples)
	if r < 2 {
		return CommonMean{}, fmt.Errorf("dirstat: %d samples, want at least 2: %w", r, ErrTooFew)
	}
	var all []geom.Vec3
	for i, s := range samples {
		if len(s) < 2 {
			return CommonMean{}, fmt.Errorf("dirstat: sample %d has %d vectors, want at least 2: %w", i+1, len(s), ErrTooFew)
		}
		all = append(all, s...)
	}
	var ref geom.Vec3
	if axial {
		e, err := Tensor(all, nil)
		if err != nil {
			return CommonMean{}, err
		}
		ref = e.Vectors[0]
	}
	turn := func(v geom.Vec3) geom.Vec3 {
		v = v.Unit()
		if axial && v.Dot(ref) < 0 {
			return v.Neg()
		}
		return v
	}
	res := CommonMean{Samples: r, N: len(all)}
	var pooled geom.Vec3
	for _, s := range samples {
		var sum geom.Vec3
		for _, v := range s {
			sum = sum.Add(turn(v))
		}
		res.SumR += sum.Norm()
		pooled = pooled.Add(sum)
	}
	res.R = pooled.Norm()
	n := float64(res.N)
	res.DF1, res.DF2 = 2*(r-1), 2*(res.N-r)
	if n-res.SumR <= 0 {
		return CommonMean{}, fmt.Errorf("dirstat: every sample has zero dispersion; the test needs some spread")
	}
	res.F = (n - float64(r)) * (res.SumR - res.R) / (float64(r-1) * (n - res.SumR))
	if res.F < 0 {
		res.F = 0 // rounding when the means coincide
	}
	res.P = distuv.F{D1: float64(res.DF1), D2: float64(res.DF2)}.Survival(res.F)
	return res, nil
}
