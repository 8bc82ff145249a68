// A sweep's typed result as text: the curves on the grid (as a table of columns, as
// TSV, as JSON arrays) and the whole result as one JSON document with one section per
// engine (exact counts as decimal strings).
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "base/options.hpp"
#include "pipeline/sweep.hpp"

namespace critplex::output {

// One curve on the grid. Integer curves (edges, chi, cliques_k, betti_k) keep their
// exact values; `values` holds every curve as doubles (NaN where missing; integers
// beyond 2^53 rounded).
struct CurveColumn {
  std::string name;
  std::vector<double> values;
  std::vector<std::optional<int128>> exact;  // integer curves only; nothing where missing
  bool integer() const { return !exact.empty(); }
};

// Columns density, threshold, edges, then each engine's: chi, cliques_0..K; betti_0..K;
// kappa_mean .. gauss_bonnet_error, forman_*; log_abs_chi (natural log; -infinity where
// chi = 0).
std::vector<CurveColumn> curve_columns(const pipeline::SweepResult& result);

std::string curves_tsv(const std::vector<CurveColumn>& columns);
// {column: [numbers]} with null where missing (integers beyond 2^53 rounded here; the
// engine sections keep them exact).
Json curves_json(const std::vector<CurveColumn>& columns);

// The whole result: nodes, names, weights, pairs, grid, and a section per engine.
Json sweep_json(const pipeline::SweepResult& result);

// Each engine's section and options, as in sweep_json.
Json cliques_section(const pipeline::SweepResult& result);
Json homology_section(const pipeline::SweepResult& result);
Json curvature_section(const pipeline::SweepResult& result);
Json transitions_section(const transitions::Analysis& analysis, const std::vector<double>& density);
// The transitions records as TSV (header row first): one row per chi zero, chi touch,
// Betti crossing, Betti peak and random-graph zero.
std::string transitions_tsv(const transitions::Analysis& analysis, const std::vector<double>& density);

// The resolved options (every default filled in), for provenance.
Json sweep_options_json(const pipeline::SweepOptions& options);

}  // namespace critplex::output
