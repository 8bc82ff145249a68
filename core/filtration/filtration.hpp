// The density filtration of a weighted graph: edges enter one at a time, strongest
// first, and every later stage (cliques, homology, curvature) walks this order.
#pragma once

#include <Eigen/Dense>

#include <cstddef>
#include <cstdint>
#include <string>
#include <vector>

namespace critplex::filtration {

// Which matrix entries become edges and how strong they are.
//   positive: weight r_ij, only r_ij > 0 enter;  absolute: |r_ij|, every pair enters;
//   negative: -r_ij, only r_ij < 0 enter.
enum class WeightMode { positive, absolute, negative };
WeightMode weight_mode_from_name(const std::string& name);  // throws ErrorKind::argument
const char* weight_mode_name(WeightMode mode);

struct Edge {
  std::uint32_t u = 0;   // u < v
  std::uint32_t v = 0;
  double weight = 0.0;   // in the chosen mode: larger enters first
  double value = 0.0;    // the matrix entry itself (r_ij), for reporting thresholds
};

// Edges in entry order: decreasing weight, ties broken by (u, v) lexicographically.
struct Filtration {
  std::size_t nodes = 0;
  WeightMode mode = WeightMode::positive;
  std::vector<Edge> edges;  // only those up to the requested maximum density (tie groups kept whole)

  // N (N - 1) / 2, the denominator of the density.
  std::size_t pairs() const { return nodes < 2 ? 0 : nodes * (nodes - 1) / 2; }
  double density(std::size_t edge_count) const {
    return pairs() == 0 ? 0.0 : static_cast<double>(edge_count) / static_cast<double>(pairs());
  }
  // Smallest m' >= m such that edge m'-1 and edge m' are not tied (the end of the tie
  // group that edge m-1 belongs to); curves are reported only at such counts.
  std::size_t tie_group_end(std::size_t edge_count) const;
};

// Checks the matrix (square, finite, symmetric to `symmetry_tolerance` relative to the
// largest entry) and orders its edges. The diagonal is ignored. `max_density` in (0, 1].
// Errors name the offending row and column (0-based in the message as "row i, column j"
// with 1-based numbers, as a spreadsheet user counts).
Filtration build(const Eigen::MatrixXd& matrix, WeightMode mode, double max_density = 1.0,
                 double symmetry_tolerance = 1e-9);

// One point of the reporting grid: the curve value after `edges` edges have entered.
struct GridPoint {
  double requested = 0.0;   // the density or threshold the user asked for
  std::size_t edges = 0;    // edges entered (end of a tie group)
  double density = 0.0;     // edges / pairs
  double threshold = 0.0;   // matrix value of the last edge entered (NaN when edges == 0)
};

// How the grid is chosen. kind = "step": densities step, 2 step, ... up to max_density;
// "list": the given values (densities, or thresholds when parameter = "threshold");
// "every": after every tie group (every edge when there are no ties).
struct GridSpec {
  std::string kind = "step";
  std::string parameter = "density";  // or "threshold"
  double step = 0.01;
  std::vector<double> values;
  double max_density = 1.0;
};

std::vector<GridPoint> make_grid(const Filtration& f, const GridSpec& spec);

}  // namespace critplex::filtration
