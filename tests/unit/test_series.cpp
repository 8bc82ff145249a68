// Unit checks of the series stage: filter design, zero-phase filtering, FFT mask, analytic
// signal, cleaning. Outside references are closed forms named beside each check; the
// comparisons with scipy itself are in tests/reference/test_signals_filters.py.
#include <catch2/catch.hpp>

#include <cmath>
#include <complex>
#include <numbers>
#include <random>

#include "base/error.hpp"
#include "series/clean.hpp"
#include "series/fft.hpp"
#include "series/filter.hpp"
#include "check_error.hpp"

using namespace critplex;
using namespace critplex::series;

namespace {

// |H(e^{iw})| of a cascade of second-order sections.
double magnitude(const Sections& sos, double f, double dt) {
  const std::complex<double> z = std::exp(std::complex<double>(0.0, -2.0 * std::numbers::pi * f * dt));
  std::complex<double> h = 1.0;
  for (Eigen::Index s = 0; s < sos.rows(); ++s)
    h *= (sos(s, 0) + sos(s, 1) * z + sos(s, 2) * z * z) / (sos(s, 3) + sos(s, 4) * z + sos(s, 5) * z * z);
  return std::abs(h);
}

Band band(double low, double high) {
  Band b;
  b.low = low;
  b.high = high;
  return b;
}

}  // namespace

TEST_CASE("Butterworth magnitude: -3 dB at the edges, unit gain in the pass band") {
  // reference: Butterworth response |H| = 1/sqrt(2) at the cut-off of each edge, maximally
  // flat pass band (textbook; the bilinear pre-warping keeps the digital edges exact)
  const double dt = 0.72;  // fMRI-like sampling
  for (int order : {1, 2, 3, 4, 6}) {
    const Sections lp = butterworth(band(NAN, 0.1), order, dt);
    CHECK(magnitude(lp, 0.1, dt) == Approx(1.0 / std::sqrt(2.0)).epsilon(1e-9));
    CHECK(magnitude(lp, 0.0, dt) == Approx(1.0).epsilon(1e-12));
    const Sections hp = butterworth(band(0.01, NAN), order, dt);
    CHECK(magnitude(hp, 0.01, dt) == Approx(1.0 / std::sqrt(2.0)).epsilon(1e-9));
    CHECK(magnitude(hp, 0.5 / dt, dt) == Approx(1.0).epsilon(1e-12));
    const Sections bp = butterworth(band(0.01, 0.1), order, dt);
    CHECK(magnitude(bp, 0.01, dt) == Approx(1.0 / std::sqrt(2.0)).epsilon(1e-8));
    CHECK(magnitude(bp, 0.1, dt) == Approx(1.0 / std::sqrt(2.0)).epsilon(1e-8));
    CHECK(magnitude(bp, 0.0, dt) < 1e-12);
  }
}

TEST_CASE("Padding length follows sosfiltfilt's default rule") {
  // reference: scipy.signal.sosfiltfilt documentation, padlen = 3 * (2 * len(sos) + 1 -
  // min(number of sections with b2 == 0, with a2 == 0)) (from memory)
  CHECK(default_padding(butterworth(band(0.01, 0.1), 4, 1.0)) == 27);   // 4 sections
  CHECK(default_padding(butterworth(band(NAN, 0.1), 3, 1.0)) == 12);    // 2 sections, one first order
  CHECK(default_padding(butterworth(band(NAN, 0.1), 4, 1.0)) == 15);
}

TEST_CASE("Zero-phase filtering keeps a pass-band sine and its phase") {
  // reference: forward-backward filtering has |H|^2 gain and zero phase (textbook)
  const double dt = 0.01;
  const Eigen::Index T = 4000;
  Eigen::MatrixXd x(T, 1);
  for (Eigen::Index t = 0; t < T; ++t) x(t, 0) = std::sin(2 * std::numbers::pi * 10.0 * static_cast<double>(t) * dt);
  const Sections sos = butterworth(band(5.0, 20.0), 4, dt);
  const Eigen::MatrixXd y = filter_forward_backward(sos, x, default_padding(sos));
  const double gain = std::pow(magnitude(sos, 10.0, dt), 2);
  for (Eigen::Index t = 500; t < T - 500; ++t) CHECK(y(t, 0) == Approx(gain * x(t, 0)).margin(1e-6));
}

