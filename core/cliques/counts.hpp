// The clique engine: exact clique counts Cl_k, the Euler characteristic chi and the
// node clique counts Cl_{i,k} of the flag complex, along the density filtration.
//
// Method (docs/methods.md, "Clique counts and the Euler characteristic"): when edge uv enters,
// the new simplices are uv + S for every clique S (empty included) of the common
// neighbourhood of u and v. Those cliques are counted, never listed, by a pivoting
// tree (Jain & Seshadhri 2020): a leaf with h hold nodes and p pivot nodes stands for
// C(p, j) cliques of h + j nodes. chi needs only the branches that never take a pivot
// (a leaf with p >= 1 is a cone and adds 0), so chi_only skips every pivot branch.
//
// Exactness: every count is a 128-bit integer; a count that would not fit stops the
// sweep there ("count_overflow") instead of wrapping. Results do not depend on the
// thread count (integer sums in a fixed order of grid intervals).
// Budgets: max_dimension truncates counts above that dimension (chi then stops being
// exact where truncation first happens); max_work bounds the number of pivoting-tree
// nodes visited. A stop is part of the result (complete_points, stopped_by).
#pragma once

#include <cstddef>
#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "base/exact.hpp"
#include "base/option_schema.hpp"
#include "cliques/int256.hpp"
#include "filtration/filtration.hpp"

namespace critplex::cliques {

struct Options {
  int max_dimension = -1;  // -1: none; else counts of dimension > max_dimension are not computed
  double max_work = 0;     // 0: none; else the most pivoting-tree nodes the sweep may visit
  int threads = 0;         // 0: all cores
  bool node_counts = false;
  bool chi_only = false;
  std::optional<double> max_density;  // the engine's own range (pipeline/sweep.cpp cuts the grid)
  // The every-size counts' range; beyond it chi only (pipeline/sweep.cpp runs the two
  // walks and joins them). Unset: the sweep's default (see option_section()).
  std::optional<double> counts_max_density;
  double max_seconds = 0;              // 0: none; else wall time after which the engine stops
  // Internal (set by the sweep, not an option key): node curvature straight from the
  // pivoting tree's leaves (GridCounts::curvature_*), one addition per node of a leaf.
  bool node_curvature = false;
  bool curvature_fixed_point = false;  // tests: use the fixed-point sums even where exact ones fit
};

// The "cliques" section of the sweep options (keys as above, snake_case); unknown keys
// are errors. A null section gives the defaults. Its table: option_section().
const OptionSection& option_section();
Options parse_options(const Json& section);

struct GridCounts {
  std::vector<std::vector<int128>> counts;   // [grid point][k]: k-simplices (cliques of k+1 nodes), k = 0..
  std::vector<int128> chi;                   // [grid point]
  std::vector<std::vector<std::vector<int128>>> node_counts;  // [grid point][node][k]: k-simplices containing the node (k=0 gives 1); filled when requested
  std::size_t complete_points = 0;           // grid points fully computed (a budget may stop earlier)
  // Leading points whose counts hold every clique size; the later complete points hold
  // Cl_0 and Cl_1 only (chi_only, or past counts_max_density). Set by count_on_grid.
  std::size_t every_size_points = 0;
  std::string stopped_by;                    // "" when complete, else "max_work", "max_dimension" (when it truncates counts), "count_overflow", "max_seconds"
  // Points at index >= complete_points: counts[k] exact for k <= max_dimension when
  // stopped_by is "max_dimension" (chi is then not exact); empty vectors otherwise.
  std::size_t complete_edges = 0;            // edges of the filtration fully processed
  double work = 0;                           // pivoting-tree nodes visited (up to the last complete point)
  // Node curvature (Options::node_curvature), at points < complete_points:
  // kappa_i = curvature_numerators[g][i] / curvature_denominator. Exact rationals when
  // curvature_exact (denominator lcm(1..M), M the largest clique size the filtration
  // can reach); else fixed point (denominator 2^126, every leaf share rounded to it, so
  // each node's error is below 2^-126 per leaf; see pivot_tree.hpp).
  bool curvature_exact = false;
  int128 curvature_denominator = 1;
  std::vector<std::vector<Int256>> curvature_numerators;  // [grid point][node]; empty beyond complete_points
};

// Degeneracy order of the graph of the first m edges (Matula & Beck 1983): label[x] is
// node x's position in it; `degeneracy` receives the largest degree a node has when it
// is removed (no clique has more than degeneracy + 1 nodes).
std::vector<std::uint32_t> degeneracy_labels(std::size_t n, const std::vector<filtration::Edge>& edges, std::size_t m,
                                             std::size_t& degeneracy);

// Counts on the grid. progress(fraction) returning true cancels (ErrorKind::cancelled);
// it is called only on the calling thread. An empty function is allowed.
GridCounts count_on_grid(const filtration::Filtration& f, const std::vector<filtration::GridPoint>& grid,
                         const Options& o, const std::function<bool(double)>& progress);

}  // namespace critplex::cliques
