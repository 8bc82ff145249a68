// Null models for one subject's sweep: surrogate time series (phase randomisation,
// multivariate or independent, and IAAFT) run through the same connect and sweep, or
// degree-preserving rewiring of the graph at each grid density. The subject's first
// chi zero is read against the null's.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "base/option_schema.hpp"
#include "connectivity/connect.hpp"
#include "pipeline/sweep.hpp"
#include "series/series.hpp"

namespace critplex::pipeline {

// The null model a subject's transitions are read against.
struct NullSpec {
  std::string model = "none";  // none, phase_multivariate, phase_independent, iaaft, rewire
  int count = 19;              // surrogates or rewirings
  std::uint64_t seed = 1;
  int iaaft_iterations = 100;
  double rewire_swaps_per_edge = 10.0;
  int min_draws_for_z = 100;  // fewer draws with a zero: no z-score, only the percentile rank
  // The null sweeps' own range (chi only); unset: the clique engine's range. Null graphs
  // are closer to random than the observed ones, and chi of a random graph is costly
  // at high density, so this is the main lever on a null's cost.
  std::optional<double> max_density;
};
const OptionSection& null_option_section();
NullSpec parse_null_spec(const Json& section, const std::string& where);

struct NullResult {
  NullSpec spec;
  std::vector<double> first_zeros;     // per draw: the null's first chi zero (NaN: none)
  double observed_first = 0.0;         // the subject's (NaN: none)
  std::vector<double> mean_chi;        // the null's mean chi on the subject's grid (NaN: no draw there)
  std::size_t incomplete_rewirings = 0;  // rewire: graphs with too few legal swaps

  // Over the draws with a zero: how many, their mean and sample sd, and the observed
  // value's z-score (NaN where fewer than spec.min_draws_for_z (at least 2) draws have a
  // zero or there is no observation: a z from a handful of draws is not interpretable).
  std::size_t with_zero() const;
  double mean() const;
  double sd() const;
  double z() const;
  // Empirical percentile rank of the observed first zero among all draws, as the mid-rank
  // of the observed value among the draws and itself: (#below + (#equal + 1) / 2) /
  // (draws + 1). A draw without a zero in the swept range counts as above every density.
  // Its resolution is 1 / (draws + 1). NaN without an observation or draws.
  double percentile() const;
  double percentile_resolution() const;
  // "" when the z-score is given; else why it is not (too few draws), for outputs and report.
  std::string warning() const;
};

// `series` is the subject's raw series (surrogates are made from it and then cleaned,
// filtered and estimated exactly like the original); `band_index` picks the band.
// Draws run side by side over the clique engine's threads of `observed` (each draw's count
// then on one thread); each has its own seed and result slot, so the result does not
// depend on the thread count. `progress` is called only on the calling thread.
NullResult run_null_model(const NullSpec& spec, const series::Series& series,
                          const connectivity::ConnectOptions& connect, const series::CleanInputs& inputs,
                          std::size_t band_index, const SweepResult& observed, const ProgressFn& progress);

// Options for a null run of the sweep: the same filtration and grid, chi only (no
// homology, curvature or random-graph reference), which is all the comparison needs.
// The null sweeps' range: max_density when given, else the default for `nodes` regions
// (default_engine_ranges) within the clique engine's range, never past the sweep's.
double null_range(const SweepOptions& options, std::size_t nodes, std::optional<double> max_density);
SweepOptions null_sweep_options(const SweepOptions& options, std::size_t nodes,
                                std::optional<double> max_density = std::nullopt);

}  // namespace critplex::pipeline
