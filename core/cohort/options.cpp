#include "cohort/options.hpp"

#include <cmath>
#include <limits>

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

namespace {

std::vector<double> values_of(const Json& entry, const char* key, const std::string& where, bool allow_null) {
  if (!entry.contains(key) || !entry.at(key).is_array())
    fail(ErrorKind::argument, where + ": \"" + key + "\" must be a list of numbers");
  std::vector<double> v;
  for (std::size_t i = 0; i < entry.at(key).size(); ++i) {
    const Json& x = entry.at(key)[i];
    if (x.is_null() && allow_null) v.push_back(std::numeric_limits<double>::quiet_NaN());
    else if (x.is_number() && std::isfinite(x.get<double>())) v.push_back(x.get<double>());
    else fail(ErrorKind::argument, where + ": \"" + key + "\"[" + std::to_string(i) + "] is " + x.dump() +
                                       (allow_null ? ", expected a finite number or null" : ", expected a finite number"));
  }
  return v;
}

// One {"name", "a", "b"} entry of the summaries or covariates list.
struct NamedPair {
  std::string name;
  std::vector<double> a, b;
};
NamedPair named_pair(const Json& entry, const std::string& where, const std::string& default_name, bool allow_null) {
  OptionReader e(entry, where);
  NamedPair pair;
  pair.name = e.text("name", default_name);
  e.raw("a");
  e.raw("b");
  e.finish();
  pair.a = values_of(entry, "a", where, allow_null);
  pair.b = values_of(entry, "b", where, allow_null);
  return pair;
}

}  // namespace

SummaryComparisonInput summaries_from_json(const Json& input, const std::string& where) {
  OptionReader r(input, where);
  SummaryComparisonInput in;
  const Json* summaries = r.raw("summaries");
  if (summaries == nullptr || !summaries->is_array() || summaries->empty())
    fail(ErrorKind::argument, where + ": \"summaries\" must be a non-empty list");
  for (std::size_t s = 0; s < summaries->size(); ++s) {
    NamedPair pair = named_pair((*summaries)[s], where + ", summaries[" + std::to_string(s) + "]",
                                "summary " + std::to_string(s + 1), true);
    in.names.push_back(std::move(pair.name));
    in.a.push_back(std::move(pair.a));
    in.b.push_back(std::move(pair.b));
  }
  if (const Json* covariates = r.raw("covariates")) {
    if (!covariates->is_array()) fail(ErrorKind::argument, where + ": \"covariates\" must be a list");
    std::vector<std::vector<double>> ca, cb;
    for (std::size_t c = 0; c < covariates->size(); ++c) {
      const std::string here = where + ", covariates[" + std::to_string(c) + "]";
      NamedPair pair = named_pair((*covariates)[c], here, "covariate " + std::to_string(c + 1), false);
      in.covariate_names.push_back(std::move(pair.name));
      ca.push_back(std::move(pair.a));
      cb.push_back(std::move(pair.b));
      if (ca.back().size() != ca.front().size() || cb.back().size() != cb.front().size())
        fail(ErrorKind::argument, here + ": lists differ in length from the first covariate's");
    }
    if (!ca.empty()) {
      in.covariates_a.resize(static_cast<Eigen::Index>(ca.front().size()), static_cast<Eigen::Index>(ca.size()));
      in.covariates_b.resize(static_cast<Eigen::Index>(cb.front().size()), static_cast<Eigen::Index>(cb.size()));
      for (std::size_t c = 0; c < ca.size(); ++c) {
        for (std::size_t i = 0; i < ca[c].size(); ++i) in.covariates_a(static_cast<Eigen::Index>(i), static_cast<Eigen::Index>(c)) = ca[c][i];
        for (std::size_t i = 0; i < cb[c].size(); ++i) in.covariates_b(static_cast<Eigen::Index>(i), static_cast<Eigen::Index>(c)) = cb[c][i];
      }
    }
  }
  r.finish();
  return in;
}

Json to_json(const std::vector<SummaryTestRow>& rows, const PermutationOptions& options) {
  Json out = Json::array();
  for (const auto& row : rows) {
    Json j = to_json(row.result, options);
    j["summary"] = row.summary;
    j["p_adjusted"] = row.p_adjusted;
    j["missing_a"] = row.missing_a;
    j["missing_b"] = row.missing_b;
    out.push_back(j);
  }
  return out;
}

}  // namespace critplex::cohort
