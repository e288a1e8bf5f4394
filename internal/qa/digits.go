package qa

import (
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// DigitTest is the result of the terminal-digit preference test on one
// logger's values of one angle.
//
// Method: Pearson's (1900) chi-square goodness-of-fit test of the counts of
// the last digit of the whole-degree value (0..9) against the uniform
// distribution expected of measured angles, with 9 degrees of freedom; the
// p-value is the upper tail of the chi-square distribution (gonum
// distuv.ChiSquared). Estimated rather than measured angles pile up on round
// numbers, so a preference shows as an excess of 0s and 5s.
type DigitTest struct {
	Logger string  `json:"logger"`
	Angle  string  `json:"angle"` // "alpha" or "beta"
	N      int     `json:"n"`
	Counts [10]int `json:"counts"` // counts of last digits 0..9
	Chi2   float64 `json:"chi_square"`
	P      float64 `json:"p_value"`
	// Share05 is the share of values ending in 0 or 5 (0.2 expected).
	Share05 float64 `json:"share_0_5"`
	// Tested is false when N is below the minimum count; then Chi2 and P are 0
	// and 1.
	Tested  bool `json:"tested"`
	Flagged bool `json:"flagged"`
}

// terminalDigit returns the last digit of v rounded to whole degrees, or -1
// for a value that is not finite or negative.
func terminalDigit(v float64) int {
	if math.IsNaN(v) || math.IsInf(v, 0) || v < 0 {
		return -1
	}
	return int(math.Mod(math.Round(v), 10))
}

// digitTest runs the terminal-digit preference test (see [DigitTest]) on
// values. It flags when the sample has at least minN values, p < pMax and the
// share of 0s and 5s is at least minShare05.
func digitTest(logger, angle string, values []float64, minN int, pMax, minShare05 float64) DigitTest {
	t := DigitTest{Logger: logger, Angle: angle, P: 1}
	for _, v := range values {
		d := terminalDigit(v)
		if d < 0 {
			continue
		}
		t.Counts[d]++
		t.N++
	}
	if t.N == 0 {
		return t
	}
	t.Share05 = float64(t.Counts[0]+t.Counts[5]) / float64(t.N)
	if t.N < minN {
		return t
	}
	t.Tested = true
	e := float64(t.N) / 10
	for _, c := range t.Counts {
		d := float64(c) - e
		t.Chi2 += d * d / e
	}
	t.P = distuv.ChiSquared{K: 9}.Survival(t.Chi2)
	t.Flagged = t.P < pMax && t.Share05 >= minShare05
	return t
}

// BetaZeroTest is the result of the test for beta recorded as exactly 0 or
// 360 in bulk (a default value or the mark itself typed in place of a
// measurement).
//
// Method: exact one-sided binomial test. A measured beta recorded to whole
// degrees falls on 0 (= 360) with probability 1/360; the p-value is
// P(X >= k) for X ~ Binomial(n, 1/360) (gonum distuv.Binomial).
type BetaZeroTest struct {
	Logger  string  `json:"logger"`
	N       int     `json:"n"`
	Zeros   int     `json:"zeros"`
	Share   float64 `json:"share"`
	P       float64 `json:"p_value"`
	Flagged bool    `json:"flagged"`
}

// betaZeroTest counts betas equal to 0 or 360 and flags when p < pMax and the
// share is at least minShare.
func betaZeroTest(logger string, betas []float64, pMax, minShare float64) BetaZeroTest {
	t := BetaZeroTest{Logger: logger, N: len(betas), P: 1}
	for _, b := range betas {
		if b == 0 || b == 360 {
			t.Zeros++
		}
	}
	if t.N == 0 {
		return t
	}
	t.Share = float64(t.Zeros) / float64(t.N)
	if t.Zeros > 0 {
		// P(X >= k) = 1 - P(X <= k-1).
		t.P = distuv.Binomial{N: float64(t.N), P: 1.0 / 360}.Survival(float64(t.Zeros) - 1)
	}
	t.Flagged = t.P < pMax && t.Share >= minShare
	return t
}
