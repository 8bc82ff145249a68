#include "simulate/rewire.hpp"

#include <algorithm>
#include <cmath>
#include <string>
#include <unordered_set>

#include "base/error.hpp"
#include "base/random.hpp"

namespace critplex::simulate {

namespace {

std::uint64_t key(std::uint32_t u, std::uint32_t v) {
  if (u > v) std::swap(u, v);
  return (static_cast<std::uint64_t>(u) << 32) | v;
}

// One Maslov-Sneppen proposal on edges i and j: a-b and c-d become a-d and c-b (or, by a
// coin, a-c and d-b) unless that makes a self-loop or a duplicate. True when swapped.
bool try_swap(EdgeList& edges, std::unordered_set<std::uint64_t>& present, std::size_t i, std::size_t j,
              Random& random) {
  auto [a, b] = edges[i];
  auto [c, d] = edges[j];
  if (random.below(2) == 1) std::swap(c, d);  // both ways of reconnecting are proposed
  if (a == d || c == b) return false;         // self-loop
  if (present.count(key(a, d)) || present.count(key(c, b))) return false;  // duplicate
  present.erase(key(a, b));
  present.erase(key(c, d));
  present.insert(key(a, d));
  present.insert(key(c, b));
  edges[i] = {std::min(a, d), std::max(a, d)};
  edges[j] = {std::min(c, b), std::max(c, b)};
  return true;
}

}  // namespace

std::vector<std::size_t> degrees(std::size_t nodes, const EdgeList& edges) {
  std::vector<std::size_t> d(nodes, 0);
  for (const auto& [u, v] : edges) {
    ++d.at(u);
    ++d.at(v);
  }
  return d;
}

RewireResult rewire(std::size_t nodes, const EdgeList& edges, const RewireOptions& options) {
  if (!(options.swaps_per_edge >= 0.0 && std::isfinite(options.swaps_per_edge)))
    fail(ErrorKind::argument, "swaps_per_edge must be a non-negative number");
  if (nodes > UINT32_MAX) fail(ErrorKind::argument, "rewiring: too many nodes");
  RewireResult result;
  result.edges = edges;
  std::unordered_set<std::uint64_t> present;
  present.reserve(edges.size() * 2);
  for (std::size_t i = 0; i < edges.size(); ++i) {
    auto& [u, v] = result.edges[i];
    if (u >= nodes || v >= nodes)
      fail(ErrorKind::argument, "edge " + std::to_string(i + 1) + " names node " + std::to_string(std::max(u, v)) +
                                    " of a graph with " + std::to_string(nodes) + " nodes");
    if (u == v) fail(ErrorKind::argument, "edge " + std::to_string(i + 1) + " is a self-loop on node " + std::to_string(u));
    if (u > v) std::swap(u, v);
    if (!present.insert(key(u, v)).second)
      fail(ErrorKind::argument, "edge " + std::to_string(i + 1) + " (" + std::to_string(u) + ", " + std::to_string(v) +
                                    ") appears twice");
  }
  const std::size_t m = result.edges.size();
  const auto wanted = static_cast<std::uint64_t>(std::llround(options.swaps_per_edge * static_cast<double>(m)));
  if (m < 2 || wanted == 0) {
    result.complete = wanted == 0;
    std::sort(result.edges.begin(), result.edges.end());
    return result;
  }
  const std::uint64_t budget = wanted * 100;
  Random random(options.seed);
  while (result.swaps < wanted && result.attempts < budget) {
    ++result.attempts;
    const auto i = static_cast<std::size_t>(random.below(m));
    auto j = static_cast<std::size_t>(random.below(m - 1));
    if (j >= i) ++j;  // two distinct edges
    if (try_swap(result.edges, present, i, j, random)) ++result.swaps;
  }
  result.complete = result.swaps >= wanted;
  std::sort(result.edges.begin(), result.edges.end());
  return result;
}

RewireResult rewire_nested(const filtration::Filtration& f, const std::vector<std::size_t>& layer_ends,
                           const RewireOptions& options) {
  if (!(options.swaps_per_edge >= 0.0 && std::isfinite(options.swaps_per_edge)))
    fail(ErrorKind::argument, "swaps_per_edge must be a non-negative number");
  if (f.nodes > UINT32_MAX) fail(ErrorKind::argument, "rewiring: too many nodes");
  for (std::size_t k = 0; k < layer_ends.size(); ++k)
    if (layer_ends[k] > f.edges.size() || (k > 0 && layer_ends[k] < layer_ends[k - 1]))
      fail(ErrorKind::argument, "nested rewiring: layer ends must increase within the filtration's " +
                                    std::to_string(f.edges.size()) + " edges");
  RewireResult result;
  const std::size_t m = layer_ends.empty() ? 0 : layer_ends.back();
  result.edges.reserve(m);
  std::unordered_set<std::uint64_t> present;
  present.reserve(m * 2);
  for (std::size_t i = 0; i < m; ++i) {
    const std::uint32_t u = f.edges[i].u, v = f.edges[i].v;
    result.edges.emplace_back(std::min(u, v), std::max(u, v));
    present.insert(key(u, v));
  }
  // Layer of every edge: [begin, end) in the edge list.
  std::vector<std::pair<std::size_t, std::size_t>> layer_of(m);
  std::size_t swappable = 0, begin = 0;
  for (std::size_t end : layer_ends) {
    for (std::size_t i = begin; i < end; ++i) layer_of[i] = {begin, end};
    if (end - begin >= 2) swappable += end - begin;
    begin = end;
  }
  const auto wanted = static_cast<std::uint64_t>(std::llround(options.swaps_per_edge * static_cast<double>(swappable)));
  const std::uint64_t budget = wanted * 100;
  Random random(options.seed);
  while (result.swaps < wanted && result.attempts < budget) {
    ++result.attempts;
    const auto i = static_cast<std::size_t>(random.below(m));
    const auto [lo, hi] = layer_of[i];
    if (hi - lo < 2) continue;  // a layer of one edge has nothing to swap with
    auto j = lo + static_cast<std::size_t>(random.below(hi - lo - 1));
    if (j >= i) ++j;
    if (try_swap(result.edges, present, i, j, random)) ++result.swaps;
  }
  result.complete = result.swaps >= wanted;
  return result;
}

RewireResult rewire_prefix(const filtration::Filtration& f, std::size_t edge_count, const RewireOptions& options) {
  if (edge_count > f.edges.size())
    fail(ErrorKind::argument, "rewiring asks for " + std::to_string(edge_count) + " edges but the filtration holds " +
                                  std::to_string(f.edges.size()));
  EdgeList edges;
  edges.reserve(edge_count);
  for (std::size_t i = 0; i < edge_count; ++i) edges.emplace_back(f.edges[i].u, f.edges[i].v);
  return rewire(f.nodes, edges, options);
}

const OptionSection& rewire_option_section() {
  static const OptionSection section{
      "rewire",
      "rewiring options",
      "cpx_rewire_edges",
      "Degree-preserving rewiring (Maslov & Sneppen 2002).",
      {{.key = "swaps_per_edge", .type = "number", .default_value = 10.0, .min = 0, .min_open = true,
        .meaning = "successful swaps asked for, per edge (at most 100 proposals per requested swap)"},
       {.key = "seed", .type = "integer", .default_value = 1, .min = 0, .meaning = "seed of the swaps"}}};
  return section;
}

RewireOptions parse_rewire_options(const Json& options, const std::string& where) {
  SchemaReader r(options, rewire_option_section(), where);
  RewireOptions o;
  o.swaps_per_edge = r.number("swaps_per_edge");
  o.seed = static_cast<std::uint64_t>(r.integer("seed"));
  r.finish();
  return o;
}

}  // namespace critplex::simulate
