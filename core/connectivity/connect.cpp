#include "connectivity/connect.hpp"

#include <algorithm>
#include <cmath>

#include "base/error.hpp"
#include "base/options.hpp"
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
  OptionReader r(object, where);
  c.regressor_table = r.text("regressor_table", "");
  c.regressor_columns = r.texts("regressor_columns");
  c.regressor_missing = r.choice("regressor_missing", "zero", {"zero", "column_mean", "error"});
  const long long order = r.integer("trend_order", -1);
  if (order < -1 || order > 5) fail(ErrorKind::argument, where + ": option \"trend_order\" must be -1 (none) to 5, got " + std::to_string(order));
  c.trend_order = static_cast<int>(order);
  c.unit_variance = r.boolean("unit_variance", false);
  if (const Json* censor = r.raw("censor"); censor && !censor->is_null()) {
    OptionReader cr(*censor, where + ".censor");
    c.motion_column = cr.text("motion_column", "");
    c.motion_limit = cr.number("motion_limit", 0.5);
    if (!(c.motion_limit > 0)) fail(ErrorKind::argument, where + ".censor: option \"motion_limit\" must be positive");
    c.frame_mask = cr.text("frame_mask", "");
    c.min_frames = cr.integer("min_frames", 10);
    if (c.min_frames < 3) fail(ErrorKind::argument, where + ".censor: option \"min_frames\" must be at least 3");
    cr.finish();
  }
  r.finish();
  if (c.regressor_table.empty() && !c.regressor_columns.empty())
    fail(ErrorKind::argument, where + ": \"regressor_columns\" needs \"regressor_table\"");
  if (!c.regressor_table.empty() && c.regressor_columns.empty() && c.motion_column.empty())
    fail(ErrorKind::argument, where + ": \"regressor_table\" is given but no \"regressor_columns\" choose from it");
  if (c.regressor_table.empty() && !c.motion_column.empty())
    fail(ErrorKind::argument, where + ".censor: \"motion_column\" needs \"regressor_table\" in \"clean\"");
}

}  // namespace

