#include "transitions/transitions.hpp"

#include <cmath>
#include <limits>

#include "base/error.hpp"

namespace critplex::transitions {

const char* direction_name(int direction) { return direction < 0 ? "down" : "up"; }

static void check_axis(const std::vector<double>& density, std::size_t values, const char* what) {
  if (density.size() != values)
    fail(ErrorKind::argument, std::string(what) + ": " + std::to_string(values) + " values for " +
                                  std::to_string(density.size()) + " densities");
  for (std::size_t i = 0; i < density.size(); ++i) {
    if (!std::isfinite(density[i]))
      fail(ErrorKind::argument, std::string(what) + ": density " + std::to_string(i + 1) + " is not finite");
    if (i > 0 && density[i] < density[i - 1])
      fail(ErrorKind::argument, std::string(what) + ": densities must not decrease (point " + std::to_string(i + 1) +
                                    " is below point " + std::to_string(i) + ")");
  }
}

std::vector<Crossing> sign_changes(const std::vector<double>& density, const std::vector<double>& values) {
  check_axis(density, values.size(), "sign changes");
  std::vector<Crossing> out;
  std::size_t last = values.size();  // last non-zero, non-NaN point
  bool zero_since_last = false;
  for (std::size_t i = 0; i < values.size(); ++i) {
    const double v = values[i];
    if (std::isnan(v)) continue;
    if (v == 0.0) {
      zero_since_last = true;
      continue;
    }
    if (last != values.size()) {
      const double a = values[last];
      const bool change = (a > 0) != (v > 0);
      if (change || zero_since_last) {
        Crossing c;
        c.left = last;
        c.right = i;
        c.touch = !change;
        c.direction = a > 0 ? -1 : +1;
        // Root of the straight line through (rho_left, a) and (rho_right, v); for a touch,
        // the middle of the zero run.
        if (change) {
          c.density = density[last] + (density[i] - density[last]) * (a / (a - v));
        } else {
          std::size_t first_zero = last + 1, last_zero = i - 1;
          while (first_zero < i && values[first_zero] != 0.0) ++first_zero;
          while (last_zero > last && values[last_zero] != 0.0) --last_zero;
          c.density = 0.5 * (density[first_zero] + density[last_zero]);
        }
        out.push_back(c);
      }
    }
    last = i;
    zero_since_last = false;
  }
  return out;
}

std::vector<double> log_abs(const std::vector<double>& values) {
  std::vector<double> out(values.size());
  for (std::size_t i = 0; i < values.size(); ++i)
    out[i] = values[i] == 0.0 ? -std::numeric_limits<double>::infinity() : std::log(std::fabs(values[i]));
  return out;
}

std::vector<BettiCrossing> betti_crossings(const std::vector<double>& density,
                                           const std::vector<std::vector<double>>& betti) {
  check_axis(density, betti.size(), "Betti crossings");
  std::size_t dims = 0;
  for (const auto& row : betti) dims = std::max(dims, row.size());
  std::vector<BettiCrossing> out;
  for (std::size_t k = 0; k + 1 < dims; ++k) {
    std::vector<double> difference(betti.size(), std::numeric_limits<double>::quiet_NaN());
    for (std::size_t i = 0; i < betti.size(); ++i)
      if (k + 1 < betti[i].size()) difference[i] = betti[i][k] - betti[i][k + 1];
    for (const Crossing& c : sign_changes(density, difference))
      if (!c.touch) out.push_back({k, c});
  }
  return out;
}

std::vector<BettiPeak> betti_peaks(const std::vector<double>& density, const std::vector<std::vector<double>>& betti) {
  check_axis(density, betti.size(), "Betti peaks");
  std::size_t dims = 0;
  for (const auto& row : betti) dims = std::max(dims, row.size());
  std::vector<BettiPeak> out;
  for (std::size_t k = 0; k < dims; ++k) {
    BettiPeak p;
    p.k = k;
    bool found = false;
    for (std::size_t i = 0; i < betti.size(); ++i) {
      if (k >= betti[i].size() || std::isnan(betti[i][k])) continue;
      if (!found || betti[i][k] > p.value) {
        found = true;
        p.value = betti[i][k];
        p.index = i;
      }
    }
    if (!found || p.value <= 0.0) continue;
    p.density = density[p.index];
    p.last_density = p.density;
    for (std::size_t i = p.index + 1; i < betti.size() && k < betti[i].size() && betti[i][k] == p.value; ++i)
      p.last_density = density[i];
    out.push_back(p);
  }
  return out;
}

double interpolate(const std::vector<double>& density, const std::vector<double>& values, std::size_t left,
                   std::size_t right, double x) {
  if (right == left || density[right] == density[left]) return values[left];
  const double t = (x - density[left]) / (density[right] - density[left]);
  return values[left] + t * (values[right] - values[left]);
}

}  // namespace critplex::transitions
