#include "curvature/on_grid.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>

#include "base/error.hpp"
#include "io/files.hpp"

namespace critplex::curvature {

OnGrid on_grid(const filtration::Filtration& f, const std::vector<filtration::GridPoint>& grid,
               const cliques::GridCounts& counts, const Options& options) {
  std::vector<PointSource> sources(grid.size());
  for (std::size_t g = 0; g < grid.size() && g < counts.complete_points; ++g) sources[g] = {&counts, g};
  OnGrid c = on_grid(f, grid, sources, options);
  for (std::size_t g = 0; g < grid.size(); ++g)
    if (c.points[g].computed) c.selection.points.push_back(g);
  return c;
}

OnGrid on_grid(const filtration::Filtration& f, const std::vector<filtration::GridPoint>& grid,
               const std::vector<PointSource>& sources, const Options& options) {
  if (sources.size() != grid.size()) fail(ErrorKind::internal, "curvature: one count source per grid point");
  OnGrid c;
  c.options = options;
  c.points.resize(grid.size());
  std::vector<std::pair<std::uint32_t, std::uint32_t>> edges;
  edges.reserve(f.edges.size());
  for (const auto& e : f.edges) edges.emplace_back(e.u, e.v);

  // First pass: the values themselves (histogram grids may depend on all of them).
  // Forman-Ricci values are integers kept as tallies, entered edge by edge in grid order.
  std::vector<double> pooled_kappa;
  std::vector<IntegerTally> forman_values(grid.size());
  IntegerTally pooled_forman;
  if (options.forman) {
    FormanSweep forman(f.nodes, edges);
    std::vector<std::size_t> order(grid.size());
    for (std::size_t g = 0; g < grid.size(); ++g) order[g] = g;
    std::stable_sort(order.begin(), order.end(), [&](std::size_t a, std::size_t b) { return grid[a].edges < grid[b].edges; });
    pooled_forman.lowest = forman.tally().lowest;
    pooled_forman.counts.assign(forman.tally().counts.size(), 0);
    for (std::size_t g : order) {
      if (grid[g].edges > edges.size()) continue;
      PointCurvature& p = c.points[g];
      forman.advance(grid[g].edges);
      // Keep only the span of values present (a fine grid has many points).
      const auto& all = forman.tally().counts;
      std::size_t first = 0, last = all.size();
      while (first < last && all[first] == 0) ++first;
      while (last > first && all[last - 1] == 0) --last;
      forman_values[g].lowest = pooled_forman.lowest + static_cast<long long>(first);
      forman_values[g].counts.assign(all.begin() + static_cast<std::ptrdiff_t>(first), all.begin() + static_cast<std::ptrdiff_t>(last));
      for (std::size_t k = first; k < last; ++k) pooled_forman.counts[k] += all[k];
      p.forman_node_mean = forman.node_mean();
      p.forman_computed = true;
    }
  }
  NodeCurvature last;  // the previous point's: on a fine grid most nodes keep their value
  for (std::size_t g = 0; g < grid.size(); ++g) {
    PointCurvature& p = c.points[g];
    if (sources[g].counts == nullptr) continue;
    const cliques::GridCounts& counts = *sources[g].counts;
    const std::size_t at = sources[g].index;
    // Preferably the engine's per-node sums (taken in its counting tree); node clique
    // counts, when that is what the engine was asked for, give the same values.
    const bool have_sums = at < counts.curvature_numerators.size() && !counts.curvature_numerators[at].empty();
    const bool have_counts = at < counts.node_counts.size() && !counts.node_counts[at].empty();
    if (at < counts.complete_points && (have_sums || have_counts)) {
      NodeCurvature nc = have_sums ? node_curvature_from_sums(counts.curvature_numerators[at], counts.curvature_denominator,
                                                              counts.curvature_exact, &last)
                                   : node_curvature(counts.node_counts[at]);
      p.gauss_bonnet = check_gauss_bonnet(nc, counts.chi[at]);
      if (have_sums) last = nc;
      p.kappa = std::move(nc.kappa);
      p.computed = true;
      c.all_exact = c.all_exact && p.gauss_bonnet.exact;
      c.max_relative_error = std::max(c.max_relative_error, p.gauss_bonnet.relative_error);
      pooled_kappa.insert(pooled_kappa.end(), p.kappa.begin(), p.kappa.end());
    }
  }
  // Fixed count over the data's own range [lo, hi].
  auto own_range_bins = [&](double lo, double hi) {
    if (!(lo < hi)) return fixed_bins(std::isfinite(lo) ? lo - 0.5 : 0.0, std::isfinite(lo) ? lo + 0.5 : 1.0, options.bins);
    return fixed_bins(lo, hi, options.bins);
  };
  if (options.auto_bins) {
    c.node_bin_edges = freedman_diaconis_bins(std::move(pooled_kappa), options.max_bins);
  } else if (!options.node_range.empty()) {
    c.node_bin_edges = fixed_bins(options.node_range[0], options.node_range[1], options.bins);
  } else {
    double lo = HUGE_VAL, hi = -HUGE_VAL;
    for (double v : pooled_kappa) lo = std::min(lo, v), hi = std::max(hi, v);
    c.node_bin_edges = own_range_bins(lo, hi);
  }
  if (options.forman) {
    const std::size_t pooled = pooled_forman.size();
    if (options.auto_bins) c.forman_bin_edges = freedman_diaconis_bins_tally(pooled_forman, options.max_bins);
    else if (!options.forman_range.empty())
      c.forman_bin_edges = fixed_bins(options.forman_range[0], options.forman_range[1], options.bins);
    else c.forman_bin_edges = own_range_bins(pooled ? pooled_forman.at(0) : HUGE_VAL, pooled ? pooled_forman.at(pooled - 1) : -HUGE_VAL);
  }

  for (std::size_t g = 0; g < grid.size(); ++g) {
    PointCurvature& p = c.points[g];
    if (p.computed) p.node = describe(p.kappa, options.quantile_levels, c.node_bin_edges);
    if (p.forman_computed) p.forman = describe_tally(forman_values[g], options.quantile_levels, c.forman_bin_edges);
  }
  return c;
}

}  // namespace critplex::curvature
