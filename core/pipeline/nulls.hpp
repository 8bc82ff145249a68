// Null models for one subject's sweep: surrogate time series (phase randomisation,
// multivariate or independent, and IAAFT) run through the same connect and sweep, or
// degree-preserving rewiring of the graph at each grid density. The subject's first
// chi zero is reported as a z-score against the null's.
#pragma once

#include "connectivity/connect.hpp"
#include "pipeline/subject.hpp"

namespace critplex::pipeline {

// `series` is the subject's raw series (surrogates are made from it and then cleaned,
// filtered and estimated exactly like the original); `band_index` picks the band.
Json run_null_model(const NullSpec& spec, const series::Series& series, const connectivity::ConnectOptions& connect,
                    const series::CleanInputs& inputs, std::size_t band_index, const SweepOptions& sweep_options,
                    const SweepResult& observed, const ProgressFn& progress);

// Options for a null run of the sweep: the same filtration and grid, chi only (no
// homology, curvature or random-graph reference), which is all the comparison needs.
SweepOptions null_sweep_options(const SweepOptions& options);

// First chi zero of a sweep (NaN when chi never changes sign on the grid).
double first_chi_zero(const SweepResult& sweep);

}  // namespace critplex::pipeline
