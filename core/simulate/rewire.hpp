// Degree-preserving rewiring of an unweighted simple graph (Maslov & Sneppen 2002,
// Science 296:910): pick two edges a-b and c-d and swap their ends to a-d and c-b
// unless that makes a self-loop or a duplicate edge. Every node keeps its degree; the
// rest of the structure (clustering, modules, cliques) is randomised. Seeded.
#pragma once

#include <cstdint>
#include <utility>
#include <vector>

#include "base/option_schema.hpp"
#include "filtration/filtration.hpp"

namespace critplex::simulate {

using EdgeList = std::vector<std::pair<std::uint32_t, std::uint32_t>>;  // u < v after rewiring

struct RewireOptions {
  double swaps_per_edge = 10.0;  // successful swaps asked for, per edge
  std::uint64_t seed = 1;
};

// The options of cpx_rewire_edges ({"swaps_per_edge", "seed"}) and their table.
const OptionSection& rewire_option_section();
RewireOptions parse_rewire_options(const Json& options, const std::string& where);

struct RewireResult {
  EdgeList edges;               // same count and same degrees as the input, each u < v, sorted
  std::uint64_t swaps = 0;      // successful swaps
  std::uint64_t attempts = 0;   // proposals (at most 100 per requested swap)
  bool complete = true;         // false when the attempt budget ran out first (a dense or
                                // star-like graph can have few or no legal swaps)
};

// nodes: node count; edges: a simple graph (no self-loops, no duplicates; checked).
RewireResult rewire(std::size_t nodes, const EdgeList& edges, const RewireOptions& options);

// The graph of the first `edge_count` edges of a filtration (the graph at that density),
// rewired. Weights are dropped: the null model of the graph, not of the weights.
RewireResult rewire_prefix(const filtration::Filtration& f, std::size_t edge_count, const RewireOptions& options);

// A nested rewiring of a filtration, for a null model of the whole sweep in one pass.
// The first layer_ends.back() edges are cut into layers at layer_ends (increasing edge
// counts, e.g. the grid's); swaps pair two edges of the same layer, so every node keeps
// its degree within every layer, hence its degree at every layer end, and the rewired
// graphs at successive ends are nested (a filtration, as the observed ones are). No
// edge is ever duplicated across layers. swaps_per_edge counts swaps over all edges of
// layers with at least two edges. The result's edges are listed layer by layer (not
// sorted), so its prefix of layer_ends[k] edges is the rewired graph at that end.
RewireResult rewire_nested(const filtration::Filtration& f, const std::vector<std::size_t>& layer_ends,
                           const RewireOptions& options);

// Degree of every node (a helper for checks and reports).
std::vector<std::size_t> degrees(std::size_t nodes, const EdgeList& edges);

}  // namespace critplex::simulate
