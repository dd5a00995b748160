// Package summarize turns columns of case outputs into the statistics of a
// study's reports: percentiles with confidence intervals ([Describe]), rank
// correlations ([Spearman]) and variance-based sensitivity indices
// ([SobolIndices]). Its functions work on plain []float64 columns.
//
// On top of these it runs a study's sensitivity analyses and builds its
// report tables (DESIGN §6). [NewInputs] describes the uncertain inputs of
// a study: a base case at the medians and the uncertain leaders with their
// same_as followers. [Tornado] moves each leader alone to its low and high
// quantile; [Sobol] solves Saltelli's design in parallel, bit-identically
// for any worker count, under [SobolAssumption] (independent inputs). The
// table functions [SummaryTable], [Curves] and [SpearmanTable] read the
// case outputs through a column source, func(name string) ([]float64,
// error), which returns the named column of cases.arrow in case order as a
// fresh slice that the table function may reorder; they read one column at
// a time (SpearmanTable holds its parameter columns), and wrap the
// source's errors with the column's name.
//
// # Percentile conventions
//
// A label P<x> means a different quantile under each [Convention]. Under
// [Exceedance], the default and the reserves convention (SPE-PRMS 2018),
// P<x> is the value exceeded with probability x %: P90 is the low estimate,
// the 0.10-quantile, and P10 the high one, the 0.90-quantile. Under
// [Cumulative] P<x> is the x/100-quantile, so P90 is the high estimate. P50
// is the median under both. Every report should name its convention
// ([Convention.String]).
//
// # Interpolation
//
// Quantiles are taken from the sorted valid values by one rule, in
// [Quantile]: definition 7 of Hyndman & Fan (1996, Am. Stat. 50), linear
// interpolation between the order statistics x(⌊h⌋) and x(⌊h⌋+1) at
// h = (n−1)·p + 1. It is the default of R's quantile and NumPy's percentile
// and the rule of spreadsheet PERCENTILE.INC functions (from memory), so
// figures can be checked by hand.
//
// # Rejected cases
//
// A NaN marks a case that was rejected (an invalid sample, or a case outside
// the 1-D model) or an output undefined for that case. [Describe] drops and
// counts NaNs; [Spearman] skips a pair when either value is NaN;
// [SobolIndices] drops a row of the design when any of its runs is NaN.
// ±Inf are ordinary values everywhere.
//
// # Confidence intervals
//
// The interval reported with each percentile is a distribution-free
// confidence interval for the population quantile that the percentile
// estimates, [x(l), x(u)] with order-statistic ranks chosen so that the
// interval covers the true quantile with probability at least the level
// whatever the distribution ([OrderStatisticRanks]). It measures the
// sampling error of the study (too few cases), not the spread of the
// outcome: more cases narrow it. With too few cases for the level, a bound
// is −Inf or +Inf. The bounds of a Sobol index are percentile-bootstrap
// intervals over the rows of the design, approximate and seeded.
//
// # Memory and speed
//
// [Describe] sorts its input in place (a radix sort) and allocates nothing
// else, so a summary needs the memory of one column. [Ranks] and [Spearman]
// run in O(n) time by radix sorting, with scratch of a few columns;
// [SpearmanEach] correlates one output with many inputs ranking the output
// once. A [Ranking] ([Rank], [Ranker]) sorts a column once for everything
// that needs its order: its sorted values feed [DescribeSorted], its
// ranks [SpearmanRankedEach] against many other rankings, its first rows
// [Ranking.Head]; all bit for bit what the functions above give.
// [SobolIndices] holds its input plus one resample of it. [Sobol] holds
// the outputs of all n·(d+2) runs, and [SpearmanTable] all the parameter
// columns (their doc comments give the sizes).
package summarize
