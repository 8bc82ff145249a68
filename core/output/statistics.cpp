#include "output/statistics.hpp"

#include "output/format.hpp"

namespace critplex::output {

Json permutation_json(const cohort::PermutationResult& r, const cohort::PermutationOptions& options) {
  return {{"statistic_name", cohort::statistic_name(options.statistic)},
          {"alternative", cohort::alternative_name(options.alternative)},
          {"statistic", r.statistic},
          {"p_value", r.p_value},
          {"exact", r.exact},
          {"null_size", r.null_size},
          {"n_a", r.n_a},
          {"n_b", r.n_b},
          {"mean_a", r.mean_a},
          {"mean_b", r.mean_b},
          {"cohen_d", r.effect.cohen_d},
          {"hedges_g", r.effect.hedges_g},
          {"hedges_correction", r.effect.correction},
          {"seed", options.seed}};
}

Json band_json(const cohort::Band& band) {
  return {{"mean", numbers_or_null(band.mean)}, {"lower", numbers_or_null(band.lower)}, {"upper", numbers_or_null(band.upper)}};
}

Json cluster_json(const cohort::ClusterResult& r) {
  Json clusters = Json::array();
  for (const auto& c : r.clusters)
    clusters.push_back({{"first", c.first}, {"last", c.last}, {"sign", c.sign}, {"mass", c.mass}, {"p_value", c.p_value}});
  return {{"t", numbers_or_null(r.t)}, {"threshold", r.threshold}, {"clusters", clusters}, {"exact", r.exact},
          {"null_size", r.null_size}};
}

Json summary_rows_json(const std::vector<cohort::SummaryTestRow>& rows, const cohort::PermutationOptions& options) {
  Json out = Json::array();
  for (const auto& row : rows) {
    Json j = permutation_json(row.result, options);
    j["summary"] = row.summary;
    j["p_adjusted"] = number_or_null(row.p_adjusted);
    j["missing_a"] = row.missing_a;
    j["missing_b"] = row.missing_b;
    // Raw group means always; the test itself is on residuals when covariates are given.
    j["mean_a"] = row.raw_mean_a;
    j["mean_b"] = row.raw_mean_b;
    j["sd_a"] = row.raw_sd_a;
    j["sd_b"] = row.raw_sd_b;
    j["adjusted_mean_a"] = number_or_null(row.adjusted_mean_a);
    j["adjusted_mean_b"] = number_or_null(row.adjusted_mean_b);
    j["hedges_g_lower"] = number_or_null(row.g_interval.lower);
    j["hedges_g_upper"] = number_or_null(row.g_interval.upper);
    out.push_back(j);
  }
  return out;
}

}  // namespace critplex::output
