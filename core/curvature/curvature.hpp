// Curvature of the clique complex on the density grid (docs/methods.md, "Curvature").
//
// Node curvature (Gauss-Bonnet, Knill 2011, arXiv:1111.5395):
//   kappa_i = sum_{k>=0} (-1)^k Cl_{i,k} / (k+1),  Cl_{i,k} = k-simplices containing node i
// so that sum_i kappa_i = chi exactly. On a sweep the clique engine sums each node's
// share leaf by leaf of its pivoting tree (cliques/pivot_tree.hpp) as integers over a
// common denominator: exact rationals (lcm(1..M)) when that fits, else fixed point
// (2^126). From node clique counts (node_curvature below, the reference route) the sum
// is exact rational (lcm(1..K+1) in 128-bit integers) when it fits, else binary128.
// Gauss-Bonnet is checked either way: as an integer identity when exact.
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
#include <unordered_map>
#include <utility>
#include <vector>

#include "base/exact.hpp"
#include "cliques/int256.hpp"

namespace critplex::curvature {

// Node curvatures of one complex. counts[i][k] = k-simplices containing node i
// (counts[i][0] = 1 for every node; missing trailing k are zero).
struct NodeCurvature {
  std::vector<double> kappa;          // per node
  bool exact = false;                 // true: kappa_i = numerator_i / denominator exactly
  bool fixed_point = false;           // true: numerators over denominator = 2^126, shares rounded
  int128 denominator = 1;             // when exact or fixed_point
  std::vector<cliques::Int256> numerators;  // per node, when exact or fixed_point
};
NodeCurvature node_curvature(const std::vector<std::vector<int128>>& counts);
// From the clique engine's sums (cliques::GridCounts::curvature_numerators). Nodes whose
// numerator equals the one in `previous` (same denominator) reuse its double.
NodeCurvature node_curvature_from_sums(const std::vector<cliques::Int256>& numerators, int128 denominator, bool exact,
                                       const NodeCurvature* previous = nullptr);

// The Gauss-Bonnet check sum_i kappa_i = chi.
struct GaussBonnet {
  int128 chi = 0;
  double sum_kappa = 0.0;       // the floating sum of the reported kappa_i (compensated)
  double relative_error = 0.0;  // |sum_kappa - chi| / max(|chi|, 1)
  bool exact = false;           // the identity was verified in exact integer arithmetic
  std::string method;           // "exact rational", "fixed point" or "binary128"
};
// Throws ErrorKind::internal when the identity fails (exactly, or beyond 1e-12 relative;
// in fixed point both the integer sums and the doubles are checked).
GaussBonnet check_gauss_bonnet(const NodeCurvature& curvature, int128 chi);

// Forman-Ricci curvature of the graph made of the first `edge_count` edges.
struct Forman {
  std::vector<double> edge_values;  // per edge, in the order given
  std::vector<double> node_mean;    // mean over incident edges; NaN for an isolated node
};
Forman forman_ricci(std::size_t nodes, const std::vector<std::pair<std::uint32_t, std::uint32_t>>& edges,
                    std::size_t edge_count);

// A multiset of integers as a count per value: value lowest + k occurs counts[k] times.
struct IntegerTally {
  long long lowest = 0;
  std::vector<std::size_t> counts;
  std::size_t size() const;
  double at(std::size_t rank) const;  // the rank-th smallest value (rank < size())
};

// Forman-Ricci curvature along the filtration, edge by edge. Edges are only added, so
// entering uv changes F on the edges at u and v (one more degree) and on uw, vw for each
// common neighbour w (one more triangle): O(deg u + deg v) per edge instead of
// recomputing every edge at every grid point. F is an integer in [6 - 2N, N].
class FormanSweep {
 public:
  FormanSweep(std::size_t nodes, const std::vector<std::pair<std::uint32_t, std::uint32_t>>& edges);
  void advance(std::size_t edge_count);  // enter edges up to edge_count (never fewer than now)
  std::size_t edges() const { return entered_; }
  const IntegerTally& tally() const { return tally_; }  // the values of the entered edges
  std::vector<double> node_mean() const;                 // as Forman::node_mean
  int value(std::size_t edge) const { return value_[edge]; }

 private:
  void change(std::size_t edge, int delta);
  std::size_t edge_index(std::uint32_t a, std::uint32_t b) const;
  std::size_t nodes_, words_, entered_ = 0;
  const std::vector<std::pair<std::uint32_t, std::uint32_t>>& edges_;
  std::vector<std::uint64_t> adjacency_;
  std::vector<std::vector<std::uint32_t>> incident_;  // per node: entered edges at it
  std::vector<int> value_;
  std::vector<long long> node_sum_;
  std::vector<std::uint32_t> index_;                  // dense pair -> edge (N <= 2048)
  std::unordered_map<std::uint64_t, std::uint32_t> sparse_index_;  // larger N
  IntegerTally tally_;
};

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
// The same for integer values given as a tally (cost by distinct values, not by values).
Distribution describe_tally(const IntegerTally& values, const std::vector<double>& levels,
                      const std::vector<double>& bin_edges);

// `bins` equal bins over [lo, hi].
std::vector<double> fixed_bins(double lo, double hi, std::size_t bins);
// Data-driven bin grid over the pooled values: the Freedman-Diaconis width
// 2 IQR n^(-1/3) (Freedman & Diaconis 1981), clamped to 1..max_bins bins over [min, max].
std::vector<double> freedman_diaconis_bins(std::vector<double> pooled, std::size_t max_bins);
std::vector<double> freedman_diaconis_bins_tally(const IntegerTally& pooled, std::size_t max_bins);

}  // namespace critplex::curvature
