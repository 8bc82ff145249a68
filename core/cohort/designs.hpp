// Study designs as data: paired sessions, two or several groups, a continuous score,
// nuisance covariates and exchangeability blocks, each tested per summary measure (one
// number per subject and session) by permutation of a general linear model.
//
// Method (docs/methods.md, "Study designs"):
//  - Every design is a linear model y = X b + Z g + e with the effect of interest X and
//    the nuisance Z (intercept, covariates). The statistic is pivotal: Student's t when X
//    has one column, F when it has several (Winkler et al. 2014, NeuroImage 92:381-397).
//  - Nuisance is handled by Freedman & Lane (1983, J Bus Econ Stat 1:292-298): the
//    residuals of the reduced model y ~ Z are permuted (or sign-flipped), the reduced
//    fit added back and the full model refitted for every rearrangement. Without
//    covariates this is the ordinary permutation of the data.
//  - paired: one difference per subject (second level minus first level of `within`),
//    tested by sign flipping (symmetric errors); every one of the 2^n flips is enumerated
//    when 2^n <= permutations, else `permutations` random flips.
//  - mixed (2 levels of `within` x the levels of `between`): per subject the difference
//    d (second minus first level) and the mean m of its two rows; "within" tests the mean
//    of d by sign flips with the groups (centred) as nuisance, "interaction" tests d
//    between the groups and "between" tests m between the groups, both by permuting whole
//    subjects (within blocks) - the restricted permutations of a split-plot design.
//  - two_groups, groups, regression: rows are permuted, only within their block when
//    `blocks` names a column; every permutation is enumerated when their number
//    (the product over blocks of the block size factorial) is at most `permutations`.
//  - p-values follow core/cohort/statistics.hpp: exact, the identity is in the null and
//    p = #{null >= observed} / #null; Monte Carlo p = (#{...} + 1) / (m + 1); two-sided
//    for t is min(1, 2 min(p_less, p_greater)); F is one-sided (large values).
// Deterministic for a seed. Research software: not a medical device.
#pragma once

#include <Eigen/Dense>

#include <cstdint>
#include <functional>
#include <limits>
#include <map>
#include <optional>
#include <string>
#include <vector>

#include "base/option_schema.hpp"
#include "cohort/statistics.hpp"

