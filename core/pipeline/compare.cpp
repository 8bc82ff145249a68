#include "pipeline/compare.hpp"

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <limits>
#include <map>

#include "base/error.hpp"
#include "cohort/statistics.hpp"
#include "io/files.hpp"
#include "pipeline/cohort.hpp"
#include "pipeline/subject.hpp"
#include "report/report.hpp"

namespace critplex::pipeline {

namespace {

const double nan_value = std::numeric_limits<double>::quiet_NaN();

double number_or_nan(const Json& j) { return j.is_number() ? j.get<double>() : nan_value; }

std::vector<double> numbers(const Json& array) {
  std::vector<double> v;
  if (array.is_array())
    for (const auto& x : array) v.push_back(number_or_nan(x));
  return v;
}

// What the comparison needs of one subject's chosen band.
struct SubjectData {
  std::string id, group;
  Json covariates;
  std::size_t nodes = 0;
  std::vector<double> requested;          // grid densities as asked (common to all subjects)
  std::map<std::string, std::vector<double>> curves;  // chi, betti_k, kappa_mean, ...
  std::map<std::string, double> summaries;            // per-subject summary values
  std::vector<double> kappa_at_transition;            // node curvatures at the first chi zero
  std::vector<double> expected_chi;                   // Erdos-Renyi expectation on the grid
  std::vector<double> null_mean_chi;                  // the subject's null model, if any
  std::string null_model = "none";
};

SubjectData load_subject(const std::string& path, const std::string& band_name) {
  Json doc;
  try {
    doc = Json::parse(io::read_file(path));
  } catch (const Json::parse_error& e) {
    fail(ErrorKind::parse, "'" + path + "': not valid JSON (" + e.what() + ")");
  }
  SubjectData s;
  s.id = doc.value("subject", "");
  s.group = doc.value("group", "");
  s.covariates = doc.value("covariates", Json::object());
  const Json* band = nullptr;
  for (const auto& b : doc.at("bands"))
    if (band_name.empty() || b.value("band", "") == band_name) {
      band = &b;
      break;
    }
  if (band == nullptr) fail(ErrorKind::data, "'" + path + "': no band named \"" + band_name + "\"");
  const Json& sweep = band->at("sweep");
  s.nodes = sweep.value("nodes", std::size_t{0});
  for (const auto& p : sweep.at("grid")) s.requested.push_back(p.value("requested", 0.0));
  const Json& curves = band->at("curves");
  for (auto it = curves.begin(); it != curves.end(); ++it) s.curves[it.key()] = numbers(it.value());

  if (sweep.contains("transitions") && sweep["transitions"].is_object()) {
    const Json& t = sweep["transitions"];
    s.summaries["first chi zero (density)"] = number_or_nan(t.value("first_chi_zero", Json()));
    if (t.contains("chi_zeros") && t["chi_zeros"].is_array()) {
      const auto& zeros = t["chi_zeros"];
      for (std::size_t k = 1; k < std::min<std::size_t>(zeros.size(), 3); ++k)
        s.summaries["chi zero " + std::to_string(k + 1) + " (density)"] = number_or_nan(zeros[k].value("density", Json()));
    }
    // Curvature moments at the first chi zero, from the summary record. The mean is left
    // out: by Gauss-Bonnet it equals chi / N, which is 0 at a zero of chi.
    if (t.contains("summary") && t["summary"].is_array())
      for (const auto& record : t["summary"])
        if (record.value("kind", "") == "chi_zero" && record.contains("curvature") && record["curvature"].is_object()) {
          const Json& c = record["curvature"];
          s.summaries["kappa sd at first chi zero"] = number_or_nan(c.value("kappa_sd", Json()));
          s.summaries["kappa skewness at first chi zero"] = number_or_nan(c.value("kappa_skewness", Json()));
          s.summaries["kappa kurtosis at first chi zero"] = number_or_nan(c.value("kappa_kurtosis", Json()));
          s.summaries["Forman mean at first chi zero"] = number_or_nan(c.value("forman_mean", Json()));
          break;
        }
    if (t.contains("betti_peaks") && t["betti_peaks"].is_array())
      for (const auto& p : t["betti_peaks"]) {
        const auto k = p.value("k", std::size_t{0});
        if (k >= 1) s.summaries["beta_" + std::to_string(k) + " peak (density)"] = number_or_nan(p.value("density", Json()));
      }
    if (t.contains("random_graph") && t["random_graph"].is_object())
      s.expected_chi = numbers(t["random_graph"].value("expected_chi", Json()));
  }
  // Node curvatures at the grid point nearest the first chi zero.
  const double first = s.summaries.count("first chi zero (density)") ? s.summaries["first chi zero (density)"] : nan_value;
  if (std::isfinite(first) && sweep.contains("curvature") && sweep["curvature"].is_object() &&
      sweep["curvature"].contains("node_kappa")) {
    const auto& density = s.curves["density"];
    std::size_t best = 0;
    for (std::size_t i = 1; i < density.size(); ++i)
      if (std::fabs(density[i] - first) < std::fabs(density[best] - first)) best = i;
    for (const auto& node : sweep["curvature"]["node_kappa"]["values"])
      if (best < node.size()) s.kappa_at_transition.push_back(number_or_nan(node[best]));
  }
  if (band->contains("null") && band->at("null").is_object()) {
    const Json& null = band->at("null");
    s.null_model = null.value("model", "none");
    s.null_mean_chi = numbers(null.value("mean_chi", Json()));
    s.summaries["first chi zero, z against the null"] = number_or_nan(null["first_chi_zero"].value("z", Json()));
  }
  return s;
}

Json band_json(const cohort::Band& b) { return {{"mean", b.mean}, {"lower", b.lower}, {"upper", b.upper}}; }

Json finite_or_null(const std::vector<double>& v) {
  Json a = Json::array();
  for (double x : v) a.push_back(std::isfinite(x) ? Json(x) : Json(nullptr));
  return a;
}

}  // namespace

CompareOptions parse_compare_options(const Json& options) {
  OptionReader r(options, "compare options");
  CompareOptions o;
  o.band = r.text("band", "");
  o.groups = r.texts("groups");
  o.statistic = r.choice("statistic", "mean_difference", {"mean_difference", "welch_t", "student_t"});
  auto positive = [&](const char* key, long long fallback) {
    const long long v = r.integer(key, fallback);
    if (v < 0) fail(ErrorKind::argument, std::string("compare options: \"") + key + "\" must not be negative");
    return static_cast<std::uint64_t>(v);
  };
  o.exact_limit = positive("exact_limit", 20000);
  o.resamples = positive("resamples", 9999);
  o.seed = positive("seed", 1);
  o.confidence = r.number("confidence", 0.95);
  if (!(o.confidence > 0.0 && o.confidence < 1.0)) fail(ErrorKind::argument, "compare options: \"confidence\" must be in (0, 1)");
  o.covariates = r.texts("covariates");
  if (r.has("cluster_curves")) o.cluster_curves = r.texts("cluster_curves");
  r.finish();
  return o;
}

Json compare_cohort(const std::string& dir, const CompareOptions& options) {
  namespace fs = std::filesystem;
  // Which subjects: the manifest copy a cohort run leaves, else every subject document.
  std::vector<std::pair<std::string, std::string>> listed;  // id, group
  const std::string manifest = dir + "/manifest.tsv";
  if (fs::exists(manifest)) {
    for (const auto& row : read_manifest(manifest)) listed.emplace_back(row.subject, row.group);
  } else {
    if (!fs::is_directory(dir)) fail(ErrorKind::io, "'" + dir + "' is not a folder");
    std::vector<std::string> names;
    for (const auto& e : fs::directory_iterator(dir)) {
      const std::string n = e.path().filename().string();
      const std::string tail = "_topology.json";
      if (n.rfind("sub-", 0) == 0 && n.size() > tail.size() && n.compare(n.size() - tail.size(), tail.size(), tail) == 0)
        names.push_back(n.substr(4, n.size() - 4 - tail.size()));
    }
    std::sort(names.begin(), names.end());
    for (const auto& id : names) listed.emplace_back(id, "");
  }
  std::vector<SubjectData> subjects;
  Json missing = Json::array();
  for (const auto& [id, group] : listed) {
    const std::string path = dir + "/" + subject_prefix(id, "") + "_topology.json";
    if (!fs::exists(path)) {
      missing.push_back(id);
      continue;
    }
    SubjectData s = load_subject(path, options.band);
    if (!group.empty()) s.group = group;
    if (s.group.empty()) fail(ErrorKind::data, "'" + path + "': the subject has no group");
    subjects.push_back(std::move(s));
  }
  if (subjects.empty()) fail(ErrorKind::data, "'" + dir + "' holds no finished subject results");

  // Groups in the asked order, else in order of first appearance.
  std::vector<std::string> groups = options.groups;
  if (groups.empty())
    for (const auto& s : subjects)
      if (std::find(groups.begin(), groups.end(), s.group) == groups.end()) groups.push_back(s.group);
  for (const auto& g : groups) {
    std::size_t n = 0;
    for (const auto& s : subjects) n += s.group == g;
    if (n < 2) fail(ErrorKind::data, "group \"" + g + "\" has " + std::to_string(n) + " finished subjects; at least 2 are needed");
  }
  const std::size_t points = subjects[0].requested.size();
  for (const auto& s : subjects)
    if (s.requested.size() != points)
      fail(ErrorKind::data, "subject " + s.id + " has " + std::to_string(s.requested.size()) + " grid points, subject " +
                                subjects[0].id + " has " + std::to_string(points) + ": run every subject with the same sweep grid");

  cohort::BootstrapOptions bo;
  bo.confidence = options.confidence;
  bo.resamples = std::min<std::uint64_t>(options.resamples, 4999);
  bo.seed = options.seed;

  // Curves whose group means are shown: chi, Betti curves and curvature moments.
  std::vector<std::string> curve_names;
  for (const auto& [name, values] : subjects[0].curves)
    if (name == "chi" || name.rfind("betti_", 0) == 0 || name == "kappa_mean" || name == "kappa_sd" || name == "forman_mean")
      curve_names.push_back(name);

  Json group_docs = Json::array();
  std::map<std::string, std::vector<const SubjectData*>> members;
  for (const auto& g : groups) {
    for (const auto& s : subjects)
      if (s.group == g) members[g].push_back(&s);
    const auto& m = members[g];
    Json gd = {{"name", g}};
    Json ids = Json::array();
    for (const auto* s : m) ids.push_back(s->id);
    gd["subjects"] = ids;
    gd["density"] = subjects[0].requested;
    Json curves = Json::object();
    for (const auto& name : curve_names) {
      // Only the points where every subject of the group has a value.
      Eigen::MatrixXd values(static_cast<Eigen::Index>(m.size()), static_cast<Eigen::Index>(points));
      bool complete = true;
      for (std::size_t i = 0; i < m.size(); ++i) {
        const auto it = m[i]->curves.find(name);
        if (it == m[i]->curves.end() || it->second.size() != points) {
          complete = false;
          break;
        }
        for (std::size_t p = 0; p < points; ++p) values(static_cast<Eigen::Index>(i), static_cast<Eigen::Index>(p)) = it->second[p];
      }
      if (!complete || !values.allFinite()) continue;
      const cohort::Band band = cohort::bootstrap_mean_band(values, bo);
      curves[name] = band_json(band);
      if (name == "chi") {
        // log10 |chi| of the mean curve; the band maps through |.| and is open below where
        // it straddles zero (the mean of log|chi| would be undefined at each zero).
        std::vector<double> mean, lower, upper;
        for (std::size_t p = 0; p < points; ++p) {
          mean.push_back(std::log10(std::fabs(band.mean[p])));
          const double lo = band.lower[p], hi = band.upper[p];
          const bool straddles = lo <= 0.0 && hi >= 0.0;
          lower.push_back(straddles ? -std::numeric_limits<double>::infinity()
                                    : std::log10(std::min(std::fabs(lo), std::fabs(hi))));
          upper.push_back(std::log10(std::max(std::fabs(lo), std::fabs(hi))));
        }
        curves["log_abs_chi"] = {{"mean", finite_or_null(mean)}, {"lower", finite_or_null(lower)}, {"upper", finite_or_null(upper)}};
      }
    }
    gd["curves"] = curves;
    Json summaries = Json::object();
    std::vector<std::string> summary_names;
    for (const auto* s : m)
      for (const auto& [k, v] : s->summaries)
        if (std::find(summary_names.begin(), summary_names.end(), k) == summary_names.end()) summary_names.push_back(k);
    for (const auto& k : summary_names) {
      std::vector<double> v;
      for (const auto* s : m) v.push_back(s->summaries.count(k) ? s->summaries.at(k) : nan_value);
      summaries[k] = finite_or_null(v);
    }
    gd["summaries"] = summaries;
    std::vector<double> pooled;
    for (const auto* s : m) pooled.insert(pooled.end(), s->kappa_at_transition.begin(), s->kappa_at_transition.end());
    gd["curvature_at_transition"] = finite_or_null(pooled);
    group_docs.push_back(std::move(gd));
  }

  // Permutation tests: every later group against the first, every summary.
  cohort::PermutationOptions po;
  po.statistic = cohort::statistic_from_name(options.statistic);
  po.exact_limit = options.exact_limit;
  po.resamples = options.resamples;
  po.seed = options.seed;
  Json tests = Json::array();
  std::vector<double> p_values;
  const Json& reference_summaries = group_docs[0]["summaries"];
  for (std::size_t gi = 1; gi < groups.size(); ++gi) {
    const Json& summaries = group_docs[gi]["summaries"];
    for (auto it = summaries.begin(); it != summaries.end(); ++it) {
      if (!reference_summaries.contains(it.key())) continue;
      // Subjects with a finite value (and finite covariates when those are used).
      std::vector<const SubjectData*> used_a, used_b;
      std::vector<double> a, b;
      auto usable = [&](const SubjectData* s) {
        if (!s->summaries.count(it.key()) || !std::isfinite(s->summaries.at(it.key()))) return false;
        for (const auto& c : options.covariates)
          if (!s->covariates.contains(c) || !s->covariates[c].is_number()) return false;
        return true;
      };
      for (const auto* s : members[groups[gi]])
        if (usable(s)) used_a.push_back(s);
      for (const auto* s : members[groups[0]])
        if (usable(s)) used_b.push_back(s);
      Json row = {{"summary", it.key()}, {"group_a", groups[gi]}, {"group_b", groups[0]},
                  {"n_a", used_a.size()}, {"n_b", used_b.size()}};
      if (used_a.size() < 2 || used_b.size() < 2) {
        row["note"] = "fewer than 2 subjects with a value in a group: not tested";
        tests.push_back(row);
        continue;
      }
      for (const auto* s : used_a) a.push_back(s->summaries.at(it.key()));
      for (const auto* s : used_b) b.push_back(s->summaries.at(it.key()));
      if (!options.covariates.empty()) {
        // Residualise the pooled values on the covariates (with an intercept), then split.
        const std::size_t n = a.size() + b.size();
        Eigen::VectorXd y(static_cast<Eigen::Index>(n));
        Eigen::MatrixXd x(static_cast<Eigen::Index>(n), static_cast<Eigen::Index>(options.covariates.size()));
        std::size_t r = 0;
        for (const auto* group : {&used_a, &used_b})
          for (const auto* s : *group) {
            y(static_cast<Eigen::Index>(r)) = s->summaries.at(it.key());
            for (std::size_t c = 0; c < options.covariates.size(); ++c)
              x(static_cast<Eigen::Index>(r), static_cast<Eigen::Index>(c)) = s->covariates[options.covariates[c]].get<double>();
            ++r;
          }
        const Eigen::VectorXd res = cohort::residualise(y, x);
        for (std::size_t i = 0; i < a.size(); ++i) a[i] = res(static_cast<Eigen::Index>(i));
        for (std::size_t i = 0; i < b.size(); ++i) b[i] = res(static_cast<Eigen::Index>(a.size() + i));
        row["covariates"] = options.covariates;
      }
      const auto t = cohort::permutation_test(a, b, po);
      row["statistic"] = options.statistic;
      row["value"] = t.statistic;
      row["mean_a"] = t.mean_a;
      row["mean_b"] = t.mean_b;
      row["hedges_g"] = t.effect.hedges_g;
      row["p_value"] = t.p_value;
      row["exact"] = t.exact;
      row["null_size"] = t.null_size;
      p_values.push_back(t.p_value);
      tests.push_back(row);
    }
  }
  const auto adjusted = cohort::benjamini_hochberg(p_values);
  for (std::size_t i = 0, k = 0; i < tests.size(); ++i)
    if (tests[i].contains("p_value")) tests[i]["p_adjusted"] = adjusted[k++];

  // Cluster-based permutation tests along the density axis.
  Json clusters = Json::array();
  cohort::ClusterOptions co;
  co.exact_limit = options.exact_limit;
  co.resamples = std::min<std::uint64_t>(options.resamples, 4999);
  co.seed = options.seed;
  for (const auto& curve : options.cluster_curves)
    for (std::size_t gi = 1; gi < groups.size(); ++gi) {
      auto matrix_of = [&](const std::string& g) {
        const auto& m = members[g];
        Eigen::MatrixXd v(static_cast<Eigen::Index>(m.size()), static_cast<Eigen::Index>(points));
        for (std::size_t i = 0; i < m.size(); ++i) {
          const auto it = m[i]->curves.find(curve);
          if (it == m[i]->curves.end()) fail(ErrorKind::data, "subject " + m[i]->id + " has no curve \"" + curve + "\"");
          for (std::size_t p = 0; p < points; ++p)
            v(static_cast<Eigen::Index>(i), static_cast<Eigen::Index>(p)) = p < it->second.size() ? it->second[p] : nan_value;
        }
        return v;
      };
      Eigen::MatrixXd a = matrix_of(groups[gi]), b = matrix_of(groups[0]);
      // The test runs on the grid points where every subject has a value and the groups vary.
      std::vector<Eigen::Index> keep;
      for (Eigen::Index p = 0; p < a.cols(); ++p) {
        const bool finite = a.col(p).allFinite() && b.col(p).allFinite();
        const bool varies = finite && (a.col(p).maxCoeff() > a.col(p).minCoeff() || b.col(p).maxCoeff() > b.col(p).minCoeff());
        if (varies) keep.push_back(p);
      }
      Json entry = {{"curve", curve}, {"group_a", groups[gi]}, {"group_b", groups[0]}};
      if (keep.size() < 2) {
        entry["note"] = "fewer than 2 grid points where the curve varies: not tested";
        clusters.push_back(entry);
        continue;
      }
      Eigen::MatrixXd ka(a.rows(), static_cast<Eigen::Index>(keep.size())), kb(b.rows(), static_cast<Eigen::Index>(keep.size()));
      for (std::size_t k = 0; k < keep.size(); ++k) {
        ka.col(static_cast<Eigen::Index>(k)) = a.col(keep[k]);
        kb.col(static_cast<Eigen::Index>(k)) = b.col(keep[k]);
      }
      const auto r = cohort::cluster_permutation_test(ka, kb, co);
      entry["threshold"] = r.threshold;
      entry["exact"] = r.exact;
      entry["null_size"] = r.null_size;
      Json list = Json::array();
      for (const auto& c : r.clusters)
        list.push_back({{"first_density", subjects[0].requested[static_cast<std::size_t>(keep[c.first])]},
                        {"last_density", subjects[0].requested[static_cast<std::size_t>(keep[c.last])]},
                        {"sign", c.sign},
                        {"mass", c.mass},
                        {"p_value", c.p_value}});
      entry["clusters"] = list;
      clusters.push_back(entry);
    }

  // Null baselines: the subjects' own null model when they ran one, and Erdos-Renyi.
  Json null_baseline = nullptr;
  {
    std::vector<double> sum(points, 0.0);
    std::size_t n = 0;
    for (const auto& s : subjects)
      if (s.null_mean_chi.size() == points) {
        for (std::size_t p = 0; p < points; ++p) sum[p] += s.null_mean_chi[p];
        ++n;
      }
    if (n > 0) {
      for (double& x : sum) x /= static_cast<double>(n);
      null_baseline = {{"label", "null model (" + subjects[0].null_model + "), mean over " + std::to_string(n) + " subjects"},
                       {"density", subjects[0].requested},
                       {"chi", finite_or_null(sum)}};
    } else if (subjects[0].expected_chi.size() == points) {
      null_baseline = {{"label", "Erdos-Renyi expectation, N = " + std::to_string(subjects[0].nodes)},
                       {"density", subjects[0].requested},
                       {"chi", finite_or_null(subjects[0].expected_chi)}};
    }
  }

  Json doc;
  doc["kind"] = "critplex group comparison";
  doc["format_version"] = 1;
  doc["options"] = {{"band", options.band}, {"statistic", options.statistic}, {"exact_limit", options.exact_limit},
                    {"resamples", options.resamples}, {"seed", options.seed}, {"confidence", options.confidence},
                    {"covariates", options.covariates}, {"cluster_curves", options.cluster_curves}};
  doc["regions"] = subjects[0].nodes;
  doc["groups"] = group_docs;
  doc["tests"] = tests;
  doc["clusters"] = clusters;
  doc["null_baseline"] = null_baseline;
  doc["missing"] = missing;
  doc["caution"] = "Research software, not a medical device: not for clinical decisions.";
  return doc;
}

Json compare_and_write(const std::string& dir, const CompareOptions& options) {
  Json doc = compare_cohort(dir, options);
  std::string tsv = "summary\tgroup_a\tgroup_b\tn_a\tn_b\tmean_a\tmean_b\tstatistic\tvalue\thedges_g\tp_value\tp_adjusted\texact\tnull_size\n";
  auto cell = [](const Json& j) {
    if (j.is_null()) return std::string("NA");
    if (j.is_string()) return j.get<std::string>();
    if (j.is_boolean()) return std::string(j.get<bool>() ? "true" : "false");
    if (j.is_number_float()) return io::format_double(j.get<double>());
    return j.dump();
  };
  for (const auto& t : doc["tests"]) {
    tsv += cell(t["summary"]) + "\t" + cell(t["group_a"]) + "\t" + cell(t["group_b"]) + "\t" + cell(t["n_a"]) + "\t" +
           cell(t["n_b"]);
    for (const char* k : {"mean_a", "mean_b", "statistic", "value", "hedges_g", "p_value", "p_adjusted", "exact", "null_size"})
      tsv += "\t" + cell(t.value(k, Json()));
    tsv += "\n";
  }
  io::write_file_atomically(dir + "/group_tests.tsv", tsv);
  io::write_file_atomically(dir + "/group_comparison.json", doc.dump(1) + "\n");
  return doc;
}

std::string report_html(const Json& c, const std::string& created) {
  report::ReportInput in;
  in.title = "Topology of functional networks: group comparison";
  in.software = std::string("critplex ") + CRITPLEX_VERSION_STRING;
  in.created = created;
  in.options_json = c.at("options").dump(1);
  in.facts.push_back({"regions (nodes)", std::to_string(c.value("regions", 0))});
  for (const auto& g : c.at("groups")) {
    report::GroupResults gr;
    gr.name = g.at("name").get<std::string>();
    for (const auto& s : g.at("subjects")) gr.subjects.push_back(s.get<std::string>());
    gr.density = numbers(g.at("density"));
    auto band_of = [&](const Json& b) {
      report::Band out;
      out.mean = numbers(b.at("mean"));
      out.lower = numbers(b.at("lower"));
      out.upper = numbers(b.at("upper"));
      return out;
    };
    const Json& curves = g.at("curves");
    if (!curves.contains("chi")) fail(ErrorKind::data, "comparison: group \"" + gr.name + "\" has no chi curve");
    gr.chi = band_of(curves.at("chi"));
    gr.log_abs_chi = band_of(curves.at("log_abs_chi"));
    for (int k = 0; curves.contains("betti_" + std::to_string(k)); ++k) gr.betti.push_back(band_of(curves.at("betti_" + std::to_string(k))));
    const Json& summaries = g.at("summaries");
    if (summaries.contains("first chi zero (density)")) gr.first_transition = numbers(summaries.at("first chi zero (density)"));
    else gr.first_transition.assign(gr.subjects.size(), nan_value);
    if (summaries.contains("first chi zero, z against the null"))
      gr.transition_z = numbers(summaries.at("first chi zero, z against the null"));
    gr.curvature_at_transition = numbers(g.at("curvature_at_transition"));
    in.groups.push_back(std::move(gr));
  }
  if (c.contains("null_baseline") && c["null_baseline"].is_object()) {
    report::NullBaseline nb;
    nb.label = c["null_baseline"].at("label").get<std::string>();
    nb.density = numbers(c["null_baseline"].at("density"));
    nb.chi = numbers(c["null_baseline"].at("chi"));
    for (double x : nb.chi) nb.log_abs_chi.push_back(std::log10(std::fabs(x)));
    in.null_baseline = nb;
    in.facts.push_back({"null baseline", nb.label});
  }
  for (const auto& t : c.at("tests")) {
    if (!t.contains("p_value")) continue;
    report::TestRow row;
    row.summary = t.at("summary").get<std::string>() + " (" + t.at("group_a").get<std::string>() + " vs " +
                  t.at("group_b").get<std::string>() + ")";
    row.statistic = t.at("statistic").get<std::string>();
    row.value = t.at("value").get<double>();
    row.hedges_g = t.at("hedges_g").get<double>();
    row.p_value = t.at("p_value").get<double>();
    row.p_adjusted = t.value("p_adjusted", row.p_value);
    row.method = t.at("exact").get<bool>() ? "exact, " + std::to_string(t.at("null_size").get<std::uint64_t>()) + " relabellings"
                                           : "Monte Carlo, " + std::to_string(t.at("null_size").get<std::uint64_t>()) +
                                                 " relabellings, seed " + std::to_string(c["options"].value("seed", 1));
    if (t.at("summary") == "first chi zero (density)" && in.transition_test_note.empty()) {
      char buf[256];
      std::snprintf(buf, sizeof buf, "%s vs %s: difference in means %.4f, Hedges g %.2f, permutation p = %.4g (%s)",
                    t.at("group_a").get<std::string>().c_str(), t.at("group_b").get<std::string>().c_str(), row.value,
                    row.hedges_g, row.p_value, row.method.c_str());
      in.transition_test_note = buf;
    }
    in.tests.push_back(std::move(row));
  }
  for (const auto& cl : c.value("clusters", Json::array())) {
    if (!cl.contains("clusters")) continue;
    for (const auto& k : cl["clusters"]) {
      report::TestRow row;
      char name[200];
      std::snprintf(name, sizeof name, "%s curve, densities %.3f-%.3f (%s vs %s)", cl["curve"].get<std::string>().c_str(),
                    k["first_density"].get<double>(), k["last_density"].get<double>(),
                    cl["group_a"].get<std::string>().c_str(), cl["group_b"].get<std::string>().c_str());
      row.summary = name;
      row.statistic = "cluster mass (sum of t)";
      row.value = k["mass"].get<double>();
      row.hedges_g = nan_value;
      row.p_value = k["p_value"].get<double>();
      row.p_adjusted = nan_value;  // cluster p-values are already corrected along the axis
      row.method = std::string("cluster permutation, ") + (cl["exact"].get<bool>() ? "exact" : "Monte Carlo");
      in.tests.push_back(std::move(row));
    }
  }
  return report::build_report(in);
}

}  // namespace critplex::pipeline
