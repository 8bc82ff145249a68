// A simulated study on disk: every subject's time series as TSV, a manifest and a
// ready-to-run cohort config, from the demo cohort model (core/simulate/cohort_model).
// Invented data, for the demo and for power analysis.
#pragma once

#include <string>

#include "base/options.hpp"

namespace critplex::pipeline {

// options: the cohort model's keys (core/simulate/cohort_model.hpp) plus "config": the
// subject config to write as cohort_config.json (default: the demo analysis).
// Writes <dir>/timeseries/sub-<id>_timeseries.tsv, <dir>/manifest.tsv,
// <dir>/cohort_config.json and <dir>/model.json; returns a summary.
Json write_simulated_study(const Json& options, const std::string& dir);

// The analysis the demo runs: band-pass 0.01-0.1 Hz, Pearson, sweep to density 0.4 with
// Betti curves to dimension 2 and curvature, degree-preserving rewiring as the null.
Json demo_analysis_config();

}  // namespace critplex::pipeline
