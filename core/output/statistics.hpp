// Results of the cohort statistics as JSON, for the C calls that return them.
#pragma once

#include <vector>

#include "base/options.hpp"
#include "cohort/statistics.hpp"

namespace critplex::output {

Json permutation_json(const cohort::PermutationResult& r, const cohort::PermutationOptions& options);
Json band_json(const cohort::Band& band);
Json cluster_json(const cohort::ClusterResult& r);
// One entry per summary: the test (statistic and g of the residuals when covariates were
// given), raw group means and standard deviations, adjusted means with covariates.
Json summary_rows_json(const std::vector<cohort::SummaryTestRow>& rows, const cohort::PermutationOptions& options);

}  // namespace critplex::output
