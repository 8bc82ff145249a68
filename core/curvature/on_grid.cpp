#include "curvature/on_grid.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>

#include "base/error.hpp"
#include "io/files.hpp"

namespace critplex::curvature {

Options parse_options(const Json& section) {
  Options o;
  if (section.is_null() || (section.is_boolean() && section.get<bool>())) return o;
  if (!section.is_object()) fail(ErrorKind::argument, "sweep options: \"curvature\" must be an object (or true)");
  OptionReader r(section, "sweep options: curvature");
  o.node_curves = r.boolean("node_curves", true);
  o.forman = r.boolean("forman", true);
  if (r.has("quantiles")) o.quantile_levels = r.numbers("quantiles");
  for (double q : o.quantile_levels)
    if (!(q >= 0.0 && q <= 1.0))
      fail(ErrorKind::argument, "sweep options: curvature.quantiles must lie in [0, 1], got " + io::format_double(q));
  if (const Json* b = r.raw("bins")) {
    if (b->is_string() && b->get<std::string>() == "auto") {
      o.auto_bins = true;
    } else if (b->is_number_integer() && b->get<long long>() >= 1 && b->get<long long>() <= 100000) {
      o.auto_bins = false;
      o.bins = static_cast<std::size_t>(b->get<long long>());
    } else {
      fail(ErrorKind::argument, "sweep options: curvature.bins must be \"auto\" or an integer in [1, 100000], got " +
                                    b->dump());
    }
  }
  const long long max_bins = r.integer("max_bins", 60);
  if (max_bins < 1 || max_bins > 100000)
    fail(ErrorKind::argument, "sweep options: curvature.max_bins must be in [1, 100000]");
  o.max_bins = static_cast<std::size_t>(max_bins);
  if (r.has("range")) o.node_range = r.numbers("range");
  if (r.has("forman_range")) o.forman_range = r.numbers("forman_range");
  for (const auto* range : {&o.node_range, &o.forman_range})
    if (!range->empty() && (range->size() != 2 || !((*range)[0] < (*range)[1])))
      fail(ErrorKind::argument, "sweep options: curvature.range and curvature.forman_range must be [lo, hi] with lo < hi");
  if (o.auto_bins && (!o.node_range.empty() || !o.forman_range.empty()))
    fail(ErrorKind::argument, "sweep options: curvature.range needs a fixed number of bins (\"bins\": integer)");
  r.finish();
  return o;
}

Json number_or_null(double x) { return std::isfinite(x) ? Json(x) : Json(nullptr); }

OnGrid on_grid(const filtration::Filtration& f, const std::vector<filtration::GridPoint>& grid,
               const cliques::GridCounts& counts, const Options& options) {
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
    // Preferably the engine's per-node sums (taken in its counting tree); node clique
    // counts, when that is what the engine was asked for, give the same values.
    const bool have_sums = g < counts.curvature_numerators.size() && !counts.curvature_numerators[g].empty();
    const bool have_counts = g < counts.node_counts.size() && !counts.node_counts[g].empty();
    if (g < counts.complete_points && (have_sums || have_counts)) {
      NodeCurvature nc = have_sums ? node_curvature_from_sums(counts.curvature_numerators[g], counts.curvature_denominator,
                                                              counts.curvature_exact, &last)
                                   : node_curvature(counts.node_counts[g]);
      p.gauss_bonnet = check_gauss_bonnet(nc, counts.chi[g]);
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

static std::string level_name(double q) {
  char buffer[32];
  const double percent = q * 100.0;
  if (percent == std::floor(percent)) std::snprintf(buffer, sizeof buffer, "%02d", static_cast<int>(percent));
  else std::snprintf(buffer, sizeof buffer, "%g", percent);
  return buffer;
}

void add_columns(const OnGrid& c, std::vector<std::string>& columns, std::vector<std::vector<std::string>>& rows) {
  columns.insert(columns.end(), {"kappa_mean", "kappa_sd", "kappa_skewness", "kappa_kurtosis", "kappa_min"});
  for (double q : c.options.quantile_levels) columns.push_back("kappa_q" + level_name(q));
  columns.insert(columns.end(), {"kappa_max", "gauss_bonnet_error"});
  if (c.options.forman)
    columns.insert(columns.end(),
                   {"forman_mean", "forman_sd", "forman_skewness", "forman_kurtosis", "forman_min", "forman_max"});
  const std::string missing = "NaN";
  for (std::size_t g = 0; g < rows.size() && g < c.points.size(); ++g) {
    const PointCurvature& p = c.points[g];
    auto& row = rows[g];
    auto put = [&](bool ok, double x) { row.push_back(ok ? io::format_double(x) : missing); };
    put(p.computed, p.node.mean);
    put(p.computed, p.node.sd);
    put(p.computed, p.node.skewness);
    put(p.computed, p.node.kurtosis);
    put(p.computed, p.node.min);
    for (std::size_t q = 0; q < c.options.quantile_levels.size(); ++q) put(p.computed, p.computed ? p.node.quantiles[q] : 0.0);
    put(p.computed, p.node.max);
    put(p.computed, p.gauss_bonnet.relative_error);
    if (c.options.forman) {
      put(p.forman_computed, p.forman.mean);
      put(p.forman_computed, p.forman.sd);
      put(p.forman_computed, p.forman.skewness);
      put(p.forman_computed, p.forman.kurtosis);
      put(p.forman_computed, p.forman.min);
      put(p.forman_computed, p.forman.max);
    }
  }
}

static Json distribution_json(const Distribution& d, const std::vector<double>& levels) {
  Json q = Json::array();
  for (std::size_t i = 0; i < levels.size(); ++i) q.push_back(number_or_null(d.quantiles[i]));
  return Json{{"count", d.count},       {"mean", number_or_null(d.mean)},
              {"sd", number_or_null(d.sd)}, {"skewness", number_or_null(d.skewness)},
              {"kurtosis", number_or_null(d.kurtosis)}, {"min", number_or_null(d.min)},
              {"max", number_or_null(d.max)}, {"quantiles", q},
              {"histogram", d.histogram}, {"below", d.below}, {"above", d.above}};
}

Json to_json(const OnGrid& c, const std::vector<std::string>& names) {
  Json j;
  j["node_curvature"] = "Gauss-Bonnet node curvature of the clique complex (Knill 2011)";
  j["edge_curvature"] = c.options.forman ? Json("Forman-Ricci, augmented with triangles, unweighted") : Json(nullptr);
  j["quantile_levels"] = c.options.quantile_levels;
  j["kurtosis"] = "excess (normal = 0), biased moment estimator";
  j["node_histogram_edges"] = c.node_bin_edges;
  j["forman_histogram_edges"] = c.forman_bin_edges;
  j["histogram_bins"] = c.options.auto_bins ? "Freedman-Diaconis on pooled values" : "fixed";
  std::size_t checked = 0;
  Json points = Json::array();
  for (std::size_t g = 0; g < c.points.size(); ++g) {
    const PointCurvature& p = c.points[g];
    Json point{{"index", g}};
    if (p.computed) {
      ++checked;
      point["gauss_bonnet"] = Json{{"chi", to_decimal(p.gauss_bonnet.chi)},
                                   {"sum_kappa", p.gauss_bonnet.sum_kappa},
                                   {"relative_error", p.gauss_bonnet.relative_error},
                                   {"exact", p.gauss_bonnet.exact},
                                   {"method", p.gauss_bonnet.method}};
      point["node"] = distribution_json(p.node, c.options.quantile_levels);
    } else {
      point["gauss_bonnet"] = nullptr;
      point["node"] = nullptr;
    }
    if (c.options.forman)
      point["forman"] = p.forman_computed ? distribution_json(p.forman, c.options.quantile_levels) : Json(nullptr);
    points.push_back(std::move(point));
  }
  j["gauss_bonnet"] = Json{{"points_checked", checked}, {"all_exact", c.all_exact},
                           {"max_relative_error", c.max_relative_error}};
  j["points"] = std::move(points);
  const std::size_t nodes = names.size();
  if (c.options.node_curves) {
    Json curves = Json::array();
    for (std::size_t i = 0; i < nodes; ++i) {
      Json curve = Json::array();
      for (const auto& p : c.points) curve.push_back(p.computed && i < p.kappa.size() ? Json(p.kappa[i]) : Json(nullptr));
      curves.push_back(std::move(curve));
    }
    j["node_kappa"] = Json{{"names", names}, {"values", std::move(curves)}};
    if (c.options.forman) {
      Json means = Json::array();
      for (std::size_t i = 0; i < nodes; ++i) {
        Json curve = Json::array();
        for (const auto& p : c.points)
          curve.push_back(p.forman_computed && i < p.forman_node_mean.size() ? number_or_null(p.forman_node_mean[i])
                                                                             : Json(nullptr));
        means.push_back(std::move(curve));
      }
      j["node_forman_mean"] = Json{{"names", names}, {"values", std::move(means)}};
    }
  }
  return j;
}

}  // namespace critplex::curvature
