#include "transitions/analysis.hpp"

#include <algorithm>
#include <cmath>

#include "base/error.hpp"
#include "transitions/random_graph.hpp"

namespace critplex::transitions {

const OptionSection& option_section() {
  static const OptionSection section{
      "sweep.transitions",
      "sweep options",
      "cpx_sweep_run, critplex sweep --options, the subject config's \"sweep\"; cpx_transitions_from_curves",
      "Zeros of chi, Betti crossings and peaks, and the Erdos-Renyi reference. On whenever chi or Betti curves "
      "exist; false turns it off.",
      {{.key = "enabled", .type = "boolean", .default_value = true, .meaning = "false: no transitions section"},
       {.key = "random_graph", .type = "boolean", .default_value = true,
        .meaning = "add the Erdos-Renyi G(N, p) reference (expected chi and curvature, their zeros)"},
       {.key = "scan_points", .type = "integer", .default_value = 2000, .min = 10, .max = 10000000,
        .meaning = "points of the scan that brackets the reference's zeros"},
       {.key = "max_p", .type = "number", .default_value = 0.0, .default_note = "0 = the grid's largest density, at least 0.05",
        .min = 0, .max = 1, .meaning = "largest p of the reference's zero search"}}};
  return section;
}

Options parse_options(const Json& section, const std::string& where, const std::string& prefix) {
  Options o;
  if (section.is_null()) return o;
  if (section.is_boolean()) {
    o.enabled = section.get<bool>();
    return o;
  }
  SchemaReader r(section, option_section(), where, prefix);
  o.enabled = r.boolean("enabled");
  o.random_graph = r.boolean("random_graph");
  o.scan_points = static_cast<std::size_t>(r.integer("scan_points"));
  o.max_p = r.number("max_p");
  r.finish();
  return o;
}

std::vector<const CrossingRecord*> Analysis::chi_zeros() const {
  std::vector<const CrossingRecord*> out;
  for (const auto& c : chi_crossings)
    if (!c.crossing.touch) out.push_back(&c);
  return out;
}

std::vector<const CrossingRecord*> Analysis::chi_touches() const {
  std::vector<const CrossingRecord*> out;
  for (const auto& c : chi_crossings)
    if (c.crossing.touch) out.push_back(&c);
  return out;
}

double Analysis::first_chi_zero() const {
  for (const auto& c : chi_crossings)
    if (!c.crossing.touch) return c.crossing.density;
  return std::numeric_limits<double>::quiet_NaN();
}

namespace {

// Linear interpolation of a per-point curve at a transition; NaN if either side is unknown.
double at(const std::vector<double>& density, const std::vector<double>& curve, const Crossing& c) {
  if (curve.size() != density.size()) return std::nan("");
  return interpolate(density, curve, c.left, c.right, c.density);
}

Moments moments_at(const Curves& cv, const Crossing& c) {
  return {at(cv.density, cv.kappa_mean, c), at(cv.density, cv.kappa_sd, c), at(cv.density, cv.kappa_skewness, c),
          at(cv.density, cv.kappa_kurtosis, c), at(cv.density, cv.forman_mean, c)};
}

RandomGraphReference reference(const Curves& cv, std::size_t nodes, const Options& options) {
  RandomGraphReference rg;
  rg.nodes = nodes;
  rg.max_p = options.max_p;
  if (rg.max_p == 0.0) {
    for (double d : cv.density) rg.max_p = std::max(rg.max_p, d);
    rg.max_p = std::clamp(rg.max_p, 0.05, 1.0);
  }
  const RandomGraphZeros z = random_graph_zeros(nodes, rg.max_p, options.scan_points);
  rg.scan_points = z.scan_points;
  rg.reliable_up_to = z.reliable_up_to;
  for (std::size_t i = 0; i < z.chi_zeros.size(); ++i) rg.chi_zeros.push_back({z.chi_zeros[i], z.chi_directions[i]});
  for (std::size_t i = 0; i < z.kappa_zeros.size(); ++i)
    rg.kappa_zeros.push_back({z.kappa_zeros[i], z.kappa_directions[i]});
  // The expected curves on the subject's own grid, for plotting against it.
  for (double d : cv.density) {
    const RandomGraphValue a = expected_chi(nodes, d), b = expected_kappa(nodes, d);
    rg.expected_chi.push_back(a.reliable ? a.value : std::nan(""));
    rg.expected_kappa.push_back(b.reliable ? b.value : std::nan(""));
  }
  return rg;
}

}  // namespace

Analysis analyse(const Curves& cv, std::size_t nodes, const Options& options) {
  Analysis a;
  const std::size_t n = cv.density.size();
  const bool have_moments = cv.kappa_mean.size() == n;
  if (options.random_graph && nodes >= 2) a.random_graph = reference(cv, nodes, options);
  auto nearest = [&](double rho) {
    if (!a.random_graph || a.random_graph->chi_zeros.empty()) return std::nan("");
    double best = a.random_graph->chi_zeros.front().density;
    for (const auto& z : a.random_graph->chi_zeros)
      if (std::fabs(z.density - rho) < std::fabs(best - rho)) best = z.density;
    return best;
  };

  if (cv.chi.size() == n && n > 0) {
    a.have_chi = true;
    const bool exact = cv.chi_exact.size() == n;
    for (const Crossing& c : sign_changes(cv.density, cv.chi)) {
      CrossingRecord r;
      r.crossing = c;
      r.left_value = cv.chi[c.left];
      r.right_value = cv.chi[c.right];
      if (exact) {
        r.left_exact = cv.chi_exact[c.left];
        r.right_exact = cv.chi_exact[c.right];
      }
      if (have_moments) r.moments = moments_at(cv, c);
      r.nearest_reference = nearest(c.density);
      a.chi_crossings.push_back(r);
    }
  }
  if (cv.betti.size() == n && n > 0) {
    a.have_betti = true;
    for (const BettiCrossing& b : betti_crossings(cv.density, cv.betti)) {
      auto difference = [&](std::size_t i) {
        return b.k + 1 < cv.betti[i].size() ? cv.betti[i][b.k] - cv.betti[i][b.k + 1] : std::nan("");
      };
      CrossingRecord r;
      r.crossing = b.crossing;
      r.k = b.k;
      r.left_value = difference(b.crossing.left);
      r.right_value = difference(b.crossing.right);
      if (have_moments) r.moments = moments_at(cv, b.crossing);
      r.nearest_reference = nearest(b.crossing.density);
      a.betti_crossings.push_back(r);
    }
    for (const BettiPeak& p : betti_peaks(cv.density, cv.betti)) a.betti_peaks.push_back({p, nearest(p.density)});
  }
  return a;
}

}  // namespace critplex::transitions
