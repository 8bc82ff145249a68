#include "filtration/filtration.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include "base/error.hpp"

namespace critplex::filtration {

WeightMode weight_mode_from_name(const std::string& name) {
  if (name == "positive") return WeightMode::positive;
  if (name == "absolute") return WeightMode::absolute;
  if (name == "negative") return WeightMode::negative;
  fail(ErrorKind::argument, "weight mode must be \"positive\", \"absolute\" or \"negative\", got \"" + name + "\"");
}

const char* weight_mode_name(WeightMode mode) {
  switch (mode) {
    case WeightMode::positive: return "positive";
    case WeightMode::absolute: return "absolute";
    case WeightMode::negative: return "negative";
  }
  return "?";
}

std::size_t Filtration::tie_group_end(std::size_t m) const {
  if (m == 0) return 0;
  while (m < edges.size() && edges[m].weight == edges[m - 1].weight) ++m;
  return m;
}

static bool enters_before(const Edge& a, const Edge& b) {
  if (a.weight != b.weight) return a.weight > b.weight;
  if (a.u != b.u) return a.u < b.u;
  return a.v < b.v;
}

Filtration build(const Eigen::MatrixXd& matrix, WeightMode mode, double max_density, double symmetry_tolerance) {
  const Eigen::Index n = matrix.rows();
  if (matrix.cols() != n)
    fail(ErrorKind::data, "matrix is not square: " + std::to_string(n) + " rows, " + std::to_string(matrix.cols()) + " columns");
  if (n < 2) fail(ErrorKind::data, "matrix needs at least 2 nodes, got " + std::to_string(n));
  if (n > static_cast<Eigen::Index>(std::numeric_limits<std::uint32_t>::max()))
    fail(ErrorKind::data, "matrix has too many nodes");
  if (!(max_density > 0.0 && max_density <= 1.0))
    fail(ErrorKind::argument, "maximum density must be in (0, 1], got " + std::to_string(max_density));

  double scale = 0.0;
  for (Eigen::Index j = 0; j < n; ++j)
    for (Eigen::Index i = 0; i < n; ++i) {
      double x = matrix(i, j);
      if (!std::isfinite(x))
        fail(ErrorKind::data, "matrix entry at row " + std::to_string(i + 1) + ", column " + std::to_string(j + 1) +
                                  " is not finite");
      if (i != j) scale = std::max(scale, std::fabs(x));
    }
  const double tol = symmetry_tolerance * std::max(scale, 1e-300);
  for (Eigen::Index i = 0; i < n; ++i)
    for (Eigen::Index j = i + 1; j < n; ++j)
      if (std::fabs(matrix(i, j) - matrix(j, i)) > tol)
        fail(ErrorKind::data, "matrix is not symmetric: row " + std::to_string(i + 1) + ", column " +
                                  std::to_string(j + 1) + " holds " + std::to_string(matrix(i, j)) + " but row " +
                                  std::to_string(j + 1) + ", column " + std::to_string(i + 1) + " holds " +
                                  std::to_string(matrix(j, i)));

  Filtration f;
  f.nodes = static_cast<std::size_t>(n);
  f.mode = mode;
  std::vector<Edge> all;
  all.reserve(f.pairs());
  for (Eigen::Index i = 0; i < n; ++i)
    for (Eigen::Index j = i + 1; j < n; ++j) {
      // The upper triangle is the matrix's value; symmetric within tolerance anyway.
      double r = matrix(i, j);
      double w = 0.0;
      switch (mode) {
        case WeightMode::positive: if (!(r > 0.0)) continue; w = r; break;
        case WeightMode::absolute: w = std::fabs(r); break;
        case WeightMode::negative: if (!(r < 0.0)) continue; w = -r; break;
      }
      all.push_back(Edge{static_cast<std::uint32_t>(i), static_cast<std::uint32_t>(j), w, r});
    }

  // Keep only the prefix the caller wants, then finish its last tie group.
  std::size_t want = static_cast<std::size_t>(std::ceil(max_density * static_cast<double>(f.pairs()) - 1e-9));
  want = std::min(want, all.size());
  if (want < all.size()) {
    std::nth_element(all.begin(), all.begin() + static_cast<std::ptrdiff_t>(want), all.end(), enters_before);
    // Everything tied with the boundary edge must come along.
    const double boundary = all[want].weight;
    auto tail = std::partition(all.begin() + static_cast<std::ptrdiff_t>(want), all.end(),
                               [boundary](const Edge& e) { return e.weight == boundary; });
    all.erase(tail, all.end());
  }
  std::sort(all.begin(), all.end(), enters_before);
  f.edges = std::move(all);
  // Past `want` only members of the boundary tie group remain; keep them only if the
  // group straddles the boundary.
  if (want < f.edges.size()) f.edges.resize(f.tie_group_end(want));
  return f;
}

std::vector<GridPoint> make_grid(const Filtration& f, const GridSpec& spec) {
  std::vector<GridPoint> grid;
  const double pairs = static_cast<double>(f.pairs());
  auto point_after = [&](double requested, std::size_t m) {
    m = f.tie_group_end(std::min(m, f.edges.size()));
    GridPoint p;
    p.requested = requested;
    p.edges = m;
    p.density = f.density(m);
    p.threshold = m == 0 ? std::numeric_limits<double>::quiet_NaN() : f.edges[m - 1].value;
    return p;
  };
  auto edges_at_density = [&](double rho) {
    return static_cast<std::size_t>(std::floor(rho * pairs + 1e-9));
  };
  // The largest density the filtration holds edges for.
  const double top = std::min(spec.max_density, 1.0);

  if (spec.kind == "every") {
    grid.push_back(point_after(0.0, 0));
    for (std::size_t m = 1; m <= f.edges.size(); ++m) {
      std::size_t end = f.tie_group_end(m);
      if (end != m) continue;
      if (f.density(m) > top + 1e-12) break;
      grid.push_back(point_after(f.density(m), m));
    }
    return grid;
  }
  if (spec.kind == "step") {
    if (!(spec.step > 0.0 && spec.step <= 1.0))
      fail(ErrorKind::argument, "density step must be in (0, 1], got " + std::to_string(spec.step));
    if (spec.parameter != "density") fail(ErrorKind::argument, "a grid step is given in density; use a list of thresholds instead");
    const long count = static_cast<long>(std::floor(top / spec.step + 1e-9));
    grid.push_back(point_after(0.0, 0));
    for (long k = 1; k <= count; ++k) {
      double rho = static_cast<double>(k) * spec.step;
      grid.push_back(point_after(rho, edges_at_density(rho)));
    }
    return grid;
  }
  if (spec.kind == "list") {
    if (spec.values.empty()) fail(ErrorKind::argument, "grid list is empty");
    for (double x : spec.values) {
      if (spec.parameter == "density") {
        if (!(x >= 0.0 && x <= top + 1e-12))
          fail(ErrorKind::argument, "grid density " + std::to_string(x) + " is outside [0, " + std::to_string(top) + "]");
        grid.push_back(point_after(x, edges_at_density(x)));
      } else if (spec.parameter == "threshold") {
        // Edges whose weight (in the chosen mode) is at least the threshold's weight.
        double w = x;
        if (f.mode == WeightMode::absolute) w = std::fabs(x);
        if (f.mode == WeightMode::negative) w = -x;
        std::size_t m = 0;
        while (m < f.edges.size() && f.edges[m].weight >= w) ++m;
        grid.push_back(point_after(x, m));
      } else {
        fail(ErrorKind::argument, "grid parameter must be \"density\" or \"threshold\", got \"" + spec.parameter + "\"");
      }
    }
    return grid;
  }
  fail(ErrorKind::argument, "grid kind must be \"step\", \"list\" or \"every\", got \"" + spec.kind + "\"");
}

}  // namespace critplex::filtration
