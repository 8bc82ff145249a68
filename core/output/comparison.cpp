#include "output/comparison.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <limits>

#include "base/error.hpp"
#include "output/design.hpp"
#include "output/format.hpp"
#include "output/statistics.hpp"

namespace critplex::output {

namespace {

const double nan_value = std::numeric_limits<double>::quiet_NaN();

}  // namespace

Json compare_options_json(const pipeline::CompareOptions& o) {
  Json j{{"band", o.band},         {"groups", o.groups},         {"statistic", o.statistic},
         {"exact_limit", o.exact_limit}, {"resamples", o.resamples}, {"seed", o.seed},
         {"confidence", o.confidence}, {"covariates", o.covariates}, {"cluster_curves", o.cluster_curves},
         {"primary", o.primary}};
  if (o.design) j["design"] = design_spec_json(*o.design);
  return j;
}

namespace {

std::string joined(const std::vector<std::string>& names, const char* separator) {
  std::string out;
  for (const auto& n : names) out += (out.empty() ? "" : separator) + n;
  return out;
}

Json histogram_json(const pipeline::NullHistogram& h) { return {{"edges", h.edges}, {"counts", h.counts}}; }

Json test_json(const pipeline::SummaryTest& t) {
  const cohort::SummaryTestRow& r = t.row;
  Json j{{"summary", r.summary}, {"label", summary_label(r.summary)}, {"group_a", t.group_a}, {"group_b", t.group_b},
         {"n_a", r.n_a},         {"n_b", r.n_b},                     {"missing_a", r.missing_a}, {"missing_b", r.missing_b},
         {"headline", t.headline}};
  if (!r.tested) {
    j["note"] = r.note;
    return j;
  }
  j["mean_a"] = r.raw_mean_a;
  j["mean_b"] = r.raw_mean_b;
  j["sd_a"] = r.raw_sd_a;
  j["sd_b"] = r.raw_sd_b;
  j["covariates"] = t.covariates;
  j["adjusted_mean_a"] = number_or_null(r.adjusted_mean_a);
  j["adjusted_mean_b"] = number_or_null(r.adjusted_mean_b);
  j["value"] = number_or_null(r.result.statistic);
  j["hedges_g"] = number_or_null(r.result.effect.hedges_g);  // null when both groups are constant
  j["hedges_g_lower"] = number_or_null(r.g_interval.lower);
  j["hedges_g_upper"] = number_or_null(r.g_interval.upper);
  j["tested_on"] = r.on_residuals ? "covariate residuals" : "values";
  if (t.null_histogram) j["null_histogram"] = histogram_json(*t.null_histogram);
  j["p_value"] = r.result.p_value;
  j["p_adjusted"] = number_or_null(r.p_adjusted);
  j["exact"] = r.result.exact;
  j["null_size"] = r.result.null_size;
  return j;
}

Json cluster_json(const pipeline::ClusterTest& t) {
  Json j{{"curve", t.curve}, {"group_a", t.group_a}, {"group_b", t.group_b}};
  if (!t.result) {
    j["note"] = t.note;
    return j;
  }
  j["threshold"] = t.result->threshold;
  j["exact"] = t.result->exact;
  j["null_size"] = t.result->null_size;
  j["density"] = t.density;
  j["t"] = numbers_or_null(t.result->t);
  Json list = Json::array();
  for (const auto& c : t.result->clusters)
    list.push_back({{"first_density", t.density[c.first]}, {"last_density", t.density[c.last]}, {"first", c.first},
                    {"last", c.last}, {"sign", c.sign}, {"mass", c.mass}, {"p_value", c.p_value}});
  j["clusters"] = std::move(list);
  return j;
}

}  // namespace

std::string multiple_comparison_family(const pipeline::Comparison& c) {
  std::size_t tested = 0;
  std::vector<std::string> summaries;
  for (const auto& t : c.tests)
    if (t.row.tested) {
      ++tested;
      if (std::find(summaries.begin(), summaries.end(), t.row.summary) == summaries.end()) summaries.push_back(t.row.summary);
    }
  return "Benjamini-Hochberg (1995) false discovery rate over one family: all " + std::to_string(tested) +
         " tested rows of the table (" + std::to_string(summaries.size()) + " summaries x " +
         std::to_string(c.groups.empty() ? 0 : c.groups.size() - 1) +
         " group pairs); cluster p-values are family-wise along the density axis by the largest cluster mass and are "
         "not in this family";
}

std::string covariate_model(const pipeline::Comparison& c) {
  if (c.options.covariates.empty()) return "";
  const std::string cov = joined(c.options.covariates, " + ");
  return "summary ~ 1 + group + " + cov +
         " (ordinary least squares, pooled over both groups of a pair); adjusted means are this fit at the "
         "covariates' mean; the test statistic, p-value and Hedges g are those of the residuals of summary ~ 1 + " + cov;
}

std::string effect_size_method(const pipeline::Comparison& c) {
  char buf[64];
  std::snprintf(buf, sizeof buf, "%g%%", 100.0 * c.options.confidence);
  return std::string("Hedges g (Hedges 1981, exact small-sample correction) with a ") + buf +
         " interval from the normal approximation of Hedges & Olkin (1985): var(g) = (n_a + n_b)/(n_a n_b) + "
         "g^2/(2 (n_a + n_b))";
}

Json comparison_json(const pipeline::Comparison& c) {
  Json doc;
  doc["kind"] = "critplex group comparison";
  doc["format_version"] = 2;
  doc["options"] = compare_options_json(c.options);
  doc["statistic"] = c.options.statistic;
  doc["regions"] = c.regions;
  doc["density"] = c.density;
  Json groups = Json::array();
  for (const auto& g : c.groups) {
    Json gd{{"name", g.name}, {"subjects", g.subjects}};
    if (std::any_of(g.sessions.begin(), g.sessions.end(), [](const std::string& s) { return !s.empty(); }))
      gd["sessions"] = g.sessions;
    Json curves = Json::object();
    for (const auto& [name, band] : g.curves) {
      curves[name] = band_json(band);
      curves[name]["resamples"] = band.resamples;
    }
    gd["curves"] = std::move(curves);
    Json summaries = Json::object();
    for (const auto& [name, values] : g.summaries) summaries[name] = numbers_or_null(values);
    gd["summaries"] = std::move(summaries);
    gd["curvature_at_transition"] = numbers_or_null(g.curvature_at_transition);
    Json traces = Json::array();
    for (const auto& t : g.subject_chi) traces.push_back(numbers_or_null(t));
    gd["subject_chi"] = std::move(traces);
    groups.push_back(std::move(gd));
  }
  doc["groups"] = std::move(groups);
  std::uint64_t drawn = 0;
  for (const auto& g : c.groups)
    for (const auto& [name, band] : g.curves) drawn = std::max(drawn, band.resamples);
  doc["bootstrap"] = {{"resamples", drawn}, {"resamples_asked", c.options.resamples}, {"confidence", c.options.confidence},
                      {"method", "percentile bootstrap of the mean curve, resampling subjects"}};
  doc["multiple_comparisons"] = multiple_comparison_family(c);
  doc["covariate_model"] = c.options.covariates.empty() ? Json(nullptr) : Json(covariate_model(c));
  doc["effect_size"] = effect_size_method(c);
  Json tests = Json::array();
  for (const auto& t : c.tests) tests.push_back(test_json(t));
  doc["tests"] = std::move(tests);
  Json clusters = Json::array();
  for (const auto& t : c.clusters) clusters.push_back(cluster_json(t));
  doc["clusters"] = std::move(clusters);
  doc["null_baseline"] = c.null_baseline ? Json{{"label", c.null_baseline->label},
                                                {"density", c.null_baseline->density},
                                                {"chi", numbers_or_null(c.null_baseline->chi)}}
                                         : Json(nullptr);
  doc["missing"] = c.missing;
  doc["warnings"] = c.warnings;
  doc["provenance"] = c.provenance;
  if (c.design) doc["design_tests"] = design_result_json(*c.design);
  doc["caution"] = "Research software, not a medical device: not for clinical decisions.";
  return doc;
}

std::string group_tests_tsv(const pipeline::Comparison& c) {
  Tsv tsv({"summary", "group_a", "group_b", "n_a", "n_b", "mean_a", "sd_a", "mean_b", "sd_b", "covariates",
           "adjusted_mean_a", "adjusted_mean_b", "statistic", "value", "hedges_g", "hedges_g_lower", "hedges_g_upper",
           "p_value", "p_adjusted", "exact", "null_size", "tested_on", "headline", "note"});
  const std::string na = missing;
  for (const auto& t : c.tests) {
    const cohort::SummaryTestRow& r = t.row;
    std::string covariates;
    for (const auto& name : t.covariates) covariates += (covariates.empty() ? "" : ",") + name;
    if (!r.tested) {
      tsv.add({r.summary, t.group_a, t.group_b, cell(r.n_a), cell(r.n_b), na, na, na, na, na, na, na, na, na, na, na,
               na, na, na, na, na, na, cell(t.headline), r.note});
      continue;
    }
    tsv.add({r.summary, t.group_a, t.group_b, cell(r.n_a), cell(r.n_b), cell(r.raw_mean_a), cell(r.raw_sd_a),
             cell(r.raw_mean_b), cell(r.raw_sd_b), covariates.empty() ? na : covariates, cell(r.adjusted_mean_a),
             cell(r.adjusted_mean_b), c.options.statistic, cell(r.result.statistic), cell(r.result.effect.hedges_g),
             cell(r.g_interval.lower), cell(r.g_interval.upper), cell(r.result.p_value), cell(r.p_adjusted),
             cell(r.result.exact), cell(static_cast<std::size_t>(r.result.null_size)),
             r.on_residuals ? "covariate residuals" : "values", cell(t.headline), na});
  }
  return tsv.text();
}

namespace {

double number_or_nan(const Json& j) { return j.is_number() ? j.get<double>() : nan_value; }

std::vector<double> numbers(const Json& array) {
  std::vector<double> v;
  if (array.is_array())
    for (const auto& x : array) v.push_back(number_or_nan(x));
  return v;
}

cohort::Band band_of(const Json& b) {
  return {numbers(b.at("mean")), numbers(b.at("lower")), numbers(b.at("upper")), b.value("resamples", std::uint64_t{0})};
}

}  // namespace

pipeline::Comparison read_comparison(const Json& doc, const std::string& path) {
  if (!doc.is_object() || doc.value("kind", "") != "critplex group comparison")
    fail(ErrorKind::parse, "'" + path + "': not a critplex group comparison");
  if (doc.value("format_version", 0) != 2)
    fail(ErrorKind::parse, "'" + path + "': written by another critplex version (format " +
                               doc.value("format_version", Json(nullptr)).dump() + "); run critplex compare again");
  pipeline::Comparison c;
  try {
    c.options = pipeline::parse_compare_options(doc.at("options"));
    c.regions = doc.at("regions").get<std::size_t>();
    c.density = numbers(doc.at("density"));
    for (const auto& gd : doc.at("groups")) {
      pipeline::GroupResult g;
      g.name = gd.at("name").get<std::string>();
      g.subjects = gd.at("subjects").get<std::vector<std::string>>();
      g.sessions = gd.value("sessions", std::vector<std::string>(g.subjects.size()));
      for (auto it = gd.at("curves").begin(); it != gd.at("curves").end(); ++it) g.curves[it.key()] = band_of(it.value());
      for (auto it = gd.at("summaries").begin(); it != gd.at("summaries").end(); ++it)
        g.summaries[it.key()] = numbers(it.value());
      g.curvature_at_transition = numbers(gd.at("curvature_at_transition"));
      for (const auto& t : gd.value("subject_chi", Json::array())) g.subject_chi.push_back(numbers(t));
      c.groups.push_back(std::move(g));
    }
    if (c.options.design && doc.contains("design_tests"))
      c.design = design_result_from_json(doc.at("design_tests"), *c.options.design);
    for (const auto& tj : doc.at("tests")) {
      pipeline::SummaryTest t;
      t.group_a = tj.at("group_a").get<std::string>();
      t.group_b = tj.at("group_b").get<std::string>();
      cohort::SummaryTestRow& r = t.row;
      r.summary = tj.at("summary").get<std::string>();
      r.n_a = tj.at("n_a").get<std::size_t>();
      r.n_b = tj.at("n_b").get<std::size_t>();
      r.missing_a = tj.value("missing_a", std::size_t{0});
      r.missing_b = tj.value("missing_b", std::size_t{0});
      r.tested = !tj.contains("note");
      t.headline = tj.value("headline", false);
      if (!r.tested) {
        r.note = tj.at("note").get<std::string>();
      } else {
        t.covariates = tj.at("covariates").get<std::vector<std::string>>();
        r.raw_mean_a = tj.at("mean_a").get<double>();
        r.raw_mean_b = tj.at("mean_b").get<double>();
        r.raw_sd_a = tj.at("sd_a").get<double>();
        r.raw_sd_b = tj.at("sd_b").get<double>();
        r.adjusted_mean_a = number_or_nan(tj.at("adjusted_mean_a"));
        r.adjusted_mean_b = number_or_nan(tj.at("adjusted_mean_b"));
        r.result.statistic = number_or_nan(tj.at("value"));
        r.result.effect.hedges_g = number_or_nan(tj.at("hedges_g"));
        r.result.p_value = tj.at("p_value").get<double>();
        r.p_adjusted = number_or_nan(tj.at("p_adjusted"));
        r.result.exact = tj.at("exact").get<bool>();
        r.result.null_size = tj.at("null_size").get<std::uint64_t>();
        r.g_interval.lower = number_or_nan(tj.value("hedges_g_lower", Json()));
        r.g_interval.upper = number_or_nan(tj.value("hedges_g_upper", Json()));
        r.on_residuals = tj.value("tested_on", "values") == "covariate residuals";
        if (tj.contains("null_histogram")) {
          const Json& h = tj.at("null_histogram");
          t.null_histogram = pipeline::NullHistogram{numbers(h.at("edges")), h.at("counts").get<std::vector<std::uint64_t>>()};
        }
        r.result.n_a = r.n_a;
        r.result.n_b = r.n_b;
      }
      c.tests.push_back(std::move(t));
    }
    for (const auto& kj : doc.at("clusters")) {
      pipeline::ClusterTest t;
      t.curve = kj.at("curve").get<std::string>();
      t.group_a = kj.at("group_a").get<std::string>();
      t.group_b = kj.at("group_b").get<std::string>();
      if (kj.contains("note")) {
        t.note = kj.at("note").get<std::string>();
      } else {
        cohort::ClusterResult r;
        r.threshold = kj.at("threshold").get<double>();
        r.exact = kj.at("exact").get<bool>();
        r.null_size = kj.at("null_size").get<std::uint64_t>();
        r.t = numbers(kj.at("t"));
        t.density = numbers(kj.at("density"));
        for (const auto& cj : kj.at("clusters"))
          r.clusters.push_back({cj.at("first").get<std::size_t>(), cj.at("last").get<std::size_t>(), cj.at("sign").get<int>(),
                                cj.at("mass").get<double>(), cj.at("p_value").get<double>()});
        t.result = std::move(r);
      }
      c.clusters.push_back(std::move(t));
    }
    if (doc.at("null_baseline").is_object()) {
      const Json& nb = doc.at("null_baseline");
      c.null_baseline = pipeline::NullBaseline{nb.at("label").get<std::string>(), numbers(nb.at("density")),
                                               numbers(nb.at("chi"))};
    }
    c.missing = doc.at("missing").get<std::vector<std::string>>();
    c.warnings = doc.value("warnings", std::vector<std::string>{});
    c.provenance = doc.value("provenance", Json());
  } catch (const Json::exception& e) {
    fail(ErrorKind::parse, "'" + path + "': malformed group comparison (" + e.what() + ")");
  }
  return c;
}

}  // namespace critplex::output
