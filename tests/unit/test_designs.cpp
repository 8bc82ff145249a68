// Unit checks of the design engine: agreement with the two-group permutation test it
// generalises, counting rules, determinism and errors. The checks against scipy and
// statsmodels are in tests/reference/test_designs.py.
#include <catch2/catch.hpp>

#include <cmath>

#include "base/error.hpp"
#include "cohort/designs.hpp"
#include "cohort/statistics.hpp"

using namespace critplex;
using namespace critplex::cohort;

namespace {
DesignData two_groups(const std::vector<double>& a, const std::vector<double>& b) {
  DesignData d;
  for (std::size_t i = 0; i < a.size() + b.size(); ++i) {
    d.subject.push_back("s" + std::to_string(i));
    d.session.push_back("");
    d.group.push_back(i < a.size() ? "rested" : "deprived");
  }
  d.measure_names = {"m"};
  std::vector<double> y(a);
  y.insert(y.end(), b.begin(), b.end());
  d.measures = {y};
  return d;
}
}  // namespace

TEST_CASE("without covariates, permuting rows gives the two-group permutation test's p", "[designs]") {
  // 3 vs 4: the 7! row permutations visit each of the C(7, 3) = 35 relabellings 3! 4! times.
  const std::vector<double> a{0.21, 0.25, 0.19}, b{0.28, 0.31, 0.24, 0.33};
  DesignSpec s;
  s.kind = DesignKind::two_groups;
  const auto r = run_design(two_groups(a, b), s);
  REQUIRE(r.tests.size() == 1);
  const auto& t = r.tests[0];
  REQUIRE(t.tested);
  CHECK(t.exact);
  CHECK(t.null_size == 5040);
  PermutationOptions po;
  po.statistic = Statistic::student_t;
  const auto ref = permutation_test(b, a, po);  // second level minus first
  CHECK(t.statistic == Approx(ref.statistic).epsilon(1e-12));
  CHECK(t.p_value == Approx(ref.p_value).epsilon(1e-12));
  CHECK(t.estimate == Approx(mean(b) - mean(a)).epsilon(1e-12));
}

TEST_CASE("sign flips: exact below the limit, seeded Monte Carlo above it", "[designs]") {
  Eigen::VectorXd d(10);
  d << 0.3, -0.1, 0.5, 0.2, 0.4, -0.2, 0.6, 0.1, 0.3, 0.2;
  const Eigen::MatrixXd ones = Eigen::MatrixXd::Ones(10, 1), none(10, 0);
  LinearTestOptions o;
  o.sign_flip = true;
  o.permutations = 1024;
  const auto exact = freedman_lane(d, ones, none, o);
  CHECK(exact.exact);
  CHECK(exact.null_size == 1024);
  o.permutations = 500;
  o.seed = 7;
  const auto first = freedman_lane(d, ones, none, o), again = freedman_lane(d, ones, none, o);
  CHECK_FALSE(first.exact);
  CHECK(first.p_value == again.p_value);
  CHECK(std::fabs(first.p_value - exact.p_value) < 0.08);
  o.seed = 8;
  CHECK(freedman_lane(d, ones, none, o).p_value != first.p_value);
}

TEST_CASE("a rank-deficient model is reported, not tested", "[designs]") {
  DesignData d = two_groups({1.0, 2.0, 3.0}, {2.0, 3.0, 4.0});
  d.columns["age"] = {30, 30, 30, 30, 30, 30};  // constant: collinear with the intercept
  DesignSpec s;
  s.kind = DesignKind::two_groups;
  s.covariates = {"age"};
  const auto r = run_design(d, s);
  CHECK_FALSE(r.tests[0].tested);
  CHECK(r.tests[0].note.find("rank deficient") != std::string::npos);
  s.covariates = {"weight"};
  CHECK_THROWS_WITH(run_design(d, s), Catch::Contains("weight"));
}
