#include "series/fft.hpp"

#include <fftw3.h>

#include <cstring>
#include <mutex>

#include "base/error.hpp"

namespace critplex::series {

namespace {
// FFTW's planner keeps global tables; only plan creation and destruction need the lock,
// executing a finished plan on its own arrays is thread-safe.
std::mutex& planner_mutex() {
  static std::mutex m;
  return m;
}
}  // namespace

struct FftPlans::Impl {
  double* real = nullptr;
  fftw_complex* half = nullptr;   // n/2 + 1 bins
  fftw_complex* full = nullptr;   // n bins, for the analytic signal
  fftw_plan r2c = nullptr, c2r = nullptr, c2c_back = nullptr;
};

FftPlans::FftPlans(Eigen::Index length) : n_(length), impl_(std::make_unique<Impl>()) {
  if (length < 1) fail(ErrorKind::internal, "FFT length must be positive");
  const auto n = static_cast<std::size_t>(length);
  std::lock_guard<std::mutex> lock(planner_mutex());
  impl_->real = fftw_alloc_real(n);
  impl_->half = fftw_alloc_complex(n / 2 + 1);
  impl_->full = fftw_alloc_complex(n);
  if (!impl_->real || !impl_->half || !impl_->full) {
    fftw_free(impl_->real);
    fftw_free(impl_->half);
    fftw_free(impl_->full);
    throw std::bad_alloc();
  }
  const int ni = static_cast<int>(length);
  impl_->r2c = fftw_plan_dft_r2c_1d(ni, impl_->real, impl_->half, FFTW_ESTIMATE);
  impl_->c2r = fftw_plan_dft_c2r_1d(ni, impl_->half, impl_->real, FFTW_ESTIMATE);
  impl_->c2c_back = fftw_plan_dft_1d(ni, impl_->full, impl_->full, FFTW_BACKWARD, FFTW_ESTIMATE);
}

FftPlans::~FftPlans() {
  std::lock_guard<std::mutex> lock(planner_mutex());
  fftw_destroy_plan(impl_->r2c);
  fftw_destroy_plan(impl_->c2r);
  fftw_destroy_plan(impl_->c2c_back);
  fftw_free(impl_->real);
  fftw_free(impl_->half);
  fftw_free(impl_->full);
}

void FftPlans::forward(const double* signal, std::complex<double>* spectrum) {
  const auto n = static_cast<std::size_t>(n_);
  std::memcpy(impl_->real, signal, n * sizeof(double));
  fftw_execute(impl_->r2c);
  std::memcpy(static_cast<void*>(spectrum), impl_->half, (n / 2 + 1) * sizeof(fftw_complex));
}

void FftPlans::backward(const std::complex<double>* spectrum, double* signal) {
  const auto n = static_cast<std::size_t>(n_);
  // c2r overwrites its input, so work on the plan's own buffer.
  std::memcpy(impl_->half, static_cast<const void*>(spectrum), (n / 2 + 1) * sizeof(fftw_complex));
  fftw_execute(impl_->c2r);
  const double scale = 1.0 / static_cast<double>(n);
  for (std::size_t t = 0; t < n; ++t) signal[t] = impl_->real[t] * scale;
}

void FftPlans::analytic(const double* signal, std::complex<double>* out) {
  const auto n = static_cast<std::size_t>(n_);
  std::memcpy(impl_->real, signal, n * sizeof(double));
  fftw_execute(impl_->r2c);
  // One-sided spectrum: keep DC (and Nyquist for even n) once, double positive
  // frequencies, zero negative ones.
  auto* full = impl_->full;
  std::memset(static_cast<void*>(full), 0, n * sizeof(fftw_complex));
  const std::size_t half = n / 2;
  for (std::size_t k = 0; k <= half; ++k) {
    double w = (k == 0 || (n % 2 == 0 && k == half)) ? 1.0 : 2.0;
    full[k][0] = w * impl_->half[k][0];
    full[k][1] = w * impl_->half[k][1];
  }
  fftw_execute(impl_->c2c_back);
  const double scale = 1.0 / static_cast<double>(n);
  for (std::size_t t = 0; t < n; ++t) out[t] = {full[t][0] * scale, full[t][1] * scale};
}

Eigen::MatrixXcd analytic_signal(const Eigen::MatrixXd& values) {
  Eigen::MatrixXcd out(values.rows(), values.cols());
  FftPlans plans(values.rows());
  for (Eigen::Index j = 0; j < values.cols(); ++j) plans.analytic(values.col(j).data(), out.col(j).data());
  return out;
}

}  // namespace critplex::series
