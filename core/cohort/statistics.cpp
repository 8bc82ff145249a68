#include "cohort/statistics.hpp"

#include <math.h>

#include <algorithm>
#include <cmath>
#include <functional>
#include <numeric>

#include <Eigen/QR>

#include "base/error.hpp"
#include "base/exact.hpp"
#include "base/numeric.hpp"
#include "base/random.hpp"

namespace critplex::cohort {

namespace {
// log|Gamma(x)| through the reentrant lgamma_r: std::lgamma writes the global signgam,
// a data race when permutation tests run on several threads.
double log_gamma(double x) {
  int sign = 0;
  return ::lgamma_r(x, &sign);
}
}  // namespace


Statistic statistic_from_name(const std::string& name) {
  if (name == "mean_difference") return Statistic::mean_difference;
  if (name == "welch_t") return Statistic::welch_t;
  if (name == "student_t") return Statistic::student_t;
  fail(ErrorKind::argument, "statistic '" + name + "' is not one of mean_difference, welch_t, student_t");
}
Alternative alternative_from_name(const std::string& name) {
  if (name == "two_sided") return Alternative::two_sided;
  if (name == "less") return Alternative::less;
  if (name == "greater") return Alternative::greater;
  fail(ErrorKind::argument, "alternative '" + name + "' is not one of two_sided, less, greater");
}
const char* statistic_name(Statistic s) {
  switch (s) {
    case Statistic::mean_difference: return "mean_difference";
    case Statistic::welch_t: return "welch_t";
    case Statistic::student_t: return "student_t";
  }
  return "?";
}
const char* alternative_name(Alternative a) {
  switch (a) {
    case Alternative::two_sided: return "two_sided";
    case Alternative::less: return "less";
    case Alternative::greater: return "greater";
  }
  return "?";
}

// --- elementary ------------------------------------------------------------------------

double mean(const std::vector<double>& x) {
  if (x.empty()) fail(ErrorKind::data, "mean of an empty sample");
  double s = 0.0;
  for (double v : x) s += v;
  return s / static_cast<double>(x.size());
}

double sample_variance(const std::vector<double>& x) {
  if (x.size() < 2) fail(ErrorKind::data, "variance needs at least 2 values, got " + std::to_string(x.size()));
  const double m = mean(x);
  double s = 0.0;
  for (double v : x) s += (v - m) * (v - m);  // two passes: no cancellation
  return s / static_cast<double>(x.size() - 1);
}

double mean_difference(const std::vector<double>& a, const std::vector<double>& b) { return mean(a) - mean(b); }

double welch_t(const std::vector<double>& a, const std::vector<double>& b) {
  const double se2 = sample_variance(a) / static_cast<double>(a.size()) + sample_variance(b) / static_cast<double>(b.size());
  return mean_difference(a, b) / std::sqrt(se2);
}

static double pooled_variance(const std::vector<double>& a, const std::vector<double>& b) {
  const double na = static_cast<double>(a.size()), nb = static_cast<double>(b.size());
  return ((na - 1.0) * sample_variance(a) + (nb - 1.0) * sample_variance(b)) / (na + nb - 2.0);
}

double student_t(const std::vector<double>& a, const std::vector<double>& b) {
  const double na = static_cast<double>(a.size()), nb = static_cast<double>(b.size());
  return mean_difference(a, b) / std::sqrt(pooled_variance(a, b) * (1.0 / na + 1.0 / nb));
}

double compute_statistic(Statistic s, const std::vector<double>& a, const std::vector<double>& b) {
  switch (s) {
    case Statistic::mean_difference: return mean_difference(a, b);
    case Statistic::welch_t: return welch_t(a, b);
    case Statistic::student_t: return student_t(a, b);
  }
  fail(ErrorKind::internal, "unknown statistic");
}

double hedges_correction(double df) {
  if (!(df > 1.0)) fail(ErrorKind::data, "Hedges' correction needs more than 1 degree of freedom, got " + std::to_string(df));
  return std::exp(log_gamma(df / 2.0) - 0.5 * std::log(df / 2.0) - log_gamma((df - 1.0) / 2.0));
}

double normal_quantile(double p) {
  if (!(p > 0.0 && p < 1.0)) fail(ErrorKind::argument, "normal quantile: probability must be in (0, 1), got " + std::to_string(p));
  // Phi(x) = erfc(-x / sqrt 2) / 2 is increasing; halve [-40, 40] until the ends meet.
  double lo = -40.0, hi = 40.0;
  for (int i = 0; i < 200 && lo < hi; ++i) {
    const double mid = 0.5 * (lo + hi);
    if (mid <= lo || mid >= hi) break;
    (0.5 * std::erfc(-mid / std::sqrt(2.0)) < p ? lo : hi) = mid;
  }
  return 0.5 * (lo + hi);
}

Interval hedges_g_interval(double g, std::size_t n_a, std::size_t n_b, double confidence) {
  if (!(confidence > 0.0 && confidence < 1.0)) fail(ErrorKind::argument, "effect-size interval: confidence must be in (0, 1)");
  Interval out;
  if (!std::isfinite(g) || n_a < 1 || n_b < 1) return out;
  const double na = static_cast<double>(n_a), nb = static_cast<double>(n_b);
  const double se = std::sqrt((na + nb) / (na * nb) + g * g / (2.0 * (na + nb)));
  const double z = normal_quantile(0.5 * (1.0 + confidence));
  out.lower = g - z * se;
  out.upper = g + z * se;
  return out;
}

EffectSize hedges_g(const std::vector<double>& a, const std::vector<double>& b) {
  EffectSize e;
  e.cohen_d = mean_difference(a, b) / std::sqrt(pooled_variance(a, b));
  e.correction = hedges_correction(static_cast<double>(a.size() + b.size()) - 2.0);
  e.hedges_g = e.correction * e.cohen_d;
  return e;
}

// Regularised incomplete beta I_x(a, b) by the continued fraction of DLMF 8.17.22,
// evaluated with the modified Lentz method; the symmetry I_x(a,b) = 1 - I_{1-x}(b,a)
// keeps x on the side where the fraction converges fast. y = 1 - x is passed in
// separately because callers can often compute it without cancellation.
static double incomplete_beta(double x, double y, double a, double b) {
  if (x <= 0.0) return 0.0;
  if (y <= 0.0) return 1.0;
  if (x > (a + 1.0) / (a + b + 2.0)) return 1.0 - incomplete_beta(y, x, b, a);
  const double log_front = a * std::log(x) + b * std::log(y) - std::log(a) -
                           (log_gamma(a) + log_gamma(b) - log_gamma(a + b));
  const double tiny = 1e-300;
  double f = 1.0, c = 1.0, d = 0.0;
  for (int i = 0; i <= 400; ++i) {
    const int m = i / 2;
    double numerator;
    if (i == 0) numerator = 1.0;
    else if (i % 2 == 0) numerator = (m * (b - m) * x) / ((a + 2.0 * m - 1.0) * (a + 2.0 * m));
    else numerator = -((a + m) * (a + b + m) * x) / ((a + 2.0 * m) * (a + 2.0 * m + 1.0));
    d = 1.0 + numerator * d;
    if (std::fabs(d) < tiny) d = tiny;
    d = 1.0 / d;
    c = 1.0 + numerator / c;
    if (std::fabs(c) < tiny) c = tiny;
    const double delta = c * d;
    f *= delta;
    if (std::fabs(1.0 - delta) < 1e-15) break;
  }
  return std::exp(log_front) * (f - 1.0);
}

double student_t_cdf(double t, double df) {
  if (!(df > 0.0)) fail(ErrorKind::argument, "Student t: degrees of freedom must be positive");
  if (std::isnan(t)) return t;
  if (std::isinf(t)) return t > 0 ? 1.0 : 0.0;
  const double tail = 0.5 * incomplete_beta(df / (df + t * t), t * t / (df + t * t), df / 2.0, 0.5);  // P(T > |t|)
  return t > 0 ? 1.0 - tail : tail;
}

double f_upper_tail(double f, double df1, double df2) {
  if (!(df1 > 0.0 && df2 > 0.0)) fail(ErrorKind::argument, "F distribution: degrees of freedom must be positive");
  if (std::isnan(f)) return f;
  if (f <= 0.0) return 1.0;
  if (std::isinf(f)) return 0.0;
  return incomplete_beta(df2 / (df2 + df1 * f), df1 * f / (df2 + df1 * f), df2 / 2.0, df1 / 2.0);
}

double student_t_quantile(double probability, double df) {
  if (!(probability > 0.0 && probability < 1.0))
    fail(ErrorKind::argument, "Student t quantile: probability must be in (0, 1), got " + std::to_string(probability));
  // Bracket then bisect: the cdf is monotone, 200 halvings reach double precision.
  double lo = -1.0, hi = 1.0;
  while (student_t_cdf(lo, df) > probability) lo *= 2.0;
  while (student_t_cdf(hi, df) < probability) hi *= 2.0;
  for (int i = 0; i < 200 && hi - lo > 1e-15 * std::max(1.0, std::fabs(lo)); ++i) {
    const double mid = 0.5 * (lo + hi);
    (student_t_cdf(mid, df) < probability ? lo : hi) = mid;
  }
  return 0.5 * (lo + hi);
}

// numpy's linear percentile of values already in increasing order, q in [0, 100].
static double percentile_of_sorted(const std::vector<double>& values, double q) {
  return quantile_sorted(values, q / 100.0);
}

double percentile(std::vector<double> values, double q) {
  if (values.empty()) fail(ErrorKind::data, "percentile of an empty sample");
  if (!(q >= 0.0 && q <= 100.0)) fail(ErrorKind::argument, "percentile must be in [0, 100], got " + std::to_string(q));
  std::sort(values.begin(), values.end());
  return percentile_of_sorted(values, q);
}

std::vector<double> benjamini_hochberg(const std::vector<double>& p) {
  const std::size_t m = p.size();
  for (std::size_t i = 0; i < m; ++i)
    if (!(p[i] >= 0.0 && p[i] <= 1.0))
      fail(ErrorKind::data, "p-value " + std::to_string(i + 1) + " is " + std::to_string(p[i]) + ", must be in [0, 1]");
  std::vector<std::size_t> order(m);
  std::iota(order.begin(), order.end(), 0);
  std::stable_sort(order.begin(), order.end(), [&](std::size_t i, std::size_t j) { return p[i] < p[j]; });
  std::vector<double> adjusted(m);
  double running = 1.0;
  for (std::size_t r = m; r-- > 0;) {  // from the largest p down: cumulative minimum
    const double value = p[order[r]] * static_cast<double>(m) / static_cast<double>(r + 1);
    running = std::min(running, value);
    adjusted[order[r]] = running;
  }
  return adjusted;
}

Eigen::VectorXd residualise(const Eigen::VectorXd& y, const Eigen::MatrixXd& covariates) {
  if (covariates.rows() != y.size())
    fail(ErrorKind::argument, "covariates have " + std::to_string(covariates.rows()) + " rows for " +
                                  std::to_string(y.size()) + " subjects");
  if (!y.allFinite() || !covariates.allFinite()) fail(ErrorKind::data, "covariates and summaries must be finite");
  Eigen::MatrixXd design(y.size(), covariates.cols() + 1);
  design.col(0).setOnes();
  design.rightCols(covariates.cols()) = covariates;
  if (design.rows() <= design.cols())
    fail(ErrorKind::data, "residualising on " + std::to_string(covariates.cols()) + " covariates needs more than " +
                              std::to_string(design.cols()) + " subjects");
  Eigen::ColPivHouseholderQR<Eigen::MatrixXd> qr(design);
  qr.setThreshold(1e-10);
  if (qr.rank() < design.cols())
    fail(ErrorKind::data, "covariates are collinear with each other or constant (design rank " +
                              std::to_string(qr.rank()) + " < " + std::to_string(design.cols()) + ")");
  const Eigen::VectorXd beta = qr.solve(y);
  return y - design * beta;
}

double z_score(double observed, const std::vector<double>& null_values) {
  const double sd = std::sqrt(sample_variance(null_values));
  if (!(sd > 0.0)) fail(ErrorKind::data, "z-score: the null values have zero spread");
  return (observed - mean(null_values)) / sd;
}

// --- relabellings ----------------------------------------------------------------------

namespace {

void check_sample(const std::vector<double>& x, const char* name) {
  if (x.size() < 2) fail(ErrorKind::data, std::string("group ") + name + " needs at least 2 subjects, got " + std::to_string(x.size()));
  for (std::size_t i = 0; i < x.size(); ++i)
    if (!std::isfinite(x[i]))
      fail(ErrorKind::data, std::string("group ") + name + ", subject " + std::to_string(i + 1) + ": value is not finite");
}

// C(n, k) if it is at most `limit`, else limit + 1 (no overflow for any n).
std::uint64_t combinations_capped(std::uint64_t n, std::uint64_t k, std::uint64_t limit) {
  k = std::min(k, n - k);
  uint128 c = 1;
  for (std::uint64_t i = 1; i <= k; ++i) {
    c = c * (n - k + i) / i;  // exact: a product of i consecutive integers is divisible by i!
    if (c > limit) return limit + 1;
  }
  return static_cast<std::uint64_t>(c);
}

// Calls visit(members of a) for every relabelling: all C(n, n_a) subsets in lexicographic
// order (the first is the observed labelling) or `resamples` random ones.
struct Relabellings {
  bool exact = false;
  std::uint64_t count = 0;
};
Relabellings for_each_relabelling(std::size_t n, std::size_t n_a, std::uint64_t exact_limit, std::uint64_t resamples,
                                  std::uint64_t seed, const std::function<void(const std::vector<std::size_t>&)>& visit) {
  Relabellings r;
  const std::uint64_t total = combinations_capped(n, n_a, exact_limit);
  std::vector<std::size_t> members(n_a);
  if (total <= exact_limit) {
    r.exact = true;
    std::iota(members.begin(), members.end(), 0);
    while (true) {
      visit(members);
      ++r.count;
      std::size_t i = n_a;
      while (i > 0 && members[i - 1] == n - n_a + i - 1) --i;
      if (i == 0) break;
      ++members[i - 1];
      for (std::size_t j = i; j < n_a; ++j) members[j] = members[j - 1] + 1;
    }
    return r;
  }
  if (resamples == 0) fail(ErrorKind::argument, "resamples must be at least 1");
  Random random(seed);
  std::vector<std::size_t> order(n);
  for (std::uint64_t m = 0; m < resamples; ++m) {
    std::iota(order.begin(), order.end(), 0);
    random.shuffle(order);
    std::copy(order.begin(), order.begin() + static_cast<std::ptrdiff_t>(n_a), members.begin());
    std::sort(members.begin(), members.end());
    visit(members);
    ++r.count;
  }
  return r;
}

void split(const std::vector<double>& pooled, const std::vector<std::size_t>& members, std::vector<double>& a,
           std::vector<double>& b) {
  a.clear();
  b.clear();
  std::size_t next = 0;
  for (std::size_t i = 0; i < pooled.size(); ++i) {
    if (next < members.size() && members[next] == i) {
      a.push_back(pooled[i]);
      ++next;
    } else {
      b.push_back(pooled[i]);
    }
  }
}

double tolerance(double observed) { return std::max(1e-14, std::fabs(1e-14 * observed)); }

}  // namespace

PermutationResult permutation_test(const std::vector<double>& a, const std::vector<double>& b,
                                   const PermutationOptions& options) {
  check_sample(a, "a");
  check_sample(b, "b");
  PermutationResult result;
  result.n_a = a.size();
  result.n_b = b.size();
  result.mean_a = mean(a);
  result.mean_b = mean(b);
  result.effect = hedges_g(a, b);
  result.statistic = compute_statistic(options.statistic, a, b);
  const double gamma = tolerance(result.statistic);

  std::vector<double> pooled(a);
  pooled.insert(pooled.end(), b.begin(), b.end());
  std::uint64_t at_most = 0, at_least = 0;
  std::vector<double> xa, xb;
  const Relabellings r = for_each_relabelling(pooled.size(), a.size(), options.exact_limit, options.resamples,
                                              options.seed, [&](const std::vector<std::size_t>& members) {
                                                split(pooled, members, xa, xb);
                                                const double s = compute_statistic(options.statistic, xa, xb);
                                                result.null_statistics.push_back(s);
                                                if (s <= result.statistic + gamma) ++at_most;
                                                if (s >= result.statistic - gamma) ++at_least;
                                              });
  result.exact = r.exact;
  result.null_size = r.count;
  const double adjustment = r.exact ? 0.0 : 1.0;
  const double denominator = static_cast<double>(r.count) + adjustment;
  const double p_less = (static_cast<double>(at_most) + adjustment) / denominator;
  const double p_greater = (static_cast<double>(at_least) + adjustment) / denominator;
  switch (options.alternative) {
    case Alternative::less: result.p_value = p_less; break;
    case Alternative::greater: result.p_value = p_greater; break;
    case Alternative::two_sided: result.p_value = std::min(1.0, 2.0 * std::min(p_less, p_greater)); break;
  }
  return result;
}

Band bootstrap_mean_band(const Eigen::MatrixXd& curves, const BootstrapOptions& options) {
  const Eigen::Index n = curves.rows(), points = curves.cols();
  if (n < 2) fail(ErrorKind::data, "a bootstrap band needs at least 2 subjects, got " + std::to_string(n));
  if (!(options.confidence > 0.0 && options.confidence < 1.0))
    fail(ErrorKind::argument, "confidence must be in (0, 1), got " + std::to_string(options.confidence));
  if (options.resamples < 2) fail(ErrorKind::argument, "resamples must be at least 2");
  for (Eigen::Index i = 0; i < n; ++i)
    for (Eigen::Index j = 0; j < points; ++j)
      if (!std::isfinite(curves(i, j)))
        fail(ErrorKind::data, "curve of subject " + std::to_string(i + 1) + " is not finite at point " + std::to_string(j + 1));
  Band band;
  band.mean.resize(static_cast<std::size_t>(points));
  for (Eigen::Index j = 0; j < points; ++j) band.mean[static_cast<std::size_t>(j)] = curves.col(j).mean();
  const auto resamples = static_cast<Eigen::Index>(options.resamples);
  // Subjects as columns and resamples as columns, so every inner loop runs over
  // contiguous memory (Eigen is column-major).
  const Eigen::MatrixXd by_subject = curves.transpose();
  Eigen::MatrixXd means(points, resamples);
  Random random(options.seed);
  for (Eigen::Index r = 0; r < resamples; ++r) {
    auto sum = means.col(r);
    sum.setZero();
    for (Eigen::Index i = 0; i < n; ++i) sum += by_subject.col(static_cast<Eigen::Index>(random.below(static_cast<std::uint64_t>(n))));
    sum /= static_cast<double>(n);
    ++band.resamples;  // counted as drawn, so the reported number is the one used
  }
  const double alpha = (1.0 - options.confidence) / 2.0;
  band.lower.resize(band.mean.size());
  band.upper.resize(band.mean.size());
  std::vector<double> column(static_cast<std::size_t>(resamples));
  for (Eigen::Index j = 0; j < points; ++j) {
    for (Eigen::Index r = 0; r < resamples; ++r) column[static_cast<std::size_t>(r)] = means(j, r);
    std::sort(column.begin(), column.end());
    band.lower[static_cast<std::size_t>(j)] = percentile_of_sorted(column, alpha * 100.0);
    band.upper[static_cast<std::size_t>(j)] = percentile_of_sorted(column, (1.0 - alpha) * 100.0);
  }
  return band;
}

// --- cluster-based permutation -----------------------------------------------------------

namespace {

std::vector<double> pointwise_t(const Eigen::MatrixXd& pooled, const std::vector<std::size_t>& members, Statistic s,
                                std::vector<double>& xa, std::vector<double>& xb) {
  std::vector<double> t(static_cast<std::size_t>(pooled.cols()));
  std::vector<double> column(static_cast<std::size_t>(pooled.rows()));
  for (Eigen::Index j = 0; j < pooled.cols(); ++j) {
    for (Eigen::Index i = 0; i < pooled.rows(); ++i) column[static_cast<std::size_t>(i)] = pooled(i, j);
    split(column, members, xa, xb);
    const double v = compute_statistic(s, xa, xb);
    // A point where both groups are constant (e.g. chi = N at density 0) carries no
    // evidence; 0/0 becomes 0 rather than NaN.
    t[static_cast<std::size_t>(j)] = std::isnan(v) ? 0.0 : v;
  }
  return t;
}

std::vector<Cluster> find_clusters(const std::vector<double>& t, double threshold) {
  std::vector<Cluster> clusters;
  for (std::size_t j = 0; j < t.size();) {
    const int sign = t[j] > threshold ? 1 : (t[j] < -threshold ? -1 : 0);
    if (sign == 0) {
      ++j;
      continue;
    }
    Cluster c;
    c.first = j;
    c.sign = sign;
    while (j < t.size() && (sign > 0 ? t[j] > threshold : t[j] < -threshold)) c.mass += t[j++];
    c.last = j - 1;
    clusters.push_back(c);
  }
  return clusters;
}

double largest_mass(const std::vector<Cluster>& clusters) {
  double m = 0.0;
  for (const auto& c : clusters) m = std::max(m, std::fabs(c.mass));
  return m;
}

}  // namespace

ClusterResult cluster_permutation_test(const Eigen::MatrixXd& a, const Eigen::MatrixXd& b, const ClusterOptions& options) {
  if (a.cols() != b.cols())
    fail(ErrorKind::argument, "the groups' curves have different lengths (" + std::to_string(a.cols()) + " and " +
                                  std::to_string(b.cols()) + " points)");
  if (a.rows() < 2 || b.rows() < 2) fail(ErrorKind::data, "each group needs at least 2 subjects");
  if (options.statistic == Statistic::mean_difference)
    fail(ErrorKind::argument, "the cluster test needs a t statistic (student_t or welch_t)");
  if (!a.allFinite() || !b.allFinite()) fail(ErrorKind::data, "curves must be finite");
  ClusterResult result;
  result.threshold = options.threshold;
  if (std::isnan(result.threshold))
    result.threshold = student_t_quantile(0.975, static_cast<double>(a.rows() + b.rows() - 2));
  if (!(result.threshold > 0.0)) fail(ErrorKind::argument, "cluster threshold must be positive");

  Eigen::MatrixXd pooled(a.rows() + b.rows(), a.cols());
  pooled << a, b;
  const auto n = static_cast<std::size_t>(pooled.rows()), n_a = static_cast<std::size_t>(a.rows());
  std::vector<double> xa, xb;
  std::vector<std::size_t> identity(n_a);
  std::iota(identity.begin(), identity.end(), 0);
  result.t = pointwise_t(pooled, identity, options.statistic, xa, xb);
  result.clusters = find_clusters(result.t, result.threshold);

  std::vector<double> null_max;
  const Relabellings r = for_each_relabelling(n, n_a, options.exact_limit, options.resamples, options.seed,
                                              [&](const std::vector<std::size_t>& members) {
                                                const auto t = pointwise_t(pooled, members, options.statistic, xa, xb);
                                                null_max.push_back(largest_mass(find_clusters(t, result.threshold)));
                                              });
  result.exact = r.exact;
  result.null_size = r.count;
  const double adjustment = r.exact ? 0.0 : 1.0;
  for (auto& c : result.clusters) {
    const double observed = std::fabs(c.mass), gamma = tolerance(observed);
    std::uint64_t at_least = 0;
    for (double m : null_max) at_least += m >= observed - gamma ? 1 : 0;
    c.p_value = std::min(1.0, (static_cast<double>(at_least) + adjustment) / (static_cast<double>(r.count) + adjustment));
  }
  return result;
}

std::pair<double, double> adjusted_means(const Eigen::VectorXd& y, std::size_t n_a, const Eigen::MatrixXd& covariates) {
  const Eigen::Index n = y.size(), k = covariates.cols();
  Eigen::MatrixXd x(n, k + 2);
  x.col(0).setOnes();
  for (Eigen::Index i = 0; i < n; ++i) x(i, 1) = i < static_cast<Eigen::Index>(n_a) ? 1.0 : 0.0;
  // Centred covariates put the intercept and the group term at the covariates' mean.
  for (Eigen::Index c = 0; c < k; ++c) x.col(c + 2) = covariates.col(c).array() - covariates.col(c).mean();
  const Eigen::ColPivHouseholderQR<Eigen::MatrixXd> qr(x);
  if (qr.rank() < x.cols())
    fail(ErrorKind::data, "adjusted means: the design (intercept, group, covariates) is rank deficient; a covariate "
                          "is constant, duplicated or confounded with the group");
  const Eigen::VectorXd beta = qr.solve(y);
  return {beta(0) + beta(1), beta(0)};
}

std::vector<SummaryTestRow> compare_summaries(const SummaryComparisonInput& in, const PermutationOptions& options) {
  const std::size_t count = in.names.size();
  if (in.a.size() != count || in.b.size() != count)
    fail(ErrorKind::argument, "summaries: " + std::to_string(count) + " names but " + std::to_string(in.a.size()) +
                                  " and " + std::to_string(in.b.size()) + " value lists");
  const bool adjust = in.covariates_a.cols() > 0 || in.covariates_b.cols() > 0;
  if (adjust && in.covariates_a.cols() != in.covariates_b.cols())
    fail(ErrorKind::argument, "covariates: the groups have different numbers of covariate columns");
  std::vector<SummaryTestRow> rows;
  std::vector<double> p_values;
  for (std::size_t s = 0; s < count; ++s) {
    const auto& va = in.a[s];
    const auto& vb = in.b[s];
    if (adjust && (static_cast<Eigen::Index>(va.size()) != in.covariates_a.rows() ||
                   static_cast<Eigen::Index>(vb.size()) != in.covariates_b.rows()))
      fail(ErrorKind::argument, "summary '" + in.names[s] + "': " + std::to_string(va.size()) + " + " +
                                    std::to_string(vb.size()) + " subjects but covariates for " +
                                    std::to_string(in.covariates_a.rows()) + " + " + std::to_string(in.covariates_b.rows()));
    SummaryTestRow row;
    row.summary = in.names[s];
    // The subjects with a value and, when adjusting, every covariate.
    auto usable = [&](const std::vector<double>& v, const Eigen::MatrixXd& cov, std::size_t i) {
      return !std::isnan(v[i]) && (!adjust || cov.row(static_cast<Eigen::Index>(i)).allFinite());
    };
    std::vector<double> xa, xb;
    std::vector<Eigen::Index> keep_a, keep_b;
    for (std::size_t i = 0; i < va.size(); ++i)
      if (usable(va, in.covariates_a, i)) xa.push_back(va[i]), keep_a.push_back(static_cast<Eigen::Index>(i));
      else ++row.missing_a;
    for (std::size_t i = 0; i < vb.size(); ++i)
      if (usable(vb, in.covariates_b, i)) xb.push_back(vb[i]), keep_b.push_back(static_cast<Eigen::Index>(i));
      else ++row.missing_b;
    row.n_a = xa.size();
    row.n_b = xb.size();
    if (xa.size() < 2 || xb.size() < 2) {
      row.note = "fewer than 2 subjects with a value in a group: not tested";
      rows.push_back(row);
      continue;
    }
    row.raw_mean_a = mean(xa);
    row.raw_mean_b = mean(xb);
    row.raw_sd_a = std::sqrt(sample_variance(xa));
    row.raw_sd_b = std::sqrt(sample_variance(xb));
    // One value for every subject: nothing to test (covariate residuals would be rounding noise).
    const auto same = [&](double x) { return x == xa.front(); };
    if (std::all_of(xa.begin(), xa.end(), same) && std::all_of(xb.begin(), xb.end(), same)) {
      row.note = "every subject has the same value: not tested";
      rows.push_back(row);
      continue;
    }
    try {
      if (adjust) {
        const auto na = static_cast<Eigen::Index>(xa.size()), nb = static_cast<Eigen::Index>(xb.size());
        Eigen::VectorXd y(na + nb);
        Eigen::MatrixXd x(na + nb, in.covariates_a.cols());
        for (Eigen::Index i = 0; i < na; ++i) y(i) = xa[static_cast<std::size_t>(i)], x.row(i) = in.covariates_a.row(keep_a[static_cast<std::size_t>(i)]);
        for (Eigen::Index i = 0; i < nb; ++i) y(na + i) = xb[static_cast<std::size_t>(i)], x.row(na + i) = in.covariates_b.row(keep_b[static_cast<std::size_t>(i)]);
        std::tie(row.adjusted_mean_a, row.adjusted_mean_b) = adjusted_means(y, xa.size(), x);
        const Eigen::VectorXd r = residualise(y, x);
        for (Eigen::Index i = 0; i < na; ++i) xa[static_cast<std::size_t>(i)] = r(i);
        for (Eigen::Index i = 0; i < nb; ++i) xb[static_cast<std::size_t>(i)] = r(na + i);
      }
      row.result = permutation_test(xa, xb, options);
      row.on_residuals = adjust;
      row.g_interval = hedges_g_interval(row.result.effect.hedges_g, xa.size(), xb.size(), in.effect_confidence);
    } catch (const Error& e) {
      fail(e.kind(), "summary '" + in.names[s] + "': " + e.what());
    }
    row.tested = true;
    p_values.push_back(row.result.p_value);
    rows.push_back(row);
  }
  const auto adjusted = benjamini_hochberg(p_values);
  for (std::size_t s = 0, k = 0; s < rows.size(); ++s)
    if (rows[s].tested) rows[s].p_adjusted = adjusted[k++];
  return rows;
}

}  // namespace critplex::cohort
