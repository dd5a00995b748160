package summarize

import (
	"math"
)

// Quantile returns the p-quantile of sorted by the interpolation rule of the
// package (Hyndman & Fan 1996, Am. Stat. 50, definition 7): with n values
// x(1) ≤ … ≤ x(n),
//
//	h = (n−1)·p + 1,  j = ⌊h⌋,  Q(p) = x(j) + (h − j)·(x(j+1) − x(j))
//
// so Q(0) is the minimum, Q(1) the maximum and the median of an even count is
// the mean of the middle two. Infinite values are allowed; an interpolation
// between −Inf and +Inf is NaN.
//
// The data must be sorted in increasing order and hold no NaN; neither is
// checked. Quantile returns NaN for empty data and panics if p is outside
// [0, 1].
func Quantile(sorted []float64, p float64) float64 {
	if !(p >= 0 && p <= 1) {
		panic("summarize: quantile probability outside [0, 1]")
	}
	n := len(sorted)
	if n == 0 {
		return math.NaN()
	}
	h := float64(n-1) * p // 0-based position
	j := int(h)
	if j >= n-1 {
		return sorted[n-1]
	}
	g := h - float64(j)
	lo, hi := sorted[j], sorted[j+1]
	if g == 0 || lo == hi {
		return lo
	}
	d := hi - lo
	if math.IsInf(d, 0) {
		// An infinite end point (or overflow): the weighted form keeps the
		// infinity, and gives NaN only between −Inf and +Inf.
		return (1-g)*lo + g*hi
	}
	return min(lo+g*d, hi)
}

// Percentiles returns P90, P50 and P10 of sorted under the convention conv:
// under [Exceedance] P90 = Quantile(sorted, 0.10) and P10 =
// Quantile(sorted, 0.90); under [Cumulative] the two swap. The data must be
// sorted in increasing order and hold no NaN, as for [Quantile]; empty data
// give NaN for all three. Percentiles panics if conv is neither convention.
func Percentiles(sorted []float64, conv Convention) (p90, p50, p10 float64) {
	return Quantile(sorted, conv.Prob(90)), Quantile(sorted, 0.5), Quantile(sorted, conv.Prob(10))
}

// OrderStatisticRanks returns the 1-based ranks l < u of the order statistics
// that bound a distribution-free confidence interval [x(l), x(u)] for the
// p-quantile ξ of a continuous distribution from n independent draws.
//
// The number B of draws below ξ is Binomial(n, p), and x(l) ≤ ξ < x(u)
// exactly when l ≤ B ≤ u−1 (David & Nagaraja 2003, Order Statistics, §7.1;
// Hahn & Meeker 1991, Statistical Intervals, §5.2; both from memory), so
// the interval covers ξ with probability
//
//	P(l ≤ B ≤ u−1) ≥ level.
//
// The interval is equal-tailed: l is the largest rank with
// P(B ≤ l−1) ≤ (1−level)/2 and u the smallest with P(B ≥ u) ≤ (1−level)/2,
// each tail computed exactly by summing binomial probabilities. When even
// x(1) leaves too much probability below it (small n or p near 0), l = 0,
// which stands for x(0) = −∞; likewise u = n+1 stands for x(n+1) = +∞. The
// coverage statement holds with those infinite bounds. For data with ties
// the closed interval still covers with at least that probability (David &
// Nagaraja 2003, from memory).
//
// OrderStatisticRanks panics if n < 0, p is outside [0, 1] or level is
// outside (0, 1).
func OrderStatisticRanks(n int, p, level float64) (l, u int) {
	if n < 0 {
		panic("summarize: negative sample size")
	}
	if !(p >= 0 && p <= 1) {
		panic("summarize: quantile probability outside [0, 1]")
	}
	checkLevel(level)
	if n == 0 {
		return 0, 1
	}
	if p == 0 { // B ≡ 0
		return 0, 1
	}
	if p == 1 { // B ≡ n
		return n, n + 1
	}
	a := (1 - level) / 2
	w, k0 := binomialWeights(n, p)
	var total float64
	for _, v := range w {
		total += v
	}
	// l: the largest k with P(B ≤ k−1) ≤ a. Below the window the mass is
	// negligible, so every k ≤ k0 qualifies; walk up accumulating P(B ≤ k−1).
	l = k0
	var cum float64
	for i, v := range w {
		cum += v // P(B ≤ k0+i)·total
		if cum/total > a {
			break
		}
		l = k0 + i + 1
	}
	// u: the smallest k with P(B ≥ k) ≤ a, walking down from above the window.
	u = k0 + len(w)
	cum = 0
	for i := len(w) - 1; i >= 0; i-- {
		cum += w[i] // P(B ≥ k0+i)·total
		if cum/total > a {
			break
		}
		u = k0 + i
	}
	return l, u
}

// binomialWeights returns w[i] ∝ P(B = k0+i) for B ~ Binomial(n, p),
// 0 < p < 1, over the window of k where the probability is at least 1e-20
// of the mode's. The weights come from the ratio recurrence
//
//	P(B = k+1) / P(B = k) = (n−k)/(k+1) · p/(1−p)
//
// started at the mode with weight 1, so no factorial is formed and the
// normalising sum cancels every rounding of the starting value. The window
// spans about ±9.6 standard deviations, O(√(n p (1−p))) terms.
func binomialWeights(n int, p float64) (w []float64, k0 int) {
	const tiny = 1e-20
	mode := int(math.Floor(float64(n+1) * p))
	mode = min(max(mode, 0), n)
	odds := p / (1 - p)
	var down []float64 // weights of mode−1, mode−2, …
	v := 1.0
	for k := mode; k > 0; k-- {
		v *= float64(k) / float64(n-k+1) / odds // P(k−1)/P(k)
		if v < tiny {
			break
		}
		down = append(down, v)
	}
	w = make([]float64, 0, 2*len(down)+2)
	for i := len(down) - 1; i >= 0; i-- {
		w = append(w, down[i])
	}
	w = append(w, 1)
	v = 1.0
	for k := mode; k < n; k++ {
		v *= float64(n-k) / float64(k+1) * odds // P(k+1)/P(k)
		if v < tiny {
			break
		}
		w = append(w, v)
	}
	return w, mode - len(down)
}

// QuantileInterval returns the distribution-free confidence interval
// [lo, hi] = [x(l), x(u)] for the p-quantile from sorted data, with the
// ranks of [OrderStatisticRanks]. A rank 0 gives lo = −Inf and a rank n+1
// gives hi = +Inf; empty data give NaN, NaN. The data must be sorted in
// increasing order and hold no NaN, as for [Quantile]. QuantileInterval
// panics if p is outside [0, 1] or level is outside (0, 1).
func QuantileInterval(sorted []float64, p, level float64) (lo, hi float64) {
	n := len(sorted)
	l, u := OrderStatisticRanks(n, p, level)
	if n == 0 {
		return math.NaN(), math.NaN()
	}
	lo, hi = math.Inf(-1), math.Inf(1)
	if l >= 1 {
		lo = sorted[l-1]
	}
	if u <= n {
		hi = sorted[u-1]
	}
	return lo, hi
}

func checkLevel(level float64) {
	if !(level > 0 && level < 1) {
		panic("summarize: confidence level outside (0, 1)")
	}
}