TEST_CASE("FFT mask removes out-of-band bins exactly") {
  // reference: DFT orthogonality: a sine on an exact bin is kept or removed whole
  const Eigen::Index T = 200;
  const double dt = 1.0;
  Eigen::MatrixXd x(T, 1);
  for (Eigen::Index t = 0; t < T; ++t) {
    const double u = static_cast<double>(t);
    x(t, 0) = std::sin(2 * std::numbers::pi * 10 * u / 200.0) + std::cos(2 * std::numbers::pi * 60 * u / 200.0) + 3.0;
  }
  const Eigen::MatrixXd y = fft_mask(x, band(0.02, 0.2), dt);  // keeps bin 10 (0.05), drops 60 (0.3) and DC
  for (Eigen::Index t = 0; t < T; ++t)
    CHECK(y(t, 0) == Approx(std::sin(2 * std::numbers::pi * 10 * static_cast<double>(t) / 200.0)).margin(1e-12));
}

TEST_CASE("Analytic signal of a cosine is a complex exponential") {
  // reference: H[cos] = sin on whole periods (Marple 1999)
  for (Eigen::Index T : {64, 63}) {
    Eigen::MatrixXd x(T, 1);
    const double w = 2 * std::numbers::pi * 5.0 / static_cast<double>(T);
    for (Eigen::Index t = 0; t < T; ++t) x(t, 0) = std::cos(w * static_cast<double>(t));
    const Eigen::MatrixXcd z = analytic_signal(x);
    for (Eigen::Index t = 0; t < T; ++t) {
      CHECK(z(t, 0).real() == Approx(std::cos(w * static_cast<double>(t))).margin(1e-12));
      CHECK(z(t, 0).imag() == Approx(std::sin(w * static_cast<double>(t))).margin(1e-12));
    }
  }
}

TEST_CASE("Band checks explain why a band is unusable") {
  FilterOptions f;
  CHECK_ERROR_KIND_WITH(check_band(band(0.01, 0.5), f, 1.0, 500, "filter"), ErrorKind::argument, Catch::Contains("Nyquist"));
  CHECK_ERROR_KIND_WITH(check_band(band(0.2, 0.1), f, 1.0, 500, "filter"), ErrorKind::argument, Catch::Contains("below the high edge"));
  CHECK_ERROR_KIND_WITH(check_band(band(0.1, 0.101), f, 1.0, 500, "filter"), ErrorKind::argument, Catch::Contains("narrower"));
  CHECK_ERROR_KIND_WITH(check_band(band(0.1, 0.2), f, NAN, 500, "filter"), ErrorKind::argument, Catch::Contains("sampling_interval"));
  CHECK_ERROR_KIND_WITH(check_band(band(0.1, 0.2), f, 1.0, 20, "filter"), ErrorKind::argument, Catch::Contains("pads 27 frames"));
  CHECK_NOTHROW(check_band(band(0.01, 0.1), f, 2.0, 200, "filter"));
}

TEST_CASE("Regression residuals are orthogonal to the design") {
  // reference: least-squares normal equations X^T (y - X b) = 0 (textbook)
  std::mt19937_64 rng(11);
  std::normal_distribution<double> g;
  const Eigen::Index T = 120;
  Eigen::MatrixXd y(T, 4), c(T, 2);
  for (Eigen::Index t = 0; t < T; ++t) {
    for (Eigen::Index j = 0; j < 4; ++j) y(t, j) = g(rng);
    for (Eigen::Index j = 0; j < 2; ++j) c(t, j) = g(rng);
  }
  const Eigen::MatrixXd r = regress_out(y, c, 1, {});
  CHECK((c.transpose() * r).cwiseAbs().maxCoeff() < 1e-10);
  CHECK(r.colwise().sum().cwiseAbs().maxCoeff() < 1e-10);
  Eigen::VectorXd ramp = Eigen::VectorXd::LinSpaced(T, -1, 1);
  CHECK((ramp.transpose() * r).cwiseAbs().maxCoeff() < 1e-10);
  // Dependent confounds are an error, not a silent pseudo-inverse.
  Eigen::MatrixXd dup(T, 2);
  dup << c.col(0), c.col(0);
  CHECK_ERROR_KIND_WITH(regress_out(y, dup, -1, {}), ErrorKind::data, Catch::Contains("linearly dependent"));
}

TEST_CASE("Censoring by motion and mask, with a minimum of frames") {
  Eigen::VectorXd motion(6);
  motion << NAN, 0.1, 0.9, 0.2, 0.6, 0.3;
  Eigen::VectorXd mask(6);
  mask << 1, 1, 1, 0, 1, 1;
  const auto keep = frames_to_keep(6, motion, 0.5, mask, 3);
  CHECK(keep == std::vector<bool>{true, true, false, false, false, true});
  CHECK_ERROR_KIND_WITH(frames_to_keep(6, motion, 0.5, mask, 4), ErrorKind::data, Catch::Contains("keeps 3 of 6"));
  Eigen::VectorXd bad(6);
  bad << 1, 1, 2, 1, 1, 1;
  CHECK_ERROR_KIND_WITH(frames_to_keep(6, Eigen::VectorXd(), 0.5, bad, 3), ErrorKind::data, Catch::Contains("entry 3"));
}
