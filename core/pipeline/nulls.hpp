// Null models for one subject's sweep: surrogate time series (phase randomisation,
// multivariate or independent, and IAAFT) run through the same connect and sweep, or
// degree-preserving rewiring of the graph at each grid density. The subject's first
// chi zero is read against the null's.
#pragma once

#include <cstdint>
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
  // value's z-score (NaN where fewer than 2 draws have a zero or there is no observation).
  std::size_t with_zero() const;
  double mean() const;
  double sd() const;
  double z() const;
};

// `series` is the subject's raw series (surrogates are made from it and then cleaned,
// filtered and estimated exactly like the original); `band_index` picks the band.
NullResult run_null_model(const NullSpec& spec, const series::Series& series,
                          const connectivity::ConnectOptions& connect, const series::CleanInputs& inputs,
                          std::size_t band_index, const SweepResult& observed, const ProgressFn& progress);

// Options for a null run of the sweep: the same filtration and grid, chi only (no
// homology, curvature or random-graph reference), which is all the comparison needs.
SweepOptions null_sweep_options(const SweepOptions& options);

}  // namespace critplex::pipeline
