// Unit tests of the transitions stage: sign changes of chi, Betti crossings and peaks,
// the Erdos-Renyi closed forms and their zeros.
#include <catch2/catch.hpp>

#include <cmath>

#include "base/error.hpp"
#include "transitions/random_graph.hpp"
#include "output/sweep.hpp"
#include "transitions/analysis.hpp"
#include "transitions/transitions.hpp"
#include "check_error.hpp"

using namespace critplex;
using namespace critplex::transitions;

TEST_CASE("sign changes located by linear interpolation", "[transitions]") {
  // reference: linear interpolation root rho_l + (rho_r - rho_l) chi_l / (chi_l - chi_r) (common practice)
  std::vector<double> rho{0.0, 0.1, 0.2, 0.3, 0.4, 0.5, 0.6};
  std::vector<double> chi{10, 4, -2, -5, 0, -1, 3};
  auto c = sign_changes(rho, chi);
  REQUIRE(c.size() == 3);
  CHECK(c[0].density == Approx(0.1 + 0.1 * 4.0 / 6.0));
  CHECK(c[0].direction == -1);
  CHECK_FALSE(c[0].touch);
  CHECK(c[1].touch);               // -5, 0, -1: touches zero at 0.4, same sign after
  CHECK(c[1].density == Approx(0.4));
  CHECK(c[2].density == Approx(0.5 + 0.1 * 1.0 / 4.0));
  CHECK(c[2].direction == +1);
  // A zero run inside a real sign change: bracket by the non-zero neighbours.
  auto d = sign_changes({0, 1, 2, 3}, {2, 0, 0, -2});
  REQUIRE(d.size() == 1);
  CHECK(d[0].density == Approx(1.5));
  CHECK(d[0].left == 0);
  CHECK(d[0].right == 3);
  // NaN points are skipped, bad axes are errors.
  CHECK(sign_changes({0, 1, 2}, {1, std::nan(""), -1}).size() == 1);
  CHECK_ERROR_KIND(sign_changes({0, 1}, {1}), ErrorKind::argument);
  CHECK_ERROR_KIND(sign_changes({1, 0}, {1, -1}), ErrorKind::argument);
  auto l = log_abs({-std::exp(2.0), 0.0});
  CHECK(l[0] == Approx(2.0));
  CHECK(std::isinf(l[1]));
}

TEST_CASE("Betti crossings and peaks", "[transitions]") {
  // Hand-made Betti table: beta_0 falls, beta_1 rises then falls, beta_2 appears late.
  std::vector<double> rho{0.0, 0.1, 0.2, 0.3, 0.4};
  std::vector<std::vector<double>> betti{{10, 0, 0}, {6, 2, 0}, {2, 5, 0}, {1, 5, 1}, {1, 0, 3}};
  auto x = betti_crossings(rho, betti);
  // beta_0 - beta_1: 10, 4, -3, -4, 1: crossings at 0.1 + 0.1 * 4/7 (down) and 0.3 + 0.1 * 4/5 (up)
  // beta_1 - beta_2: 0, 2, 5, 4, -3: starts at 0 (no bracket), down between 0.3 and 0.4
  REQUIRE(x.size() == 3);
  CHECK(x[0].k == 0);
  CHECK(x[0].crossing.density == Approx(0.1 + 0.1 * 4.0 / 7.0));
  CHECK(x[0].crossing.direction == -1);
  CHECK(x[1].k == 0);
  CHECK(x[1].crossing.direction == +1);
  CHECK(x[2].k == 1);
  CHECK(x[2].crossing.density == Approx(0.3 + 0.1 * 4.0 / 7.0));
  auto p = betti_peaks(rho, betti);
  REQUIRE(p.size() == 3);
  CHECK(p[0].density == 0.0);
  CHECK(p[1].value == 5);
  CHECK(p[1].density == Approx(0.2));
  CHECK(p[1].last_density == Approx(0.3));
  CHECK(p[2].density == Approx(0.4));
}

namespace {
// E[chi] of G(N, p) for p = 1/2 summed exactly in rationals over 2^(N(N-1)/2) (N small).
// reference: docs/methods.md E[chi] = sum_k (-1)^(k-1) C(N,k) p^(k(k-1)/2) (closed form, exact here)
double exact_expected_chi_half(int n) {
  long double sum = 0;  // terms are exact binary fractions; N <= 12 keeps them exact in 64-bit mantissa
  long double binom = 1;
  for (int k = 1; k <= n; ++k) {
    binom = binom * (n - k + 1) / k;
    const long double term = std::ldexp(binom, -k * (k - 1) / 2);
    sum += (k % 2 == 1) ? term : -term;
  }
  return static_cast<double>(sum);
}
}  // namespace

