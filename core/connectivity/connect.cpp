#include "connectivity/connect.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>

#include "base/error.hpp"
#include "base/option_schema.hpp"
#include "connectivity/pearson.hpp"
#include "connectivity/phase.hpp"
#include "connectivity/shrinkage.hpp"
#include "series/fft.hpp"

namespace critplex::connectivity {

namespace {

const std::vector<std::pair<std::string, Estimator>> kEstimators = {
    {"pearson", Estimator::pearson},
    {"ledoit_wolf", Estimator::ledoit_wolf},
    {"oas", Estimator::oas},
    {"shrinkage_correlation", Estimator::shrinkage_correlation},
    {"partial", Estimator::partial},
    {"plv", Estimator::plv},
    {"pli", Estimator::pli},
    {"wpli", Estimator::wpli},
    {"aec", Estimator::aec},
    {"aec_orthogonalised", Estimator::aec_orthogonalised}};

bool is_phase(Estimator e) {
  return e == Estimator::plv || e == Estimator::pli || e == Estimator::wpli || e == Estimator::aec ||
         e == Estimator::aec_orthogonalised;
}

series::Band band_from(const Json& value, const std::string& name, const std::string& where) {
  if (!value.is_array() || value.size() != 2 || !value[0].is_number() || !value[1].is_number())
    fail(ErrorKind::argument, where + ": band \"" + name + "\" must be [low_hz, high_hz], got " + value.dump());
  series::Band b;
  b.name = name;
  b.low = value[0].get<double>();
  b.high = value[1].get<double>();
  return b;
}

void parse_clean(const Json& object, const std::string& where, series::CleanOptions& c) {
  SchemaReader r(object, clean_option_section(), where);
  c.regressor_table = r.text("regressor_table");
  c.regressor_columns = r.texts("regressor_columns");
  c.regressor_missing = r.choice("regressor_missing");
  c.trend_order = static_cast<int>(r.integer("trend_order"));
  c.unit_variance = r.boolean("unit_variance");
  if (const Json* censor = r.raw("censor")) {
    SchemaReader cr(*censor, censor_option_section(), where);
    c.motion_column = cr.text("motion_column");
    c.motion_limit = cr.number("motion_limit");
    c.frame_mask = cr.text("frame_mask");
    c.min_frames = cr.integer("min_frames");
    cr.finish();
  }
  r.finish();
  if (c.regressor_table.empty() && !c.regressor_columns.empty())
    fail(ErrorKind::argument, where + ": \"clean.regressor_columns\" needs \"clean.regressor_table\"");
  if (!c.regressor_table.empty() && c.regressor_columns.empty() && c.motion_column.empty())
    fail(ErrorKind::argument, where + ": \"clean.regressor_table\" is given but no \"clean.regressor_columns\" choose from it");
  if (c.regressor_table.empty() && !c.motion_column.empty())
    fail(ErrorKind::argument, where + ": \"clean.censor.motion_column\" needs \"clean.regressor_table\"");
}

}  // namespace

const OptionSection& connect_option_section() {
  std::vector<std::string> methods;
  for (const auto& [name, e] : kEstimators) methods.push_back(name);
  static const OptionSection section{
      "connect",
      "connect options",
      "cpx_connect, cpx_connect_bands, cpx_series_clean, critplex connect --options, the subject config's \"connect\"",
      "From a regional time series to connectivity matrices: cleaning, band limiting, the estimator.",
      {{.key = "method", .type = "choice", .default_value = "pearson", .choices = methods,
        .meaning = "estimator: Pearson; shrunk covariance (Ledoit-Wolf, OAS) or correlation (Schafer-Strimmer) as "
                   "correlation; partial correlation; phase and envelope couplings from the analytic signal"},
       {.key = "fisher_z", .type = "boolean", .default_value = false,
        .meaning = "atanh(r) off the diagonal, diagonal 0 (not for plv, pli, wpli)"},
       {.key = "sampling_interval", .type = "number", .default_note = "from the input", .min = 0, .min_open = true,
        .meaning = "seconds between frames; needed for band limiting; overrides the image header"},
       {.key = "partial_basis", .type = "choice", .default_value = "ledoit_wolf",
        .choices = {"ledoit_wolf", "oas", "shrinkage_correlation", "sample"},
        .meaning = "covariance inverted by \"partial\" (\"sample\" needs more frames than regions)"},
       {.key = "clean", .type = "object", .meaning = "confound regression, detrending, censoring (section connect.clean)"},
       {.key = "filter", .type = "object", .meaning = "band limiting of one band (section connect.filter)"},
       {.key = "bands", .type = "object", .meaning = "several named bands {\"name\": [low_hz, high_hz]}, one matrix each, "
                                                     "reported from low to high; names are letters and digits"}}};
  return section;
}

const OptionSection& clean_option_section() {
  static const OptionSection section{
      "connect.clean",
      "connect options",
      "the \"clean\" of the connect options",
      "Confound regression with intercept and trend (fitted on the frames censoring keeps), censoring, "
      "standardising.",
      {{.key = "regressor_table", .type = "string", .meaning = "confounds TSV with a header row; n/a marks undefined cells"},
       {.key = "regressor_columns", .type = "strings",
        .meaning = "columns to regress out; * matches any run of characters, ? one; each entry must match a column"},
       {.key = "regressor_missing", .type = "choice", .default_value = "zero", .choices = {"zero", "column_mean", "error"},
        .meaning = "what an n/a cell of a chosen column becomes"},
       {.key = "trend_order", .type = "integer", .default_value = -1, .default_note = "-1 = none", .min = -1, .max = 5,
        .meaning = "polynomial trend removed with the confounds (0: mean, 1: linear, ...)"},
       {.key = "unit_variance", .type = "boolean", .default_value = false,
        .meaning = "each region to mean 0 and standard deviation 1 (n - 1 denominator) after cleaning"},
       {.key = "censor", .type = "object", .meaning = "frames to drop (section connect.clean.censor)"}}};
  return section;
}

const OptionSection& censor_option_section() {
  static const OptionSection section{
      "connect.clean.censor",
      "connect options",
      "the \"clean.censor\" of the connect options",
      "Censoring (scrubbing): frames dropped after filtering.",
      {{.key = "motion_column", .type = "string",
        .meaning = "a column of the regressor table (e.g. framewise displacement); n/a never censors"},
       {.key = "motion_limit", .type = "number", .default_value = 0.5, .min = 0, .min_open = true,
        .meaning = "frames whose motion value exceeds this are dropped (0.5 mm: Power et al. 2012)"},
       {.key = "frame_mask", .type = "string", .meaning = "a file with one 1 (keep) or 0 (drop) per frame"},
       {.key = "min_frames", .type = "integer", .default_value = 10, .min = 3,
        .meaning = "fewer frames left after censoring is an error"}}};
  return section;
}

const OptionSection& filter_option_section() {
  static const OptionSection section{
      "connect.filter",
      "connect options",
      "the \"filter\" of the connect options",
      "Band limiting: the pass band and the filter design (design and order also apply to \"bands\").",
      {{.key = "low_hz", .type = "number", .min = 0, .min_open = true, .meaning = "low edge (only low_hz: high-pass)"},
       {.key = "high_hz", .type = "number", .min = 0, .min_open = true, .meaning = "high edge (only high_hz: low-pass)"},
       {.key = "design", .type = "choice", .default_value = "butterworth", .choices = {"butterworth", "fft_mask"},
        .meaning = "Butterworth run forward and backward (zero phase, edges padded by odd reflection), or zeroing "
                   "the FFT bins outside the band"},
       {.key = "order", .type = "integer", .default_value = 4, .min = 1, .max = 12,
        .meaning = "Butterworth order per pass (a band-pass of order n has 2n poles)"}}};
  return section;
}

ConnectOptions parse_connect_options(const Json& options, const std::string& where) {
  ConnectOptions o;
  SchemaReader r(options, connect_option_section(), where);
  o.method_name = r.choice("method");
  for (const auto& [n, e] : kEstimators)
    if (n == o.method_name) o.method = e;
  o.fisher_z = r.boolean("fisher_z");
  if (o.fisher_z && (o.method == Estimator::plv || o.method == Estimator::pli || o.method == Estimator::wpli))
    fail(ErrorKind::argument, where + ": \"fisher_z\" applies to correlations; \"" + o.method_name +
                                  "\" is a phase consistency in [0, 1], not a correlation");
  if (auto dt = r.optional_number("sampling_interval")) o.sampling_interval = *dt;
  o.partial_basis = r.choice("partial_basis");
  if (r.has("partial_basis") && o.method != Estimator::partial)
    fail(ErrorKind::argument, where + ": \"partial_basis\" only applies to \"method\": \"partial\"");
  if (const Json* clean = r.raw("clean")) parse_clean(*clean, where, o.clean);

  series::Band single;
  if (const Json* filter = r.raw("filter")) {
    SchemaReader fr(*filter, filter_option_section(), where);
    o.filter.design = fr.choice("design") == "fft_mask" ? series::FilterDesign::fft_mask : series::FilterDesign::butterworth;
    o.filter.order = static_cast<int>(fr.integer("order"));
    if (fr.has("order") && o.filter.design == series::FilterDesign::fft_mask)
      fail(ErrorKind::argument, where + ": \"filter.order\" applies to the Butterworth design only");
    if (auto low = fr.optional_number("low_hz")) single.low = *low;
    if (auto high = fr.optional_number("high_hz")) single.high = *high;
    fr.finish();
  }
  const bool has_single = single.has_low() || single.has_high();
  if (const Json* bands = r.raw("bands")) {
    if (!bands->is_object() || bands->empty())
      fail(ErrorKind::argument, where + ": \"bands\" must be an object of named bands, e.g. {\"alpha\": [8, 13]}");
    if (has_single)
      fail(ErrorKind::argument, where + ": give either \"bands\" or \"filter\".low_hz/high_hz, not both "
                                        "(\"filter\" may still set design and order)");
    for (auto it = bands->begin(); it != bands->end(); ++it) {
      if (it.key().empty() || it.key().find_first_not_of("abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ0123456789") != std::string::npos)
        fail(ErrorKind::argument, where + ": band name \"" + it.key() + "\" must be letters and digits only (it becomes part of file names)");
      o.bands.push_back(band_from(it.value(), it.key(), where));
    }
    // Report bands from low to high frequency, whatever order JSON keeps keys in.
    std::stable_sort(o.bands.begin(), o.bands.end(),
                     [](const series::Band& a, const series::Band& b) { return a.low < b.low; });
  } else if (has_single) {
    o.bands.push_back(single);
  }
  r.finish();
  return o;
}

namespace {

Json band_info(const series::Band& band, const series::FilterOptions& f) {
  Json j = Json::object();
  if (!band.name.empty()) j["name"] = band.name;
  if (band.has_low()) j["low_hz"] = band.low;
  if (band.has_high()) j["high_hz"] = band.high;
  j["design"] = f.design == series::FilterDesign::fft_mask ? "fft_mask" : "butterworth";
  if (f.design == series::FilterDesign::butterworth) j["order"] = f.order;
  return j;
}

Eigen::MatrixXd estimate(const Eigen::MatrixXd& x, const ConnectOptions& o, Json& info) {
  switch (o.method) {
    case Estimator::pearson: return pearson(x);
    case Estimator::ledoit_wolf: {
      Shrunk s = ledoit_wolf(x);
      info["shrinkage_intensity"] = s.intensity;
      return covariance_to_correlation(s.matrix);
    }
    case Estimator::oas: {
      Shrunk s = oracle_approximating(x);
      info["shrinkage_intensity"] = s.intensity;
      return covariance_to_correlation(s.matrix);
    }
    case Estimator::shrinkage_correlation: {
      Shrunk s = schafer_strimmer(x);
      info["shrinkage_intensity"] = s.intensity;
      return s.matrix;
    }
    case Estimator::partial: {
      info["partial_basis"] = o.partial_basis;
      if (o.partial_basis == "sample") {
        if (x.rows() <= x.cols())
          fail(ErrorKind::data, "plain partial correlation needs more frames than regions (" + std::to_string(x.rows()) +
                                    " frames, " + std::to_string(x.cols()) + " regions): the sample covariance is "
                                    "singular; use \"partial_basis\": \"ledoit_wolf\" (shrinkage) instead");
        const Eigen::MatrixXd c = (x.rowwise() - x.colwise().mean()).eval();
        Eigen::MatrixXd s = (c.transpose() * c) / static_cast<double>(x.rows() - 1);
        return partial_from(s, "; use \"partial_basis\": \"ledoit_wolf\" (shrinkage) instead");
      }
      Shrunk s = o.partial_basis == "oas" ? oracle_approximating(x)
                 : o.partial_basis == "shrinkage_correlation" ? schafer_strimmer(x)
                                                              : ledoit_wolf(x);
      info["shrinkage_intensity"] = s.intensity;
      return partial_from(s.matrix, "");
    }
    default: break;
  }
  fail(ErrorKind::internal, "estimate: not a correlation estimator");
}

}  // namespace

namespace {

// Results that do not change when one region is multiplied by a positive number.
bool invariant_per_region(const ConnectOptions& o) {
  if (o.clean.unit_variance) return true;
  if (o.method == Estimator::ledoit_wolf || o.method == Estimator::oas) return false;
  if (o.method == Estimator::partial) return o.partial_basis == "sample" || o.partial_basis == "shrinkage_correlation";
  return true;
}

// Powers of two bringing each region's largest magnitude into [1, 2): multiplying by them is
// exact, so ordinary data give bit-identical results, while sums of squares of values near
// 1e160 or 1e-170 no longer overflow or underflow. The covariance shrinkage estimators are not
// invariant to a region's scale, so they get one common power of two (from the largest value):
// their regions may then differ in magnitude by at most 2^480 (~3e144), checked here, so
// that products of the smallest region stay normal doubles.
Eigen::VectorXd power_of_two_scales(const series::Series& input, const ConnectOptions& o) {
  const Eigen::MatrixXd& x = input.values;
  const bool per_region = invariant_per_region(o);
  if (!per_region) {
    Eigen::Index small = 0, large = 0;
    const Eigen::VectorXd m = x.cwiseAbs().colwise().maxCoeff().transpose();
    m.minCoeff(&small);
    m.maxCoeff(&large);
    auto g = [](double v) {
      char text[32];
      std::snprintf(text, sizeof text, "%.3g", v);
      return std::string(text);
    };
    if (m(small) < std::ldexp(m(large), -480))
      fail(ErrorKind::data, (input.source.empty() ? std::string("time series") : input.source) + ": regions '" +
                                input.names[static_cast<std::size_t>(large)] + "' and '" +
                                input.names[static_cast<std::size_t>(small)] + "' differ in magnitude by more than 2^480 (largest |value| " +
                                g(m(large)) + " and " + g(m(small)) + "); \"" + o.method_name +
                                "\" works on one common scale and cannot represent both: rescale the regions or set "
                                "\"clean\": {\"unit_variance\": true}");
  }
  Eigen::VectorXd scale(x.cols());
  const double overall = x.cwiseAbs().maxCoeff();
  for (Eigen::Index j = 0; j < x.cols(); ++j) {
    const double m = per_region ? x.col(j).cwiseAbs().maxCoeff() : overall;
    scale(j) = m > 0 && std::isfinite(m) ? std::ldexp(1.0, -std::ilogb(m)) : 1.0;
  }
  return scale;
}

// ErrorKind::data naming the first pair of regions whose value is NaN or infinite.
void require_finite(const Eigen::MatrixXd& r, const series::Series& input, const std::string& origin,
                    const ConnectOptions& o, const series::Band& b) {
  for (Eigen::Index j = 0; j < r.cols(); ++j)
    for (Eigen::Index i = 0; i < r.rows(); ++i)
      if (!std::isfinite(r(i, j)))
        fail(ErrorKind::data, origin + ": the " + o.method_name + " matrix" + (b.name.empty() ? "" : " of band \"" + b.name + "\"") +
                                  " has a non-finite value for regions '" + input.names[static_cast<std::size_t>(i)] + "' and '" +
                                  input.names[static_cast<std::size_t>(j)] +
                                  "' (values too large, too small or too different in magnitude to be represented)");
}

std::string origin_of(const series::Series& input) {
  return input.source.empty() ? std::string("time series") : input.source;
}

std::string band_where(const series::Band& b) { return b.name.empty() ? std::string("filter") : "band \"" + b.name + "\""; }

}  // namespace

// Values after regression (fit on kept frames), scaled by `scale` per region.
struct ConnectChain::Scaled {
  Eigen::MatrixXd cleaned;
  Eigen::VectorXd scale;  // powers of two, see power_of_two_scales
};

ConnectChain::ConnectChain(const series::Series& like, const ConnectOptions& o, const series::CleanInputs& in)
    : options_(o), inputs_(in), frames_(like.frames()) {
  series::validate(like);
  const Eigen::Index T = like.frames();
  dt_ = std::isfinite(o.sampling_interval) ? o.sampling_interval : like.sampling_interval;
  if (in.confounds.cols() > 0 && in.confounds.rows() != T)
    fail(ErrorKind::data, "the confounds table '" + o.clean.regressor_table + "' has " + std::to_string(in.confounds.rows()) +
                              " rows but " + origin_of(like) + " has " + std::to_string(T) + " frames");
  if (in.motion.size() > 0 || in.mask.size() > 0)
    keep_ = series::frames_to_keep(T, in.motion, o.clean.motion_limit, in.mask, o.clean.min_frames);
  if (in.confounds.cols() > 0 || o.clean.trend_order >= 0)
    regression_.emplace(T, in.confounds, o.clean.trend_order, keep_);
  bands_ = o.bands;
  if (bands_.empty()) bands_.push_back(series::Band{});  // no band limiting
  for (const auto& b : bands_) {
    if (b.has_low() || b.has_high()) filters_.emplace_back(std::in_place, b, o.filter, dt_, T, band_where(b));
    else filters_.emplace_back();
  }
}

ConnectChain::Scaled ConnectChain::clean(const series::Series& input) const {
  series::validate(input);
  if (input.frames() != frames_)
    fail(ErrorKind::internal, "connect chain set up for " + std::to_string(frames_) + " frames, given " +
                                  std::to_string(input.frames()));
  Scaled s;
  s.scale = power_of_two_scales(input, options_);
  s.cleaned = input.values * s.scale.asDiagonal();
  if (regression_) s.cleaned = regression_->residuals(s.cleaned);
  return s;
}

// Band-limited, censored and (if asked) standardised values: what correlation estimators see.
Eigen::MatrixXd ConnectChain::band_values(const Scaled& p, std::size_t band, const series::Series& input,
                                          bool drop_censored) const {
  Eigen::MatrixXd x = filters_[band] ? filters_[band]->apply(p.cleaned) : p.cleaned;
  if (!drop_censored) return x;
  if (!keep_.empty()) x = series::keep_rows(x, keep_);
  if (options_.clean.unit_variance) x = series::standardise(x, input.names);
  return x;
}

BandMatrix ConnectChain::estimate_band(const Scaled& p, std::size_t band, const series::Series& input) const {
  const ConnectOptions& o = options_;
  const series::CleanInputs& in = inputs_;
  const series::Band& b = bands_[band];
  const Eigen::Index T = input.frames();
  const std::string origin = origin_of(input);

  Json info = Json::object();
  info["method"] = o.method_name;
  info["fisher_z"] = o.fisher_z;
  info["frames"] = T;
  info["regions"] = input.regions();
  if (std::isfinite(dt_)) info["sampling_interval"] = dt_;
  if (!input.source.empty()) info["source"] = input.source;
  if (in.confounds.cols() > 0) info["regressors"] = in.confound_names;
  if (o.clean.trend_order >= 0) info["trend_order"] = o.clean.trend_order;
  if (o.clean.unit_variance) info["unit_variance"] = true;

  Eigen::MatrixXd x = band_values(p, band, input, !is_phase(o.method));
  if (b.has_low() || b.has_high()) info["band"] = band_info(b, o.filter);

  Eigen::MatrixXd r;
  if (is_phase(o.method)) {
    // The analytic signal needs the whole regular series; censored frames are dropped
    // from the time averages afterwards.
    Eigen::MatrixXcd z = series::analytic_signal(x);
    if (!keep_.empty()) {
      Eigen::MatrixXcd kept(static_cast<Eigen::Index>(std::count(keep_.begin(), keep_.end(), true)), z.cols());
      Eigen::Index row = 0;
      for (Eigen::Index t = 0; t < T; ++t)
        if (keep_[static_cast<std::size_t>(t)]) kept.row(row++) = z.row(t);
      z = std::move(kept);
    }
    info["frames_used"] = z.rows();
    const PhaseMeasure m = o.method == Estimator::plv    ? PhaseMeasure::locking_value
                           : o.method == Estimator::pli  ? PhaseMeasure::lag_index
                           : o.method == Estimator::wpli ? PhaseMeasure::weighted_lag_index
                           : o.method == Estimator::aec  ? PhaseMeasure::envelope
                                                         : PhaseMeasure::envelope_orthogonalised;
    r = phase_coupling(z, m);
  } else {
    for (Eigen::Index j = 0; j < x.cols(); ++j) {
      // Cleaning leaves rounding noise where it removed everything: compare with the input scale.
      const double range = x.col(j).maxCoeff() - x.col(j).minCoeff();
      if (!(range > 1e-12 * p.scale(j) * input.values.col(j).cwiseAbs().maxCoeff()))
        fail(ErrorKind::data, origin + ": region '" + input.names[static_cast<std::size_t>(j)] +
                                  "' is constant after cleaning" + (b.name.empty() ? "" : " in band \"" + b.name + "\""));
    }
    info["frames_used"] = x.rows();
    r = estimate(x, o, info);
  }
  require_finite(r, input, origin, o, b);
  if (o.fisher_z) r = fisher_z(r);
  BandMatrix bm;
  bm.band = b.name;
  bm.matrix.values = std::move(r);
  bm.matrix.names = input.names;
  bm.matrix.info = std::move(info);
  return bm;
}

std::vector<BandMatrix> ConnectChain::run(const series::Series& input) const {
  const Scaled p = clean(input);
  std::vector<BandMatrix> out;
  for (std::size_t b = 0; b < bands_.size(); ++b) out.push_back(estimate_band(p, b, input));
  return out;
}

BandMatrix ConnectChain::run_band(const series::Series& input, std::size_t band) const {
  if (band >= bands_.size())
    fail(ErrorKind::internal, "band " + std::to_string(band) + " of " + std::to_string(bands_.size()));
  return estimate_band(clean(input), band, input);
}

series::Series clean_series(const series::Series& input, const ConnectOptions& o, const series::CleanInputs& in) {
  if (o.bands.size() > 1) fail(ErrorKind::argument, "cleaning gives one series; name at most one band");
  const ConnectChain chain(input, o, in);
  const ConnectChain::Scaled p = chain.clean(input);
  series::Series out;
  out.values = chain.band_values(p, 0, input, true);
  if (!o.clean.unit_variance) out.values = out.values * p.scale.cwiseInverse().asDiagonal();  // exact: powers of two
  out.names = input.names;
  out.sampling_interval = chain.dt_;
  out.source = input.source;
  return out;
}

std::vector<BandMatrix> connect(const series::Series& input, const ConnectOptions& o, const series::CleanInputs& in) {
  return ConnectChain(input, o, in).run(input);
}

}  // namespace critplex::connectivity