namespace critplex::cohort {

enum class DesignKind { two_groups, paired, groups, regression, mixed };
const char* design_name(DesignKind kind);

struct DesignSpec {
  DesignKind kind = DesignKind::two_groups;
  std::string within = "session";  // paired: the column whose two levels are compared
  std::string between = "group";   // two_groups, groups: the grouping column
  std::vector<std::string> levels;  // order of the levels of within/between (empty: order of appearance)
  std::string score;                // regression: the numeric column
  std::vector<std::string> covariates;
  std::string blocks;               // "" = one block
  std::uint64_t permutations = 9999;
  std::uint64_t seed = 1;
  double confidence = 0.95;
  bool record_permutations = false;  // test hook: keep the rearrangements of the first measure
  std::vector<std::string> curves;   // curves given a cluster test along the density axis
  bool tfce = false;                 // curve tests also threshold-free (curve_statistic "tfce")
};
const OptionSection& design_option_section();
// `where` names the options in messages (e.g. "compare options"), `prefix` is put before
// every key (e.g. "design" for the compare options' section).
DesignSpec parse_design(const Json& design, const std::string& where, const std::string& prefix = "");

// A cluster test along the density axis (freedman_lane_curves, below).
struct CurveTestResult {
  std::vector<double> statistic;  // per point
  double threshold = 0.0;
  std::vector<Cluster> clusters;
  bool exact = false;
  std::uint64_t null_size = 0;
  // With tfce: the enhanced value per point and its p against the largest |value| per
  // rearrangement (empty otherwise).
  std::vector<double> tfce, tfce_p;
};

// One row per subject and session. Text columns: "subject", "session", "group"; every
// other column is numeric (NaN: missing). measures[name][row]: NaN where missing.
struct DesignData {
  std::vector<std::string> subject, session, group;
  std::map<std::string, std::vector<double>> columns;
  std::vector<std::string> measure_names;
  std::vector<std::vector<double>> measures;
  // Curves on a shared density grid: curves[name][row] (empty: the row has none; NaN: no value).
  std::vector<double> density;
  std::map<std::string, std::vector<std::vector<double>>> curves;
};

struct DesignCurveTest {
  std::string curve;
  std::string note;               // why not tested ("" when tested)
  std::size_t n = 0;              // units used
  std::string statistic_name;     // "t" or "F"
  std::vector<double> density;    // points tested (every unit has a value and the values vary)
  std::optional<CurveTestResult> result;
};

struct DesignTest {
  std::string measure;
  // What is tested: "within" (paired), "between" (two_groups, groups), "score"
  // (regression); mixed has three rows per measure: "within", "between", "interaction".
  std::string term;
  bool tested = false;
  std::string note;  // why not tested
  std::size_t n = 0, missing = 0;  // units used (subjects for paired, rows otherwise), left out
  std::string statistic_name;      // "t" or "F"
  double statistic = 0.0, df1 = 1.0, df2 = 0.0;
  double p_value = 1.0, p_parametric = 1.0;
  double p_adjusted = std::numeric_limits<double>::quiet_NaN();  // Benjamini-Hochberg across measures
  bool exact = false;
  std::uint64_t null_size = 0;
  // The estimate: mean difference (paired: second minus first level; two_groups: second
  // group minus first, adjusted for covariates) or slope per unit of score; NaN for groups.
  double estimate = std::numeric_limits<double>::quiet_NaN();
  double estimate_lower = std::numeric_limits<double>::quiet_NaN(), estimate_upper = estimate_lower;
  std::string effect_name;  // "d_z", "hedges_g", "partial_eta_squared", "pearson_r" / "partial_r"
  double effect = std::numeric_limits<double>::quiet_NaN();
  double effect_lower = std::numeric_limits<double>::quiet_NaN(), effect_upper = effect_lower;
  double spearman = std::numeric_limits<double>::quiet_NaN();  // regression without covariates
  double spearman_p = std::numeric_limits<double>::quiet_NaN();
  std::vector<std::string> levels;  // compared levels in order
  std::vector<double> level_means;  // raw means per level
};

struct DesignResult {
  DesignSpec spec;
  std::vector<std::string> levels;
  std::vector<DesignTest> tests;
  // record_permutations: for the first tested measure, each rearrangement as the source
  // row (in the original data numbering) of every position; sign flips as +1/-1 per unit.
  std::vector<std::vector<long long>> recorded;
  std::vector<DesignCurveTest> curve_tests;  // one per spec.curves
  std::vector<std::string> notes;            // cautions about the design (e.g. repeated rows)
};

DesignResult run_design(const DesignData& data, const DesignSpec& spec);

// --- the engine, exposed for tests ----------------------------------------------------
// Freedman-Lane permutation test of the columns X given nuisance Z (either may include the
// intercept; Z may have 0 columns). `blocks`: one label per row (empty: one block).
// sign_flip: rearrangements are sign flips of the reduced residuals, else row permutations
// within blocks. `on_rearrangement`, when set, sees each rearrangement.
struct LinearTestResult {
  double statistic = 0.0, df1 = 1.0, df2 = 0.0, p_value = 1.0, p_parametric = 1.0;
  Eigen::VectorXd coefficients;  // of [X Z]
  Eigen::VectorXd standard_errors;
  double residual_sd = 0.0;  // sqrt(RSS / df2) of the full model
  bool exact = false;
  std::uint64_t null_size = 0;
  // Optional companion statistic counted with the same rearrangements (Spearman rho).
  double companion = std::numeric_limits<double>::quiet_NaN(), companion_p = companion;
};
struct LinearTestOptions {
  bool sign_flip = false;
  std::uint64_t permutations = 9999, seed = 1;
  std::vector<double> blocks;
  std::function<void(const std::vector<long long>&)> on_rearrangement;
  // Optional: statistic of a rearranged y (companion, two-sided, e.g. Spearman rho).
  std::function<double(const Eigen::VectorXd&)> companion;
};
LinearTestResult freedman_lane(const Eigen::VectorXd& y, const Eigen::MatrixXd& x, const Eigen::MatrixXd& z,
                               const LinearTestOptions& options);

// Cluster-mass test along the density axis (Maris & Oostenveld 2007) with the same model
// and rearrangements: y is observations x points; at every point the statistic of the
// design (t or F); clusters are runs of points beyond the threshold (|t| with one sign, or
// F above it) and their mass the sum of the statistic; each cluster's p counts the
// rearrangements whose largest |mass| reaches it. threshold NaN: the two-sided 5% t
// quantile, or the 95% F quantile, at the model's degrees of freedom.
// tfce: also threshold-free cluster enhancement (Smith & Nichols 2009; E = 0.5, H = 2,
// steps of 0.1 in statistic units, extent counted in grid points).
CurveTestResult freedman_lane_curves(const Eigen::MatrixXd& y, const Eigen::MatrixXd& x, const Eigen::MatrixXd& z,
                                     const LinearTestOptions& options,
                                     double threshold = std::numeric_limits<double>::quiet_NaN(), bool tfce = false);
// P(F <= q) = probability, by bisection.
double f_quantile(double probability, double df1, double df2);

}  // namespace critplex::cohort
