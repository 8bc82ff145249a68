// JSON options of the cohort statistics, read through their tables; unknown keys are
// errors and `where` names the argument in messages. core/output writes the results.
#pragma once

#include <string>

#include "base/option_schema.hpp"
#include "cohort/statistics.hpp"

namespace critplex::cohort {

const OptionSection& permutation_option_section();
const OptionSection& bootstrap_option_section();
const OptionSection& cluster_option_section();

// {"statistic", "alternative", "exact_limit", "resamples", "seed"}
PermutationOptions permutation_options_from_json(const Json& options, const std::string& where);
// {"confidence", "resamples", "seed"}
BootstrapOptions bootstrap_options_from_json(const Json& options, const std::string& where);
// {"statistic", "threshold", "exact_limit", "resamples", "seed"}
ClusterOptions cluster_options_from_json(const Json& options, const std::string& where);

// {"summaries": [{"name", "a": [...], "b": [...]}], "covariates": [{"name", "a", "b"}]}
// (covariates optional; null in a summary list marks a missing value).
SummaryComparisonInput summaries_from_json(const Json& input, const std::string& where);

}  // namespace critplex::cohort
