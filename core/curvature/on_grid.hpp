// The curvature engine of a sweep: node curvature (from the clique engine's per-node
// curvature sums, cliques::Options::node_curvature, or else its node clique counts) and
// Forman-Ricci edge curvature at every grid point, their distributions and the
// Gauss-Bonnet check (core/output writes the columns and the JSON section).
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "base/option_schema.hpp"
#include "cliques/counts.hpp"
#include "curvature/curvature.hpp"
#include "filtration/filtration.hpp"

namespace critplex::curvature {

struct Options {
  bool node_curves = true;   // per node kappa_i(rho) in the JSON section
  bool forman = true;        // Forman-Ricci edge curvature
  std::vector<double> quantile_levels{0.05, 0.25, 0.5, 0.75, 0.95};
  // Histogram grid: "auto" = Freedman-Diaconis on the values pooled over the whole grid
  // (one grid for every density, so histograms compare), capped at max_bins; or `bins`
  // equal bins over `range`.
  bool auto_bins = true;
  std::size_t bins = 20;
  std::size_t max_bins = 60;
  std::vector<double> node_range;    // [lo, hi] for kappa (fixed bins only)
  std::vector<double> forman_range;  // [lo, hi] for Forman-Ricci (fixed bins only)
  // The engine's own range. Below the clique engine's (or with cliques.chi_only) the
  // sweep runs a second, full clique count to this density only (pipeline/sweep.cpp).
  std::optional<double> max_density;
  // Where node curvature is computed ("at"): every grid point in range (grid), the grid
  // points the densities snap to (list), or the grid points around the zeros of chi
  // (transitions, `window` points either side). Forman-Ricci stays on the whole range.
  enum class At { grid, list, transitions };
  At at = At::grid;
  std::vector<double> at_densities;  // for At::list, as given
  std::size_t window = 2;            // for At::transitions
  // How the chosen points are counted ("count"): one static count each, one walk to the
  // last of them, or (auto) whichever a measured cost rule expects to be cheaper.
  enum class Count { automatic, static_graph, walk };
  Count count = Count::automatic;
};
const char* at_name(Options::At at);
// The "curvature" section of the sweep options; its table: option_section().
const OptionSection& option_section();
Options parse_options(const Json& section);

struct PointCurvature {
  bool computed = false;      // false beyond the clique engine's complete points
  std::vector<double> kappa;  // per node
  GaussBonnet gauss_bonnet;
  Distribution node;
  bool forman_computed = false;
  Distribution forman;
  std::vector<double> forman_node_mean;
};

// The grid points node curvature is computed at, and why.
struct Selection {
  Options::At at = Options::At::grid;
  std::vector<std::size_t> points;  // grid indices, increasing, no repeats
  // At::list: each requested density and the grid index it snapped to.
  struct Snap {
    double requested = 0.0;
    std::size_t index = 0;
  };
  std::vector<Snap> snapped;
  // At::transitions: the zeros of chi used (sign changes and touches of the exact chi
  // curve within the engine's range), with their bracketing grid indices.
  struct Zero {
    double density = 0.0;
    int direction = 0;
    bool touch = false;
    std::size_t left = 0, right = 0;
  };
  std::vector<Zero> zeros;
  std::size_t window = 0;
  bool walk = false;  // counted by one walk to the last chosen point, not static counts
};

// Where a grid point's node curvature sums come from: point `index` of `counts` (the
// walk's count over the whole grid, or a static count holding one point); null: none.
struct PointSource {
  const cliques::GridCounts* counts = nullptr;
  std::size_t index = 0;
};

struct OnGrid {
  Options options;
  std::vector<double> node_bin_edges, forman_bin_edges;
  std::vector<PointCurvature> points;
  bool all_exact = true;            // every Gauss-Bonnet check was exact
  double max_relative_error = 0.0;  // largest |sum kappa - chi| / max(|chi|, 1) of the doubles
  Selection selection;              // where node curvature was asked for (set by the sweep)
  std::vector<std::string> stopped; // per point: a budget that stopped its static count, else "" (or empty)
};

// Node curvature at the points the walk's count completed (counts over the whole grid).
OnGrid on_grid(const filtration::Filtration& f, const std::vector<filtration::GridPoint>& grid,
               const cliques::GridCounts& counts, const Options& options);
// Node curvature where sources[g] has a count (sources.size() == grid.size()).
OnGrid on_grid(const filtration::Filtration& f, const std::vector<filtration::GridPoint>& grid,
               const std::vector<PointSource>& sources, const Options& options);

}  // namespace critplex::curvature
