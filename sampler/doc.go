// Package sampler turns a study's parameter specifications into case
// inputs: N cases, each a value for every parameter, drawn by Latin
// hypercube or independent random sampling, with target rank correlations
// imposed.
//
// # Distributions
//
// A [Spec] is a fixed value, uniform{min, max}, triangular{min, mode, max},
// normal{mean, sd} or lognormal{mean, sd} (mean and sd of the variable
// itself), both optionally truncated to [min, max], pert{min, mode, max}
// (standard PERT: a beta distribution with λ = 4 scaled to [min, max]),
// discrete{values, weights} (nil weights: all equal) or same_as another
// parameter (the leader's sampled value, chains resolved). Every draw is the
// inverse CDF ([Dist.Quantile]) of a uniform u strictly inside (0, 1); a
// truncated distribution is inverted on [F(min), F(max)], exactly, without
// rejection, and accurately however far in a tail the range lies. The
// gonum distuv distributions are used where gonum has them, only through
// Quantile and CDF: no random source is ever handed to gonum.
//
// # Streams and determinism
//
// Case i's uniform draw for parameter j depends only on (seed, stream, j,
// N, i), through SplitMix64 hashing defined in this package (no math/rand
// state), so any slice of cases can be computed alone, in any order, by any
// number of goroutines, with bit-identical results and memory independent
// of N. The streams are frozen by a golden test. (Bit-identity holds on
// one architecture: compilers for some, such as arm64, may fuse x*y + z into
// one rounding inside the quantile functions, gonum's included.)
//
//   - LHS: u = (π_j(i) + v)/N, with π_j a keyed pseudo-random permutation of
//     [0, N) (a Feistel network with cycle walking) giving case i's stratum
//     and v a hashed jitter in (0, 1). Each parameter's N strata of equal
//     probability are each hit exactly once (McKay, Beckman & Conover 1979,
//     Technometrics 21).
//   - Random: u is a hash of (seed, stream, j, i).
//
// # Rank correlations
//
// Target Spearman rank correlations are imposed with the method of Iman &
// Conover (1982, Commun. Stat. Simul. Comput. 11), which only re-pairs the
// values and so keeps every marginal exact. The method needs all cases at
// once, so a correlated design is built in blocks of [BlockSize] cases (the
// remainder folded into the last block, so no block is small): a block's
// values of a parameter are the values its cases have in the uncorrelated
// design, and Iman–Conover permutes them among the block's cases. For LHS
// each block's values are therefore a subset of one exact global Latin
// hypercube of N, and the whole correlated design is still an exact Latin
// hypercube. Block contents and permutations depend only on (seed, stream,
// block), so slices stay independent. The correlation imposed on the van
// der Waerden scores is 2·sin(πρ/6), the normal-score correlation whose rank
// correlation is ρ, so achieved rank correlations are unbiased.
//
// # Errors
//
// [New] checks the specifications, same_as chains and correlations in one
// pass and returns an [ErrorList] of [*ParamError] and [*CorrelationError],
// each carrying the index of the offending parameter or correlation entry
// so that a caller can point at its place in the study file.
package sampler
