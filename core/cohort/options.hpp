// JSON options of the cohort statistics (README, "Group statistics and null models").
// Unknown keys are errors; `where` names the argument in messages.
#pragma once

#include <string>

#include "base/options.hpp"
#include "cohort/statistics.hpp"

namespace critplex::cohort {

// {"statistic", "alternative", "exact_limit", "resamples", "seed"}
PermutationOptions permutation_options_from_json(const Json& options, const std::string& where);
// {"confidence", "resamples", "seed"}
BootstrapOptions bootstrap_options_from_json(const Json& options, const std::string& where);
// {"statistic", "threshold", "exact_limit", "resamples", "seed"}
ClusterOptions cluster_options_from_json(const Json& options, const std::string& where);

Json to_json(const PermutationResult& r, const PermutationOptions& options);
Json to_json(const Band& band);
Json to_json(const ClusterResult& r);

// {"summaries": [{"name", "a": [...], "b": [...]}], "covariates": [{"name", "a", "b"}]}
// (covariates optional; null in a summary list marks a missing value).
SummaryComparisonInput summaries_from_json(const Json& input, const std::string& where);
Json to_json(const std::vector<SummaryTestRow>& rows, const PermutationOptions& options);

}  // namespace critplex::cohort
