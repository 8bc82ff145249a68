#include "cohort/options.hpp"

#include <cmath>
#include <limits>

namespace critplex::cohort {

const OptionSection& permutation_option_section() {
  static const OptionSection section{
      "stats.permutation",
      "permutation options",
      "cpx_stats_permutation_test, cpx_stats_compare_summaries",
      "A permutation test of a difference between two groups.",
      {{.key = "statistic", .type = "choice", .default_value = "mean_difference",
        .choices = {"mean_difference", "welch_t", "student_t"}, .meaning = "group a minus group b"},
       {.key = "alternative", .type = "choice", .default_value = "two_sided", .choices = {"two_sided", "less", "greater"},
        .meaning = "two-sided p = min(1, 2 min(p_less, p_greater))"},
       {.key = "exact_limit", .type = "integer", .default_value = 20000, .min = 1,
        .meaning = "enumerate every relabelling when there are at most this many"},
       {.key = "resamples", .type = "integer", .default_value = 9999, .min = 1, .meaning = "random relabellings otherwise"},
       {.key = "seed", .type = "integer", .default_value = 1, .min = 0, .meaning = "seed of the random relabellings"}}};
  return section;
}

const OptionSection& bootstrap_option_section() {
  static const OptionSection section{
      "stats.bootstrap",
      "bootstrap options",
      "cpx_stats_bootstrap_band",
      "A percentile bootstrap band of a mean curve, resampling subjects.",
      {{.key = "confidence", .type = "number", .default_value = 0.95, .min = 0, .max = 1, .min_open = true,
        .max_open = true, .meaning = "level of the pointwise interval"},
       {.key = "resamples", .type = "integer", .default_value = 9999, .min = 1, .meaning = "bootstrap resamples"},
       {.key = "seed", .type = "integer", .default_value = 1, .min = 0, .meaning = "seed of the resamples"}}};
  return section;
}

const OptionSection& cluster_option_section() {
  static const OptionSection section{
      "stats.cluster",
      "cluster test options",
      "cpx_stats_cluster_test",
      "A cluster-based permutation test along the density axis (Maris & Oostenveld 2007).",
      {{.key = "statistic", .type = "choice", .default_value = "student_t", .choices = {"student_t", "welch_t"},
        .meaning = "t statistic per point"},
       {.key = "threshold", .type = "number", .default_note = "the two-sided 5% Student t quantile", .min = 0,
        .min_open = true, .meaning = "|t| above this forms clusters"},
       {.key = "exact_limit", .type = "integer", .default_value = 20000, .min = 1,
        .meaning = "enumerate every relabelling when there are at most this many"},
       {.key = "resamples", .type = "integer", .default_value = 9999, .min = 1, .meaning = "random relabellings otherwise"},
       {.key = "seed", .type = "integer", .default_value = 1, .min = 0, .meaning = "seed of the random relabellings"}}};
  return section;
}

PermutationOptions permutation_options_from_json(const Json& options, const std::string& where) {
  SchemaReader r(options, permutation_option_section(), where);
  PermutationOptions o;
  o.statistic = statistic_from_name(r.choice("statistic"));
  o.alternative = alternative_from_name(r.choice("alternative"));
  o.exact_limit = static_cast<std::uint64_t>(r.integer("exact_limit"));
  o.resamples = static_cast<std::uint64_t>(r.integer("resamples"));
  o.seed = static_cast<std::uint64_t>(r.integer("seed"));
  r.finish();
  return o;
}

BootstrapOptions bootstrap_options_from_json(const Json& options, const std::string& where) {
  SchemaReader r(options, bootstrap_option_section(), where);
  BootstrapOptions o;
  o.confidence = r.number("confidence");
  o.resamples = static_cast<std::uint64_t>(r.integer("resamples"));
  o.seed = static_cast<std::uint64_t>(r.integer("seed"));
  r.finish();
  return o;
}

ClusterOptions cluster_options_from_json(const Json& options, const std::string& where) {
  SchemaReader r(options, cluster_option_section(), where);
  ClusterOptions o;
  o.statistic = statistic_from_name(r.choice("statistic"));
  if (auto t = r.optional_number("threshold")) o.threshold = *t;
  o.exact_limit = static_cast<std::uint64_t>(r.integer("exact_limit"));
  o.resamples = static_cast<std::uint64_t>(r.integer("resamples"));
  o.seed = static_cast<std::uint64_t>(r.integer("seed"));
  r.finish();
  return o;
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

}  // namespace critplex::cohort
