#include "output/sweep.hpp"

#include <cmath>
#include <cstdio>
#include <limits>

#include "base/error.hpp"
#include "output/format.hpp"
#include "transitions/random_graph.hpp"
#include "transitions/transitions.hpp"

namespace critplex::output {

namespace {

constexpr double nan_value = std::numeric_limits<double>::quiet_NaN();

CurveColumn real_column(std::string name, std::size_t points) {
  return CurveColumn{std::move(name), std::vector<double>(points, nan_value), {}};
}

CurveColumn integer_column(std::string name, std::size_t points) {
  return CurveColumn{std::move(name), std::vector<double>(points, nan_value),
                     std::vector<std::optional<int128>>(points)};
}

void set(CurveColumn& c, std::size_t g, int128 v) {
  c.exact[g] = v;
  c.values[g] = to_double(v);
}

// "05" for 0.05, "50" for 0.5, "2.5" for 0.025: the column suffix of a quantile level.
std::string level_name(double q) {
  char buffer[32];
  const double percent = q * 100.0;
  if (percent == std::floor(percent)) std::snprintf(buffer, sizeof buffer, "%02d", static_cast<int>(percent));
  else std::snprintf(buffer, sizeof buffer, "%g", percent);
  return buffer;
}

void add_clique_columns(const pipeline::SweepResult& r, std::vector<CurveColumn>& out) {
  const cliques::GridCounts& gc = *r.cliques;
  const cliques::Options& o = *r.options.cliques;
  const std::size_t n = r.grid.size();
  std::size_t width = 0;
  for (const auto& c : gc.counts) width = std::max(width, c.size());
  CurveColumn chi = integer_column("chi", n);
  std::vector<CurveColumn> counts;
  for (std::size_t k = 0; k < width; ++k) counts.push_back(integer_column("cliques_" + std::to_string(k), n));
  for (std::size_t g = 0; g < n; ++g) {
    const bool exact = g < gc.complete_points;
    const bool have = g < gc.counts.size() && !gc.counts[g].empty();
    if (exact) set(chi, g, gc.chi[g]);
    for (std::size_t k = 0; k < width; ++k) {
      // Past a max_dimension stop, counts up to the cap are still exact.
      // Past the every-size counts' range only Cl_0 and Cl_1 are counted.
      const bool counted = have && (k < gc.counts[g].size() || g < gc.every_size_points || !exact);
      const bool known = counted && (exact || o.max_dimension < 0 || static_cast<int>(k) <= o.max_dimension);
      if (known) set(counts[k], g, k < gc.counts[g].size() ? gc.counts[g][k] : int128{0});
    }
  }
  out.push_back(std::move(chi));
  for (auto& c : counts) out.push_back(std::move(c));
}

void add_betti_columns(const pipeline::SweepResult& r, std::vector<CurveColumn>& out) {
  const homology::Result& h = *r.homology;
  for (int k = 0; k <= h.max_dimension; ++k) {
    CurveColumn c = integer_column("betti_" + std::to_string(k), r.grid.size());
    if (k <= h.complete_dimension)
      for (std::size_t g = 0; g < r.grid.size() && g < h.betti.size(); ++g)
        set(c, g, static_cast<int128>(h.betti[g][static_cast<std::size_t>(k)]));
    out.push_back(std::move(c));
  }
}

void add_curvature_columns(const pipeline::SweepResult& r, std::vector<CurveColumn>& out) {
  const curvature::OnGrid& c = *r.curvature;
  const std::size_t n = r.grid.size();
  auto column = [&](std::string name, auto value_of, bool forman) {
    CurveColumn col = real_column(std::move(name), n);
    for (std::size_t g = 0; g < n && g < c.points.size(); ++g) {
      const auto& p = c.points[g];
      if (forman ? p.forman_computed : p.computed) col.values[g] = value_of(p);
    }
    out.push_back(std::move(col));
  };
  using P = curvature::PointCurvature;
  column("kappa_mean", [](const P& p) { return p.node.mean; }, false);
  column("kappa_sd", [](const P& p) { return p.node.sd; }, false);
  column("kappa_skewness", [](const P& p) { return p.node.skewness; }, false);
  column("kappa_kurtosis", [](const P& p) { return p.node.kurtosis; }, false);
  column("kappa_min", [](const P& p) { return p.node.min; }, false);
  for (std::size_t q = 0; q < c.options.quantile_levels.size(); ++q)
    column("kappa_q" + level_name(c.options.quantile_levels[q]), [q](const P& p) { return p.node.quantiles[q]; }, false);
  column("kappa_max", [](const P& p) { return p.node.max; }, false);
  column("gauss_bonnet_error", [](const P& p) { return p.gauss_bonnet.relative_error; }, false);
  if (!c.options.forman) return;
  column("forman_mean", [](const P& p) { return p.forman.mean; }, true);
  column("forman_sd", [](const P& p) { return p.forman.sd; }, true);
  column("forman_skewness", [](const P& p) { return p.forman.skewness; }, true);
  column("forman_kurtosis", [](const P& p) { return p.forman.kurtosis; }, true);
  column("forman_min", [](const P& p) { return p.forman.min; }, true);
  column("forman_max", [](const P& p) { return p.forman.max; }, true);
}

}  // namespace

std::vector<CurveColumn> curve_columns(const pipeline::SweepResult& r) {
  const std::size_t n = r.grid.size();
  std::vector<CurveColumn> out;
  CurveColumn density = real_column("density", n), threshold = real_column("threshold", n);
  CurveColumn edges = integer_column("edges", n);
  for (std::size_t g = 0; g < n; ++g) {
    density.values[g] = r.grid[g].density;
    threshold.values[g] = r.grid[g].threshold;
    set(edges, g, static_cast<int128>(r.grid[g].edges));
  }
  out.push_back(std::move(density));
  out.push_back(std::move(threshold));
  out.push_back(std::move(edges));
  if (r.cliques) add_clique_columns(r, out);
  if (r.homology) add_betti_columns(r, out);
  if (r.curvature) add_curvature_columns(r, out);
  if (r.transitions && r.cliques) {
    // Natural log of |chi|: -infinity where chi = 0 (its singularities mark the zeros),
    // missing where chi is unknown.
    CurveColumn log_abs_chi = real_column("log_abs_chi", n);
    const std::vector<double> chi = r.chi_curve();
    for (std::size_t g = 0; g < n; ++g)
      if (std::isfinite(chi[g])) log_abs_chi.values[g] = std::log(std::fabs(chi[g]));
    out.push_back(std::move(log_abs_chi));
  }
  return out;
}

std::string curves_tsv(const std::vector<CurveColumn>& columns) {
  std::vector<std::string> header;
  for (const auto& c : columns) header.push_back(c.name);
  Tsv tsv(header);
  const std::size_t n = columns.empty() ? 0 : columns[0].values.size();
  for (std::size_t g = 0; g < n; ++g) {
    std::vector<std::string> row;
    row.reserve(columns.size());
    for (const auto& c : columns)
      row.push_back(c.integer() ? (c.exact[g] ? cell(*c.exact[g]) : std::string(missing)) : cell(c.values[g]));
    tsv.add(std::move(row));
  }
  return tsv.text();
}

Json curves_json(const std::vector<CurveColumn>& columns) {
  Json j = Json::object();
  for (const auto& c : columns) j[c.name] = numbers_or_null(c.values);
  return j;
}

Json cliques_section(const pipeline::SweepResult& r) {
  const cliques::GridCounts& gc = *r.cliques;
  const cliques::Options& o = *r.options.cliques;
  Json section;
  section["options"] = Json{{"max_dimension", o.max_dimension}, {"max_work", o.max_work}, {"threads", o.threads},
                            {"node_counts", o.node_counts}, {"chi_only", o.chi_only},
                            {"max_density", o.max_density ? Json(*o.max_density) : Json(nullptr)},
                            {"counts_max_density", o.counts_max_density ? Json(*o.counts_max_density) : Json(nullptr)}};
  section["stopped_by"] = gc.stopped_by.empty() ? Json(nullptr) : Json(gc.stopped_by);
  section["complete_points"] = gc.complete_points;
  section["complete_to_density"] =
      gc.complete_points == 0 ? Json(nullptr) : Json(r.grid[gc.complete_points - 1].density);
  section["every_size_points"] = gc.every_size_points;
  section["every_size_to_density"] =
      gc.every_size_points == 0 ? Json(nullptr) : Json(r.grid[gc.every_size_points - 1].density);
  section["complete_edges"] = gc.complete_edges;
  section["work"] = gc.work;
  Json points = Json::array();
  for (std::size_t g = 0; g < r.grid.size(); ++g) {
    Json point;
    point["density"] = r.grid[g].density;
    point["edges"] = r.grid[g].edges;
    point["complete"] = g < gc.complete_points;
    point["chi"] = g < gc.complete_points ? Json(to_decimal(gc.chi[g])) : Json(nullptr);
    Json counts = Json::array();
    for (const int128 c : gc.counts[g]) counts.push_back(to_decimal(c));
    point["counts"] = std::move(counts);
    if (o.node_counts && g < gc.node_counts.size() && !gc.node_counts[g].empty()) {
      Json nodes = Json::array();
      for (const auto& row : gc.node_counts[g]) {
        Json cells = Json::array();
        for (const int128 c : row) cells.push_back(to_decimal(c));
        nodes.push_back(std::move(cells));
      }
      point["node_counts"] = std::move(nodes);
    }
    points.push_back(std::move(point));
  }
  section["points"] = std::move(points);
  return section;
}

Json homology_section(const pipeline::SweepResult& r) {
  const homology::Result& h = *r.homology;
  const filtration::Filtration& f = r.filtration;
  Json j;
  j["coefficients"] = "Z/2";
  j["max_dimension"] = h.max_dimension;
  j["complete_dimension"] = h.complete_dimension;
  j["complete_to_density"] = h.complete_to_density;
  j["stopped_by"] = h.stopped_by.empty() ? Json(nullptr) : Json(h.stopped_by);
  j["work"] = h.work;
  auto threshold = [&](std::size_t rank) { return rank == 0 ? Json(nullptr) : Json(f.edges[rank - 1].value); };
  Json bars = Json::array();
  std::vector<std::size_t> counts(static_cast<std::size_t>(std::max(0, h.complete_dimension + 1)), 0);
  for (const auto& b : h.bars) {
    ++counts[static_cast<std::size_t>(b.dimension)];
    Json bar = {{"dimension", b.dimension},
                {"birth_rank", b.birth_rank},
                {"birth_density", homology::rank_density(f, b.birth_rank)},
                {"birth_threshold", threshold(b.birth_rank)},
                {"essential", b.essential}};
    bar["death_rank"] = b.essential ? Json(nullptr) : Json(b.death_rank);
    bar["death_density"] = b.essential ? Json(nullptr) : Json(homology::rank_density(f, b.death_rank));
    bar["death_threshold"] = b.essential ? Json(nullptr) : threshold(b.death_rank);
    bars.push_back(std::move(bar));
  }
  j["bars"] = std::move(bars);
  j["bar_counts"] = counts;
  Json curves = Json::array();
  for (std::size_t k = 0; k < counts.size(); ++k) {
    Json curve = Json::array();
    for (const auto& point : h.betti) curve.push_back(point[k]);
    curves.push_back(std::move(curve));
  }
  j["betti"] = std::move(curves);
  if (r.cliques) j["euler_poincare_checked_points"] = r.euler_poincare_checked;
  return j;
}

namespace {
Json distribution_json(const curvature::Distribution& d, const std::vector<double>& levels) {
  Json q = Json::array();
  for (std::size_t i = 0; i < levels.size(); ++i) q.push_back(number_or_null(d.quantiles[i]));
  return Json{{"count", d.count},       {"mean", number_or_null(d.mean)},
              {"sd", number_or_null(d.sd)}, {"skewness", number_or_null(d.skewness)},
              {"kurtosis", number_or_null(d.kurtosis)}, {"min", number_or_null(d.min)},
              {"max", number_or_null(d.max)}, {"quantiles", q},
              {"histogram", d.histogram}, {"below", d.below}, {"above", d.above}};
}

// One curve per node over the grid, null where not computed.
template <class ValueOf>
Json node_curves(const std::vector<std::string>& names, const curvature::OnGrid& c, ValueOf value_of) {
  Json curves = Json::array();
  for (std::size_t i = 0; i < names.size(); ++i) {
    Json curve = Json::array();
    for (const auto& p : c.points) curve.push_back(value_of(p, i));
    curves.push_back(std::move(curve));
  }
  return Json{{"names", names}, {"values", std::move(curves)}};
}
}  // namespace

namespace {
// Where node curvature was computed and why (curvature.at).
Json selection_json(const pipeline::SweepResult& r, const curvature::OnGrid& c) {
  const curvature::Selection& s = c.selection;
  Json j{{"mode", curvature::at_name(s.at)},
         {"method", s.at == curvature::Options::At::grid || s.walk
                        ? "one walk along the filtration"
                        : "one static count of the graph per point (degeneracy order)"}};
  Json computed = Json::array(), densities = Json::array();
  for (std::size_t g = 0; g < c.points.size(); ++g)
    if (c.points[g].computed) {
      computed.push_back(g);
      densities.push_back(r.grid[g].density);
    }
  j["points"] = std::move(computed);
  j["densities"] = std::move(densities);
  if (s.at == curvature::Options::At::list) {
    Json snapped = Json::array();
    for (const auto& x : s.snapped)
      snapped.push_back(Json{{"requested", x.requested}, {"index", x.index}, {"density", r.grid[x.index].density}});
    j["snapped"] = std::move(snapped);
    j["snap"] = "the last grid point at or below each density";
  }
  if (s.at == curvature::Options::At::transitions) {
    j["window"] = s.window;
    Json zeros = Json::array();
    for (const auto& z : s.zeros)
      zeros.push_back(Json{{"density", z.density}, {"direction", transitions::direction_name(z.direction)},
                           {"touch", z.touch}, {"left", z.left}, {"right", z.right}});
    j["chi_zeros"] = std::move(zeros);
  }
  if (s.at != curvature::Options::At::grid) {
    Json stopped = Json::array();
    for (std::size_t g = 0; g < c.stopped.size(); ++g)
      if (!c.stopped[g].empty()) stopped.push_back(Json{{"index", g}, {"stopped_by", c.stopped[g]}});
    j["stopped"] = std::move(stopped);
  }
  return j;
}
}  // namespace

Json curvature_section(const pipeline::SweepResult& r) {
  const curvature::OnGrid& c = *r.curvature;
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
    const curvature::PointCurvature& p = c.points[g];
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
  j["node_curvature_at"] = selection_json(r, c);
  if (c.options.node_curves) {
    j["node_kappa"] = node_curves(r.names, c, [](const curvature::PointCurvature& p, std::size_t i) {
      return p.computed && i < p.kappa.size() ? Json(p.kappa[i]) : Json(nullptr);
    });
    if (c.options.forman)
      j["node_forman_mean"] = node_curves(r.names, c, [](const curvature::PointCurvature& p, std::size_t i) {
        return p.forman_computed && i < p.forman_node_mean.size() ? number_or_null(p.forman_node_mean[i]) : Json(nullptr);
      });
  }
  return j;
}

namespace {

Json moments_json(const transitions::Moments& m) {
  return Json{{"kappa_mean", number_or_null(m.kappa_mean)},
              {"kappa_sd", number_or_null(m.kappa_sd)},
              {"kappa_skewness", number_or_null(m.kappa_skewness)},
              {"kappa_kurtosis", number_or_null(m.kappa_kurtosis)},
              {"forman_mean", number_or_null(m.forman_mean)}};
}

std::string crossing_direction(const transitions::CrossingRecord& r, bool betti) {
  if (betti) return r.crossing.direction < 0 ? "beta_k falls below beta_k+1" : "beta_k rises above beta_k+1";
  if (r.crossing.touch) return r.crossing.direction < 0 ? "touch from above" : "touch from below";
  return transitions::direction_name(r.crossing.direction);
}

Json crossing_json(const transitions::CrossingRecord& r, const std::vector<double>& density, bool betti) {
  Json j{{"density", r.crossing.density},
         {"direction", crossing_direction(r, betti)},
         {"left_density", density[r.crossing.left]},
         {"right_density", density[r.crossing.right]},
         {"left_value", r.left_value},
         {"right_value", r.right_value}};
  if (r.left_exact) j["left_exact"] = to_decimal(*r.left_exact);
  if (r.right_exact) j["right_exact"] = to_decimal(*r.right_exact);
  if (betti) j["k"] = r.k;
  return j;
}

// The record as it stands in the "summary" list: the crossing plus its kind, the
// curvature moments there and the nearest zero of the random-graph reference.
Json summary_record(const transitions::CrossingRecord& r, const std::vector<double>& density, bool betti) {
  Json j = crossing_json(r, density, betti);
  j["kind"] = betti ? "betti_crossing" : (r.crossing.touch ? "chi_touch" : "chi_zero");
  if (r.moments) j["curvature"] = moments_json(*r.moments);
  j["random_graph_nearest_zero"] = number_or_null(r.nearest_reference);
  return j;
}

Json random_graph_json(const transitions::RandomGraphReference& rg) {
  Json j{{"nodes", rg.nodes},
         {"model", "Erdos-Renyi G(N, p) with p = density"},
         {"arithmetic", transitions::random_graph_arithmetic()},
         {"max_p", rg.max_p},
         {"scan_points", rg.scan_points},
         {"reliable_up_to", rg.reliable_up_to}};
  auto zeros = [](const std::vector<transitions::ReferenceZero>& list) {
    Json a = Json::array();
    for (const auto& z : list) a.push_back({{"density", z.density}, {"direction", transitions::direction_name(z.direction)}});
    return a;
  };
  j["chi_zeros"] = zeros(rg.chi_zeros);
  j["kappa_zeros"] = zeros(rg.kappa_zeros);
  j["expected_chi"] = numbers_or_null(rg.expected_chi);
  j["expected_kappa"] = numbers_or_null(rg.expected_kappa);
  return j;
}

}  // namespace

Json transitions_section(const transitions::Analysis& a, const std::vector<double>& density) {
  Json j;
  j["random_graph"] = a.random_graph ? random_graph_json(*a.random_graph) : Json(nullptr);
  Json summary = Json::array();
  if (a.have_chi) {
    Json zeros = Json::array(), touches = Json::array();
    for (const auto& r : a.chi_crossings) {
      (r.crossing.touch ? touches : zeros).push_back(crossing_json(r, density, false));
      summary.push_back(summary_record(r, density, false));
    }
    j["first_chi_zero"] = number_or_null(a.first_chi_zero());
    j["chi_zeros"] = std::move(zeros);
    j["chi_touches"] = std::move(touches);
  } else {
    j["chi_zeros"] = nullptr;
    j["first_chi_zero"] = nullptr;
  }
  if (a.have_betti) {
    Json crossings = Json::array(), peaks = Json::array();
    for (const auto& r : a.betti_crossings) {
      crossings.push_back(crossing_json(r, density, true));
      summary.push_back(summary_record(r, density, true));
    }
    for (const auto& p : a.betti_peaks) {
      Json record{{"k", p.peak.k}, {"value", p.peak.value}, {"density", p.peak.density},
                  {"last_density", p.peak.last_density}};
      peaks.push_back(record);
      record["kind"] = "betti_peak";
      record["random_graph_nearest_zero"] = number_or_null(p.nearest_reference);
      summary.push_back(std::move(record));
    }
    j["betti_crossings"] = std::move(crossings);
    j["betti_peaks"] = std::move(peaks);
  } else {
    j["betti_crossings"] = nullptr;
    j["betti_peaks"] = nullptr;
  }
  if (a.random_graph)
    for (const auto& z : a.random_graph->chi_zeros)
      summary.push_back({{"kind", "random_chi_zero"}, {"density", z.density}, {"direction", transitions::direction_name(z.direction)}});
  j["summary"] = std::move(summary);
  j["interpolation"] = "linear between the bracketing grid points (curvature moments too)";
  return j;
}

std::string transitions_tsv(const transitions::Analysis& a, const std::vector<double>& density) {
  Tsv tsv({"kind", "k", "density", "direction", "left_density", "right_density", "left_value", "right_value", "value",
           "kappa_mean", "kappa_sd", "kappa_skewness", "kappa_kurtosis", "forman_mean", "random_graph_nearest_zero"});
  const std::string na = missing;
  auto moments = [&](const std::optional<transitions::Moments>& m) -> std::vector<std::string> {
    if (!m) return {na, na, na, na, na};
    return {cell(m->kappa_mean), cell(m->kappa_sd), cell(m->kappa_skewness), cell(m->kappa_kurtosis), cell(m->forman_mean)};
  };
  auto crossing_row = [&](const transitions::CrossingRecord& r, bool betti) {
    const std::string kind = betti ? "betti_crossing" : (r.crossing.touch ? "chi_touch" : "chi_zero");
    std::vector<std::string> row{kind,
                                 betti ? cell(r.k) : na,
                                 cell(r.crossing.density),
                                 crossing_direction(r, betti),
                                 cell(density[r.crossing.left]),
                                 cell(density[r.crossing.right]),
                                 r.left_exact ? cell(*r.left_exact) : cell(r.left_value),
                                 r.right_exact ? cell(*r.right_exact) : cell(r.right_value),
                                 na};
    for (auto& m : moments(r.moments)) row.push_back(std::move(m));
    row.push_back(cell(r.nearest_reference));
    tsv.add(std::move(row));
  };
  for (const auto& r : a.chi_crossings) crossing_row(r, false);
  for (const auto& r : a.betti_crossings) crossing_row(r, true);
  for (const auto& p : a.betti_peaks)
    tsv.add({"betti_peak", cell(p.peak.k), cell(p.peak.density), na, na, na, na, na, cell(p.peak.value), na, na, na, na,
             na, cell(p.nearest_reference)});
  if (a.random_graph)
    for (const auto& z : a.random_graph->chi_zeros)
      tsv.add({"random_chi_zero", na, cell(z.density), transitions::direction_name(z.direction), na, na, na, na, na, na,
               na, na, na, na, na});
  return tsv.text();
}

Json sweep_json(const pipeline::SweepResult& r) {
  Json j;
  j["nodes"] = r.nodes;
  j["names"] = r.names;
  j["weights"] = filtration::weight_mode_name(r.filtration.mode);
  j["pairs"] = r.filtration.pairs();
  Json grid = Json::array();
  for (const auto& p : r.grid) {
    Json point = {{"requested", p.requested}, {"density", p.density}, {"edges", p.edges}};
    point["threshold"] = p.edges == 0 ? Json(nullptr) : Json(p.threshold);
    grid.push_back(point);
  }
  j["grid"] = std::move(grid);
  if (r.cliques) j["cliques"] = cliques_section(r);
  if (r.homology) j["homology"] = homology_section(r);
  if (r.curvature) j["curvature"] = curvature_section(r);
  if (r.transitions) j["transitions"] = transitions_section(*r.transitions, r.densities());
  return j;
}

Json sweep_options_json(const pipeline::SweepOptions& o) {
  Json j;
  j["weights"] = filtration::weight_mode_name(o.weights);
  j["max_density"] = o.grid.max_density;
  if (o.grid.kind == "every") j["grid"] = "every";
  else if (o.grid.kind == "step") j["grid"] = o.grid.step;
  else j["grid"] = Json{{o.grid.parameter == "threshold" ? "thresholds" : "densities", o.grid.values}};
  if (o.cliques)
    j["cliques"] = Json{{"max_dimension", o.cliques->max_dimension}, {"max_work", o.cliques->max_work},
                        {"threads", o.cliques->threads}, {"chi_only", o.cliques->chi_only},
                        {"node_counts", o.cliques->node_counts}};
  else j["cliques"] = false;
  // Engine ranges as run (resolved from their defaults by the sweep), when known.
  if (o.cliques && o.cliques->max_density) j["cliques"]["max_density"] = *o.cliques->max_density;
  if (o.cliques && o.cliques->counts_max_density) j["cliques"]["counts_max_density"] = *o.cliques->counts_max_density;
  if (o.homology) {
    j["homology"] = Json{{"max_dimension", o.homology->max_dimension}, {"max_work", o.homology->max_work},
                         {"threads", o.homology->threads}};
    if (o.homology->max_density) j["homology"]["max_density"] = *o.homology->max_density;
  }
  if (o.curvature) {
    const curvature::Options& c = *o.curvature;
    Json k{{"node_curves", c.node_curves}, {"forman", c.forman}, {"quantiles", c.quantile_levels},
           {"max_bins", c.max_bins}};
    k["bins"] = c.auto_bins ? Json("auto") : Json(c.bins);
    if (!c.node_range.empty()) k["range"] = c.node_range;
    if (!c.forman_range.empty()) k["forman_range"] = c.forman_range;
    if (c.max_density) k["max_density"] = *c.max_density;
    k["at"] = c.at == curvature::Options::At::list ? Json(c.at_densities) : Json(curvature::at_name(c.at));
    if (c.at == curvature::Options::At::transitions) k["window"] = c.window;
    if (c.at != curvature::Options::At::grid)
      k["count"] = c.count == curvature::Options::Count::walk          ? "walk"
                   : c.count == curvature::Options::Count::static_graph ? "static"
                                                                        : "auto";
    j["curvature"] = std::move(k);
  }
  j["transitions"] = Json{{"enabled", o.transitions.enabled}, {"random_graph", o.transitions.random_graph},
                          {"scan_points", o.transitions.scan_points}, {"max_p", o.transitions.max_p}};
  return j;
}

}  // namespace critplex::output
