#include "series/filter.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <complex>
#include <numbers>
#include <vector>

#include "base/error.hpp"
#include "series/fft.hpp"

namespace critplex::series {

namespace {

using cplx = std::complex<double>;

std::string hz(double f) {
  char buf[64];
  std::snprintf(buf, sizeof buf, "%.6g Hz", f);
  return buf;
}

struct Zpk {
  std::vector<cplx> zeros, poles;
  double gain = 1.0;
};

// Analog Butterworth prototype: poles on the unit circle in the left half plane.
Zpk prototype(int order) {
  Zpk p;
  for (int m = -order + 1; m < order; m += 2)
    p.poles.push_back(-std::exp(cplx(0.0, std::numbers::pi * m / (2.0 * order))));
  return p;
}

// Quadratic in z^-1 from up to two roots: (1 - r1 z^-1)(1 - r2 z^-1).
void quadratic(const std::vector<cplx>& roots, double out[3]) {
  out[0] = 1.0;
  out[1] = 0.0;
  out[2] = 0.0;
  if (roots.size() == 1) {
    out[1] = -roots[0].real();
  } else if (roots.size() == 2) {
    out[1] = -(roots[0] + roots[1]).real();
    out[2] = (roots[0] * roots[1]).real();
  }
}

// Groups roots into conjugate pairs (or pairs of real roots); a lone real root is last.
std::vector<std::vector<cplx>> pair_roots(std::vector<cplx> roots) {
  const double tol = 1e-12;
  std::vector<cplx> complex_upper, reals;
  for (const auto& r : roots) {
    if (std::fabs(r.imag()) <= tol * std::max(1.0, std::abs(r))) reals.push_back(cplx(r.real(), 0.0));
    else if (r.imag() > 0) complex_upper.push_back(r);
  }
  std::vector<std::vector<cplx>> pairs;
  for (const auto& r : complex_upper) pairs.push_back({r, std::conj(r)});
  std::sort(reals.begin(), reals.end(), [](cplx a, cplx b) { return a.real() < b.real(); });
  for (std::size_t i = 0; i + 1 < reals.size(); i += 2) pairs.push_back({reals[i], reals[i + 1]});
  if (reals.size() % 2 == 1) pairs.push_back({reals.back()});
  return pairs;
}

}  // namespace

Sections butterworth(const Band& band, int order, double dt) {
  if (order < 1 || order > 12) fail(ErrorKind::argument, "filter order must be 1..12, got " + std::to_string(order));
  if (!(dt > 0)) fail(ErrorKind::argument, "the sampling interval must be positive to design a filter");
  const double nyquist = 0.5 / dt;
  // Normalised edges (1 = Nyquist), pre-warped for the bilinear transform at fs = 2.
  auto warp = [&](double f) { return 4.0 * std::tan(std::numbers::pi * (f / nyquist) / 2.0); };
  Zpk z = prototype(order);
  const std::size_t degree = z.poles.size();
  if (band.has_low() && band.has_high()) {
    const double w1 = warp(band.low), w2 = warp(band.high);
    const double bw = w2 - w1, wo = std::sqrt(w1 * w2);
    std::vector<cplx> poles;
    for (const auto& p : z.poles) {
      const cplx pl = p * (bw / 2.0);
      const cplx root = std::sqrt(pl * pl - wo * wo);
      poles.push_back(pl + root);
      poles.push_back(pl - root);
    }
    z.poles = poles;
    z.zeros.assign(degree, cplx(0.0, 0.0));
    z.gain *= std::pow(bw, static_cast<double>(degree));
  } else if (band.has_high()) {  // low-pass
    const double wo = warp(band.high);
    for (auto& p : z.poles) p *= wo;
    z.gain *= std::pow(wo, static_cast<double>(degree));
  } else if (band.has_low()) {  // high-pass
    const double wo = warp(band.low);
    // k_hp = k * real(prod(-z) / prod(-p)) with no finite prototype zeros.
    cplx prod_minus_p = 1.0;
    for (const auto& p : z.poles) prod_minus_p *= -p;
    z.gain = (1.0 / prod_minus_p).real();
    for (auto& p : z.poles) p = wo / p;
    z.zeros.assign(degree, cplx(0.0, 0.0));
  } else {
    fail(ErrorKind::argument, "a band needs a low edge, a high edge or both");
  }
  // Bilinear transform (fs = 2, so 2 fs = 4).
  const double fs2 = 4.0;
  cplx num = 1.0, den = 1.0;
  for (const auto& x : z.zeros) num *= fs2 - x;
  for (const auto& x : z.poles) den *= fs2 - x;
  const double gain = z.gain * (num / den).real();
  std::vector<cplx> dz, dp;
  for (const auto& x : z.zeros) dz.push_back((fs2 + x) / (fs2 - x));
  for (const auto& x : z.poles) dp.push_back((fs2 + x) / (fs2 - x));
  while (dz.size() < dp.size()) dz.push_back(-1.0);

  // Second-order sections: pole pairs, each with two zeros. Band-pass zeros are half at +1,
  // half at -1, so every section gets one of each; otherwise all zeros are equal.
  auto pole_groups = pair_roots(dp);
  std::vector<cplx> plus, minus;
  for (const auto& x : dz) (x.real() > 0 ? plus : minus).push_back(x);
  Sections sos(static_cast<Eigen::Index>(pole_groups.size()), 6);
  for (std::size_t s = 0; s < pole_groups.size(); ++s) {
    const std::size_t need = pole_groups[s].size();
    std::vector<cplx> zeros;
    while (zeros.size() < need) {
      // Take alternately from the larger pool so band-pass sections get one of each.
      auto& pool = plus.size() >= minus.size() ? plus : minus;
      zeros.push_back(pool.back());
      pool.pop_back();
    }
    double b[3], a[3];
    quadratic(zeros, b);
    quadratic(pole_groups[s], a);
    const double k = s == 0 ? gain : 1.0;
    const auto row = static_cast<Eigen::Index>(s);
    for (int c = 0; c < 3; ++c) {
      sos(row, c) = k * b[c];
      sos(row, 3 + c) = a[c];
    }
  }
  return sos;
}

Eigen::Index default_padding(const Sections& sections) {
  Eigen::Index zero_b2 = 0, zero_a2 = 0;
  for (Eigen::Index s = 0; s < sections.rows(); ++s) {
    zero_b2 += sections(s, 2) == 0.0;
    zero_a2 += sections(s, 5) == 0.0;
  }
  return 3 * (2 * sections.rows() + 1 - std::min(zero_b2, zero_a2));
}

namespace {

// Columns filtered together: their recursions are independent, so interleaving them hides
// the latency of each recursion and lets the compiler vectorise across columns.
constexpr std::size_t kLanes = 8;

// One pass of the cascade in transposed direct form II over `length` rows of a row-major
// block x[t * kLanes + lane], forward or backward, starting
// each lane from the steady state of a constant input equal to its first value.
void cascade_pass(const Sections& sos, double* x, std::size_t length, bool backward) {
  double level[kLanes], z1[kLanes], z2[kLanes];
  const std::size_t first = backward ? length - 1 : 0;
  for (std::size_t l = 0; l < kLanes; ++l) level[l] = x[first * kLanes + l];
  for (Eigen::Index s = 0; s < sos.rows(); ++s) {
    const double b0 = sos(s, 0), b1 = sos(s, 1), b2 = sos(s, 2), a1 = sos(s, 4), a2 = sos(s, 5);
    // Steady state for a constant input `level`: output gain * level.
    const double g = (b0 + b1 + b2) / (1.0 + a1 + a2);
    for (std::size_t l = 0; l < kLanes; ++l) {
      z1[l] = (g - b0) * level[l];
      z2[l] = (b2 - a2 * g) * level[l];
      level[l] *= g;
    }
    for (std::size_t k = 0; k < length; ++k) {
      double* row = x + (backward ? length - 1 - k : k) * kLanes;
      for (std::size_t l = 0; l < kLanes; ++l) {
        const double in = row[l];
        const double out = b0 * in + z1[l];
        z1[l] = b1 * in - a1 * out + z2[l];
        z2[l] = b2 * in - a2 * out;
        row[l] = out;
      }
    }
  }
}

}  // namespace

Eigen::MatrixXd filter_forward_backward(const Sections& sos, const Eigen::MatrixXd& values, Eigen::Index padding) {
  const Eigen::Index T = values.rows();
  if (padding >= T) fail(ErrorKind::internal, "padding must be shorter than the series");
  Eigen::MatrixXd out(T, values.cols());
  const auto P = static_cast<std::size_t>(padding);
  const auto n = static_cast<std::size_t>(T);
  const std::size_t length = n + 2 * P;
  std::vector<double> x(length * kLanes);
  for (Eigen::Index j0 = 0; j0 < values.cols(); j0 += static_cast<Eigen::Index>(kLanes)) {
    const auto lanes = static_cast<std::size_t>(std::min<Eigen::Index>(static_cast<Eigen::Index>(kLanes), values.cols() - j0));
    for (std::size_t l = 0; l < kLanes; ++l) {
      // Unused lanes repeat the last column; their output is discarded.
      const double* v = values.col(j0 + static_cast<Eigen::Index>(std::min(l, lanes - 1))).data();
      const double first = v[0], last = v[n - 1];
      // Odd reflection about the end points keeps value and slope continuous.
      for (std::size_t k = 0; k < P; ++k) x[k * kLanes + l] = 2.0 * first - v[P - k];
      for (std::size_t t = 0; t < n; ++t) x[(P + t) * kLanes + l] = v[t];
      for (std::size_t k = 0; k < P; ++k) x[(P + n + k) * kLanes + l] = 2.0 * last - v[n - 2 - k];
    }
    cascade_pass(sos, x.data(), length, false);
    cascade_pass(sos, x.data(), length, true);
    for (std::size_t l = 0; l < lanes; ++l) {
      double* o = out.col(j0 + static_cast<Eigen::Index>(l)).data();
      for (std::size_t t = 0; t < n; ++t) o[t] = x[(P + t) * kLanes + l];
    }
  }
  return out;
}

Eigen::MatrixXd fft_mask(const Eigen::MatrixXd& values, const Band& band, double dt) {
  const Eigen::Index T = values.rows();
  const auto bins = static_cast<std::size_t>(T / 2 + 1);
  FftPlans plans(T);
  std::vector<std::complex<double>> spectrum(bins);
  Eigen::MatrixXd out(T, values.cols());
  const double df = 1.0 / (static_cast<double>(T) * dt);
  for (Eigen::Index j = 0; j < values.cols(); ++j) {
    plans.forward(values.col(j).data(), spectrum.data());
    for (std::size_t k = 0; k < bins; ++k) {
      const double f = static_cast<double>(k) * df;
      if ((band.has_low() && f < band.low) || (band.has_high() && f > band.high)) spectrum[k] = 0.0;
    }
    plans.backward(spectrum.data(), out.col(j).data());
  }
  return out;
}

void check_band(const Band& band, const FilterOptions& options, double dt, Eigen::Index frames,
                const std::string& where) {
  if (!(dt > 0) || !std::isfinite(dt))
    fail(ErrorKind::argument, where + ": band limiting needs the sampling interval; give \"sampling_interval\" in "
                                      "seconds (or a NIfTI header that carries it)");
  const double nyquist = 0.5 / dt;
  const double length = static_cast<double>(frames) * dt;
  const double resolution = 1.0 / length;
  if (!band.has_low() && !band.has_high()) fail(ErrorKind::argument, where + ": needs a low edge, a high edge or both");
  for (double f : {band.low, band.high}) {
    if (f != f) continue;
    if (!(f > 0)) fail(ErrorKind::argument, where + ": band edge " + hz(f) + " must be positive");
    if (f >= nyquist)
      fail(ErrorKind::argument, where + ": band edge " + hz(f) + " is at or above the Nyquist frequency " + hz(nyquist) +
                                    " of a sampling interval of " + std::to_string(dt) + " s");
  }
  if (band.has_low() && band.has_high() && !(band.low < band.high))
    fail(ErrorKind::argument, where + ": low edge " + hz(band.low) + " must be below the high edge " + hz(band.high));
  if (band.has_low() && band.low < resolution)
    fail(ErrorKind::argument, where + ": low edge " + hz(band.low) + " is below the frequency resolution " +
                                  hz(resolution) + " of a " + std::to_string(length) +
                                  " s series (not one full cycle fits); raise the edge or use a longer series");
  if (band.has_low() && band.has_high() && band.high - band.low < resolution)
    fail(ErrorKind::argument, where + ": band " + hz(band.low) + " to " + hz(band.high) + " is narrower than the " +
                                  "frequency resolution " + hz(resolution) + " of a " + std::to_string(length) +
                                  " s series; widen the band or use a longer series");
  if (options.design == FilterDesign::butterworth) {
    const Sections sos = butterworth(band, options.order, dt);
    const Eigen::Index pad = default_padding(sos);
    if (frames <= pad)
      fail(ErrorKind::argument, where + ": a Butterworth filter of order " + std::to_string(options.order) +
                                    " pads " + std::to_string(pad) + " frames at each end, so the series needs more than " +
                                    std::to_string(pad) + " frames (it has " + std::to_string(frames) + ")");
  }
}

BandFilter::BandFilter(const Band& band, const FilterOptions& options, double dt, Eigen::Index frames,
                       const std::string& where)
    : band_(band), options_(options), dt_(dt), frames_(frames) {
  check_band(band, options, dt, frames, where);
  if (options.design == FilterDesign::butterworth) {
    sections_ = butterworth(band, options.order, dt);
    padding_ = default_padding(sections_);
  }
}

Eigen::MatrixXd BandFilter::apply(const Eigen::MatrixXd& values) const {
  if (values.rows() != frames_)
    fail(ErrorKind::internal, "band filter set up for " + std::to_string(frames_) + " frames, given " +
                                  std::to_string(values.rows()));
  if (options_.design == FilterDesign::fft_mask) return fft_mask(values, band_, dt_);
  return filter_forward_backward(sections_, values, padding_);
}

Eigen::MatrixXd band_limit(const Eigen::MatrixXd& values, const Band& band, const FilterOptions& options, double dt,
                           const std::string& where) {
  return BandFilter(band, options, dt, values.rows(), where).apply(values);
}

}  // namespace critplex::series
