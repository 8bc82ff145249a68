// Surrogate time series for null models (docs/methods.md, "Null models").
// Input and output are T frames x N regions; every method keeps each region's
// amplitude spectrum (|FFT| per frequency) and differs in what else it keeps:
//   phase_multivariate  the same random phase added to a frequency in every region
//                       (Prichard & Theiler 1994): keeps all cross-spectra, hence the
//                       lagged cross-correlations and the correlation matrix;
//   phase_independent   independent phases per region (Theiler et al. 1992): keeps
//                       each region's autocorrelation, destroys coupling;
//   iaaft               per region, iterated amplitude-adjusted Fourier transform
//                       (Schreiber & Schmitz 1996): keeps the sorted values exactly and
//                       the amplitude spectrum approximately; destroys coupling.
// The mean (frequency 0) and, for even T, the Nyquist bin are kept unchanged so that the
// surrogate is real and its spectrum exact. Randomness only from the seed.
#pragma once

#include <Eigen/Dense>

#include <complex>
#include <cstdint>
#include <string>
#include <vector>

#include "base/option_schema.hpp"
#include "series/fft.hpp"

namespace critplex::simulate {

enum class SurrogateMethod { phase_multivariate, phase_independent, iaaft };
SurrogateMethod surrogate_method_from_name(const std::string& name);  // throws ErrorKind::argument
const char* surrogate_method_name(SurrogateMethod method);

struct SurrogateOptions {
  SurrogateMethod method = SurrogateMethod::phase_multivariate;
  std::uint64_t seed = 1;
  int iaaft_iterations = 100;  // fixed budget; stops earlier once the ranks stop changing
};

struct SurrogateResult {
  Eigen::MatrixXd values;     // T x N
  int iaaft_iterations_used = 0;  // largest over regions (0 for phase methods)
};

// values: T >= 3 frames x N >= 1 regions, finite.
SurrogateResult make_surrogate(const Eigen::MatrixXd& values, const SurrogateOptions& options);

// What every surrogate of one series shares, whatever the seed: the checked input, each
// region's spectrum and, for IAAFT, its amplitudes and sorted values. Made once for many
// draws (null models) and then only read, so draws may run on several threads at once.
// make_surrogate is exactly SurrogateBasis(values, options).draw(options.seed, plans).
class SurrogateBasis {
 public:
  SurrogateBasis(const Eigen::MatrixXd& values, const SurrogateOptions& options);  // seed unused
  Eigen::Index frames() const { return values_.rows(); }
  // One surrogate for `seed`. `plans` (length frames()) belong to the calling thread.
  SurrogateResult draw(std::uint64_t seed, series::FftPlans& plans) const;

 private:
  Eigen::MatrixXd values_;
  SurrogateOptions options_;
  std::vector<std::complex<double>> spectra_;  // region j's bins at [j * bins, (j + 1) * bins)
  std::vector<double> amplitudes_, sorted_;    // IAAFT: |spectrum| per bin, sorted values per region
};

// The options of cpx_surrogate ({"method", "seed", "iaaft_iterations"}) and their table.
const OptionSection& surrogate_option_section();
SurrogateOptions parse_surrogate_options(const Json& options, const std::string& where);

}  // namespace critplex::simulate
