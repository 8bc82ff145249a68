#include "pipeline/compare.hpp"

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <limits>

#include "base/error.hpp"
#include "io/files.hpp"
#include "output/comparison.hpp"
#include "output/design.hpp"
#include "output/subject.hpp"
#include "pipeline/cohort.hpp"
#include "pipeline/provenance.hpp"

namespace critplex::pipeline {

const OptionSection& compare_option_section() {
  static const OptionSection section{
      "compare",
      "compare options",
      "cpx_cohort_compare, critplex compare --options",
      "Group statistics of a cohort run's finished subjects.",
      {{.key = "band", .type = "string", .default_value = "", .default_note = "the first band",
        .meaning = "which band to compare"},
       {.key = "groups", .type = "strings", .default_note = "order of appearance",
        .meaning = "group order; every later group is tested against the first"},
       {.key = "statistic", .type = "choice", .default_value = "mean_difference",
        .choices = {"mean_difference", "welch_t", "student_t"}, .meaning = "test statistic (group a minus group b)"},
       {.key = "exact_limit", .type = "integer", .default_value = 20000, .min = 1,
        .meaning = "enumerate every relabelling when there are at most this many"},
       {.key = "resamples", .type = "integer", .default_value = 9999, .min = 1,
        .meaning = "random relabellings otherwise; also the bootstrap resamples of the bands and the cluster tests' "
                   "relabellings"},
       {.key = "seed", .type = "integer", .default_value = 1, .min = 0, .meaning = "seed of every random choice"},
       {.key = "confidence", .type = "number", .default_value = 0.95, .min = 0, .max = 1, .min_open = true,
        .max_open = true, .meaning = "level of the bootstrap bands of the group mean curves"},
       {.key = "covariates", .type = "strings",
        .meaning = "manifest columns regressed out of every summary before testing; each must be a column"},
       {.key = "cluster_curves", .type = "strings", .default_value = Json::array({"chi"}),
        .meaning = "curves given a cluster-based permutation test along the density axis"},
       {.key = "primary", .type = "strings", .default_note = "the first summary (first chi zero)",
        .meaning = "headline summaries: listed first in the tests table, in this order, with their permutation null "
                   "drawn in the report"},
       {.key = "design", .type = "object", .default_note = "none",
        .meaning = "a study design tested per summary (design options); writes design_tests.tsv and "
                   "design_tests.json"}}};
  return section;
}

CompareOptions parse_compare_options(const Json& options) {
  SchemaReader r(options, compare_option_section());
  CompareOptions o;
  o.band = r.text("band");
  o.groups = r.texts("groups");
  o.statistic = r.choice("statistic");
  o.exact_limit = static_cast<std::uint64_t>(r.integer("exact_limit"));
  o.resamples = static_cast<std::uint64_t>(r.integer("resamples"));
  o.seed = static_cast<std::uint64_t>(r.integer("seed"));
  o.confidence = r.number("confidence");
  o.covariates = r.texts("covariates");
  o.cluster_curves = r.texts("cluster_curves");
  o.primary = r.texts("primary");
  if (const Json* design = r.raw("design")) {
    o.design = cohort::parse_design(*design, r.where(), "design");
    if (!design->contains("curves")) o.design->curves = o.cluster_curves;
  }
  r.finish();
  o.given = options.is_null() ? Json::object() : options;
  return o;
}

namespace {

const double nan_value = std::numeric_limits<double>::quiet_NaN();

// Curves whose group means are shown: chi, Betti curves and curvature moments.
bool shown_curve(const std::string& name) {
  return name == "chi" || name.rfind("betti_", 0) == 0 || name == "kappa_mean" || name == "kappa_sd" ||
         name == "forman_mean";
}

// Groups in the asked order, else in order of first appearance; each with at least 2.
std::vector<std::string> group_order(const std::vector<output::SubjectRecord>& subjects, const CompareOptions& o) {
  std::vector<std::string> groups = o.groups;
  if (groups.empty())
    for (const auto& s : subjects)
      if (std::find(groups.begin(), groups.end(), s.group) == groups.end()) groups.push_back(s.group);
  for (const auto& g : groups) {
    const auto n = std::count_if(subjects.begin(), subjects.end(), [&](const auto& s) { return s.group == g; });
    if (n < 2) fail(ErrorKind::data, "group \"" + g + "\" has " + std::to_string(n) + " finished subjects; at least 2 are needed");
  }
  return groups;
}

// Every covariate must be a manifest column (carried into every subject's document).
void check_covariates(const std::vector<output::SubjectRecord>& subjects, const CompareOptions& o) {
  for (const auto& c : o.covariates)
    for (const auto& s : subjects)
      if (!s.covariates.count(c)) {
        std::string known;
        for (const auto& [name, value] : s.covariates) known += (known.empty() ? "" : ", ") + name;
        fail(ErrorKind::argument, "compare options: covariate \"" + c + "\" is not a column of the manifest (subject " +
                                      s.id + " has: " + (known.empty() ? "no covariates" : known) + ")");
      }
}

GroupResult group_result(const std::string& name, const std::vector<const output::SubjectRecord*>& members,
                         const std::vector<std::string>& summary_names, const CompareOptions& o) {
  GroupResult g;
  g.name = name;
  for (const auto* s : members) {
    g.subjects.push_back(s->id);
    g.sessions.push_back(s->session);
  }
  const std::size_t points = members.front()->requested.size();
  cohort::BootstrapOptions bo;
  bo.confidence = o.confidence;
  bo.resamples = o.resamples;
  bo.seed = o.seed;
  for (const auto& [curve, values] : members.front()->curves) {
    if (!shown_curve(curve)) continue;
    // Only curves every subject of the group has at every point.
    Eigen::MatrixXd m(static_cast<Eigen::Index>(members.size()), static_cast<Eigen::Index>(points));
    bool complete = true;
    for (std::size_t i = 0; i < members.size() && complete; ++i) {
      const auto it = members[i]->curves.find(curve);
      complete = it != members[i]->curves.end() && it->second.size() == points;
      for (std::size_t p = 0; complete && p < points; ++p)
        m(static_cast<Eigen::Index>(i), static_cast<Eigen::Index>(p)) = it->second[p];
    }
    if (complete && m.allFinite()) g.curves[curve] = cohort::bootstrap_mean_band(m, bo);
  }
  for (const auto& summary : summary_names) {
    std::vector<double> v;
    for (const auto* s : members) v.push_back(s->summary(summary));
    g.summaries[summary] = std::move(v);
  }
  for (const auto* s : members) {
    const auto chi = s->curves.find("chi");
    g.subject_chi.push_back(chi != s->curves.end() ? chi->second : std::vector<double>(points, nan_value));
  }
  for (const auto* s : members)
    g.curvature_at_transition.insert(g.curvature_at_transition.end(), s->kappa_at_first_zero.begin(),
                                     s->kappa_at_first_zero.end());
  return g;
}

// Permutation tests of every summary, group a (a later group) against group b (the first).
std::vector<SummaryTest> summary_tests(const std::vector<const output::SubjectRecord*>& a,
                                       const std::vector<const output::SubjectRecord*>& b, const GroupResult& ga,
                                       const GroupResult& gb, const std::vector<std::string>& summary_names,
                                       const CompareOptions& o) {
  cohort::SummaryComparisonInput in;
  for (const auto& name : summary_names) {
    in.names.push_back(name);
    in.a.push_back(ga.summaries.at(name));
    in.b.push_back(gb.summaries.at(name));
  }
  in.covariate_names = o.covariates;
  in.effect_confidence = o.confidence;
  auto covariates = [&](const std::vector<const output::SubjectRecord*>& members) {
    Eigen::MatrixXd m(static_cast<Eigen::Index>(members.size()), static_cast<Eigen::Index>(o.covariates.size()));
    for (std::size_t i = 0; i < members.size(); ++i)
      for (std::size_t c = 0; c < o.covariates.size(); ++c)
        m(static_cast<Eigen::Index>(i), static_cast<Eigen::Index>(c)) = members[i]->covariates.at(o.covariates[c]);
    return m;
  };
  in.covariates_a = covariates(a);
  in.covariates_b = covariates(b);
  cohort::PermutationOptions po;
  po.statistic = cohort::statistic_from_name(o.statistic);
  po.exact_limit = o.exact_limit;
  po.resamples = o.resamples;
  po.seed = o.seed;
  std::vector<SummaryTest> tests;
  for (auto& row : cohort::compare_summaries(in, po))
    tests.push_back(SummaryTest{ga.name, gb.name, row.tested ? o.covariates : std::vector<std::string>{}, std::move(row)});
  return tests;
}

ClusterTest cluster_test(const std::string& curve, const std::vector<const output::SubjectRecord*>& a,
                         const std::vector<const output::SubjectRecord*>& b, const std::string& name_a,
                         const std::string& name_b, const std::vector<double>& density, const CompareOptions& o) {
  const std::size_t points = density.size();
  auto matrix_of = [&](const std::vector<const output::SubjectRecord*>& m) {
    Eigen::MatrixXd v(static_cast<Eigen::Index>(m.size()), static_cast<Eigen::Index>(points));
    for (std::size_t i = 0; i < m.size(); ++i) {
      const auto it = m[i]->curves.find(curve);
      if (it == m[i]->curves.end()) fail(ErrorKind::data, "subject " + m[i]->id + " has no curve \"" + curve + "\"");
      for (std::size_t p = 0; p < points; ++p)
        v(static_cast<Eigen::Index>(i), static_cast<Eigen::Index>(p)) = p < it->second.size() ? it->second[p] : nan_value;
    }
    return v;
  };
  const Eigen::MatrixXd ma = matrix_of(a), mb = matrix_of(b);
  ClusterTest t;
  t.curve = curve;
  t.group_a = name_a;
  t.group_b = name_b;
  // The test runs on the grid points where every subject has a value and the groups vary.
  std::vector<Eigen::Index> keep;
  for (Eigen::Index p = 0; p < ma.cols(); ++p) {
    const bool finite = ma.col(p).allFinite() && mb.col(p).allFinite();
    const bool varies = finite && (ma.col(p).maxCoeff() > ma.col(p).minCoeff() || mb.col(p).maxCoeff() > mb.col(p).minCoeff());
    if (varies) keep.push_back(p);
  }
  if (keep.size() < 2) {
    t.note = "fewer than 2 grid points where the curve varies: not tested";
    return t;
  }
  Eigen::MatrixXd ka(ma.rows(), static_cast<Eigen::Index>(keep.size())), kb(mb.rows(), static_cast<Eigen::Index>(keep.size()));
  for (std::size_t k = 0; k < keep.size(); ++k) {
    ka.col(static_cast<Eigen::Index>(k)) = ma.col(keep[k]);
    kb.col(static_cast<Eigen::Index>(k)) = mb.col(keep[k]);
    t.density.push_back(density[static_cast<std::size_t>(keep[k])]);
  }
  cohort::ClusterOptions co;
  co.exact_limit = o.exact_limit;
  co.resamples = o.resamples;
  co.seed = o.seed;
  t.result = cohort::cluster_permutation_test(ka, kb, co);
  return t;
}

// The subjects' own null model when they ran one, else the Erdos-Renyi expectation.
std::optional<NullBaseline> null_baseline(const std::vector<output::SubjectRecord>& subjects,
                                          const std::vector<double>& density) {
  const std::size_t points = density.size();
  std::vector<double> sum(points, 0.0);
  std::size_t n = 0;
  for (const auto& s : subjects)
    if (s.null_mean_chi.size() == points) {
      for (std::size_t p = 0; p < points; ++p) sum[p] += s.null_mean_chi[p];
      ++n;
    }
  if (n > 0) {
    for (double& x : sum) x /= static_cast<double>(n);
    return NullBaseline{"null model (" + subjects[0].null_model + "), mean over " + std::to_string(n) + " subjects",
                        density, sum};
  }
  if (subjects[0].expected_chi.size() == points)
    return NullBaseline{"Erdos-Renyi expectation, N = " + std::to_string(subjects[0].nodes), density,
                        subjects[0].expected_chi};
  return std::nullopt;
}

// One line for the subjects whose null draws were too few for a z-score.
std::vector<std::string> null_warnings(const std::vector<output::SubjectRecord>& subjects) {
  std::size_t n = 0;
  std::string example;
  for (const auto& s : subjects)
    if (!s.null_warning.empty()) {
      ++n;
      if (example.empty()) example = "subject " + s.id + ": " + s.null_warning;
    }
  if (n == 0) return {};
  return {std::to_string(n) + " of " + std::to_string(subjects.size()) +
          " subjects have too few null draws for a z-score against the null; their percentile ranks are coarse (e.g. " +
          example + "). Raise null.count to at least null.min_draws_for_z."};
}

// Moves the primary summaries to the front, in the user's order; each must exist.
// Returns the headline summaries (the primary list, else the first summary).
std::vector<std::string> primary_first(std::vector<std::string>& names, const std::vector<std::string>& primary) {
  std::vector<std::string> ordered;
  for (const auto& p : primary) {
    if (std::find(names.begin(), names.end(), p) == names.end()) {
      std::string known;
      for (const auto& n : names) known += (known.empty() ? "" : ", ") + n;
      fail(ErrorKind::argument, "compare options: primary summary \"" + p + "\" is not a summary of these subjects (they have: " + known + ")");
    }
    if (std::find(ordered.begin(), ordered.end(), p) == ordered.end()) ordered.push_back(p);
  }
  const std::vector<std::string> headlines = ordered.empty() && !names.empty() ? std::vector<std::string>{names[0]} : ordered;
  for (const auto& n : names)
    if (std::find(ordered.begin(), ordered.end(), n) == ordered.end()) ordered.push_back(n);
  names = ordered;
  return headlines;
}

// Tests of headline summaries keep a histogram of their permutation null.
void mark_headlines(std::vector<SummaryTest>& tests, const std::vector<std::string>& headlines) {
  for (auto& t : tests) {
    t.headline = std::find(headlines.begin(), headlines.end(), t.row.summary) != headlines.end();
    if (t.headline && t.row.tested) t.null_histogram = null_histogram(t.row.result.null_statistics, t.row.result.statistic);
    t.row.result.null_statistics.clear();
    t.row.result.null_statistics.shrink_to_fit();
  }
  // Headline tests first for every pair of groups (summaries already in primary order).
  std::stable_partition(tests.begin(), tests.end(), [](const SummaryTest& t) { return t.headline; });
}

}  // namespace

NullHistogram null_histogram(const std::vector<double>& null_statistics, double observed, std::size_t bins) {
  NullHistogram h;
  if (null_statistics.empty() || bins == 0) return h;
  double lo = observed, hi = observed;
  for (double x : null_statistics) lo = std::min(lo, x), hi = std::max(hi, x);
  if (!(hi > lo)) lo -= 0.5, hi += 0.5;
  const double width = (hi - lo) / static_cast<double>(bins);
  for (std::size_t k = 0; k <= bins; ++k) h.edges.push_back(lo + width * static_cast<double>(k));
  h.counts.assign(bins, 0);
  for (double x : null_statistics)
    ++h.counts[std::min(bins - 1, static_cast<std::size_t>((x - lo) / width))];
  return h;
}

Comparison compare(const std::vector<output::SubjectRecord>& subjects, const CompareOptions& options) {
  if (subjects.empty()) fail(ErrorKind::data, "no finished subject results to compare");
  check_covariates(subjects, options);
  Comparison c;
  c.options = options;
  c.regions = subjects[0].nodes;
  c.density = subjects[0].requested;
  for (const auto& s : subjects)
    if (s.requested.size() != c.density.size())
      fail(ErrorKind::data, "subject " + s.id + " has " + std::to_string(s.requested.size()) + " grid points, subject " +
                                subjects[0].id + " has " + std::to_string(c.density.size()) +
                                ": run every subject with the same sweep grid");
  const std::vector<std::string> groups = group_order(subjects, options);
  // Every summary some subject has, in the canonical order.
  std::vector<std::string> summary_names;
  for (const auto& s : subjects)
    for (const auto& [name, value] : s.summaries)
      if (std::find(summary_names.begin(), summary_names.end(), name) == summary_names.end()) summary_names.push_back(name);
  std::stable_sort(summary_names.begin(), summary_names.end(), [](const std::string& a, const std::string& b) {
    return output::summary_rank(a) < output::summary_rank(b);
  });
  const std::vector<std::string> primary = primary_first(summary_names, options.primary);

  std::vector<std::vector<const output::SubjectRecord*>> members(groups.size());
  for (std::size_t g = 0; g < groups.size(); ++g) {
    for (const auto& s : subjects)
      if (s.group == groups[g]) members[g].push_back(&s);
    c.groups.push_back(group_result(groups[g], members[g], summary_names, options));
  }
  for (std::size_t g = 1; g < groups.size(); ++g)
    for (auto& t : summary_tests(members[g], members[0], c.groups[g], c.groups[0], summary_names, options))
      c.tests.push_back(std::move(t));
  mark_headlines(c.tests, primary);
  // Benjamini-Hochberg across the whole table.
  std::vector<double> p;
  for (const auto& t : c.tests)
    if (t.row.tested) p.push_back(t.row.result.p_value);
  const auto adjusted = cohort::benjamini_hochberg(p);
  for (std::size_t i = 0, k = 0; i < c.tests.size(); ++i)
    if (c.tests[i].row.tested) c.tests[i].row.p_adjusted = adjusted[k++];
  for (const auto& curve : options.cluster_curves)
    for (std::size_t g = 1; g < groups.size(); ++g)
      c.clusters.push_back(cluster_test(curve, members[g], members[0], groups[g], groups[0], c.density, options));
  c.null_baseline = null_baseline(subjects, c.density);
  c.warnings = null_warnings(subjects);
  if (options.design) c.design = cohort::run_design(output::design_data(subjects, summary_names), *options.design);
  return c;
}

Comparison compare_cohort(const std::string& dir, const CompareOptions& options) {
  namespace fs = std::filesystem;
  // Which subjects: the manifest copy a cohort run leaves, else every subject document.
  struct Listed {
    std::string id, session, group;
  };
  std::vector<Listed> listed;
  const std::string manifest = dir + "/manifest.tsv";
  if (fs::exists(manifest)) {
    const std::vector<ManifestRow> rows = read_manifest(manifest);
    // A covariate must be a column of the manifest: name the file, not a subject.
    for (const auto& c : options.covariates)
      if (!rows.empty() && !rows[0].covariates.contains(c)) {
        std::string known;
        for (auto it = rows[0].covariates.begin(); it != rows[0].covariates.end(); ++it)
          known += (known.empty() ? "" : ", ") + it.key();
        fail(ErrorKind::argument, "compare options: covariate \"" + c + "\" is not a column of the manifest '" + manifest +
                                      "' (covariate columns: " + (known.empty() ? "none" : known) + ")");
      }
    for (const auto& row : rows) listed.push_back({row.subject, row.session, row.group});
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
    for (const auto& name : names) {
      const auto ses = name.find("_ses-");
      listed.push_back({name.substr(0, ses), ses == std::string::npos ? "" : name.substr(ses + 5), ""});
    }
  }
  std::vector<output::SubjectRecord> subjects;
  std::vector<std::string> missing;
  for (const auto& l : listed) {
    const std::string path = dir + "/" + output::subject_prefix(l.id, l.session, "") + "_topology.json";
    if (!fs::exists(path)) {
      missing.push_back(l.session.empty() ? l.id : l.id + " (session " + l.session + ")");
      continue;
    }
    output::SubjectRecord s = output::read_subject_record(path, options.band);
    if (!l.group.empty()) s.group = l.group;
    if (s.group.empty()) fail(ErrorKind::data, "'" + path + "': the subject has no group");
    subjects.push_back(std::move(s));
  }
  if (subjects.empty()) fail(ErrorKind::data, "'" + dir + "' holds no finished subject results");
  Comparison c = compare(subjects, options);
  c.missing = std::move(missing);
  c.provenance = cohort_provenance(dir, options.band, options.given, output::compare_options_json(options));
  return c;
}

Comparison compare_and_write(const std::string& dir, const CompareOptions& options) {
  Comparison c = compare_cohort(dir, options);
  // Both texts first, then the files: a failure leaves neither.
  const std::string tsv = output::group_tests_tsv(c);
  const std::string json = output::comparison_json(c).dump(1) + "\n";
  const auto design_files = c.design ? output::design_files(*c.design) : std::vector<output::NamedText>{};
  io::write_file_atomically(dir + "/group_tests.tsv", tsv);
  io::write_file_atomically(dir + "/group_comparison.json", json);
  for (const auto& [name, text] : design_files) io::write_file_atomically(dir + "/" + name, text);
  // Without a design, a previous run's design tables would no longer match the comparison.
  if (!c.design)
    for (const char* stale : {"/design_tests.tsv", "/design_tests.json"}) std::filesystem::remove(dir + stale);
  return c;
}

}  // namespace critplex::pipeline
