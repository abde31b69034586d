#ifndef PLUMB_METRICS_BINOMIAL_DISTRIBUTION_H_
#define PLUMB_METRICS_BINOMIAL_DISTRIBUTION_H_

/// Probabilities of the binomial distribution, accurate to full relative precision in the tails
/// and for millions of trials: the exact McNemar test (paired_tests.h) and the exact power behind
/// the drift's detectable effect (detectable_effect.h) rest on them. Pure functions.

#include <cstdint>

namespace plumb::metrics {

/// P(X = x) for X ~ Binomial(n, p), by Catherine Loader's saddle-point method ("Fast and Accurate
/// Computation of Binomial Probabilities", 2000; the method of R's dbinom). 0 outside [0, n];
/// p must lie in [0, 1].
double BinomialProbability(int64_t x, int64_t n, double p);

/// P(X >= k) for X ~ Binomial(n, p): the terms summed outwards from k until they no longer change
/// the sum (or 1 minus the lower tail when k lies below the mean). 1 for k <= 0, 0 for k > n.
double BinomialUpperTail(int64_t k, int64_t n, double p);

}  // namespace plumb::metrics

#endif  // PLUMB_METRICS_BINOMIAL_DISTRIBUTION_H_
