// From a regional time series to one connectivity matrix per band: cleaning -> band
// limiting -> censoring -> standardising -> estimator -> optional Fisher z.
// The options are the "connect" options of docs/options.md; unknown keys are errors.
#pragma once

#include <nlohmann/json.hpp>

#include <optional>
#include <string>
#include <vector>

#include "base/option_schema.hpp"
#include "connectivity/matrix.hpp"
#include "series/clean.hpp"
#include "series/filter.hpp"
#include "series/series.hpp"

namespace critplex::connectivity {

enum class Estimator {
  pearson, ledoit_wolf, oas, shrinkage_correlation, partial,
  plv, pli, wpli, aec, aec_orthogonalised
};

struct ConnectOptions {
  Estimator method = Estimator::pearson;
  std::string method_name = "pearson";
  bool fisher_z = false;
  double sampling_interval = std::numeric_limits<double>::quiet_NaN();  // overrides the series'
  std::string partial_basis = "ledoit_wolf";  // covariance behind "partial"
  series::CleanOptions clean;
  series::FilterOptions filter;
  std::vector<series::Band> bands;  // empty: no band limiting; one unnamed band from "filter"
};

// Parses and checks the connect options (`where` names them in errors). Their tables:
const OptionSection& connect_option_section();
const OptionSection& clean_option_section();
const OptionSection& censor_option_section();
const OptionSection& filter_option_section();
ConnectOptions parse_connect_options(const nlohmann::json& options, const std::string& where);

struct BandMatrix {
  std::string band;  // "" when there is no named band
  Matrix matrix;
};

// Runs the whole chain. `inputs` are the loaded confounds, motion and mask (io).
std::vector<BandMatrix> connect(const series::Series& series, const ConnectOptions& options,
                                const series::CleanInputs& inputs);

// The chain set up once for series shaped like `like` (its frames, region names and
// sampling interval): the censoring mask, the confound design and its QR factorisation,
// each band's checks and filter design. run() then does only the work that depends on the
// values, so null models run it on every surrogate of one series; it only reads the chain,
// so several threads may run it at once. connect(s, o, in) is ConnectChain(s, o, in).run(s),
// and run_band(s, b) is its b-th matrix, bit for bit.
class ConnectChain {
 public:
  ConnectChain(const series::Series& like, const ConnectOptions& options, const series::CleanInputs& inputs);
  std::size_t bands() const { return bands_.size(); }
  std::vector<BandMatrix> run(const series::Series& series) const;
  BandMatrix run_band(const series::Series& series, std::size_t band) const;

 private:
  struct Scaled;
  Scaled clean(const series::Series& series) const;
  Eigen::MatrixXd band_values(const Scaled& cleaned, std::size_t band, const series::Series& series,
                              bool drop_censored) const;
  BandMatrix estimate_band(const Scaled& cleaned, std::size_t band, const series::Series& series) const;
  friend series::Series clean_series(const series::Series&, const ConnectOptions&, const series::CleanInputs&);

  ConnectOptions options_;
  series::CleanInputs inputs_;
  Eigen::Index frames_ = 0;
  double dt_;
  std::vector<bool> keep_;  // empty: no censoring
  std::optional<series::Regression> regression_;
  std::vector<series::Band> bands_;                      // one unnamed band when none is given
  std::vector<std::optional<series::BandFilter>> filters_;  // empty where the band limits nothing
};

// The series the correlation estimators would see (cleaned, band-limited with at most one
// band, censored, standardised if asked), for hosts that want it and for checking the
// steps one by one.
series::Series clean_series(const series::Series& series, const ConnectOptions& options,
                            const series::CleanInputs& inputs);

}  // namespace critplex::connectivity
