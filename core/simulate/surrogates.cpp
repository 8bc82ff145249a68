#include "simulate/surrogates.hpp"

#include <algorithm>
#include <cmath>
#include <complex>
#include <numbers>
#include <numeric>
#include <vector>

#include "base/error.hpp"
#include "base/random.hpp"
#include "series/fft.hpp"

namespace critplex::simulate {

SurrogateMethod surrogate_method_from_name(const std::string& name) {
  if (name == "phase_multivariate") return SurrogateMethod::phase_multivariate;
  if (name == "phase_independent") return SurrogateMethod::phase_independent;
  if (name == "iaaft") return SurrogateMethod::iaaft;
  fail(ErrorKind::argument, "surrogate method '" + name + "' is not one of phase_multivariate, phase_independent, iaaft");
}

const char* surrogate_method_name(SurrogateMethod method) {
  switch (method) {
    case SurrogateMethod::phase_multivariate: return "phase_multivariate";
    case SurrogateMethod::phase_independent: return "phase_independent";
    case SurrogateMethod::iaaft: return "iaaft";
  }
  return "?";
}

namespace {

using Spectrum = std::vector<std::complex<double>>;

// Bins whose phase may turn: 1 .. ceil(T/2) - 1 (DC and an even T's Nyquist bin stay real).
std::size_t last_free_bin(std::size_t frames) { return (frames - 1) / 2; }

void random_phases(Random& random, std::vector<std::complex<double>>& rotation) {
  for (std::size_t k = 1; k < rotation.size(); ++k) rotation[k] = std::polar(1.0, 2.0 * std::numbers::pi * random.uniform());
}

// Stable ranks: position of each sample in sorted order (ties by time index).
void ranks_of(const std::vector<double>& x, std::vector<std::size_t>& order, std::vector<std::size_t>& rank) {
  std::iota(order.begin(), order.end(), 0);
  std::stable_sort(order.begin(), order.end(), [&](std::size_t i, std::size_t j) { return x[i] < x[j]; });
  for (std::size_t r = 0; r < order.size(); ++r) rank[order[r]] = r;
}

}  // namespace

SurrogateBasis::SurrogateBasis(const Eigen::MatrixXd& values, const SurrogateOptions& options)
    : values_(values), options_(options) {
  const auto frames = static_cast<std::size_t>(values.rows());
  const auto regions = static_cast<std::size_t>(values.cols());
  if (frames < 3) fail(ErrorKind::data, "surrogates need at least 3 time points, got " + std::to_string(frames));
  if (regions < 1) fail(ErrorKind::data, "surrogates need at least 1 region");
  for (Eigen::Index j = 0; j < values.cols(); ++j)
    for (Eigen::Index t = 0; t < values.rows(); ++t)
      if (!std::isfinite(values(t, j)))
        fail(ErrorKind::data, "surrogate input: region " + std::to_string(j + 1) + " is not finite at time point " +
                                  std::to_string(t + 1));
  if (options.iaaft_iterations < 1) fail(ErrorKind::argument, "iaaft_iterations must be at least 1");

  // The spectra are what each draw would compute first; every draw only turns phases.
  series::FftPlans plans(static_cast<Eigen::Index>(frames));
  const std::size_t bins = frames / 2 + 1;
  spectra_.resize(regions * bins);
  for (std::size_t j = 0; j < regions; ++j)
    plans.forward(values_.col(static_cast<Eigen::Index>(j)).data(), spectra_.data() + j * bins);
  if (options.method != SurrogateMethod::iaaft) return;
  amplitudes_.resize(regions * bins);
  for (std::size_t i = 0; i < spectra_.size(); ++i) amplitudes_[i] = std::abs(spectra_[i]);
  sorted_.resize(regions * frames);
  for (std::size_t j = 0; j < regions; ++j) {
    const double* v = values_.col(static_cast<Eigen::Index>(j)).data();
    std::copy(v, v + frames, sorted_.begin() + static_cast<std::ptrdiff_t>(j * frames));
    std::sort(sorted_.begin() + static_cast<std::ptrdiff_t>(j * frames),
              sorted_.begin() + static_cast<std::ptrdiff_t>((j + 1) * frames));
  }
}

SurrogateResult SurrogateBasis::draw(std::uint64_t seed, series::FftPlans& plans) const {
  const auto frames = static_cast<std::size_t>(values_.rows());
  const auto regions = static_cast<std::size_t>(values_.cols());
  if (plans.length() != values_.rows()) fail(ErrorKind::internal, "surrogate draw: FFT plans of the wrong length");
  Random random(seed);
  const std::size_t bins = frames / 2 + 1, free_end = last_free_bin(frames) + 1;
  SurrogateResult result;
  result.values.resize(values_.rows(), values_.cols());
  Spectrum spectrum(bins);
  std::vector<std::complex<double>> rotation(free_end, 1.0);

  if (options_.method != SurrogateMethod::iaaft) {
    const bool shared = options_.method == SurrogateMethod::phase_multivariate;
    if (shared) random_phases(random, rotation);
    for (std::size_t j = 0; j < regions; ++j) {
      if (!shared) random_phases(random, rotation);
      const std::complex<double>* original = spectra_.data() + j * bins;
      std::copy(original, original + bins, spectrum.begin());
      for (std::size_t k = 1; k < free_end; ++k) spectrum[k] *= rotation[k];
      plans.backward(spectrum.data(), result.values.col(static_cast<Eigen::Index>(j)).data());
    }
    return result;
  }

  // IAAFT, region by region.
  std::vector<double> current(frames), out(frames);
  std::vector<std::size_t> order(frames), rank(frames), previous_rank(frames);
  for (std::size_t j = 0; j < regions; ++j) {
    const double* amplitude = amplitudes_.data() + j * bins;
    const double* sorted = sorted_.data() + j * frames;
    const double* column = values_.col(static_cast<Eigen::Index>(j)).data();
    current.assign(column, column + frames);
    random.shuffle(current);  // start from a random permutation of the values
    ranks_of(current, order, previous_rank);
    int used = 0;
    for (int iteration = 0; iteration < options_.iaaft_iterations; ++iteration) {
      ++used;
      // Impose the original amplitudes, keep the current phases.
      plans.forward(current.data(), spectrum.data());
      for (std::size_t k = 0; k < bins; ++k) {
        const double magnitude = std::abs(spectrum[k]);
        spectrum[k] = magnitude > 0.0 ? spectrum[k] * (amplitude[k] / magnitude) : std::complex<double>(amplitude[k], 0.0);
      }
      plans.backward(spectrum.data(), out.data());
      // Impose the original values by rank.
      ranks_of(out, order, rank);
      for (std::size_t t = 0; t < frames; ++t) current[t] = sorted[rank[t]];
      if (rank == previous_rank) break;  // a fixed point: further rounds change nothing
      previous_rank = rank;
    }
    result.iaaft_iterations_used = std::max(result.iaaft_iterations_used, used);
    std::copy(current.begin(), current.end(), result.values.col(static_cast<Eigen::Index>(j)).data());
  }
  return result;
}

SurrogateResult make_surrogate(const Eigen::MatrixXd& values, const SurrogateOptions& options) {
  const SurrogateBasis basis(values, options);
  series::FftPlans plans(values.rows());
  return basis.draw(options.seed, plans);
}

const OptionSection& surrogate_option_section() {
  static const OptionSection section{
      "surrogate",
      "surrogate options",
      "cpx_surrogate",
      "A surrogate series: the same amplitude spectra, randomised phases.",
      {{.key = "method", .type = "choice", .default_value = "phase_multivariate",
        .choices = {"phase_multivariate", "phase_independent", "iaaft"},
        .meaning = "the same random phase at each frequency in every region (keeps every cross-spectrum), independent "
                   "phases per region (destroys coupling), or IAAFT per region (keeps the sorted values too)"},
       {.key = "seed", .type = "integer", .default_value = 1, .min = 0, .meaning = "seed of the phases"},
       {.key = "iaaft_iterations", .type = "integer", .default_value = 100, .min = 1, .max = 1000000,
        .meaning = "IAAFT iterations (stops early at a fixed point)"}}};
  return section;
}

SurrogateOptions parse_surrogate_options(const Json& options, const std::string& where) {
  SchemaReader r(options, surrogate_option_section(), where);
  SurrogateOptions o;
  o.method = surrogate_method_from_name(r.choice("method"));
  o.seed = static_cast<std::uint64_t>(r.integer("seed"));
  o.iaaft_iterations = static_cast<int>(r.integer("iaaft_iterations"));
  r.finish();
  return o;
}

}  // namespace critplex::simulate
