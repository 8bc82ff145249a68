// Group statistics for a cohort: two groups of subjects, each subject reduced to a
// number (a summary such as the first transition density) or to a curve on a shared
// density grid. Inputs are value types (vectors, subjects x points matrices); nothing
// here reads files. docs/methods.md, "Group statistics".
//
// Conventions (chosen to agree with scipy.stats, which the reference tests use):
//  - Permutation p-values follow scipy.stats.permutation_test: with all relabellings
//    enumerated (exact) the identity relabelling is part of the null and
//    p = #{null >= observed} / #null; with Monte Carlo relabellings
//    p = (#{null >= observed} + 1) / (m + 1) (Phipson & Smyth 2010). Comparisons allow
//    a tolerance of max(1e-14, 1e-14 |observed|) so values equal in exact arithmetic
//    count as equal. Two-sided p = min(1, 2 min(p_less, p_greater)).
//  - A relabelling is a choice of which n_a of the pooled subjects form group a;
//    exact enumeration when C(n_a + n_b, n_a) <= exact_limit, else Monte Carlo.
//  - Percentile bootstrap intervals take numpy's default ("linear") percentile of the
//    resampled statistics at (1 - c)/2 and (1 + c)/2, as scipy.stats.bootstrap does.
//  - Randomness only from the seed in the options (base/random.hpp), so a result is
//    the same for a given seed on every platform.
#pragma once

#include <Eigen/Dense>

#include <cstdint>
#include <limits>
#include <string>
#include <vector>

