// The transitions engine of a sweep (and of curves a host computed elsewhere): zeros of
// chi, Betti crossings and peaks, the Erdos-Renyi reference for the same N, and one
// summary record per subject with the curvature moments at each transition.
#pragma once

#include <string>
#include <vector>

#include "base/options.hpp"

namespace critplex::transitions {

struct Options {
  bool enabled = true;
  bool random_graph = true;       // add the G(N, p) reference
  std::size_t scan_points = 2000; // scan grid of the reference's zero search
  double max_p = 0.0;             // 0: the largest density of the grid (at least 0.05)
};
// The "transitions" section of the sweep options (or of cpx_transitions_from_curves).
Options parse_options(const Json& section, const std::string& where);

// Curves on the grid; absent parts are empty vectors.
struct Curves {
  std::vector<double> density;
  std::vector<double> chi;                      // NaN where unknown
  std::vector<std::string> chi_exact;           // optional exact decimals of chi, per point
  std::vector<std::vector<double>> betti;       // [point][k], NaN where unknown
  // Curvature moments per point (NaN where not computed), for the summary record.
  std::vector<double> kappa_mean, kappa_sd, kappa_skewness, kappa_kurtosis, forman_mean;
};

// The "transitions" JSON section (README, "Curvature and transitions").
Json analyse(const Curves& curves, std::size_t nodes, const Options& options);

// The summary record as TSV (header row first): one row per chi zero, chi touch, Betti
// crossing, Betti peak and random-graph zero.
std::string summary_tsv(const Json& section);

}  // namespace critplex::transitions
