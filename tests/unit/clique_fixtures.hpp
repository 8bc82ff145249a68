// Shared by the clique-engine unit tests: filtrations from edge lists in a given order.
#pragma once

#include <algorithm>
#include <cstdint>
#include <utility>
#include <vector>

#include "filtration/filtration.hpp"

namespace critplex::test {

using EdgeList = std::vector<std::pair<std::uint32_t, std::uint32_t>>;

// A filtration whose edges enter in list order (strictly decreasing weights, no ties).
inline filtration::Filtration in_order(std::size_t n, const EdgeList& edges) {
  filtration::Filtration f;
  f.nodes = n;
  double w = 1.0;
  for (auto [a, b] : edges) {
    f.edges.push_back(filtration::Edge{std::min(a, b), std::max(a, b), w, w});
    w *= 0.9999;
  }
  return f;
}

// The grid with a point after every edge.
inline std::vector<filtration::GridPoint> every(const filtration::Filtration& f) {
  filtration::GridSpec spec;
  spec.kind = "every";
  return filtration::make_grid(f, spec);
}

}  // namespace critplex::test
