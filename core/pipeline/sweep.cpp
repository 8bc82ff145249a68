#include "pipeline/sweep.hpp"

#include <cmath>
#include <cstdlib>

#include <optional>

#include "base/error.hpp"
#include "cliques/counts.hpp"
#include "curvature/on_grid.hpp"
#include "homology/persistence.hpp"
#include "io/files.hpp"
#include "transitions/from_sweep.hpp"
#include "transitions/report.hpp"

namespace critplex::pipeline {

namespace {
// Columns "chi", "cliques_0".."cliques_K" (exact decimal text; "NaN" where a budget
// stopped the sweep) and the JSON section "cliques".
void add_clique_columns(SweepResult& result, const cliques::GridCounts& gc, const cliques::Options& o) {
  std::size_t width = 0;
  for (const auto& c : gc.counts) width = std::max(width, c.size());
  result.columns.push_back("chi");
  for (std::size_t k = 0; k < width; ++k) result.columns.push_back("cliques_" + std::to_string(k));
  for (std::size_t g = 0; g < result.rows.size(); ++g) {
    const bool exact = g < gc.complete_points;
    const bool have = !gc.counts[g].empty();
    auto& row = result.rows[g];
    row.push_back(exact ? to_decimal(gc.chi[g]) : "NaN");
    for (std::size_t k = 0; k < width; ++k) {
      // Past a max_dimension stop, counts up to the cap are still exact.
      const bool known = have && (exact || o.max_dimension < 0 || static_cast<int>(k) <= o.max_dimension);
      row.push_back(!known ? "NaN" : k < gc.counts[g].size() ? to_decimal(gc.counts[g][k]) : "0");
    }
  }
  Json section;
  section["options"] = cliques::options_to_json(o);
  section["stopped_by"] = gc.stopped_by.empty() ? Json(nullptr) : Json(gc.stopped_by);
  section["complete_points"] = gc.complete_points;
  section["complete_to_density"] = gc.complete_points == 0 ? Json(nullptr) : Json(result.grid[gc.complete_points - 1].density);
  section["complete_edges"] = gc.complete_edges;
  section["work"] = gc.work;
  Json points = Json::array();
  for (std::size_t g = 0; g < result.grid.size(); ++g) {
    Json point;
    point["density"] = result.grid[g].density;
    point["edges"] = result.grid[g].edges;
    point["complete"] = g < gc.complete_points;
    point["chi"] = g < gc.complete_points ? Json(to_decimal(gc.chi[g])) : Json(nullptr);
    Json counts = Json::array();
    for (const int128 c : gc.counts[g]) counts.push_back(to_decimal(c));
    point["counts"] = std::move(counts);
    if (o.node_counts && !gc.node_counts[g].empty()) {
      Json nodes = Json::array();
      for (const auto& row : gc.node_counts[g]) {
        Json r = Json::array();
        for (const int128 c : row) r.push_back(to_decimal(c));
        nodes.push_back(std::move(r));
      }
      point["node_counts"] = std::move(nodes);
    }
    points.push_back(std::move(point));
  }
  section["points"] = std::move(points);
  result.sections["cliques"] = std::move(section);
}
}  // namespace

SweepOptions parse_sweep_options(const Json& options) {
  OptionReader r(options, "sweep options");
  SweepOptions o;
  o.weights = filtration::weight_mode_from_name(r.choice("weights", "positive", {"positive", "absolute", "negative"}));
  o.grid.max_density = r.number("max_density", 1.0);
  if (!(o.grid.max_density > 0.0 && o.grid.max_density <= 1.0))
    fail(ErrorKind::argument, "sweep options: \"max_density\" must be in (0, 1], got " + io::format_double(o.grid.max_density));
  if (const Json* g = r.raw("grid")) {
    // "every", a step (number), a list of densities, or an object {"step"|"densities"|"thresholds"}.
    if (g->is_string()) {
      if (g->get<std::string>() != "every")
        fail(ErrorKind::argument, "sweep options: \"grid\" as text must be \"every\", got " + g->dump());
      o.grid.kind = "every";
    } else if (g->is_number()) {
      o.grid.kind = "step";
      o.grid.step = g->get<double>();
    } else if (g->is_array()) {
      o.grid.kind = "list";
      // OptionReader keeps a reference: the wrapper object must outlive it.
      const Json wrapped{{"densities", *g}};
      OptionReader list_reader(wrapped, "sweep options: grid");
      o.grid.values = list_reader.numbers("densities");
    } else if (g->is_object()) {
      OptionReader gr(*g, "sweep options: grid");
      if (gr.has("step")) {
        o.grid.kind = "step";
        o.grid.step = gr.number("step", 0.01);
      } else if (gr.has("densities")) {
        o.grid.kind = "list";
        o.grid.values = gr.numbers("densities");
      } else if (gr.has("thresholds")) {
        o.grid.kind = "list";
        o.grid.parameter = "threshold";
        o.grid.values = gr.numbers("thresholds");
      } else if (gr.boolean("every", false)) {
        o.grid.kind = "every";
      }
      gr.finish();
    } else {
      fail(ErrorKind::argument, "sweep options: \"grid\" must be \"every\", a step, a list of densities or an object");
    }
  }
  // Engine sections: each engine parses (and checks) its own section in run_sweep.
  for (const char* engine : {"cliques", "homology", "curvature", "transitions"})
    if (const Json* section = r.raw(engine)) o.engine_options[engine] = *section;
  r.finish();
  return o;
}

SweepResult run_sweep(const connectivity::Matrix& matrix, const SweepOptions& options, const ProgressFn& progress) {
  SweepResult result;
  result.nodes = static_cast<std::size_t>(matrix.values.rows());
  result.names = matrix.names;
  result.filtration = filtration::build(matrix.values, options.weights, options.grid.max_density);
  result.grid = filtration::make_grid(result.filtration, options.grid);

  result.columns = {"density", "threshold", "edges"};
  for (const auto& p : result.grid)
    result.rows.push_back({io::format_double(p.density), io::format_double(p.threshold), std::to_string(p.edges)});

  // Engines add their columns and sections here, in this order:
  // cliques (counts, chi), homology (betti), curvature, transitions.

  // --- cliques: exact clique counts Cl_k and chi (core/cliques). On by default;
  // "cliques": false turns it off. Later blocks (curvature) read clique_counts.
  cliques::GridCounts clique_counts;
  bool have_clique_counts = false;
  const bool wants_curvature = options.engine_options.contains("curvature") &&
                               !(options.engine_options.at("curvature").is_boolean() &&
                                 !options.engine_options.at("curvature").get<bool>());
  {
    const Json section = options.engine_options.contains("cliques") ? options.engine_options.at("cliques") : Json();
    if (!(section.is_boolean() && !section.get<bool>())) {
      cliques::Options copt = cliques::parse_options(section.is_boolean() ? Json() : section);
      if (wants_curvature && copt.chi_only)
        fail(ErrorKind::argument, "sweep options: \"curvature\" needs every clique size; drop cliques.chi_only");
      // The curvature block reads per-node curvature sums taken straight from the
      // pivoting tree's leaves (no per-size node counts needed).
      copt.node_curvature = wants_curvature;
      clique_counts = cliques::count_on_grid(result.filtration, result.grid, copt, progress);
      have_clique_counts = true;
      add_clique_columns(result, clique_counts, copt);
    }
  }
  (void)have_clique_counts;

  // --- homology: barcodes and Betti curves betti_0..betti_K (core/homology). On when
  // the options have a "homology" section (the CLI's --betti K). Where the clique
  // engine ran and no simplex lies above the computed dimensions, Euler-Poincare
  // (chi = sum (-1)^k beta_k) must hold exactly: a mismatch is a bug, never output.
  if (options.engine_options.contains("homology")) {
    const homology::Options hopt = homology::parse_options(options.engine_options.at("homology"));
    const homology::Result bars = homology::compute(result.filtration, result.grid, hopt, progress);
    homology::add_columns(bars, result.columns, result.rows);
    Json section = homology::to_json(bars, result.filtration);
    if (have_clique_counts) {
      const auto checked = homology::check_euler_poincare(bars, clique_counts.counts, clique_counts.chi,
                                                          clique_counts.complete_points);
      section["euler_poincare_checked_points"] = checked;
    }
    result.sections["homology"] = std::move(section);
  }

  // --- curvature: Gauss-Bonnet node curvature from the clique engine's per-node sums, with
  // the identity sum kappa_i = chi checked at every point, and Forman-Ricci edge
  // curvature (core/curvature). On when the options have a "curvature" section (the
  // CLI's --curvature).
  std::optional<curvature::OnGrid> curvature_grid;
  if (wants_curvature) {
    if (!have_clique_counts)
      fail(ErrorKind::argument, "sweep options: \"curvature\" needs the clique engine (remove \"cliques\": false)");
    const curvature::Options kopt = curvature::parse_options(options.engine_options.at("curvature"));
    curvature_grid = curvature::on_grid(result.filtration, result.grid, clique_counts, kopt);
    curvature::add_columns(*curvature_grid, result.columns, result.rows);
    result.sections["curvature"] = curvature::to_json(*curvature_grid, result.names);
  }

  // --- transitions: zeros of chi, Betti crossings and peaks, the Erdos-Renyi reference
  // and the summary record (core/transitions). On whenever chi or Betti curves exist;
  // "transitions": false turns it off.
  {
    const Json section = options.engine_options.contains("transitions") ? options.engine_options.at("transitions") : Json();
    const transitions::Options topt = transitions::parse_options(section, "sweep options: transitions");
    transitions::Curves curves = transitions::gather(result.grid, have_clique_counts ? &clique_counts : nullptr,
                                                     curvature_grid ? &*curvature_grid : nullptr, result.columns,
                                                     result.rows);
    if (topt.enabled && (!curves.chi.empty() || !curves.betti.empty())) {
      transitions::add_columns(curves, result.columns, result.rows);
      result.sections["transitions"] = transitions::analyse(curves, result.nodes, topt);
    }
  }

  if (progress && progress(1.0)) fail(ErrorKind::cancelled, "sweep cancelled by the progress callback");
  return result;
}

Json sweep_to_json(const SweepResult& result) {
  Json j;
  j["nodes"] = result.nodes;
  j["names"] = result.names;
  j["weights"] = filtration::weight_mode_name(result.filtration.mode);
  j["pairs"] = result.filtration.pairs();
  Json grid = Json::array();
  for (const auto& p : result.grid) {
    Json point = {{"requested", p.requested}, {"density", p.density}, {"edges", p.edges}};
    point["threshold"] = p.edges == 0 ? Json(nullptr) : Json(p.threshold);
    grid.push_back(point);
  }
  j["grid"] = std::move(grid);
  for (auto it = result.sections.begin(); it != result.sections.end(); ++it) j[it.key()] = it.value();
  return j;
}

std::string sweep_curves_tsv(const SweepResult& result) {
  std::string s;
  for (std::size_t c = 0; c < result.columns.size(); ++c) s += (c ? "\t" : "") + result.columns[c];
  s += "\n";
  for (const auto& row : result.rows) {
    for (std::size_t c = 0; c < row.size(); ++c) s += (c ? "\t" : "") + row[c];
    s += "\n";
  }
  return s;
}

double curve_cell_value(const std::string& cell) {
  if (cell.empty()) return std::nan("");
  char* end = nullptr;
  const double x = std::strtod(cell.c_str(), &end);
  // Infinities are values (log|chi| at chi = 0 is -Infinity), not missing.
  return end == cell.c_str() + cell.size() ? x : std::nan("");
}

Json sweep_curves_json(const SweepResult& result) {
  Json j = Json::object();
  for (std::size_t c = 0; c < result.columns.size(); ++c) {
    Json values = Json::array();
    for (const auto& row : result.rows) {
      const double x = curve_cell_value(row[c]);
      values.push_back(std::isfinite(x) ? Json(x) : Json(nullptr));
    }
    j[result.columns[c]] = std::move(values);
  }
  return j;
}

}  // namespace critplex::pipeline
