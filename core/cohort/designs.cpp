#include "cohort/designs.hpp"

#include <algorithm>
#include <cmath>
#include <numeric>

#include "base/error.hpp"
#include "cohort/statistics.hpp"

namespace critplex::cohort {

const char* design_name(DesignKind kind) {
  switch (kind) {
    case DesignKind::two_groups: return "two_groups";
    case DesignKind::paired: return "paired";
    case DesignKind::groups: return "groups";
    case DesignKind::regression: return "regression";
    case DesignKind::mixed: return "mixed";
  }
  return "?";
}

const OptionSection& design_option_section() {
  static const OptionSection section{
      "compare.design",
      "design options",
      "cpx_cohort_compare and critplex compare (\"design\"), cpx_stats_design_test",
      "A study design tested per summary measure by permutation of a linear model (Freedman-Lane).",
      {{.key = "design", .type = "choice", .choices = {"two_groups", "paired", "groups", "regression", "mixed"},
        .meaning = "paired: sessions of the same subjects (sign flips); two_groups, groups: t or F between groups; "
                   "regression: the slope of a numeric score; mixed: within x between (within, between, interaction)"},
       {.key = "within", .type = "string", .default_value = "session",
        .meaning = "paired: the column whose two levels are compared (second minus first)"},
       {.key = "between", .type = "string", .default_value = "group", .meaning = "two_groups, groups: the grouping column"},
       {.key = "levels", .type = "strings", .default_note = "order of appearance",
        .meaning = "the levels of within (paired and mixed, exactly 2) or of between, in order"},
       {.key = "score", .type = "string", .default_value = "", .meaning = "regression: the numeric column tested"},
       {.key = "covariates", .type = "strings",
        .meaning = "nuisance columns, handled by Freedman-Lane (reduced-model residuals are permuted)"},
       {.key = "blocks", .type = "string", .default_value = "", .default_note = "one block",
        .meaning = "column of exchangeability blocks (e.g. site, or subject for repeated sessions): rows are permuted "
                   "only within their block; sign flips (paired) are not restricted"},
       {.key = "permutations", .type = "integer", .default_value = 9999, .min = 1,
        .meaning = "enumerate every rearrangement when there are at most this many, else this many random ones"},
       {.key = "seed", .type = "integer", .default_value = 1, .min = 0, .meaning = "seed of the random rearrangements"},
       {.key = "confidence", .type = "number", .default_value = 0.95, .min = 0, .max = 1, .min_open = true,
        .max_open = true, .meaning = "level of the intervals of estimates and effect sizes"},
       {.key = "curves", .type = "strings", .default_note = "compare: its cluster_curves; else none",
        .meaning = "curves (chi, betti_1, ...) given a cluster-mass test along the density axis with the design"},
       {.key = "curve_statistic", .type = "choice", .default_value = "cluster_mass", .choices = {"cluster_mass", "tfce"},
        .meaning = "curve tests: cluster mass only, or also threshold-free cluster enhancement per point"},
       {.key = "record_permutations", .type = "boolean", .default_value = false,
        .meaning = "test hook: return the rearrangements used for the first measure"}}};
  return section;
}

DesignSpec parse_design(const Json& design, const std::string& where, const std::string& prefix) {
  SchemaReader r(design, design_option_section(), where, prefix);
  DesignSpec s;
  const bool has_kind = r.has("design");
  const std::string kind = has_kind ? r.choice("design") : "";
  for (DesignKind k :
       {DesignKind::two_groups, DesignKind::paired, DesignKind::groups, DesignKind::regression, DesignKind::mixed})
    if (kind == design_name(k)) s.kind = k;
  s.within = r.text("within");
  s.between = r.text("between");
  s.levels = r.texts("levels");
  s.score = r.text("score");
  s.covariates = r.texts("covariates");
  s.blocks = r.text("blocks");
  s.permutations = static_cast<std::uint64_t>(r.integer("permutations"));
  s.seed = static_cast<std::uint64_t>(r.integer("seed"));
  s.confidence = r.number("confidence");
  s.record_permutations = r.boolean("record_permutations");
  s.curves = r.texts("curves");
  s.tfce = r.choice("curve_statistic") == "tfce";
  r.finish();
  if (!has_kind) r.bad("design", "one of two_groups, paired, groups, regression, mixed");
  if (s.kind == DesignKind::regression && s.score.empty())
    r.bad("score", "a numeric column for the regression design");
  if ((s.kind == DesignKind::paired || s.kind == DesignKind::mixed) && !s.levels.empty() && s.levels.size() != 2)
    r.bad("levels", "exactly two levels of \"" + s.within + "\" for the " + kind + " design");
  return s;
}

namespace {

const double nan_value = std::numeric_limits<double>::quiet_NaN();

std::string known_columns(const DesignData& d) {
  std::string known = "subject, session, group";
  for (const auto& [name, values] : d.columns) known += ", " + name;
  return known;
}

// A numeric column; the message names the design key that asked for it.
const std::vector<double>& numeric_column(const DesignData& d, const std::string& name, const std::string& key) {
  const auto it = d.columns.find(name);
  if (it == d.columns.end())
    fail(ErrorKind::argument, "design: \"" + key + "\" names column \"" + name +
                                  "\", which is not a numeric column (columns: " + known_columns(d) + ")");
  return it->second;
}

// A column as text labels per row ("" where missing): subject, session, group or numeric.
std::vector<std::string> label_column(const DesignData& d, const std::string& name, const std::string& key) {
  if (name == "subject") return d.subject;
  if (name == "session") return d.session;
  if (name == "group") return d.group;
  std::vector<std::string> labels;
  for (double v : numeric_column(d, name, key)) {
    std::string text;
    if (std::isfinite(v)) {
      text = std::to_string(v);
      text.erase(text.find_last_not_of('0') + 1);
      if (!text.empty() && text.back() == '.') text.pop_back();
    }
    labels.push_back(text);
  }
  return labels;
}

std::vector<std::string> level_order(const std::vector<std::string>& labels, const DesignSpec& s, const std::string& key) {
  std::vector<std::string> levels = s.levels;
  if (levels.empty())
    for (const auto& l : labels)
      if (!l.empty() && std::find(levels.begin(), levels.end(), l) == levels.end()) levels.push_back(l);
  for (const auto& l : s.levels)
    if (std::find(labels.begin(), labels.end(), l) == labels.end())
      fail(ErrorKind::argument, "design: \"levels\" names \"" + l + "\", which no row of \"" + key + "\" has");
  return levels;
}

double quantile_two_sided(double confidence, double df) { return student_t_quantile(0.5 + confidence / 2.0, df); }

// Standard normal quantile by bisection on Phi(x) = erfc(-x / sqrt 2) / 2.
double normal_quantile(double probability) {
  double lo = -40.0, hi = 40.0;
  for (int i = 0; i < 200; ++i) {
    const double mid = 0.5 * (lo + hi);
    (0.5 * std::erfc(-mid / std::sqrt(2.0)) < probability ? lo : hi) = mid;
  }
  return 0.5 * (lo + hi);
}

// Average ranks (ties share their mean rank), as scipy.stats.rankdata's default.
Eigen::VectorXd ranks(const Eigen::VectorXd& v) {
  const auto n = static_cast<std::size_t>(v.size());
  std::vector<std::size_t> order(n);
  std::iota(order.begin(), order.end(), 0);
  std::sort(order.begin(), order.end(), [&](std::size_t a, std::size_t b) {
    return v(static_cast<Eigen::Index>(a)) < v(static_cast<Eigen::Index>(b));
  });
  Eigen::VectorXd r(v.size());
  for (std::size_t i = 0; i < n;) {
    std::size_t j = i;
    while (j + 1 < n && v(static_cast<Eigen::Index>(order[j + 1])) == v(static_cast<Eigen::Index>(order[i]))) ++j;
    for (std::size_t k = i; k <= j; ++k) r(static_cast<Eigen::Index>(order[k])) = 0.5 * static_cast<double>(i + j) + 1.0;
    i = j + 1;
  }
  return r;
}

double pearson(const Eigen::VectorXd& a, const Eigen::VectorXd& b) {
  const Eigen::VectorXd ca = a.array() - a.mean(), cb = b.array() - b.mean();
  return ca.dot(cb) / std::sqrt(ca.squaredNorm() * cb.squaredNorm());
}

// The rows one measure's test can use: finite value, covariates, score and block.
struct Selection {
  std::vector<std::size_t> rows;
  std::size_t missing = 0;
};

Eigen::MatrixXd covariate_matrix(const DesignData& d, const DesignSpec& s, const std::vector<std::size_t>& rows) {
  Eigen::MatrixXd m(static_cast<Eigen::Index>(rows.size()), static_cast<Eigen::Index>(s.covariates.size()));
  for (std::size_t c = 0; c < s.covariates.size(); ++c) {
    const auto& column = numeric_column(d, s.covariates[c], "covariates");
    for (std::size_t i = 0; i < rows.size(); ++i)
      m(static_cast<Eigen::Index>(i), static_cast<Eigen::Index>(c)) = column[rows[i]];
  }
  return m;
}

// Block codes per row: the index of the row's label among the labels (NaN: missing).
std::vector<double> block_codes(const DesignData& d, const DesignSpec& s) {
  if (s.blocks.empty()) return {};
  std::vector<std::string> seen;
  std::vector<double> codes;
  for (const auto& label : label_column(d, s.blocks, "blocks")) {
    if (label.empty()) {
      codes.push_back(nan_value);
      continue;
    }
    auto it = std::find(seen.begin(), seen.end(), label);
    if (it == seen.end()) it = seen.insert(seen.end(), label);
    codes.push_back(static_cast<double>(it - seen.begin()));
  }
  return codes;
}

bool row_complete(const DesignData& d, const DesignSpec& s, const std::vector<double>& blocks, std::size_t row) {
  for (const auto& c : s.covariates)
    if (!std::isfinite(numeric_column(d, c, "covariates")[row])) return false;
  if (!blocks.empty() && !std::isfinite(blocks[row])) return false;
  if (s.kind == DesignKind::regression && !std::isfinite(numeric_column(d, s.score, "score")[row])) return false;
  return true;
}

LinearTestOptions engine_options(const DesignSpec& s, const std::vector<double>& blocks,
                                 const std::vector<std::size_t>& rows, std::vector<std::vector<long long>>* record) {
  LinearTestOptions o;
  o.permutations = s.permutations;
  o.seed = s.seed;
  if (!blocks.empty() && s.kind != DesignKind::paired)
    for (std::size_t r : rows) o.blocks.push_back(blocks[r]);
  if (record) {
    const bool flips = s.kind == DesignKind::paired || s.kind == DesignKind::mixed;
    o.on_rearrangement = [record, rows, flips](const std::vector<long long>& perm) {
      std::vector<long long> original(perm.size());
      for (std::size_t i = 0; i < perm.size(); ++i)
        original[i] = flips ? perm[i] : static_cast<long long>(rows[static_cast<std::size_t>(perm[i])]);
      record->push_back(std::move(original));
    };
  }
  return o;
}

bool constant_measure(const std::vector<double>& values) {
  const double* first = nullptr;
  for (const double& v : values)
    if (std::isfinite(v)) {
      if (first == nullptr) first = &v;
      else if (v != *first) return false;
    }
  return true;
}

void fill_estimate(DesignTest& t, const LinearTestResult& r, double confidence) {
  const double q = quantile_two_sided(confidence, r.df2);
  t.estimate = r.coefficients(0);
  t.estimate_lower = t.estimate - q * r.standard_errors(0);
  t.estimate_upper = t.estimate + q * r.standard_errors(0);
}

void fill_common(DesignTest& t, const LinearTestResult& r) {
  t.tested = true;
  t.statistic = r.statistic;
  t.df1 = r.df1;
  t.df2 = r.df2;
  t.p_value = r.p_value;
  t.p_parametric = r.p_parametric;
  t.exact = r.exact;
  t.null_size = r.null_size;
}

// Per subject (in order of appearance): its row at each of the two levels of `within`
// (-1: none). A subject with two rows at one level is an error.
std::vector<std::pair<long, long>> session_pairs(const DesignData& d, const DesignSpec& s,
                                                 const std::vector<std::string>& levels) {
  const auto within = label_column(d, s.within, "within");
  std::vector<std::string> subjects;
  std::vector<std::pair<long, long>> pairs;
  for (std::size_t i = 0; i < d.subject.size(); ++i) {
    const int level = within[i] == levels[0] ? 0 : within[i] == levels[1] ? 1 : -1;
    if (level < 0) continue;
    auto it = std::find(subjects.begin(), subjects.end(), d.subject[i]);
    if (it == subjects.end()) {
      subjects.push_back(d.subject[i]);
      pairs.emplace_back(-1, -1);
      it = subjects.end() - 1;
    }
    auto& slot = pairs[static_cast<std::size_t>(it - subjects.begin())];
    long& target = level == 0 ? slot.first : slot.second;
    if (target >= 0)
      fail(ErrorKind::argument, "design: subject " + d.subject[i] + " has two rows with " + s.within + " \"" +
                                    within[i] + "\"");
    target = static_cast<long>(i);
  }
  return pairs;
}

// paired: one difference per subject, sign-flipped; covariates from the first level's row.
DesignTest paired_test(const DesignData& d, const DesignSpec& s, const std::vector<double>& blocks, std::size_t m,
                       const std::vector<std::string>& levels, std::vector<std::vector<long long>>* record) {
  DesignTest t;
  t.measure = d.measure_names[m];
  t.term = "within";
  t.statistic_name = "t";
  t.levels = levels;
  const auto& y = d.measures[m];
  std::vector<std::size_t> first_rows, second_rows;
  const auto pairs = session_pairs(d, s, levels);
  for (const auto& [a, b] : pairs) {
    const bool complete = a >= 0 && b >= 0 && std::isfinite(y[static_cast<std::size_t>(a)]) &&
                          std::isfinite(y[static_cast<std::size_t>(b)]) && row_complete(d, s, blocks, static_cast<std::size_t>(a));
    if (!complete) {
      ++t.missing;
      continue;
    }
    first_rows.push_back(static_cast<std::size_t>(a));
    second_rows.push_back(static_cast<std::size_t>(b));
  }
  t.n = first_rows.size();
  if (t.n < 2 + s.covariates.size()) {
    t.note = "fewer than " + std::to_string(2 + s.covariates.size()) + " subjects with both levels";
    return t;
  }
  Eigen::VectorXd diff(static_cast<Eigen::Index>(t.n));
  double mean_first = 0.0, mean_second = 0.0;
  for (std::size_t i = 0; i < t.n; ++i) {
    diff(static_cast<Eigen::Index>(i)) = y[second_rows[i]] - y[first_rows[i]];
    mean_first += y[first_rows[i]] / static_cast<double>(t.n);
    mean_second += y[second_rows[i]] / static_cast<double>(t.n);
  }
  t.level_means = {mean_first, mean_second};
  Eigen::MatrixXd z = covariate_matrix(d, s, first_rows);
  z.rowwise() -= z.colwise().mean();  // centred: the intercept is the mean difference at the covariates' mean
  LinearTestOptions o = engine_options(s, blocks, first_rows, record);
  o.sign_flip = true;
  const LinearTestResult r = freedman_lane(diff, Eigen::MatrixXd::Ones(diff.size(), 1), z, o);
  fill_common(t, r);
  fill_estimate(t, r, s.confidence);
  // Cohen's d_z = difference / its sd (residual sd with covariates); interval from the
  // large-sample standard error sqrt(1/n + d^2 / (2n)) (an approximation, common practice).
  t.effect_name = "d_z";
  t.effect = t.estimate / r.residual_sd;
  const double se = std::sqrt(1.0 / static_cast<double>(t.n) + t.effect * t.effect / (2.0 * static_cast<double>(t.n)));
  const double q = quantile_two_sided(s.confidence, r.df2);
  t.effect_lower = t.effect - q * se;
  t.effect_upper = t.effect + q * se;
  return t;
}

// two_groups and groups: indicators of the later levels against the first, intercept and
// covariates as nuisance.
DesignTest groups_test(const DesignData& d, const DesignSpec& s, const std::vector<double>& blocks, std::size_t m,
                       const std::vector<std::string>& levels, std::vector<std::vector<long long>>* record) {
  DesignTest t;
  t.measure = d.measure_names[m];
  t.term = "between";
  t.levels = levels;
  t.statistic_name = levels.size() == 2 ? "t" : "F";
  const auto between = label_column(d, s.between, "between");
  const auto& y = d.measures[m];
  std::vector<std::size_t> rows;
  std::vector<std::size_t> level_of;
  for (std::size_t i = 0; i < y.size(); ++i) {
    const auto it = std::find(levels.begin(), levels.end(), between[i]);
    if (it == levels.end()) continue;
    if (!std::isfinite(y[i]) || !row_complete(d, s, blocks, i)) {
      ++t.missing;
      continue;
    }
    rows.push_back(i);
    level_of.push_back(static_cast<std::size_t>(it - levels.begin()));
  }
  t.n = rows.size();
  std::vector<std::vector<double>> by_level(levels.size());
  for (std::size_t i = 0; i < rows.size(); ++i) by_level[level_of[i]].push_back(y[rows[i]]);
  for (std::size_t l = 0; l < levels.size(); ++l)
    if (by_level[l].size() < 2) {
      t.note = "level \"" + levels[l] + "\" has " + std::to_string(by_level[l].size()) + " usable rows; at least 2 are needed";
      return t;
    }
  for (const auto& v : by_level) t.level_means.push_back(mean(v));
  const auto n = static_cast<Eigen::Index>(rows.size());
  Eigen::MatrixXd x = Eigen::MatrixXd::Zero(n, static_cast<Eigen::Index>(levels.size() - 1));
  for (Eigen::Index i = 0; i < n; ++i)
    if (level_of[static_cast<std::size_t>(i)] > 0) x(i, static_cast<Eigen::Index>(level_of[static_cast<std::size_t>(i)] - 1)) = 1.0;
  Eigen::MatrixXd z(n, static_cast<Eigen::Index>(1 + s.covariates.size()));
  z << Eigen::VectorXd::Ones(n), covariate_matrix(d, s, rows);
  Eigen::VectorXd yv(n);
  for (Eigen::Index i = 0; i < n; ++i) yv(i) = y[rows[static_cast<std::size_t>(i)]];
  const LinearTestResult r = freedman_lane(yv, x, z, engine_options(s, blocks, rows, record));
  fill_common(t, r);
  if (levels.size() == 2) {
    fill_estimate(t, r, s.confidence);
    if (s.covariates.empty()) {
      t.effect_name = "hedges_g";
      t.effect = hedges_g(by_level[1], by_level[0]).hedges_g;
    } else {
      t.effect_name = "standardised_difference";  // adjusted difference / residual sd
      t.effect = t.estimate / r.residual_sd;
    }
  } else {
    t.effect_name = "partial_eta_squared";  // equals eta squared without covariates
    t.effect = r.statistic * r.df1 / (r.statistic * r.df1 + r.df2);
  }
  return t;
}

// regression: the slope of the score, intercept and covariates as nuisance.
DesignTest regression_test(const DesignData& d, const DesignSpec& s, const std::vector<double>& blocks, std::size_t m,
                           std::vector<std::vector<long long>>* record) {
  DesignTest t;
  t.measure = d.measure_names[m];
  t.term = "score";
  t.statistic_name = "t";
  const auto& score = numeric_column(d, s.score, "score");
  const auto& y = d.measures[m];
  std::vector<std::size_t> rows;
  for (std::size_t i = 0; i < y.size(); ++i) {
    if (!std::isfinite(y[i]) || !row_complete(d, s, blocks, i)) {
      ++t.missing;
      continue;
    }
    rows.push_back(i);
  }
  t.n = rows.size();
  if (t.n < 3 + s.covariates.size()) {
    t.note = "fewer than " + std::to_string(3 + s.covariates.size()) + " rows with a value and a score";
    return t;
  }
  const auto n = static_cast<Eigen::Index>(rows.size());
  Eigen::VectorXd yv(n), x(n);
  for (Eigen::Index i = 0; i < n; ++i) {
    yv(i) = y[rows[static_cast<std::size_t>(i)]];
    x(i) = score[rows[static_cast<std::size_t>(i)]];
  }
  Eigen::MatrixXd z(n, static_cast<Eigen::Index>(1 + s.covariates.size()));
  z << Eigen::VectorXd::Ones(n), covariate_matrix(d, s, rows);
  LinearTestOptions o = engine_options(s, blocks, rows, record);
  if (s.covariates.empty()) {
    const Eigen::VectorXd score_ranks = ranks(x);
    o.companion = [score_ranks](const Eigen::VectorXd& v) { return pearson(score_ranks, ranks(v)); };
  }
  const LinearTestResult r = freedman_lane(yv, x, z, o);
  fill_common(t, r);
  fill_estimate(t, r, s.confidence);
  // r from t: exactly Pearson's r without covariates, the partial r with them.
  t.effect_name = s.covariates.empty() ? "pearson_r" : "partial_r";
  t.effect = r.statistic / std::sqrt(r.statistic * r.statistic + r.df2);
  // Fisher z interval (common practice): atanh(r) +- q / sqrt(n - 3 - covariates).
  const double spread = std::sqrt(static_cast<double>(t.n) - 3.0 - static_cast<double>(s.covariates.size()));
  if (spread > 0 && std::fabs(t.effect) < 1.0) {
    const double q = normal_quantile(0.5 + s.confidence / 2.0);
    t.effect_lower = std::tanh(std::atanh(t.effect) - q / spread);
    t.effect_upper = std::tanh(std::atanh(t.effect) + q / spread);
  }
  t.spearman = r.companion;
  t.spearman_p = r.companion_p;
  return t;
}

// mixed: per subject the difference between the two levels of `within` and the mean of
// its two rows; three tests with the restricted rearrangements of a split-plot design.
std::vector<DesignTest> mixed_tests(const DesignData& d, const DesignSpec& s, const std::vector<double>& blocks,
                                    std::size_t m, const std::vector<std::string>& levels,
                                    const std::vector<std::string>& groups, std::vector<std::vector<long long>>* record) {
  const auto& y = d.measures[m];
  const auto between = label_column(d, s.between, "between");
  std::vector<std::size_t> first_rows, group_of;
  std::vector<double> diff, mean_of_two;
  std::size_t missing = 0;
  for (const auto& [a, b] : session_pairs(d, s, levels)) {
    const auto g = a >= 0 ? std::find(groups.begin(), groups.end(), between[static_cast<std::size_t>(a)]) : groups.end();
    if (a < 0 || b < 0 || g == groups.end() || !std::isfinite(y[static_cast<std::size_t>(a)]) ||
        !std::isfinite(y[static_cast<std::size_t>(b)]) || !row_complete(d, s, blocks, static_cast<std::size_t>(a))) {
      ++missing;
      continue;
    }
    first_rows.push_back(static_cast<std::size_t>(a));
    group_of.push_back(static_cast<std::size_t>(g - groups.begin()));
    diff.push_back(y[static_cast<std::size_t>(b)] - y[static_cast<std::size_t>(a)]);
    mean_of_two.push_back(0.5 * (y[static_cast<std::size_t>(a)] + y[static_cast<std::size_t>(b)]));
  }
  const auto n = static_cast<Eigen::Index>(first_rows.size());
  Eigen::MatrixXd indicators = Eigen::MatrixXd::Zero(n, static_cast<Eigen::Index>(groups.size() - 1));
  for (Eigen::Index i = 0; i < n; ++i)
    if (group_of[static_cast<std::size_t>(i)] > 0)
      indicators(i, static_cast<Eigen::Index>(group_of[static_cast<std::size_t>(i)] - 1)) = 1.0;
  const Eigen::MatrixXd covariates = covariate_matrix(d, s, first_rows);
  const Eigen::VectorXd dv = Eigen::Map<const Eigen::VectorXd>(diff.data(), n);
  const Eigen::VectorXd mv = Eigen::Map<const Eigen::VectorXd>(mean_of_two.data(), n);
  std::vector<DesignTest> out;
  for (const char* term : {"within", "between", "interaction"}) {
    DesignTest t;
    t.measure = d.measure_names[m];
    t.term = term;
    t.n = first_rows.size();
    t.missing = missing;
    const bool within_term = t.term == "within";
    t.levels = within_term ? levels : groups;
    std::vector<std::size_t> per_group(groups.size(), 0);
    for (std::size_t g : group_of) ++per_group[g];
    if (*std::min_element(per_group.begin(), per_group.end()) < 2) {
      t.note = "every level of \"" + s.between + "\" needs at least 2 subjects with both levels of \"" + s.within + "\"";
      out.push_back(std::move(t));
      continue;
    }
    Eigen::MatrixXd x, z;
    if (within_term) {  // mean difference, groups and covariates centred as nuisance
      x = Eigen::MatrixXd::Ones(n, 1);
      z.resize(n, indicators.cols() + covariates.cols());
      z << indicators, covariates;
      z.rowwise() -= z.colwise().mean();
    } else {  // differences (interaction) or means (between) across the groups
      x = indicators;
      z.resize(n, 1 + covariates.cols());
      z << Eigen::VectorXd::Ones(n), covariates;
    }
    LinearTestOptions o = engine_options(s, blocks, first_rows, out.empty() ? record : nullptr);
    o.sign_flip = within_term;
    if (within_term) o.blocks.clear();
    LinearTestResult r;
    try {
      r = freedman_lane(t.term == "between" ? mv : dv, x, z, o);
    } catch (const Error& e) {
      if (e.kind() != ErrorKind::data) throw;
      t.note = e.what();
      out.push_back(std::move(t));
      continue;
    }
    fill_common(t, r);
    t.statistic_name = x.cols() == 1 ? "t" : "F";
    if (x.cols() == 1) {
      fill_estimate(t, r, s.confidence);
      t.effect_name = within_term ? "d_z" : "standardised_difference";
      t.effect = t.estimate / r.residual_sd;
    } else {
      t.effect_name = "partial_eta_squared";
      t.effect = r.statistic * r.df1 / (r.statistic * r.df1 + r.df2);
    }
    out.push_back(std::move(t));
  }
  return out;
}

// The model of a curve test: the units (rows; paired: first-level rows with their
// second-level partners), the effect of interest and the nuisance, as the summary tests.
struct CurveModel {
  std::vector<std::size_t> rows, partners;
  Eigen::MatrixXd x, z;
};

CurveModel curve_model(const DesignData& d, const DesignSpec& s, const std::vector<double>& blocks,
                       const std::vector<std::string>& levels, const std::vector<std::vector<double>>& curve) {
  const std::size_t points = d.density.size();
  auto has_curve = [&](std::size_t row) { return curve[row].size() == points && row_complete(d, s, blocks, row); };
  CurveModel m;
  if (s.kind == DesignKind::paired) {
    const auto within = label_column(d, s.within, "within");
    for (std::size_t i = 0; i < d.subject.size(); ++i) {
      if (within[i] != levels[0] || !has_curve(i)) continue;
      for (std::size_t j = 0; j < d.subject.size(); ++j)
        if (d.subject[j] == d.subject[i] && within[j] == levels[1] && curve[j].size() == points) {
          m.rows.push_back(i);
          m.partners.push_back(j);
          break;
        }
    }
    m.x = Eigen::MatrixXd::Ones(static_cast<Eigen::Index>(m.rows.size()), 1);
    m.z = covariate_matrix(d, s, m.rows);
    m.z.rowwise() -= m.z.colwise().mean();
    return m;
  }
  std::vector<std::size_t> level_of;
  const auto between = s.kind == DesignKind::regression ? std::vector<std::string>{} : label_column(d, s.between, "between");
  for (std::size_t i = 0; i < d.subject.size(); ++i) {
    if (!has_curve(i)) continue;
    if (s.kind != DesignKind::regression) {
      const auto it = std::find(levels.begin(), levels.end(), between[i]);
      if (it == levels.end()) continue;
      level_of.push_back(static_cast<std::size_t>(it - levels.begin()));
    }
    m.rows.push_back(i);
  }
  const auto n = static_cast<Eigen::Index>(m.rows.size());
  if (s.kind == DesignKind::regression) {
    m.x.resize(n, 1);
    for (Eigen::Index i = 0; i < n; ++i) m.x(i, 0) = numeric_column(d, s.score, "score")[m.rows[static_cast<std::size_t>(i)]];
  } else {
    m.x = Eigen::MatrixXd::Zero(n, static_cast<Eigen::Index>(levels.size() - 1));
    for (Eigen::Index i = 0; i < n; ++i)
      if (level_of[static_cast<std::size_t>(i)] > 0) m.x(i, static_cast<Eigen::Index>(level_of[static_cast<std::size_t>(i)] - 1)) = 1.0;
  }
  m.z.resize(n, static_cast<Eigen::Index>(1 + s.covariates.size()));
  m.z << Eigen::VectorXd::Ones(n), covariate_matrix(d, s, m.rows);
  return m;
}

DesignCurveTest curve_test(const DesignData& d, const DesignSpec& s, const std::vector<double>& blocks,
                           const std::vector<std::string>& levels, const std::string& name) {
  DesignCurveTest t;
  t.curve = name;
  const auto it = d.curves.find(name);
  if (it == d.curves.end()) {
    t.note = "no subject has the curve \"" + name + "\"";
    return t;
  }
  const CurveModel m = curve_model(d, s, blocks, levels, it->second);
  t.n = m.rows.size();
  t.statistic_name = m.x.cols() == 1 ? "t" : "F";
  // Values per unit (paired: second minus first level), then the points every unit has
  // and where the values vary.
  const std::size_t points = d.density.size();
  Eigen::MatrixXd y(static_cast<Eigen::Index>(t.n), static_cast<Eigen::Index>(points));
  for (std::size_t i = 0; i < t.n; ++i)
    for (std::size_t p = 0; p < points; ++p)
      y(static_cast<Eigen::Index>(i), static_cast<Eigen::Index>(p)) =
          m.partners.empty() ? it->second[m.rows[i]][p] : it->second[m.partners[i]][p] - it->second[m.rows[i]][p];
  std::vector<Eigen::Index> keep;
  for (Eigen::Index p = 0; p < y.cols() && t.n > 0; ++p)
    if (y.col(p).allFinite() && y.col(p).maxCoeff() > y.col(p).minCoeff()) keep.push_back(p);
  if (t.n < 3 + s.covariates.size() || keep.size() < 2) {
    t.note = "fewer than 2 grid points where the curve varies, or too few subjects: not tested";
    return t;
  }
  Eigen::MatrixXd kept(y.rows(), static_cast<Eigen::Index>(keep.size()));
  for (std::size_t k = 0; k < keep.size(); ++k) {
    kept.col(static_cast<Eigen::Index>(k)) = y.col(keep[k]);
    t.density.push_back(d.density[static_cast<std::size_t>(keep[k])]);
  }
  LinearTestOptions o = engine_options(s, blocks, m.rows, nullptr);
  o.sign_flip = s.kind == DesignKind::paired;
  try {
    t.result = freedman_lane_curves(kept, m.x, m.z, o, std::numeric_limits<double>::quiet_NaN(), s.tfce);
  } catch (const Error& e) {
    if (e.kind() != ErrorKind::data) throw;
    t.note = e.what();
  }
  return t;
}

}  // namespace

DesignResult run_design(const DesignData& d, const DesignSpec& s) {
  const std::size_t rows = d.subject.size();
  if (d.session.size() != rows || d.group.size() != rows) fail(ErrorKind::internal, "design data: columns differ in length");
  for (const auto& [name, values] : d.columns)
    if (values.size() != rows) fail(ErrorKind::argument, "design data: column \"" + name + "\" has " +
                                                             std::to_string(values.size()) + " values for " +
                                                             std::to_string(rows) + " rows");
  for (std::size_t m = 0; m < d.measures.size(); ++m)
    if (d.measures[m].size() != rows)
      fail(ErrorKind::argument, "design data: measure \"" + d.measure_names[m] + "\" has " +
                                    std::to_string(d.measures[m].size()) + " values for " + std::to_string(rows) + " rows");
  // Every named column must exist before any test runs.
  for (const auto& c : s.covariates) numeric_column(d, c, "covariates");
  const std::vector<double> blocks = block_codes(d, s);
  if (s.kind == DesignKind::regression) numeric_column(d, s.score, "score");
  DesignResult result;
  result.spec = s;
  std::vector<std::string> groups;
  if (s.kind == DesignKind::mixed) {
    DesignSpec no_levels = s;
    no_levels.levels.clear();
    groups = level_order(label_column(d, s.between, "between"), no_levels, "between");
    if (groups.size() < 2)
      fail(ErrorKind::argument, "design mixed: \"between\" (" + s.between + ") has fewer than 2 levels");
  }
  if (s.kind == DesignKind::paired || s.kind == DesignKind::mixed) {
    result.levels = level_order(label_column(d, s.within, "within"), s, "within");
    if (result.levels.size() != 2)
      fail(ErrorKind::argument, std::string("design ") + design_name(s.kind) + ": \"within\" (" + s.within + ") has " +
                                    std::to_string(result.levels.size()) + " levels; name two in \"levels\"");
  } else if (s.kind != DesignKind::regression) {
    result.levels = level_order(label_column(d, s.between, "between"), s, "between");
    if (s.kind == DesignKind::two_groups && result.levels.size() != 2)
      fail(ErrorKind::argument, "design two_groups: \"between\" (" + s.between + ") has " +
                                    std::to_string(result.levels.size()) + " levels; name two in \"levels\"");
    if (result.levels.size() < 2)
      fail(ErrorKind::argument, "design groups: \"between\" (" + s.between + ") has fewer than 2 levels");
  }
  if (s.kind != DesignKind::paired && s.kind != DesignKind::mixed && s.blocks != "subject") {
    // Rows of one subject are not exchangeable with other subjects' rows.
    std::vector<std::string> seen(d.subject);
    std::sort(seen.begin(), seen.end());
    if (std::adjacent_find(seen.begin(), seen.end()) != seen.end())
      result.notes.push_back("some subjects have several rows (sessions) that are permuted as if independent; "
                             "use \"blocks\": \"subject\", or the paired or mixed design");
  }
  for (std::size_t m = 0; m < d.measures.size(); ++m) {
    auto* record = s.record_permutations && result.recorded.empty() ? &result.recorded : nullptr;
    if (constant_measure(d.measures[m])) {
      // A slope or a difference of a constant is 0 over 0: the fitted statistic would be
      // rounding noise, so the measure is reported, not tested (as compare does).
      DesignTest t;
      t.measure = d.measure_names[m];
      t.note = "every subject has the same value: not tested";
      result.tests.push_back(std::move(t));
      continue;
    }
    if (s.kind == DesignKind::mixed) {
      for (auto& t : mixed_tests(d, s, blocks, m, result.levels, groups, record)) result.tests.push_back(std::move(t));
      continue;
    }
    DesignTest t;
    try {
      t = s.kind == DesignKind::paired       ? paired_test(d, s, blocks, m, result.levels, record)
          : s.kind == DesignKind::regression ? regression_test(d, s, blocks, m, record)
                                             : groups_test(d, s, blocks, m, result.levels, record);
    } catch (const Error& e) {
      // A measure whose usable rows cannot carry the model (e.g. the score is constant
      // among them) is reported as not tested; the other measures still are.
      if (e.kind() != ErrorKind::data) throw;
      t = DesignTest{};
      t.measure = d.measure_names[m];
      t.note = e.what();
      if (record) record->clear();
    }
    result.tests.push_back(std::move(t));
  }
  std::vector<double> p;
  for (const auto& t : result.tests)
    if (t.tested) p.push_back(t.p_value);
  const auto adjusted = benjamini_hochberg(p);
  for (std::size_t i = 0, k = 0; i < result.tests.size(); ++i)
    if (result.tests[i].tested) result.tests[i].p_adjusted = adjusted[k++];
  for (const auto& curve : s.curves) {
    if (s.kind == DesignKind::mixed) {
      result.curve_tests.push_back(DesignCurveTest{curve, "curve tests are not available for the mixed design", 0, "", {}, {}});
      continue;
    }
    result.curve_tests.push_back(curve_test(d, s, blocks, result.levels, curve));
  }
  return result;
}

}  // namespace critplex::cohort
