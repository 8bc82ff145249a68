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

// The series the correlation estimators would see (cleaned, band-limited with at most one
// band, censored, standardised if asked), for hosts that want it and for checking the
// steps one by one.
series::Series clean_series(const series::Series& series, const ConnectOptions& options,
                            const series::CleanInputs& inputs);

}  // namespace critplex::connectivity
