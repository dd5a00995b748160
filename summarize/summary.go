package summarize

import (
	"math"
)

// DefaultLevel is the confidence level of the percentile intervals that
// [Describe] reports.
const DefaultLevel = 0.95

// Stats summarises one output column: the columns of summary.arrow plus
// Swanson's mean and confidence intervals for the three percentiles.
type Stats struct {
	Convention Convention // how P90, P50, P10 are labelled
	Level      float64    // confidence level of the P90, P50, P10 intervals

	N         int // valid (non-NaN) values
	NRejected int // NaN values: rejected cases

	Mean float64 // arithmetic mean of the valid values
	SD   float64 // sample standard deviation, divisor N−1
	Min  float64
	Max  float64

	P90, P50, P10 float64 // percentiles under Convention, see [Percentiles]

	// SwansonMean is 0.3·P10 + 0.4·P50 + 0.3·P90, Swanson's rule for the
	// mean of a moderately skewed distribution (common practice). It is the
	// same under both conventions.
	SwansonMean float64

	// Distribution-free intervals at Level for the quantiles that P90, P50
	// and P10 estimate, see [QuantileInterval]; ±Inf where too few values
	// reach Level.
	P90Low, P90High float64
	P50Low, P50High float64
	P10Low, P10High float64
}

// Describe returns the [Stats] of values under conv with intervals at
// [DefaultLevel]; see [DescribeLevel].
func Describe(values []float64, conv Convention) Stats {
	return DescribeLevel(values, conv, DefaultLevel)
}

// DescribeLevel returns the [Stats] of values under conv, with percentile
// confidence intervals at level.
//
// NaN values are rejected cases: they are counted in NRejected and left out
// of everything else. ±Inf are valid values (Mean and SD may then be ±Inf or
// NaN). DescribeLevel reorders values in place and allocates nothing: on
// return values[:N] holds the valid values sorted in increasing order and
// values[N:] the NaNs.
//
// With N = 0 every statistic is NaN; with N = 1 SD is NaN and the intervals
// are infinite. DescribeLevel panics if level is outside (0, 1) or conv is
// neither convention.
func DescribeLevel(values []float64, conv Convention, level float64) Stats {
	checkLevel(level)
	// Move the NaNs to the end, keeping the slice as the only storage.
	n := 0
	for i, v := range values {
		if !math.IsNaN(v) {
			values[n], values[i] = v, values[n]
			n++
		}
	}
	x := values[:n]
	sortFloats(x)
	return describeSorted(x, len(values)-n, conv, level)
}

// DescribeSorted returns the [Stats] of the valid values sorted and of
// rejected NaN values more, under conv with percentile confidence
// intervals at level: what [DescribeLevel] returns for the same values in
// any order, bit for bit, without sorting them. (Only the relative order
// of −0 and +0 is free in sorted, as in DescribeLevel's sort, so a Min,
// Max, percentile or bound that falls on a zero may carry either sign.)
//
// sorted must be in increasing order and hold no NaN; neither is checked,
// as for [Quantile]. DescribeSorted panics if rejected is negative, level
// is outside (0, 1) or conv is neither convention.
func DescribeSorted(sorted []float64, rejected int, conv Convention, level float64) Stats {
	checkLevel(level)
	if rejected < 0 {
		panic("summarize: negative rejected count")
	}
	return describeSorted(sorted, rejected, conv, level)
}

func describeSorted(x []float64, rejected int, conv Convention, level float64) Stats {
	n := len(x)
	s := Stats{Convention: conv, Level: level, N: n, NRejected: rejected}
	s.P90, s.P50, s.P10 = Percentiles(x, conv)
	s.SwansonMean = 0.3*(s.P10+s.P90) + 0.4*s.P50
	s.P90Low, s.P90High = QuantileInterval(x, conv.Prob(90), level)
	s.P50Low, s.P50High = QuantileInterval(x, 0.5, level)
	s.P10Low, s.P10High = QuantileInterval(x, conv.Prob(10), level)
	s.Mean, s.SD = meanSD(x)
	if n == 0 {
		s.Min, s.Max = math.NaN(), math.NaN()
	} else {
		s.Min, s.Max = x[0], x[n-1]
	}
	return s
}

// meanSD returns the mean and the sample standard deviation (divisor n−1) of
// x by the corrected two-pass algorithm (Chan, Golub & LeVeque 1983, Am.
// Stat. 37, from memory): the second pass's Σ(x−m) removes the rounding
// left in m.
func meanSD(x []float64) (mean, sd float64) {
	n := len(x)
	if n == 0 {
		return math.NaN(), math.NaN()
	}
	var sum float64
	for _, v := range x {
		sum += v
	}
	mean = sum / float64(n)
	if n == 1 {
		return mean, math.NaN()
	}
	var ss, comp float64
	for _, v := range x {
		d := v - mean
		ss += d * d
		comp += d
	}
	variance := (ss - comp*comp/float64(n)) / float64(n-1)
	return mean, math.Sqrt(max(variance, 0))
}
