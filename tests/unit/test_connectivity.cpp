// Unit checks of the connectivity stage: shrinkage bounds and limits, partial correlation,
// phase coupling of known signals, the options schema. Comparisons with numpy, sklearn and
// corpcor are in tests/reference/test_signals_estimators.py.
#include <catch2/catch.hpp>

#include <cmath>
#include <numbers>
#include <random>

#include "base/error.hpp"
#include "connectivity/connect.hpp"
#include "connectivity/pearson.hpp"
#include "connectivity/phase.hpp"
#include "connectivity/shrinkage.hpp"
#include "check_error.hpp"

using namespace critplex;
using namespace critplex::connectivity;

namespace {
Eigen::MatrixXd noise(Eigen::Index T, Eigen::Index N, unsigned seed) {
  std::mt19937_64 rng(seed);
  std::normal_distribution<double> g;
  Eigen::MatrixXd x(T, N);
  for (Eigen::Index t = 0; t < T; ++t)
    for (Eigen::Index j = 0; j < N; ++j) x(t, j) = g(rng);
  return x;
}
}  // namespace

TEST_CASE("Shrinkage intensities lie in [0, 1] and grow when frames are few") {
  const Eigen::MatrixXd many = noise(2000, 10, 1), few = noise(12, 10, 1);
  for (auto* f : {&ledoit_wolf, &oracle_approximating, &schafer_strimmer}) {
    const Shrunk a = f(many), b = f(few);
    CHECK(a.intensity >= 0.0);
    CHECK(b.intensity <= 1.0);
    CHECK(a.intensity < b.intensity);
  }
  // Shrunk correlations are positive definite even with fewer frames than regions.
  const Eigen::MatrixXd r = covariance_to_correlation(ledoit_wolf(noise(8, 20, 2)).matrix);
  Eigen::LLT<Eigen::MatrixXd> llt(r);
  CHECK(llt.info() == Eigen::Success);
}

TEST_CASE("Partial correlation of three variables matches the closed form") {
  // reference: r_13.2 = (r13 - r12 r23) / sqrt((1 - r12^2)(1 - r23^2)) (textbook first-order
  // partial correlation)
  Eigen::MatrixXd x = noise(500, 3, 5);
  x.col(1) += 0.8 * x.col(0);
  x.col(2) += 0.7 * x.col(1);
  const Eigen::MatrixXd c = (x.rowwise() - x.colwise().mean()).eval();
  const Eigen::MatrixXd cov = c.transpose() * c / 499.0;
  const Eigen::MatrixXd p = partial_from(cov, "");
  const Eigen::MatrixXd r = pearson(x);
  const double expected = (r(0, 2) - r(0, 1) * r(1, 2)) / std::sqrt((1 - r(0, 1) * r(0, 1)) * (1 - r(1, 2) * r(1, 2)));
  CHECK(p(0, 2) == Approx(expected).margin(1e-12));
}

TEST_CASE("Phase coupling of known signals") {
  // reference: PLV = 1 and PLI = wPLI = 1 for a constant non-zero lag (definitions, Lachaux
  // et al. 1999, Stam et al. 2007, Vinck et al. 2011); a lag that flips sign has PLI = 0.
  const Eigen::Index T = 1000;
  Eigen::MatrixXcd z(T, 3);
  for (Eigen::Index t = 0; t < T; ++t) {
    const double ph = 2 * std::numbers::pi * 0.05 * static_cast<double>(t);
    const double amp = 1.0 + 0.5 * std::sin(0.01 * static_cast<double>(t));
    z(t, 0) = std::polar(amp, ph);
    z(t, 1) = std::polar(2.0 * amp, ph + 0.7);
    z(t, 2) = std::polar(3.0, ph + (t % 2 == 0 ? 0.7 : -0.7));  // lag flips sign every frame
  }
  const Eigen::MatrixXd plv = phase_coupling(z, PhaseMeasure::locking_value);
  const Eigen::MatrixXd pli = phase_coupling(z, PhaseMeasure::lag_index);
  const Eigen::MatrixXd wpli = phase_coupling(z, PhaseMeasure::weighted_lag_index);
  const Eigen::MatrixXd aec = phase_coupling(z, PhaseMeasure::envelope);
  CHECK(plv(0, 1) == Approx(1.0).margin(1e-12));
  CHECK(pli(0, 1) == Approx(1.0).margin(1e-12));
  CHECK(wpli(1, 0) == Approx(1.0).margin(1e-12));
  CHECK(pli(0, 2) == Approx(0.0).margin(1e-12));   // leads and lags cancel exactly
  CHECK(wpli(0, 2) < 0.05);                         // nearly cancel, weighted by a slow amplitude
  CHECK(aec(0, 1) == Approx(1.0).margin(1e-12));   // proportional envelopes
  CHECK(plv.diagonal().isOnes());
}

