#include "cohort/options.hpp"

namespace critplex::cohort {

namespace {

std::uint64_t positive_count(OptionReader& r, const std::string& key, std::uint64_t fallback) {
  const long long v = r.integer(key, static_cast<long long>(fallback));
  if (v < 1) fail(ErrorKind::argument, r.where() + ": " + key + " = " + std::to_string(v) + ", must be at least 1");
  return static_cast<std::uint64_t>(v);
}

std::uint64_t seed_of(OptionReader& r) {
  const long long v = r.integer("seed", 1);
  if (v < 0) fail(ErrorKind::argument, r.where() + ": seed = " + std::to_string(v) + ", must be non-negative");
  return static_cast<std::uint64_t>(v);
}

}  // namespace

PermutationOptions permutation_options_from_json(const Json& options, const std::string& where) {
  OptionReader r(options, where);
  PermutationOptions o;
  o.statistic = statistic_from_name(r.choice("statistic", "mean_difference", {"mean_difference", "welch_t", "student_t"}));
  o.alternative = alternative_from_name(r.choice("alternative", "two_sided", {"two_sided", "less", "greater"}));
  o.exact_limit = positive_count(r, "exact_limit", o.exact_limit);
  o.resamples = positive_count(r, "resamples", o.resamples);
  o.seed = seed_of(r);
  r.finish();
  return o;
}

BootstrapOptions bootstrap_options_from_json(const Json& options, const std::string& where) {
  OptionReader r(options, where);
  BootstrapOptions o;
  o.confidence = r.number("confidence", o.confidence);
  if (!(o.confidence > 0.0 && o.confidence < 1.0))
    fail(ErrorKind::argument, where + ": confidence = " + std::to_string(o.confidence) + ", must be in (0, 1)");
  o.resamples = positive_count(r, "resamples", o.resamples);
  o.seed = seed_of(r);
  r.finish();
  return o;
}

ClusterOptions cluster_options_from_json(const Json& options, const std::string& where) {
  OptionReader r(options, where);
  ClusterOptions o;
  o.statistic = statistic_from_name(r.choice("statistic", "student_t", {"student_t", "welch_t"}));
  if (auto t = r.number("threshold")) {
    if (!(*t > 0.0)) fail(ErrorKind::argument, where + ": threshold = " + std::to_string(*t) + ", must be positive");
    o.threshold = *t;
  }
  o.exact_limit = positive_count(r, "exact_limit", o.exact_limit);
  o.resamples = positive_count(r, "resamples", o.resamples);
  o.seed = seed_of(r);
  r.finish();
  return o;
}

Json to_json(const PermutationResult& r, const PermutationOptions& options) {
  return {{"statistic_name", statistic_name(options.statistic)},
          {"alternative", alternative_name(options.alternative)},
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

Json to_json(const Band& band) { return {{"mean", band.mean}, {"lower", band.lower}, {"upper", band.upper}}; }

Json to_json(const ClusterResult& r) {
  Json clusters = Json::array();
  for (const auto& c : r.clusters)
    clusters.push_back({{"first", c.first}, {"last", c.last}, {"sign", c.sign}, {"mass", c.mass}, {"p_value", c.p_value}});
  return {{"t", r.t}, {"threshold", r.threshold}, {"clusters", clusters}, {"exact", r.exact}, {"null_size", r.null_size}};
}

}  // namespace critplex::cohort
