// Topological transitions read off curves on a density grid (docs/methods.md, "Transitions").
//
// Inputs are plain arrays (densities and curve values), so the same code serves a sweep
// and a host that computed its curves elsewhere. Curves are step functions known at
// the grid points; a sign change between two neighbouring non-zero points is located by
// linear interpolation between them. Runs of exact zeros are skipped over: the bracket
// is the last non-zero point before and the first after. A zero whose two sides have the
// same sign is a "touch", not a transition.
#pragma once

#include <cstddef>
#include <string>
#include <vector>

namespace critplex::transitions {

struct Crossing {
  double density = 0.0;       // interpolated location
  int direction = 0;          // -1: the curve goes from positive to negative ("down"), +1: "up"
  std::size_t left = 0;       // grid index of the last non-zero point before
  std::size_t right = 0;      // grid index of the first non-zero point after
  bool touch = false;         // true: the curve reaches 0 and returns to the same sign
};
const char* direction_name(int direction);

// Sign changes (and touches) of `values` over increasing `density`. NaN points are skipped.
// Throws ErrorKind::argument when the sizes differ or density is not non-decreasing.
std::vector<Crossing> sign_changes(const std::vector<double>& density, const std::vector<double>& values);

// log |chi| as a curve (-infinity where chi = 0): its singularities mark the zeros.
std::vector<double> log_abs(const std::vector<double>& values);

// Betti curves betti[point][k] (NaN = not computed at that point).
struct BettiCrossing {
  std::size_t k = 0;          // beta_k against beta_(k+1)
  Crossing crossing;          // direction -1: beta_k falls below beta_(k+1)
};
std::vector<BettiCrossing> betti_crossings(const std::vector<double>& density,
                                           const std::vector<std::vector<double>>& betti);

struct BettiPeak {
  std::size_t k = 0;
  double value = 0.0;          // the maximum of beta_k over the grid
  double density = 0.0;        // first grid density where it is reached
  double last_density = 0.0;   // last grid density of the first plateau at the maximum
  std::size_t index = 0;       // grid index of the first maximum
};
// One peak per dimension whose curve is not identically zero.
std::vector<BettiPeak> betti_peaks(const std::vector<double>& density, const std::vector<std::vector<double>>& betti);

// Linear interpolation of a curve at density x between grid points left and right.
double interpolate(const std::vector<double>& density, const std::vector<double>& values, std::size_t left,
                   std::size_t right, double x);

}  // namespace critplex::transitions
