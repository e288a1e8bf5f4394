package dirstat

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"

	"corvane/internal/geom"
)

// Eigen is the eigen-analysis of the normalised orientation tensor
//
//	T = sum w_i v_i v_i^T / sum w_i
//
// (Scheidegger 1965; Woodcock 1977), which is the same for v_i and -v_i, so it
// suits axes. Values are the eigenvalues S1 >= S2 >= S3, summing to 1; Vectors
// are the matching unit eigenvectors, each folded into the lower hemisphere.
type Eigen struct {
	Values  [3]float64
	Vectors [3]geom.Vec3
}

// Tensor returns the eigenvalues and eigenvectors of the orientation tensor of
// vs with optional weights w (nil for none), computed with gonum's
// mat.EigenSym. It returns ErrTooFew for no vectors.
func Tensor(vs []geom.Vec3, w []float64) (Eigen, error) {
	if len(vs) == 0 {
		return Eigen{}, ErrTooFew
	}
	if w != nil && len(w) != len(vs) {
		return Eigen{}, fmt.Errorf("dirstat: %d weights for %d vectors", len(w), len(vs))
	}
	var t [6]float64 // xx xy xz yy yz zz
	var sw float64
	for i, v := range vs {
		wi := 1.0
		if w != nil {
			wi = w[i]
		}
		t[0] += wi * v.X * v.X
		t[1] += wi * v.X * v.Y
		t[2] += wi * v.X * v.Z
		t[3] += wi * v.Y * v.Y
		t[4] += wi * v.Y * v.Z
		t[5] += wi * v.Z * v.Z
		sw += wi
	}
	if !(sw > 0) {
		return Eigen{}, errors.New("dirstat: weights sum to zero")
	}
	return tensorEigen(t, sw)
}

func tensorEigen(t [6]float64, sw float64) (Eigen, error) {
	for i := range t {
		t[i] /= sw
	}
	s := mat.NewSymDense(3, []float64{
		t[0], t[1], t[2],
		t[1], t[3], t[4],
		t[2], t[4], t[5],
	})
	var es mat.EigenSym
	if !es.Factorize(s, true) {
		return Eigen{}, errors.New("dirstat: eigen-decomposition did not converge")
	}
	vals := es.Values(nil) // ascending
	var vecs mat.Dense
	es.VectorsTo(&vecs)
	var e Eigen
	for k := 0; k < 3; k++ {
		j := 2 - k
		e.Values[k] = vals[j]
		if e.Values[k] < 0 { // rounding for degenerate data
			e.Values[k] = 0
		}
		e.Vectors[k] = geom.Vec3{X: vecs.At(0, j), Y: vecs.At(1, j), Z: vecs.At(2, j)}.Unit().Lower()
	}
	return e, nil
}

// Shape holds fabric shape and strength measures from the eigenvalues
// S1 >= S2 >= S3 (sum 1) of the orientation tensor.
//
// Woodcock (1977): K = ln(S1/S2) / ln(S2/S3) (K < 1 girdles, K > 1 clusters),
// C = ln(S1/S3) (strength). Vollmer (1990): P = S1 - S2 (point), G = 2(S2 - S3)
// (girdle), R = 3 S3 (random), P + G + R = 1, and B = P + G (cohesion).
//
// Where Woodcock's ratios have no finite value the measure is +Inf or NaN and
// KNote or CNote says why (they are empty otherwise):
//   - S2 = S3 < S1 (a uniaxial cluster, e.g. identical axes): ln(S2/S3) = 0,
//     K = +Inf;
//   - S1 = S2 = S3 (uniform): K = 0/0, NaN;
//   - S3 = 0 (every axis in one plane, the girdle side): ln(S1/S3) = +Inf, so
//     C = +Inf, and K = ln(S1/S2)/+Inf = 0 when S2 > 0 (a girdle), or +Inf when
//     S2 = 0 too (a perfect cluster).
//
// Eigenvalues within [EigenTol] of each other count as equal and those below
// it as zero: differences that small are rounding noise of the
// eigendecomposition, and a ratio of two such noises would be meaningless.
type Shape struct {
	K, C         float64
	P, G, R      float64
	B            float64
	KNote, CNote string
}

// EigenTol is the difference below which two eigenvalues of a normalised
// orientation tensor (sum 1) count as equal in [ShapeOf]; eigenvalues are
// computed in float64 with errors of a few 1e-16.
const EigenTol = 1e-12

// ShapeOf returns the shape measures of e.
func ShapeOf(e Eigen) Shape {
	s1, s2, s3 := e.Values[0], e.Values[1], e.Values[2]
	sh := Shape{
		P: s1 - s2,
		G: 2 * (s2 - s3),
		R: 3 * s3,
	}
	sh.B = sh.P + sh.G
	zero := func(x float64) bool { return x < EigenTol }
	equal := func(a, b float64) bool { return math.Abs(a-b) < EigenTol }

	// C = ln(S1/S3); S1 >= 1/3 is never zero.
	if zero(s3) {
		sh.C = math.Inf(1)
		sh.CNote = "infinite: S3 = 0, every axis lies in one plane (Woodcock 1977, C = ln(S1/S3))"
	} else {
		sh.C = math.Log(s1 / s3)
	}

	// K = ln(S1/S2) / ln(S2/S3).
	var num, den float64
	switch {
	case zero(s2):
		num = math.Inf(1)
	case equal(s1, s2):
		num = 0
	default:
		num = math.Log(s1 / s2)
	}
	switch {
	case zero(s2) || equal(s2, s3):
		den = 0
	case zero(s3):
		den = math.Inf(1)
	default:
		den = math.Log(s2 / s3)
	}
	switch {
	case den == 0 && num == 0:
		sh.K = math.NaN()
		sh.KNote = "undefined: S1 = S2 = S3, a uniform distribution (Woodcock 1977, K = ln(S1/S2)/ln(S2/S3) = 0/0)"
	case den == 0:
		sh.K = math.Inf(1)
		sh.KNote = "infinite: S2 = S3, a uniaxial cluster (Woodcock 1977, K = ln(S1/S2)/ln(S2/S3) with ln(S2/S3) = 0)"
	default:
		sh.K = num / den // 0 when den is +Inf: a girdle
	}
	return sh
}
