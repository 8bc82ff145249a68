// Band limiting of regional time series: a Butterworth filter run forward and backward
// (zero phase, edges padded by odd reflection) or an FFT mask.
//
// Design follows the textbook route (analog prototype, frequency transformation,
// bilinear transform with pre-warping), the same construction scipy.signal.butter
// uses, so `order` means what it means there: a band-pass of order n has 2n poles.
// The forward-backward pass, its padding length and its initial conditions follow
// scipy.signal.sosfiltfilt's defaults (odd padding of 3 * (2 * sections + 1 - first-order
// sections) frames; steady-state initial conditions scaled by the first padded value).
#pragma once

#include <Eigen/Dense>

#include <limits>
#include <string>

namespace critplex::series {

// A pass band in Hz: low only is a high-pass, high only a low-pass. NaN means "absent".
struct Band {
  std::string name;  // "" for a single unnamed band
  double low = std::numeric_limits<double>::quiet_NaN();
  double high = std::numeric_limits<double>::quiet_NaN();
  bool has_low() const { return low == low; }
  bool has_high() const { return high == high; }
};

enum class FilterDesign { butterworth, fft_mask };

struct FilterOptions {
  FilterDesign design = FilterDesign::butterworth;
  int order = 4;  // Butterworth order per pass (1..12)
};

// Second-order sections, one per row: b0 b1 b2 a0 a1 a2 (a0 = 1), like scipy's sos arrays.
using Sections = Eigen::Matrix<double, Eigen::Dynamic, 6, Eigen::RowMajor>;

// Digital Butterworth design for sampling interval `dt` (seconds). Errors say why a band
// is unusable (edge at or above Nyquist, low >= high, non-positive edges).
Sections butterworth(const Band& band, int order, double dt);

// Odd-reflection padding length scipy.signal.sosfiltfilt uses by default for `sections`.
Eigen::Index default_padding(const Sections& sections);

// Zero-phase filtering of each column with odd padding of `padding` frames. The series must
// be longer than the padding.
Eigen::MatrixXd filter_forward_backward(const Sections& sections, const Eigen::MatrixXd& values, Eigen::Index padding);

// FFT mask: bins outside [low, high] set to zero (the mean goes when low is given).
Eigen::MatrixXd fft_mask(const Eigen::MatrixXd& values, const Band& band, double dt);

// Checks a band against the sampling and the length of the series (T frames at dt s):
// edges below Nyquist, low < high, a band at least one frequency bin (1 / (T dt)) wide,
// and for Butterworth a series longer than the padding. `where` names the band in errors.
void check_band(const Band& band, const FilterOptions& options, double dt, Eigen::Index frames,
                const std::string& where);

// Checks then filters every column: the one entry point the pipeline uses.
Eigen::MatrixXd band_limit(const Eigen::MatrixXd& values, const Band& band, const FilterOptions& options, double dt,
                           const std::string& where);

// band_limit set up once for series of `frames` frames (the band checked, the Butterworth
// sections designed), then applied to any number of them: band_limit(v, ...) is
// BandFilter(..., v.rows(), ...).apply(v), bit for bit.
class BandFilter {
 public:
  BandFilter(const Band& band, const FilterOptions& options, double dt, Eigen::Index frames, const std::string& where);
  Eigen::MatrixXd apply(const Eigen::MatrixXd& values) const;

 private:
  Band band_;
  FilterOptions options_;
  double dt_;
  Eigen::Index frames_;
  Sections sections_;  // Butterworth only
  Eigen::Index padding_ = 0;
};

}  // namespace critplex::series