TEST_CASE("Erdos-Renyi closed forms", "[transitions]") {
  for (int n : {2, 5, 8, 12}) CHECK(expected_chi(static_cast<std::size_t>(n), 0.5).value == exact_expected_chi_half(n));
  // Boundaries: p = 0 gives N isolated points, p = 1 a simplex (chi 1, kappa 1/N).
  CHECK(expected_chi(40, 0.0).value == 40.0);
  CHECK(expected_chi(40, 1.0).value == 1.0);
  CHECK(expected_kappa(40, 0.0).value == 1.0);
  CHECK(expected_kappa(40, 1.0).value == Approx(1.0 / 40));
  // Gauss-Bonnet in expectation: N E[kappa] = E[chi] (C(N-1,k)/(k+1) = C(N,k+1)/N).
  for (std::size_t n : {50u, 200u, 1000u})
    for (double p : {0.003, 0.05, 0.3, 0.6}) {
      auto a = expected_chi(n, p), b = expected_kappa(n, p);
      REQUIRE(a.reliable);
      CHECK(static_cast<double>(n) * b.value == Approx(a.value).epsilon(1e-13));
    }
  // N = 1000, p = 0.9: double precision keeps no digit here (terms near 1e30 times the
  // value); the paired binary128 sum still bounds its error well below double rounding.
  auto hard = expected_chi(1000, 0.9);
  CHECK(hard.reliable);
  CHECK(hard.relative_error_bound < 1e-20);
  CHECK_ERROR_KIND(expected_chi(10, 1.5), ErrorKind::argument);
}

TEST_CASE("zeros of E[chi] and E[kappa] coincide and bracket sign changes", "[transitions]") {
  RandomGraphZeros z = random_graph_zeros(50, 0.9, 400);
  REQUIRE(z.chi_zeros.size() >= 3);
  REQUIRE(z.chi_zeros.size() == z.kappa_zeros.size());
  // The first zero: E[chi] ~ N - N^2 p / 2 changes sign near p = 2 / N (common practice estimate).
  CHECK(z.chi_zeros[0] > 1.0 / 50);
  CHECK(z.chi_zeros[0] < 4.0 / 50);
  CHECK(z.chi_directions[0] == -1);
  for (std::size_t i = 0; i < z.chi_zeros.size(); ++i) {
    CHECK(z.kappa_zeros[i] == Approx(z.chi_zeros[i]).epsilon(1e-12));
    const double h = 1e-9 * z.chi_zeros[i];
    const double left = expected_chi(50, z.chi_zeros[i] - h).value, right = expected_chi(50, z.chi_zeros[i] + h).value;
    CHECK((left > 0) != (right > 0));
    if (i > 0) CHECK(z.chi_directions[i] == -z.chi_directions[i - 1]);
  }
  CHECK_ERROR_KIND(random_graph_zeros(1, 0.5), ErrorKind::argument);
  CHECK_ERROR_KIND(random_graph_zeros(10, 0.0), ErrorKind::argument);
}

TEST_CASE("transitions record and TSV", "[transitions]") {
  Curves cv;
  cv.density = {0.0, 0.1, 0.2, 0.3};
  cv.chi = {20, 5, -3, -8};
  cv.chi_exact = {20, 5, -3, -8};
  cv.kappa_mean = {1.0, 0.25, -0.15, -0.4};
  cv.kappa_sd = cv.kappa_skewness = cv.kappa_kurtosis = cv.forman_mean = {0, 0, 0, 0};
  Options o;
  o.scan_points = 200;
  const Analysis a = analyse(cv, 20, o);
  REQUIRE(a.chi_zeros().size() == 1);
  CHECK(a.first_chi_zero() == Approx(0.1 + 0.1 * 5.0 / 8.0));
  const Json j = output::transitions_section(a, cv.density);
  REQUIRE(j["chi_zeros"].size() == 1);
  const double rho = 0.1 + 0.1 * 5.0 / 8.0;
  CHECK(j["first_chi_zero"].get<double>() == Approx(rho));
  CHECK(j["chi_zeros"][0]["left_exact"] == "5");
  // kappa_mean = chi / N here, so its interpolated value at the zero is 0.
  CHECK(j["summary"][0]["curvature"]["kappa_mean"].get<double>() == Approx(0.0).margin(1e-15));
  CHECK(j["random_graph"]["chi_zeros"].size() >= 1);
  std::string tsv = output::transitions_tsv(a, cv.density);
  CHECK(tsv.rfind("kind\tk\tdensity", 0) == 0);
  CHECK(tsv.find("\nchi_zero\t") != std::string::npos);
  CHECK(tsv.find("\nrandom_chi_zero\t") != std::string::npos);
  CHECK_ERROR_KIND(parse_options(Json{{"scan_points", 3}}, "t", ""), ErrorKind::argument);
  CHECK_ERROR_KIND(parse_options(Json{{"unknown", 3}}, "t", ""), ErrorKind::argument);
}
