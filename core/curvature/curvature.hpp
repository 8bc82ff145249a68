// Curvature of the clique complex on the density grid (METHODS.md, "Curvature").
//
// Node curvature (Gauss-Bonnet, Knill 2011, arXiv:1111.5395):
//   kappa_i = sum_{k>=0} (-1)^k Cl_{i,k} / (k+1),  Cl_{i,k} = k-simplices containing node i
// so that sum_i kappa_i = chi exactly. The inputs are the exact node clique counts of
// the clique engine; the sum is done in exact rational arithmetic (a common
// denominator lcm(1..K+1) in 128-bit integers) whenever it fits, else in binary128
// (__float128) with an error bound, and Gauss-Bonnet is checked either way.
//
// Forman-Ricci edge curvature augmented with triangles, unweighted (Sreejith et al.
// 2016; Samal et al. 2018): F(uv) = 4 - deg(u) - deg(v) + 3 t(uv).
//
// Distributions over nodes (or edges): mean, population standard deviation, skewness
// g1 and excess kurtosis g2 (biased moment estimators, as scipy.stats.skew/kurtosis by
// default), quantiles by linear interpolation (Hyndman-Fan type 7, numpy's default)
// and a histogram on given bin edges (every bin [a, b) except the last, [a, b]).
#pragma once

#include <cstddef>
#include <cstdint>
#include <string>
#include <utility>
#include <vector>

#include "base/exact.hpp"

namespace critplex::curvature {

// Node curvatures of one complex. counts[i][k] = k-simplices containing node i
// (counts[i][0] = 1 for every node; missing trailing k are zero).
struct NodeCurvature {
  std::vector<double> kappa;          // per node
  bool exact = false;                 // true: kappa_i = numerator_i / denominator exactly
  int128 denominator = 1;             // lcm(1..K+1) when exact
  std::vector<int128> numerators;     // per node, when exact
};
NodeCurvature node_curvature(const std::vector<std::vector<int128>>& counts);

// The Gauss-Bonnet check sum_i kappa_i = chi.
struct GaussBonnet {
  int128 chi = 0;
  double sum_kappa = 0.0;       // the floating sum of the reported kappa_i (compensated)
  double relative_error = 0.0;  // |sum_kappa - chi| / max(|chi|, 1)
  bool exact = false;           // the identity was verified in exact integer arithmetic
  std::string method;           // "exact rational" or "binary128"
};
// Throws ErrorKind::internal when the identity fails (exactly, or beyond 1e-12 relative).
GaussBonnet check_gauss_bonnet(const NodeCurvature& curvature, int128 chi);

// Forman-Ricci curvature of the graph made of the first `edge_count` edges.
struct Forman {
  std::vector<double> edge_values;  // per edge, in the order given
  std::vector<double> node_mean;    // mean over incident edges; NaN for an isolated node
};
Forman forman_ricci(std::size_t nodes, const std::vector<std::pair<std::uint32_t, std::uint32_t>>& edges,
                    std::size_t edge_count);

// Moments, quantiles and histogram of a set of values.
struct Distribution {
  std::size_t count = 0;
  double mean = 0.0, sd = 0.0, skewness = 0.0, kurtosis = 0.0, min = 0.0, max = 0.0;  // NaN when undefined
  std::vector<double> quantiles;         // at the requested levels
  std::vector<std::size_t> histogram;    // one count per bin
  std::size_t below = 0, above = 0;      // values outside the bin grid
};
Distribution describe(const std::vector<double>& values, const std::vector<double>& levels,
                      const std::vector<double>& bin_edges);

// Quantile at level q in [0, 1] of sorted values (type 7).
double quantile_sorted(const std::vector<double>& sorted, double q);
// `bins` equal bins over [lo, hi].
std::vector<double> fixed_bins(double lo, double hi, std::size_t bins);
// Data-driven bin grid over the pooled values: the Freedman-Diaconis width
// 2 IQR n^(-1/3) (Freedman & Diaconis 1981), clamped to 1..max_bins bins over [min, max].
std::vector<double> freedman_diaconis_bins(std::vector<double> pooled, std::size_t max_bins);

}  // namespace critplex::curvature
