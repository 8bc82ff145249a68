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
};
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

struct OnGrid {
  Options options;
  std::vector<double> node_bin_edges, forman_bin_edges;
  std::vector<PointCurvature> points;
  bool all_exact = true;            // every Gauss-Bonnet check was exact
  double max_relative_error = 0.0;  // largest |sum kappa - chi| / max(|chi|, 1) of the doubles
};

OnGrid on_grid(const filtration::Filtration& f, const std::vector<filtration::GridPoint>& grid,
               const cliques::GridCounts& counts, const Options& options);

}  // namespace critplex::curvature