ConnectOptions parse_connect_options(const Json& options, const std::string& where) {
  ConnectOptions o;
  OptionReader r(options, where);
  std::vector<std::string> names;
  for (const auto& [n, e] : kEstimators) names.push_back(n);
  o.method_name = r.choice("method", "pearson", names);
  for (const auto& [n, e] : kEstimators)
    if (n == o.method_name) o.method = e;
  o.fisher_z = r.boolean("fisher_z", false);
  if (o.fisher_z && (o.method == Estimator::plv || o.method == Estimator::pli || o.method == Estimator::wpli))
    fail(ErrorKind::argument, where + ": \"fisher_z\" applies to correlations; \"" + o.method_name +
                                  "\" is a phase consistency in [0, 1], not a correlation");
  if (auto dt = r.number("sampling_interval")) {
    if (!(*dt > 0)) fail(ErrorKind::argument, where + ": option \"sampling_interval\" must be positive (seconds), got " + std::to_string(*dt));
    o.sampling_interval = *dt;
  }
  o.partial_basis = r.choice("partial_basis", "ledoit_wolf", {"ledoit_wolf", "oas", "shrinkage_correlation", "sample"});
  if (r.has("partial_basis") && o.method != Estimator::partial)
    fail(ErrorKind::argument, where + ": \"partial_basis\" only applies to \"method\": \"partial\"");
  if (const Json* clean = r.raw("clean"); clean && !clean->is_null()) parse_clean(*clean, where + ".clean", o.clean);

  series::Band single;
  bool has_single = false;
  if (const Json* filter = r.raw("filter"); filter && !filter->is_null()) {
    OptionReader fr(*filter, where + ".filter");
    const std::string design = fr.choice("design", "butterworth", {"butterworth", "fft_mask"});
    o.filter.design = design == "fft_mask" ? series::FilterDesign::fft_mask : series::FilterDesign::butterworth;
    const long long order = fr.integer("order", 4);
    if (order < 1 || order > 12) fail(ErrorKind::argument, where + ".filter: option \"order\" must be 1..12, got " + std::to_string(order));
    if (fr.has("order") && o.filter.design == series::FilterDesign::fft_mask)
      fail(ErrorKind::argument, where + ".filter: \"order\" applies to the Butterworth design only");
    o.filter.order = static_cast<int>(order);
    if (auto low = fr.number("low_hz")) single.low = *low;
    if (auto high = fr.number("high_hz")) single.high = *high;
    has_single = single.has_low() || single.has_high();
    fr.finish();
  }
  if (const Json* bands = r.raw("bands"); bands && !bands->is_null()) {
    if (!bands->is_object() || bands->empty())
      fail(ErrorKind::argument, where + ": option \"bands\" must be an object of named bands, e.g. {\"alpha\": [8, 13]}");
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

// Steps shared by every band: regression (fit on kept frames) and the censoring mask.
struct Prepared {
  Eigen::MatrixXd cleaned;
  std::vector<bool> keep;  // empty: no censoring
  double dt;
  std::string origin;
};

Prepared prepare(const series::Series& input, const ConnectOptions& o, const series::CleanInputs& in) {
  series::validate(input);
  Prepared p;
  const Eigen::Index T = input.frames();
  p.dt = std::isfinite(o.sampling_interval) ? o.sampling_interval : input.sampling_interval;
  p.origin = input.source.empty() ? std::string("time series") : input.source;
  if (in.confounds.cols() > 0 && in.confounds.rows() != T)
    fail(ErrorKind::data, "the confounds table '" + o.clean.regressor_table + "' has " + std::to_string(in.confounds.rows()) +
                              " rows but " + p.origin + " has " + std::to_string(T) + " frames");
  if (in.motion.size() > 0 || in.mask.size() > 0)
    p.keep = series::frames_to_keep(T, in.motion, o.clean.motion_limit, in.mask, o.clean.min_frames);
  p.cleaned = input.values;
  if (in.confounds.cols() > 0 || o.clean.trend_order >= 0)
    p.cleaned = series::regress_out(p.cleaned, in.confounds, o.clean.trend_order, p.keep);
  for (const auto& b : o.bands)
    series::check_band(b, o.filter, p.dt, T, b.name.empty() ? std::string("filter") : "band \"" + b.name + "\"");
  return p;
}

// Band-limited, censored and (if asked) standardised values: what correlation estimators see.
Eigen::MatrixXd finish_band(const Prepared& p, const series::Band& b, const ConnectOptions& o,
                            const series::Series& input, bool drop_censored) {
  Eigen::MatrixXd x = p.cleaned;
  const std::string where = b.name.empty() ? std::string("filter") : "band \"" + b.name + "\"";
  if (b.has_low() || b.has_high()) x = series::band_limit(x, b, o.filter, p.dt, where);
  if (!drop_censored) return x;
  if (!p.keep.empty()) x = series::keep_rows(x, p.keep);
  if (o.clean.unit_variance) x = series::standardise(x, input.names);
  return x;
}

}  // namespace

series::Series clean_series(const series::Series& input, const ConnectOptions& o, const series::CleanInputs& in) {
  if (o.bands.size() > 1) fail(ErrorKind::argument, "cleaning gives one series; name at most one band");
  const Prepared p = prepare(input, o, in);
  series::Series out;
  out.values = finish_band(p, o.bands.empty() ? series::Band{} : o.bands[0], o, input, true);
  out.names = input.names;
  out.sampling_interval = p.dt;
  out.source = input.source;
  return out;
}

std::vector<BandMatrix> connect(const series::Series& input, const ConnectOptions& o, const series::CleanInputs& in) {
  const Prepared p = prepare(input, o, in);
  const Eigen::Index T = input.frames();
  const double dt = p.dt;
  const std::string& origin = p.origin;
  const bool censoring = !p.keep.empty();
  const std::vector<bool>& keep = p.keep;

  Json base = Json::object();
  base["method"] = o.method_name;
  base["fisher_z"] = o.fisher_z;
  base["frames"] = T;
  base["regions"] = input.regions();
  if (std::isfinite(dt)) base["sampling_interval"] = dt;
  if (!input.source.empty()) base["source"] = input.source;
  if (in.confounds.cols() > 0) base["regressors"] = in.confound_names;
  if (o.clean.trend_order >= 0) base["trend_order"] = o.clean.trend_order;
  if (o.clean.unit_variance) base["unit_variance"] = true;

  std::vector<series::Band> bands = o.bands;
  if (bands.empty()) bands.push_back(series::Band{});  // no band limiting

  std::vector<BandMatrix> out;
  for (const auto& b : bands) {
    Eigen::MatrixXd x = finish_band(p, b, o, input, !is_phase(o.method));
    Json info = base;
    if (b.has_low() || b.has_high()) info["band"] = band_info(b, o.filter);

    Eigen::MatrixXd r;
    if (is_phase(o.method)) {
      // The analytic signal needs the whole regular series; censored frames are dropped
      // from the time averages afterwards.
      Eigen::MatrixXcd z = series::analytic_signal(x);
      if (censoring) {
        Eigen::MatrixXcd kept(static_cast<Eigen::Index>(std::count(keep.begin(), keep.end(), true)), z.cols());
        Eigen::Index row = 0;
        for (Eigen::Index t = 0; t < T; ++t)
          if (keep[static_cast<std::size_t>(t)]) kept.row(row++) = z.row(t);
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
        if (!(range > 1e-12 * input.values.col(j).cwiseAbs().maxCoeff()))
          fail(ErrorKind::data, origin + ": region '" + input.names[static_cast<std::size_t>(j)] +
                                    "' is constant after cleaning" + (b.name.empty() ? "" : " in band \"" + b.name + "\""));
      }
      info["frames_used"] = x.rows();
      r = estimate(x, o, info);
    }
    if (o.fisher_z) r = fisher_z(r);
    BandMatrix bm;
    bm.band = b.name;
    bm.matrix.values = std::move(r);
    bm.matrix.names = input.names;
    bm.matrix.info = std::move(info);
    out.push_back(std::move(bm));
  }
  return out;
}

}  // namespace critplex::connectivity