namespace critplex::cohort {

enum class Statistic { mean_difference, welch_t, student_t };
enum class Alternative { two_sided, less, greater };
Statistic statistic_from_name(const std::string& name);       // "mean_difference", "welch_t", "student_t"
Alternative alternative_from_name(const std::string& name);   // "two_sided", "less", "greater"
const char* statistic_name(Statistic s);
const char* alternative_name(Alternative a);

// --- elementary statistics ------------------------------------------------------------
double mean(const std::vector<double>& x);
double sample_variance(const std::vector<double>& x);  // denominator n - 1
double mean_difference(const std::vector<double>& a, const std::vector<double>& b);  // mean(a) - mean(b)
// Welch's t = (mean a - mean b) / sqrt(s_a^2/n_a + s_b^2/n_b) (Welch 1947).
double welch_t(const std::vector<double>& a, const std::vector<double>& b);
// Student's t with the pooled variance, df = n_a + n_b - 2.
double student_t(const std::vector<double>& a, const std::vector<double>& b);
double compute_statistic(Statistic s, const std::vector<double>& a, const std::vector<double>& b);

// Hedges' g (Hedges 1981): d = (mean a - mean b) / s_pooled, g = J(df) d with the exact
// small-sample correction J(df) = Gamma(df/2) / (sqrt(df/2) Gamma((df-1)/2)), df = n_a + n_b - 2.
struct EffectSize {
  double cohen_d = 0.0;
  double hedges_g = 0.0;
  double correction = 1.0;  // J(df)
};
EffectSize hedges_g(const std::vector<double>& a, const std::vector<double>& b);
double hedges_correction(double df);

// Confidence interval of Hedges' g by the large-sample normal approximation of Hedges &
// Olkin (1985, Statistical Methods for Meta-Analysis, ch. 5):
//   var(g) ~ (n_a + n_b) / (n_a n_b) + g^2 / (2 (n_a + n_b)),  g -/+ z_{(1+c)/2} sqrt(var(g)).
struct Interval {
  double lower = std::numeric_limits<double>::quiet_NaN();
  double upper = std::numeric_limits<double>::quiet_NaN();
};
Interval hedges_g_interval(double g, std::size_t n_a, std::size_t n_b, double confidence);

// Standard normal quantile (inverse of Phi), p in (0, 1); bisection on std::erfc to
// full double precision.
double normal_quantile(double p);

// Student t distribution: lower tail P(T <= t) and its inverse (for cluster thresholds
// and parametric p-values). Via the regularised incomplete beta function (DLMF 8.17).
double student_t_cdf(double t, double df);
double student_t_quantile(double probability, double df);
// Upper tail of the F distribution, P(F > f) = I_{d2/(d2 + d1 f)}(d2/2, d1/2) (DLMF 8.17).
double f_upper_tail(double f, double df1, double df2);

// numpy.percentile with the default linear interpolation; q in [0, 100].
double percentile(std::vector<double> values, double q);

// Benjamini-Hochberg (1995) adjusted p-values (step-up, monotone, capped at 1), in the
// order given.
std::vector<double> benjamini_hochberg(const std::vector<double>& p_values);

// Residuals of y after least-squares regression on an intercept and the covariate
// columns (rows = subjects). Used to remove e.g. age from a summary before testing.
// Errors if the design is rank deficient (a constant or duplicated covariate).
Eigen::VectorXd residualise(const Eigen::VectorXd& y, const Eigen::MatrixXd& covariates);

// z-score of an observed value against a sample of null values (mean and sample sd).
double z_score(double observed, const std::vector<double>& null_values);

// --- permutation test of a group difference -------------------------------------------
struct PermutationOptions {
  Statistic statistic = Statistic::mean_difference;
  Alternative alternative = Alternative::two_sided;
  std::uint64_t exact_limit = 20000;  // enumerate every relabelling when there are at most this many
  std::uint64_t resamples = 9999;     // Monte Carlo relabellings otherwise
  std::uint64_t seed = 1;
};

struct PermutationResult {
  double statistic = 0.0;
  double p_value = 1.0;
  bool exact = false;           // all relabellings enumerated
  std::uint64_t null_size = 0;  // relabellings in the null distribution
  std::vector<double> null_statistics;  // the statistic under each relabelling (null_size of them)
  std::size_t n_a = 0, n_b = 0;
  double mean_a = 0.0, mean_b = 0.0;
  EffectSize effect;
};

// Two groups, each at least 2 finite values.
PermutationResult permutation_test(const std::vector<double>& a, const std::vector<double>& b,
                                   const PermutationOptions& options);

// --- percentile bootstrap band of a mean curve ----------------------------------------
struct BootstrapOptions {
  double confidence = 0.95;
  std::uint64_t resamples = 9999;
  std::uint64_t seed = 1;
};

struct Band {
  std::vector<double> mean, lower, upper;  // one per point
  std::uint64_t resamples = 0;             // bootstrap resamples actually drawn (0: not a bootstrap band)
};

// curves: subjects x points, finite. Resamples whole subjects (rows) with replacement,
// so each resampled mean curve keeps its shape; the interval is pointwise.
Band bootstrap_mean_band(const Eigen::MatrixXd& curves, const BootstrapOptions& options);

// --- cluster-based permutation test along an axis (Maris & Oostenveld 2007) -----------
struct ClusterOptions {
  Statistic statistic = Statistic::student_t;  // student_t or welch_t per point
  // |t| above this forms clusters; NaN: the two-sided 5% quantile of Student's t with
  // n_a + n_b - 2 degrees of freedom.
  double threshold = std::numeric_limits<double>::quiet_NaN();
  std::uint64_t exact_limit = 20000;
  std::uint64_t resamples = 9999;
  std::uint64_t seed = 1;
};

struct Cluster {
  std::size_t first = 0, last = 0;  // point indices, inclusive
  int sign = 1;                     // +1: t above +threshold, -1: below -threshold
  double mass = 0.0;                // sum of t over the cluster
  double p_value = 1.0;             // against the null of the largest |mass| per relabelling
};

struct ClusterResult {
  std::vector<double> t;          // per point
  double threshold = 0.0;
  std::vector<Cluster> clusters;  // in axis order
  bool exact = false;
  std::uint64_t null_size = 0;
};

// a, b: subjects x points with the same number of points (columns).
ClusterResult cluster_permutation_test(const Eigen::MatrixXd& a, const Eigen::MatrixXd& b,
                                       const ClusterOptions& options);

// --- several per-subject summaries at once --------------------------------------------
// Each summary (first transition density, each chi zero, Betti peak positions, curvature
// moments, ...) is tested with permutation_test; Benjamini-Hochberg adjusts across the
// summaries tested. NaN marks a subject without that summary (e.g. chi never changes
// sign), or without a covariate: the subject is left out of that summary's test only. A
// summary with fewer than 2 subjects in a group is reported as not tested. With
// covariates, each summary is first replaced by its residuals on the covariates (pooled
// over both groups, intercept included); the statistic and Hedges' g are then those of
// the residuals. The raw means and standard deviations are always reported, and with
// covariates also the adjusted means: the least-squares fit of value ~ 1 + group +
// covariates evaluated at the covariates' mean (the "estimated marginal means").
struct SummaryComparisonInput {
  std::vector<std::string> names;           // one per summary
  std::vector<std::vector<double>> a, b;    // [summary][subject]
  Eigen::MatrixXd covariates_a, covariates_b;  // subjects x covariates (0 columns: none)
  std::vector<std::string> covariate_names;
  double effect_confidence = 0.95;  // level of the Hedges g interval
};

struct SummaryTestRow {
  std::string summary;
  bool tested = false;
  std::string note;                          // why not tested
  PermutationResult result;                  // when tested (statistic and g of the residuals with covariates)
  double p_adjusted = std::numeric_limits<double>::quiet_NaN();
  std::size_t n_a = 0, n_b = 0;              // subjects used
  std::size_t missing_a = 0, missing_b = 0;  // subjects left out (NaN value or covariate)
  double raw_mean_a = 0, raw_mean_b = 0, raw_sd_a = 0, raw_sd_b = 0;
  double adjusted_mean_a = std::numeric_limits<double>::quiet_NaN();
  double adjusted_mean_b = std::numeric_limits<double>::quiet_NaN();
  bool on_residuals = false;  // statistic, p and g are of the covariate residuals
  Interval g_interval;        // Hedges & Olkin (1985) interval of result.effect.hedges_g
};

std::vector<SummaryTestRow> compare_summaries(const SummaryComparisonInput& input, const PermutationOptions& options);

// Adjusted group means: least squares of y on [1, indicator of group a, covariates], at
// the covariates' mean. Rows: group a's subjects first (n_a of them), then group b's.
// Errors when the design is rank deficient.
std::pair<double, double> adjusted_means(const Eigen::VectorXd& y, std::size_t n_a, const Eigen::MatrixXd& covariates);

}  // namespace critplex::cohort
