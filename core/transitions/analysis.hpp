// The transitions engine of a sweep (and of curves a host computed elsewhere): zeros of
// chi, Betti crossings and peaks, the Erdos-Renyi reference for the same N, and the
// curvature moments at each transition, as typed records (core/output writes them).
#pragma once

#include <cstddef>
#include <limits>
#include <optional>
#include <string>
#include <vector>

#include "base/exact.hpp"
#include "base/option_schema.hpp"
#include "transitions/transitions.hpp"

namespace critplex::transitions {

struct Options {
  bool enabled = true;
  bool random_graph = true;        // add the G(N, p) reference
  std::size_t scan_points = 2000;  // scan grid of the reference's zero search
  double max_p = 0.0;              // 0: the largest density of the grid (at least 0.05)
};
const OptionSection& option_section();
// The "transitions" section of the sweep options: an object, true/false, or null
// (defaults). `where` and `prefix` name it and its keys in messages (SchemaReader).
Options parse_options(const Json& section, const std::string& where, const std::string& prefix);

// Curves on the grid; absent parts are empty vectors.
struct Curves {
  std::vector<double> density;
  std::vector<double> chi;                  // NaN where unknown
  std::vector<int128> chi_exact;            // exact chi where chi is known (same size as chi, or empty)
  std::vector<std::vector<double>> betti;   // [point][k], NaN where unknown
  // Curvature moments per point (NaN where not computed), for the records.
  std::vector<double> kappa_mean, kappa_sd, kappa_skewness, kappa_kurtosis, forman_mean;
};

// Curvature moments interpolated at a transition (NaN where unknown).
struct Moments {
  double kappa_mean, kappa_sd, kappa_skewness, kappa_kurtosis, forman_mean;
};

// A sign change (or touch) of chi, or of beta_k - beta_(k+1).
struct CrossingRecord {
  Crossing crossing;
  std::size_t k = 0;                      // Betti crossings: beta_k against beta_(k+1)
  double left_value = 0.0, right_value = 0.0;  // curve values at the bracketing points
  std::optional<int128> left_exact, right_exact;  // chi crossings: exact values there
  std::optional<Moments> moments;         // when curvature ran
  double nearest_reference = std::numeric_limits<double>::quiet_NaN();  // nearest zero of E[chi]
};

struct PeakRecord {
  BettiPeak peak;
  double nearest_reference = std::numeric_limits<double>::quiet_NaN();
};

struct ReferenceZero {
  double density = 0.0;
  int direction = 0;
};

// The Erdos-Renyi G(N, p) reference, p read as density.
struct RandomGraphReference {
  std::size_t nodes = 0;
  double max_p = 0.0;
  std::size_t scan_points = 0;
  double reliable_up_to = 0.0;
  std::vector<ReferenceZero> chi_zeros, kappa_zeros;
  std::vector<double> expected_chi, expected_kappa;  // on the grid; NaN where not reliable
};

struct Analysis {
  bool have_chi = false, have_betti = false;
  std::vector<CrossingRecord> chi_crossings;    // in density order, zeros and touches
  std::vector<CrossingRecord> betti_crossings;  // touches excluded
  std::vector<PeakRecord> betti_peaks;
  std::optional<RandomGraphReference> random_graph;

  // The zeros of chi (touches left out), in density order.
  std::vector<const CrossingRecord*> chi_zeros() const;
  std::vector<const CrossingRecord*> chi_touches() const;
  // Density of the first zero of chi; NaN when chi never changes sign.
  double first_chi_zero() const;
};

Analysis analyse(const Curves& curves, std::size_t nodes, const Options& options);

}  // namespace critplex::transitions
