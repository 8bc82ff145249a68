// One sweep of a connectivity matrix: the filtration, the reporting grid, and every
// engine the options ask for (cliques, homology, curvature, transitions). The engines
// live in their own stages; this file wires them and keeps their typed results side by
// side. Options are parsed once, at the edge, into SweepOptions; core/output turns a
// SweepResult into JSON and TSV.
#pragma once

#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "base/option_schema.hpp"
#include "cliques/counts.hpp"
#include "connectivity/matrix.hpp"
#include "curvature/on_grid.hpp"
#include "filtration/filtration.hpp"
#include "homology/persistence.hpp"
#include "transitions/analysis.hpp"

namespace critplex::pipeline {

// Progress in [0, 1]; returning true asks the sweep to stop (ErrorKind::cancelled).
using ProgressFn = std::function<bool(double)>;

struct SweepOptions {
  filtration::WeightMode weights = filtration::WeightMode::positive;
  filtration::GridSpec grid;  // grid.max_density is the sweep's maximum density
  // The options gave max_density: engines without their own then default to it rather
  // than to default_engine_ranges().
  bool range_given = false;
  std::optional<cliques::Options> cliques = cliques::Options{};  // nothing: "cliques": false
  std::optional<homology::Options> homology;    // on when the options give a section
  std::optional<curvature::Options> curvature;  // on when the options give a section
  transitions::Options transitions;             // transitions.enabled = false turns it off

  // Rules between engines (curvature needs every clique size, ...); ErrorKind::argument.
  void validate() const;
};

const OptionSection& sweep_option_section();
const OptionSection& grid_option_section();
// Parses {"weights", "max_density", "grid", "cliques", "homology", "curvature",
// "transitions"}; unknown keys are errors, every engine section is parsed here.
SweepOptions parse_sweep_options(const Json& options);

struct SweepResult {
  std::size_t nodes = 0;
  std::vector<std::string> names;
  filtration::Filtration filtration;
  std::vector<filtration::GridPoint> grid;
  SweepOptions options;  // as run (the engines' resolved options)
  std::optional<cliques::GridCounts> cliques;
  std::optional<homology::Result> homology;
  std::size_t euler_poincare_checked = 0;  // grid points where chi = sum (-1)^k beta_k was checked
  std::optional<curvature::OnGrid> curvature;
  std::optional<transitions::Analysis> transitions;

  // chi at each grid point as a double (NaN where the clique engine did not reach), for
  // the transitions and the nulls; empty when the clique engine did not run.
  std::vector<double> chi_curve() const;
  std::vector<double> densities() const;
};

// The engines' default ranges (densities; each capped by the sweep's max_density) for a
// network of `nodes` regions, when the options give no max_density of the sweep. Up to 100 regions every engine covers the whole range; above,
// chi to 0.5, every clique size to 0.1, Betti curves to 0.3 and null sweeps to 0.3, so a
// default subject run takes seconds at 400 regions. Node curvature defaults to the
// every-size counts' range.
struct EngineDefaults {
  double chi, counts, homology, null;
};
EngineDefaults default_engine_ranges(std::size_t nodes);

SweepResult run_sweep(const connectivity::Matrix& matrix, const SweepOptions& options, const ProgressFn& progress);

// The transitions engine's input gathered from the typed results of a sweep.
transitions::Curves transition_curves(const SweepResult& result);

}  // namespace critplex::pipeline