TEST_CASE("Connect options: unknown keys and bad values are errors naming the key") {
  using nlohmann::json;
  CHECK_ERROR_KIND_WITH(parse_connect_options(json{{"method", "kendall"}}, "opts"), ErrorKind::argument, Catch::Contains("\"method\""));
  CHECK_ERROR_KIND_WITH(parse_connect_options(json{{"clean", {{"trend", 1}}}}, "opts"), ErrorKind::argument, Catch::Contains("\"clean.trend\""));
  CHECK_ERROR_KIND_WITH(parse_connect_options(json{{"filter", {{"low_hz", 0.01}, {"order", 40}}}}, "opts"), ErrorKind::argument,
                    Catch::Contains("[1, 12]"));
  CHECK_ERROR_KIND_WITH(parse_connect_options(json{{"bands", {{"a b", {1, 2}}}}}, "opts"), ErrorKind::argument, Catch::Contains("letters"));
  CHECK_ERROR_KIND_WITH(parse_connect_options(json{{"partial_basis", "oas"}}, "opts"), ErrorKind::argument, Catch::Contains("partial"));
  const auto o = parse_connect_options(json{{"bands", {{"beta", {13, 30}}, {"alpha", {8, 13}}, {"delta", {1, 4}}}}}, "opts");
  REQUIRE(o.bands.size() == 3);
  CHECK(o.bands[0].name == "delta");
  CHECK(o.bands[1].name == "alpha");
  CHECK(o.bands[2].name == "beta");
}

TEST_CASE("Connect runs each band and the same input gives the same result") {
  series::Series s;
  s.values = noise(600, 5, 9);
  s.names = series::default_names(5);
  s.sampling_interval = 0.01;
  const auto o = parse_connect_options(
      nlohmann::json{{"method", "wpli"}, {"bands", {{"alpha", {8, 13}}, {"beta", {13, 30}}}}}, "opts");
  const auto a = connect(s, o, {});
  const auto b = connect(s, o, {});
  REQUIRE(a.size() == 2);
  CHECK(a[0].band == "alpha");
  CHECK(a[0].matrix.values == b[0].matrix.values);
  CHECK(a[1].matrix.values == b[1].matrix.values);
  CHECK(a[0].matrix.info["band"]["low_hz"] == 8.0);
}

TEST_CASE("A connect chain set up once gives, for any series of that shape, what connect gives") {
  // The reference is connect() on each series; the chain reuses the censoring mask, the
  // confound fit and the filter design, which must change no bit of any band's matrix.
  const Eigen::Index T = 400, N = 6;
  series::Series a, b;
  a.values = noise(T, N, 1);
  b.values = noise(T, N, 2);
  a.names = b.names = series::default_names(N);
  a.sampling_interval = b.sampling_interval = 0.5;
  series::CleanInputs in;
  in.confounds = noise(T, 2, 3);
  in.confound_names = {"c1", "c2"};
  in.mask = Eigen::VectorXd::Ones(T);
  for (Eigen::Index t = 0; t < T; t += 37) in.mask(t) = 0.0;
  for (const char* text : {R"({"method": "ledoit_wolf", "clean": {"trend_order": 2, "unit_variance": true},
                               "bands": {"slow": [0.02, 0.1], "fast": [0.1, 0.4]}})",
                           R"({"method": "plv", "clean": {"trend_order": 1},
                               "filter": {"design": "fft_mask", "low_hz": 0.05, "high_hz": 0.3}})",
                           R"({"method": "pearson", "filter": {"high_hz": 0.3, "order": 2}})"}) {
    INFO(text);
    const auto o = parse_connect_options(nlohmann::json::parse(text), "opts");
    const ConnectChain chain(a, o, in);
    const auto direct = connect(b, o, in);
    const auto chained = chain.run(b);
    REQUIRE(chained.size() == direct.size());
    REQUIRE(chain.bands() == direct.size());
    for (std::size_t k = 0; k < direct.size(); ++k) {
      CHECK(chained[k].matrix.values == direct[k].matrix.values);
      CHECK(chained[k].matrix.info == direct[k].matrix.info);
      CHECK(chain.run_band(b, k).matrix.values == direct[k].matrix.values);
    }
  }
}
