// One sweep of a connectivity matrix: the filtration, the reporting grid, and every
// engine the options ask for (cliques, homology, curvature, transitions). The engines
// live in their own stages; this file only wires them together.
#pragma once

#include <functional>
#include <optional>
#include <string>

#include "base/options.hpp"
#include "connectivity/matrix.hpp"
#include "filtration/filtration.hpp"

namespace critplex::pipeline {

// Progress in [0, 1]; returning true asks the sweep to stop (ErrorKind::cancelled).
using ProgressFn = std::function<bool(double)>;

struct SweepOptions {
  filtration::WeightMode weights = filtration::WeightMode::positive;
  filtration::GridSpec grid;      // grid.max_density is the sweep's maximum density
  Json engine_options = Json::object();  // per-engine sections, parsed by each engine
};

// Parses {"weights", "max_density", "grid", "cliques", "homology", "curvature",
// "transitions"}; unknown keys are errors (documented in README: sweep options).
SweepOptions parse_sweep_options(const Json& options);

struct SweepResult {
  std::size_t nodes = 0;
  std::vector<std::string> names;
  filtration::Filtration filtration;
  std::vector<filtration::GridPoint> grid;
  Json sections = Json::object();  // each engine's JSON section, keyed by engine name
  // Curves as columns on the grid: density, threshold, edges, then each engine's columns.
  std::vector<std::string> columns;
  std::vector<std::vector<std::string>> rows;  // cells as text (exact integers stay exact)
};

SweepResult run_sweep(const connectivity::Matrix& matrix, const SweepOptions& options, const ProgressFn& progress);

// The whole result as one JSON document, and the grid curves as TSV.
Json sweep_to_json(const SweepResult& result);
std::string sweep_curves_tsv(const SweepResult& result);
// The grid curves as {column: [numbers]} (null where not a number; integers beyond 2^53
// are rounded here, the engine sections keep them exact).
Json sweep_curves_json(const SweepResult& result);
// A curve cell as a number: NaN unless the whole text is a number ("NA", "NaN", "").
double curve_cell_value(const std::string& cell);

}  // namespace critplex::pipeline
