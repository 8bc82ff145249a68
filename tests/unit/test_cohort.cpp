// Unit checks of the cohort statistics: counting rules, bounds, determinism, errors.
// The checks against scipy and statsmodels are in tests/reference/test_stats_scipy.py.
#include <catch2/catch.hpp>

#include <cmath>

#include "base/error.hpp"
#include "cohort/statistics.hpp"
#include "check_error.hpp"

using namespace critplex;
using namespace critplex::cohort;

TEST_CASE("exact permutation test enumerates every relabelling", "[cohort]") {
  // 3 vs 3 subjects: C(6, 3) = 20 relabellings; group a holds the 3 largest values, so
  // only the observed labelling reaches the observed difference: one-sided p = 1/20
  // (the exact null includes the observed labelling, as scipy.stats.permutation_test does).
  const std::vector<double> a{4.0, 5.0, 6.0}, b{1.0, 2.0, 3.0};
  PermutationOptions o;
  o.alternative = Alternative::greater;
  const auto r = permutation_test(a, b, o);
  CHECK(r.exact);
  CHECK(r.null_size == 20);
  CHECK(r.statistic == Approx(3.0));
  CHECK(r.p_value == Approx(1.0 / 20.0));
  o.alternative = Alternative::two_sided;
  CHECK(permutation_test(a, b, o).p_value == Approx(2.0 / 20.0));
  o.alternative = Alternative::less;
  CHECK(permutation_test(a, b, o).p_value == Approx(1.0));
}

TEST_CASE("Monte Carlo permutation test is seeded and never returns zero", "[cohort]") {
  std::vector<double> a, b;
  for (int i = 0; i < 30; ++i) {
    a.push_back(10.0 + i * 0.01);
    b.push_back(i * 0.013);
  }
  PermutationOptions o;
  o.resamples = 499;
  o.seed = 42;
  const auto r1 = permutation_test(a, b, o), r2 = permutation_test(a, b, o);
  CHECK_FALSE(r1.exact);
  CHECK(r1.null_size == 499);
  CHECK(r1.p_value == r2.p_value);
  CHECK(r1.p_value == Approx(2.0 / 500.0));  // (0 + 1) / (499 + 1), doubled for two sides
}

TEST_CASE("identical groups give p = 1", "[cohort]") {
  const std::vector<double> a{1.0, 2.0, 3.0, 4.0}, b{1.0, 2.0, 3.0, 4.0};
  CHECK(permutation_test(a, b, {}).p_value == Approx(1.0));
}

TEST_CASE("Benjamini-Hochberg is monotone in p and bounded by 1", "[cohort]") {
  // Hand-worked: p = (0.01, 0.04, 0.03, 0.5), m = 4: sorted 0.01, 0.03, 0.04, 0.5 ->
  // p m / rank = 0.04, 0.06, 0.0533, 0.5 -> cumulative minimum from the top: 0.04, 0.0533, 0.0533, 0.5.
  const auto q = benjamini_hochberg({0.01, 0.04, 0.03, 0.5});
  CHECK(q[0] == Approx(0.04));
  CHECK(q[1] == Approx(0.16 / 3.0));
  CHECK(q[2] == Approx(0.16 / 3.0));
  CHECK(q[3] == Approx(0.5));
  CHECK(benjamini_hochberg({}).empty());
  CHECK_ERROR_KIND(benjamini_hochberg({0.5, 1.5}), ErrorKind::data);
}

TEST_CASE("residuals are orthogonal to the covariates", "[cohort]") {
  Eigen::VectorXd y(6);
  y << 1.0, 2.5, 2.9, 4.2, 5.1, 5.8;
  Eigen::MatrixXd x(6, 1);
  x << 20, 25, 31, 33, 38, 41;
  const Eigen::VectorXd r = residualise(y, x);
  CHECK(std::fabs(r.sum()) < 1e-12);
  CHECK(std::fabs(r.dot(x.col(0))) < 1e-9);
  CHECK_ERROR_KIND(residualise(y, Eigen::MatrixXd::Ones(6, 1)), ErrorKind::data);
}

TEST_CASE("Student t quantile inverts the cdf", "[cohort]") {
  // Known value (common tables): t_{0.975, 10} = 2.228 to three decimals; df = 1 is the
  // Cauchy law, whose 0.75 quantile is exactly 1.
  CHECK(student_t_quantile(0.975, 10) == Approx(2.228).margin(5e-4));
  CHECK(student_t_quantile(0.75, 1) == Approx(1.0).epsilon(1e-12));
  CHECK(student_t_cdf(0.0, 5) == Approx(0.5));
}

