#include "pipeline/sweep.hpp"

#include "base/error.hpp"
#include "io/files.hpp"

namespace critplex::pipeline {

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
      OptionReader list_reader(Json{{"densities", *g}}, "sweep options: grid");
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

}  // namespace critplex::pipeline
