#include "transitions/report.hpp"

#include <algorithm>
#include <cmath>

#include "base/error.hpp"
#include "io/files.hpp"
#include "transitions/random_graph.hpp"
#include "transitions/transitions.hpp"

namespace critplex::transitions {

namespace {

Json number_or_null(double x) { return std::isfinite(x) ? Json(x) : Json(nullptr); }

// Linear interpolation of a per-point curve at a transition; NaN if either side is unknown.
double at(const std::vector<double>& density, const std::vector<double>& curve, const Crossing& c) {
  if (curve.size() != density.size()) return std::nan("");
  return interpolate(density, curve, c.left, c.right, c.density);
}

Json crossing_json(const Curves& cv, const Crossing& c, const std::vector<double>& values,
                   const std::vector<std::string>* exact) {
  Json j{{"density", c.density},
         {"direction", direction_name(c.direction)},
         {"left_density", cv.density[c.left]},
         {"right_density", cv.density[c.right]},
         {"left_value", values[c.left]},
         {"right_value", values[c.right]}};
  if (c.touch) j["direction"] = c.direction < 0 ? "touch from above" : "touch from below";
  if (exact && exact->size() == values.size()) {
    j["left_exact"] = (*exact)[c.left];
    j["right_exact"] = (*exact)[c.right];
  }
  return j;
}

Json moments_json(const Curves& cv, const Crossing& c) {
  return Json{{"kappa_mean", number_or_null(at(cv.density, cv.kappa_mean, c))},
              {"kappa_sd", number_or_null(at(cv.density, cv.kappa_sd, c))},
              {"kappa_skewness", number_or_null(at(cv.density, cv.kappa_skewness, c))},
              {"kappa_kurtosis", number_or_null(at(cv.density, cv.kappa_kurtosis, c))},
              {"forman_mean", number_or_null(at(cv.density, cv.forman_mean, c))}};
}

}  // namespace

Options parse_options(const Json& section, const std::string& where) {
  Options o;
  if (section.is_null()) return o;
  if (section.is_boolean()) {
    o.enabled = section.get<bool>();
    return o;
  }
  if (!section.is_object()) fail(ErrorKind::argument, where + " must be an object (or true/false)");
  OptionReader r(section, where);
  o.enabled = r.boolean("enabled", true);
  o.random_graph = r.boolean("random_graph", true);
  const long long scan = r.integer("scan_points", 2000);
  if (scan < 10 || scan > 10000000) fail(ErrorKind::argument, where + ": scan_points must be in [10, 10000000]");
  o.scan_points = static_cast<std::size_t>(scan);
  o.max_p = r.number("max_p", 0.0);
  if (!(o.max_p >= 0.0 && o.max_p <= 1.0)) fail(ErrorKind::argument, where + ": max_p must be in [0, 1] (0: the grid's largest density)");
  r.finish();
  return o;
}

Json analyse(const Curves& cv, std::size_t nodes, const Options& options) {
  Json j;
  const std::size_t n = cv.density.size();
  const bool have_moments = cv.kappa_mean.size() == n;
  std::vector<double> nearest_reference;  // random-graph chi zeros, for the summary

  if (options.random_graph && nodes >= 2) {
    double max_p = options.max_p;
    if (max_p == 0.0) {
      for (double d : cv.density) max_p = std::max(max_p, d);
      max_p = std::clamp(max_p, 0.05, 1.0);
    }
    RandomGraphZeros z = random_graph_zeros(nodes, max_p, options.scan_points);
    Json rg{{"nodes", nodes},
            {"model", "Erdos-Renyi G(N, p) with p = density"},
            {"arithmetic", random_graph_arithmetic()},
            {"max_p", max_p},
            {"scan_points", z.scan_points},
            {"reliable_up_to", z.reliable_up_to}};
    Json chi_zeros = Json::array(), kappa_zeros = Json::array();
    for (std::size_t i = 0; i < z.chi_zeros.size(); ++i)
      chi_zeros.push_back({{"density", z.chi_zeros[i]}, {"direction", direction_name(z.chi_directions[i])}});
    for (std::size_t i = 0; i < z.kappa_zeros.size(); ++i)
      kappa_zeros.push_back({{"density", z.kappa_zeros[i]}, {"direction", direction_name(z.kappa_directions[i])}});
    rg["chi_zeros"] = std::move(chi_zeros);
    rg["kappa_zeros"] = std::move(kappa_zeros);
    // The expected curves on the subject's own grid, for plotting against it.
    Json echi = Json::array(), ekappa = Json::array();
    for (double d : cv.density) {
      RandomGraphValue a = expected_chi(nodes, d), b = expected_kappa(nodes, d);
      echi.push_back(a.reliable ? Json(a.value) : Json(nullptr));
      ekappa.push_back(b.reliable ? Json(b.value) : Json(nullptr));
    }
    rg["expected_chi"] = std::move(echi);
    rg["expected_kappa"] = std::move(ekappa);
    nearest_reference = z.chi_zeros;
    j["random_graph"] = std::move(rg);
  } else {
    j["random_graph"] = nullptr;
  }
  auto nearest = [&](double rho) -> Json {
    if (nearest_reference.empty()) return nullptr;
    double best = nearest_reference.front();
    for (double z : nearest_reference)
      if (std::fabs(z - rho) < std::fabs(best - rho)) best = z;
    return best;
  };

  Json summary = Json::array();
  if (cv.chi.size() == n && n > 0) {
    Json zeros = Json::array(), touches = Json::array();
    for (const Crossing& c : sign_changes(cv.density, cv.chi)) {
      Json record = crossing_json(cv, c, cv.chi, &cv.chi_exact);
      if (c.touch) {
        touches.push_back(record);
        record["kind"] = "chi_touch";
      } else {
        zeros.push_back(record);
        record["kind"] = "chi_zero";
      }
      if (have_moments) record["curvature"] = moments_json(cv, c);
      record["random_graph_nearest_zero"] = nearest(c.density);
      summary.push_back(std::move(record));
    }
    j["first_chi_zero"] = zeros.empty() ? Json(nullptr) : zeros[0]["density"];
    j["chi_zeros"] = std::move(zeros);
    j["chi_touches"] = std::move(touches);
  } else {
    j["chi_zeros"] = nullptr;
    j["first_chi_zero"] = nullptr;
  }
  if (cv.betti.size() == n && n > 0) {
    Json crossings = Json::array(), peaks = Json::array();
    for (const BettiCrossing& b : betti_crossings(cv.density, cv.betti)) {
      std::vector<double> diff(n);
      for (std::size_t i = 0; i < n; ++i)
        diff[i] = b.k + 1 < cv.betti[i].size() ? cv.betti[i][b.k] - cv.betti[i][b.k + 1] : std::nan("");
      Json record = crossing_json(cv, b.crossing, diff, nullptr);
      record["k"] = b.k;
      record["direction"] = b.crossing.direction < 0 ? "beta_k falls below beta_k+1" : "beta_k rises above beta_k+1";
      crossings.push_back(record);
      record["kind"] = "betti_crossing";
      if (have_moments) record["curvature"] = moments_json(cv, b.crossing);
      record["random_graph_nearest_zero"] = nearest(b.crossing.density);
      summary.push_back(std::move(record));
    }
    for (const BettiPeak& p : betti_peaks(cv.density, cv.betti)) {
      Json record{{"k", p.k}, {"value", p.value}, {"density", p.density}, {"last_density", p.last_density}};
      peaks.push_back(record);
      record["kind"] = "betti_peak";
      record["random_graph_nearest_zero"] = nearest(p.density);
      summary.push_back(std::move(record));
    }
    j["betti_crossings"] = std::move(crossings);
    j["betti_peaks"] = std::move(peaks);
  } else {
    j["betti_crossings"] = nullptr;
    j["betti_peaks"] = nullptr;
  }
  if (j["random_graph"].is_object())
    for (const auto& z : j["random_graph"]["chi_zeros"])
      summary.push_back({{"kind", "random_chi_zero"}, {"density", z["density"]}, {"direction", z["direction"]}});
  j["summary"] = std::move(summary);
  j["interpolation"] = "linear between the bracketing grid points (curvature moments too)";
  return j;
}

std::string summary_tsv(const Json& section) {
  static const char* columns[] = {"kind", "k", "density", "direction", "left_density", "right_density",
                                  "left_value", "right_value", "value", "kappa_mean", "kappa_sd",
                                  "kappa_skewness", "kappa_kurtosis", "forman_mean", "random_graph_nearest_zero"};
  std::string s;
  for (std::size_t c = 0; c < std::size(columns); ++c) s += (c ? "\t" : "") + std::string(columns[c]);
  s += "\n";
  if (!section.is_object() || !section.contains("summary")) return s;
  auto cell = [](const Json* v) -> std::string {
    if (v == nullptr || v->is_null()) return "NA";
    if (v->is_string()) return v->get<std::string>();
    if (v->is_number_integer()) return std::to_string(v->get<long long>());
    if (v->is_number_unsigned()) return std::to_string(v->get<unsigned long long>());
    if (v->is_number()) return io::format_double(v->get<double>());
    return v->dump();
  };
  for (const auto& record : section["summary"]) {
    for (std::size_t c = 0; c < std::size(columns); ++c) {
      const std::string key = columns[c];
      const Json* v = nullptr;
      if (record.contains(key)) v = &record[key];
      else if (record.contains("curvature") && record["curvature"].contains(key)) v = &record["curvature"][key];
      s += (c ? "\t" : "") + cell(v);
    }
    s += "\n";
  }
  return s;
}

}  // namespace critplex::transitions