TEST_CASE("bootstrap band contains the mean and is seeded", "[cohort]") {
  Eigen::MatrixXd curves(8, 3);
  for (int i = 0; i < 8; ++i)
    for (int j = 0; j < 3; ++j) curves(i, j) = std::sin(i * 1.7 + j) + j;
  BootstrapOptions o;
  o.resamples = 999;
  const auto b1 = bootstrap_mean_band(curves, o), b2 = bootstrap_mean_band(curves, o);
  for (std::size_t j = 0; j < 3; ++j) {
    CHECK(b1.lower[j] <= b1.mean[j]);
    CHECK(b1.mean[j] <= b1.upper[j]);
    CHECK(b1.lower[j] == b2.lower[j]);
  }
  curves(2, 1) = std::nan("");
  CHECK_ERROR_KIND_WITH(bootstrap_mean_band(curves, o), ErrorKind::data, Catch::Contains("subject 3") && Catch::Contains("point 2"));
}

TEST_CASE("cluster test finds a shifted stretch and rejects bad shapes", "[cohort]") {
  Eigen::MatrixXd a(5, 12), b(5, 12);
  for (int i = 0; i < 5; ++i)
    for (int j = 0; j < 12; ++j) {
      a(i, j) = std::sin(i * 2.1 + j * 0.7) * 0.3 + (j >= 4 && j <= 7 ? 3.0 : 0.0);
      b(i, j) = std::cos(i * 1.3 + j * 0.9) * 0.3;
    }
  const auto r = cluster_permutation_test(a, b, {});
  CHECK(r.exact);
  CHECK(r.null_size == 252);  // C(10, 5)
  REQUIRE(!r.clusters.empty());
  CHECK(r.clusters[0].first == 4);
  CHECK(r.clusters[0].last == 7);
  CHECK(r.clusters[0].p_value == Approx(2.0 / 252.0));  // the observed labelling and its mirror
  CHECK_ERROR_KIND(cluster_permutation_test(a, Eigen::MatrixXd::Zero(5, 11), {}), ErrorKind::argument);
}

TEST_CASE("too few subjects is a clear error", "[cohort]") {
  CHECK_ERROR_KIND_WITH(permutation_test({1.0}, {1.0, 2.0}, {}), ErrorKind::data, Catch::Contains("at least 2"));
}

TEST_CASE("several summaries: missing values left out, BH across summaries", "[cohort]") {
  SummaryComparisonInput in;
  in.names = {"first zero", "beta_1 peak"};
  in.a = {{4.0, 5.0, 6.0, std::nan("")}, {1.0, 2.0, 3.0, 4.0}};
  in.b = {{1.0, 2.0, 3.0}, {1.5, 2.5, 3.5}};
  const auto rows = compare_summaries(in, {});
  REQUIRE(rows.size() == 2);
  CHECK(rows[0].missing_a == 1);
  CHECK(rows[0].result.n_a == 3);
  CHECK(rows[0].result.p_value == Approx(2.0 / 20.0));  // as in the exact 3 vs 3 case above
  const auto bh = benjamini_hochberg({rows[0].result.p_value, rows[1].result.p_value});
  CHECK(rows[0].p_adjusted == bh[0]);
  CHECK(rows[1].p_adjusted == bh[1]);
  in.covariates_a = Eigen::MatrixXd::Ones(3, 1);  // 3 rows for 4 subjects
  in.covariates_b = Eigen::MatrixXd::Ones(3, 1);
  CHECK_ERROR_KIND_WITH(compare_summaries(in, {}), ErrorKind::argument, Catch::Contains("first zero"));
}

TEST_CASE("a summary with one value for every subject is not tested", "[cohort]") {
  SummaryComparisonInput in;
  in.names = {"rank", "shifted"};
  in.a = {{0.95, 0.95, 0.95}, {0.95, 0.95, 0.95}};
  in.b = {{0.95, 0.95, 0.95}, {0.85, 0.85, 0.85}};
  in.covariates_a = (Eigen::MatrixXd(3, 1) << 20, 31, 25).finished();
  in.covariates_b = (Eigen::MatrixXd(3, 1) << 22, 29, 35).finished();
  const auto rows = compare_summaries(in, {});
  CHECK_FALSE(rows[0].tested);
  CHECK_THAT(rows[0].note, Catch::Contains("same value"));
  CHECK(rows[1].tested);  // constant within groups but different between them: a test
}

TEST_CASE("the Hedges g interval follows Hedges & Olkin (1985)", "[cohort]") {
  // var(g) = (n1 + n2)/(n1 n2) + g^2/(2 (n1 + n2)); z_0.975 = 1.959963984540054 (standard
  // normal table, common practice). g = 0.8, n = 10 + 12: var = 22/120 + 0.64/44.
  const auto ci = hedges_g_interval(0.8, 10, 12, 0.95);
  const double se = std::sqrt(22.0 / 120.0 + 0.64 / 44.0);
  CHECK(ci.lower == Approx(0.8 - 1.959963984540054 * se).epsilon(1e-13));
  CHECK(ci.upper == Approx(0.8 + 1.959963984540054 * se).epsilon(1e-13));
  CHECK(normal_quantile(0.5) == Approx(0.0).margin(1e-15));
  CHECK_THROWS(normal_quantile(1.0));
}
