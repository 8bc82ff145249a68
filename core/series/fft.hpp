// Discrete Fourier transforms over FFTW for the series stage: real spectra (FFT band
// masks) and the analytic signal (phase and envelope coupling).
//
// FFTW's planner is not thread-safe, so planning takes one mutex (fft.cpp): the only
// process-wide state of the library. Plans use FFTW_ESTIMATE, so the transform, and hence
// every result, does not depend on timing measurements made at run time.
#pragma once

#include <Eigen/Dense>

#include <complex>
#include <memory>

namespace critplex::series {

// Plans for one series length, reused across regions (plan once, execute many).
class FftPlans {
 public:
  explicit FftPlans(Eigen::Index length);
  ~FftPlans();
  FftPlans(const FftPlans&) = delete;
  FftPlans& operator=(const FftPlans&) = delete;

  Eigen::Index length() const { return n_; }
  // Spectrum bins 0..n/2 of a real signal (unnormalised, like numpy.fft.rfft).
  void forward(const double* signal, std::complex<double>* spectrum);
  // Real signal from bins 0..n/2, divided by n (like numpy.fft.irfft).
  void backward(const std::complex<double>* spectrum, double* signal);
  // Analytic signal x + i H[x] by the one-sided spectrum (Marple 1999; what
  // scipy.signal.hilbert computes).
  void analytic(const double* signal, std::complex<double>* out);

 private:
  struct Impl;
  Eigen::Index n_;
  std::unique_ptr<Impl> impl_;
};

// Analytic signal of every column of `values` (T x N): a complex T x N matrix.
Eigen::MatrixXcd analytic_signal(const Eigen::MatrixXd& values);

}  // namespace critplex::series
