// The pivoting tree on one common neighbourhood, over bitset adjacency.
// Internal to the clique engine (counts.cpp drives it edge by edge).
#pragma once

#include <cstddef>
#include <cstdint>
#include <functional>
#include <vector>

#include "base/exact.hpp"

namespace critplex::cliques {

// Undirected graph as one bitset row per node; rows are `words` 64-bit words long.
class BitGraph {
 public:
  explicit BitGraph(std::size_t nodes);
  std::size_t nodes() const { return nodes_; }
  std::size_t words() const { return words_; }
  const std::uint64_t* row(std::size_t x) const { return bits_.data() + x * words_; }
  void add_edge(std::uint32_t u, std::uint32_t v);
  std::uint32_t degree(std::size_t x) const { return degree_[x]; }

 private:
  std::vector<std::uint32_t> degree_;
  std::size_t nodes_;
  std::size_t words_;                  // words of a global row
  const std::uint64_t* rows_ = nullptr;  // adjacency rows the walk reads (global or local)
  std::size_t lw_ = 0;                 // words of those rows
  bool compact_ = false;               // rows are the renumbered link (full counts)
  std::vector<std::uint32_t> members_; // local number -> global node
  std::vector<std::uint32_t> rank_;    // members in earlier words
  std::vector<std::uint64_t> common_, local_;
  std::vector<std::uint64_t> bits_;
};

// What the leaves of the trees of one grid interval add up to. Leaves are tallied by
// (holds h, pivots p) and turned into clique counts later (C(p, j) cliques of h + j
// link nodes each), so the hot loop only increments one counter.
struct IntervalTally {
  std::vector<std::uint64_t> leaves;   // [h * stride + p]
  std::size_t stride = 0;              // allocated p range
  std::size_t rows = 0;                // allocated h range
  std::int64_t chi_delta = 0;          // chi_only: sum over pivot-free leaves of (-1)^(h+1)
  std::uint64_t work = 0;              // tree nodes visited (+1 per edge)
  std::uint64_t edges = 0;             // edges processed in this interval
  bool truncated = false;              // a clique above max_dimension was skipped
  bool overflow = false;               // a node count did not fit 128 bits
  std::vector<std::vector<int128>> node_delta;  // [node][k], when node counts are asked

  void add_leaf(std::size_t h, std::size_t p);
};

// Thrown out of the recursion when the poller says stop (budget or cancel).
struct StopWalk {};

class LinkCounter {
 public:
  // max_nodes: largest clique (in nodes) to count, 0 for no limit.
  LinkCounter(std::size_t nodes, bool chi_only, std::size_t max_nodes, bool node_counts);

  // Counts the cliques of the common neighbourhood of u and v in g (the edge uv itself
  // need not be in g) into tally. Calls poll() about every 4096 tree nodes; poll()
  // returning true aborts with StopWalk.
  void count_edge(const BitGraph& g, std::uint32_t u, std::uint32_t v, IntervalTally& tally,
                  const std::function<bool()>& poll);

  // Binomial C(n, k) in 128 bits, or -1 when it does not fit.
  int128 binomial(std::size_t n, std::size_t k);

 private:
  void walk(std::size_t depth, std::size_t lo, std::size_t hi, std::size_t h, std::size_t p);
  void leaf(std::size_t h, std::size_t p);
  void tick();
  const std::uint64_t* row(std::size_t x) const { return rows_ + x * lw_; }
  std::uint32_t global(std::uint32_t x) const { return compact_ ? members_[x] : x; }

  const BitGraph* g_ = nullptr;
  IntervalTally* tally_ = nullptr;
  const std::function<bool()>* poll_ = nullptr;
  bool chi_only_;
  std::size_t max_nodes_;
  bool node_counts_;
  std::size_t words_;                  // words of a global row
  const std::uint64_t* rows_ = nullptr;  // adjacency rows the walk reads (global or local)
  std::size_t lw_ = 0;                 // words of those rows
  bool compact_ = false;               // rows are the renumbered link (full counts)
  std::vector<std::uint32_t> members_; // local number -> global node
  std::vector<std::uint32_t> rank_;    // members in earlier words
  std::vector<std::uint64_t> common_, local_;
  std::vector<std::uint64_t> sets_;   // per depth: the candidate set
  std::vector<std::uint64_t> rest_;   // per depth: candidates not yet branched on
  std::vector<std::uint32_t> holds_, pivots_;  // node counts only: the path's roles
  std::uint32_t u_ = 0, v_ = 0;
  std::uint64_t since_poll_ = 0;
  std::vector<std::vector<int128>> binomials_;  // Pascal rows, grown on demand (-1: too big)
};

}  // namespace critplex::cliques
