package uncertainty

import (
	"math"
	"slices"
)

// sincos returns sin and cos of the angle x in radians. Small angles (the
// usual size of a measurement error) use their Taylor series, to x^5 / x^6
// below 0.15 rad and to x^9 / x^10 below 0.5 rad (error below 1e-9 either
// way); larger ones use math.Sincos.
func sincos(x float64) (s, c float64) {
	x2 := x * x
	switch {
	case x2 < 0.0225:
		return x * (1 - x2/6*(1-x2/20)), 1 - x2/2*(1-x2/12*(1-x2/30))
	case x2 < 0.25:
		return x * (1 - x2/6*(1-x2/20*(1-x2/42*(1-x2/72)))), 1 - x2/2*(1-x2/12*(1-x2/30*(1-x2/56*(1-x2/90))))
	}
	return math.Sincos(x)
}

// small2 is the square of the largest argument, 0.15, of the series of
// atanSeries and asinSeries.
const small2 = 0.0225

// atanSeries is atan(t) by its series to t^9 for |t| < 0.15 (an angle of up
// to 8.5 degrees): error below 1e-10 rad. Every coefficient is a constant
// (t2 * (1.0/9), not t2 / 9: a division costs several multiplications).
func atanSeries(t float64) float64 {
	t2 := t * t
	return t * (1 - t2*(1.0/3-t2*(1.0/5-t2*(1.0/7-t2*(1.0/9)))))
}

// asinSeries is asin(s) by its series to s^7 for |s| < 0.15: error below
// 2e-9 rad.
func asinSeries(s float64) float64 {
	s2 := s * s
	return s * (1 + s2*(1.0/6+s2*(3.0/40+s2*(5.0/112))))
}

// atan is math.Atan with the fast path atanSeries.
func atan(t float64) float64 {
	if t*t < small2 {
		return atanSeries(t)
	}
	return math.Atan(t)
}

// asin is math.Asin with the fast path asinSeries.
func asin(s float64) float64 {
	if s*s < small2 {
		return asinSeries(s)
	}
	return math.Asin(s)
}

// kthLargest returns the k-th largest value of x (1-based). It first keeps
// only the values above guess, which for a good guess (a little below the
// answer) is a small share of x and makes the pass over x a run of
// predictable comparisons; when fewer than k values lie above the guess it
// starts again with all of them. buf is reused.
func kthLargest(x []float64, k int, guess float64, buf *[]float64) float64 {
	for {
		b := (*buf)[:0]
		for _, v := range x {
			if v > guess {
				b = append(b, v)
			}
		}
		*buf = b
		if len(b) >= k {
			return selectKth(b, len(b)-k)
		}
		if math.IsInf(guess, -1) {
			return math.NaN()
		}
		guess = math.Inf(-1)
	}
}

// selectKth returns the value of rank i (0-based, ascending) of x,
// reordering x (Hoare's selection with the median of three as pivot).
func selectKth(x []float64, i int) float64 {
	lo, hi := 0, len(x)-1
	for hi-lo > 16 {
		mid := lo + (hi-lo)/2
		if x[mid] < x[lo] {
			x[mid], x[lo] = x[lo], x[mid]
		}
		if x[hi] < x[lo] {
			x[hi], x[lo] = x[lo], x[hi]
		}
		if x[hi] < x[mid] {
			x[hi], x[mid] = x[mid], x[hi]
		}
		p := x[mid]
		a, b := lo, hi
		for a <= b {
			for x[a] < p {
				a++
			}
			for x[b] > p {
				b--
			}
			if a <= b {
				x[a], x[b] = x[b], x[a]
				a++
				b--
			}
		}
		switch {
		case i <= b:
			hi = b
		case i >= a:
			lo = a
		default:
			return x[i]
		}
	}
	slices.Sort(x[lo : hi+1])
	return x[i]
}

// selectSplit returns the value of rank i (0-based, ascending) of x, as
// selectKth does, for x of a few dozen values or more: each pass writes
// every value to both ends of tmp and moves on the end its comparison with
// the pivot picks, with no branch on the comparison (a branch on it is
// guessed wrong half the time, each time costing more than the pass does
// per value). x and tmp (at least as long) are overwritten.
func selectSplit(x, tmp []float64, i int) float64 {
	for len(x) > 16 {
		n := len(x)
		a, b, c := x[0], x[n/2], x[n-1]
		p := max(min(a, b), min(max(a, b), c)) // the median of the three
		t := tmp[:n]
		lo, hi := 0, n-1
		for _, v := range x {
			t[lo], t[hi] = v, v
			var l int
			if v < p {
				l = 1
			}
			lo += l
			hi -= 1 - l
		}
		if lo == 0 { // p is the least value of x: ties, which the plain selection copes with
			return selectKth(x, i)
		}
		if i < lo {
			x, tmp = t[:lo], x
		} else {
			x, tmp, i = t[lo:], x, i-lo
		}
	}
	for j := 1; j < len(x); j++ { // insertion sort
		v, k := x[j], j
		for ; k > 0 && x[k-1] > v; k-- {
			x[k] = x[k-1]
		}
		x[k] = v
	}
	return x[i]
}

// quantileRank returns how many of n sorted values lie at or above the
// p-quantile taken as the value of rank ceil(p n) (1-based).
func quantileRank(n int, p float64) int {
	r := int(math.Ceil(p*float64(n) - 1e-9))
	if r < 1 {
		r = 1
	}
	return n - r + 1
}
