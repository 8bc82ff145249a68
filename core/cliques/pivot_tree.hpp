// The pivoting tree on one common neighbourhood, over bitset adjacency.
// Internal to the clique engine (counts.cpp drives it edge by edge).
#pragma once

#include <cstddef>
#include <cstdint>
#include <functional>
#include <vector>

#include "base/exact.hpp"
#include "cliques/int256.hpp"

// The hot loops are popcounts; x86-64 builds get a second copy using the POPCNT
// instruction, picked at load time, so one binary runs everywhere at full speed.
// Not under ThreadSanitizer: the load-time resolver would run instrumented code before
// the sanitizer's runtime is ready (a crash while the library is relocated).
#if defined(__x86_64__) && defined(__GNUC__) && !defined(__clang__) && !defined(__SANITIZE_THREAD__)
#define CRITPLEX_POPCOUNT_CLONES __attribute__((target_clones("popcnt", "default")))
#else
#define CRITPLEX_POPCOUNT_CLONES
#endif

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
  std::size_t words_;
  std::vector<std::uint64_t> bits_;
};

// Node curvature straight from the leaves (docs/methods.md, "Counting by edge increments").
// A leaf of edge uv with h hold nodes H and p pivot nodes P stands for the simplices
// uv + H + S, S any subset of P, |S| = j, of dimension 1 + h + j; Knill's curvature
// gives each node of a k-simplex (-1)^k / (k + 1). Summed over the leaf (Beta integral
// sum_j C(p, j) (-1)^j / (a + j) = (a - 1)! p! / (a + p)!):
//   u, v and each hold node:  hold_share(h, p)     = (-1)^(h+1) (h+1)! p! / (h+p+2)!
//   each pivot node:          hold_share(h+1, p-1) = (-1)^h (h+2)! (p-1)! / (h+p+2)!
// so curvature needs no count per clique size. Better still, the nodes on a leaf's
// path get their shares as subtree sums, one addition per branch of the tree (walk());
// only the pivots a leaf takes all at once are added one by one. Shares are integers
// over one common denominator: lcm(1..M) (exact; every share's denominator
// (h+p+2) C(h+p+1, p) divides lcm(1..h+p+2)) when that fits 127 bits, else 2^126 with
// each share rounded to the nearest multiple of 2^-126 (fixed point). M bounds the
// largest clique in nodes (the degeneracy of the last graph + 1).
struct CurvatureShares {
  bool exact = false;
  int128 denominator = 1;
  std::size_t stride = 0;        // p range of the table
  std::vector<int128> numerators;  // [h * stride + p] = denominator * hold_share(h, p), h + p + 2 <= M
  int128 hold(std::size_t h, std::size_t p) const { return numerators[h * stride + p]; }
};
// The table for cliques of at most max_clique nodes; fixed point when force_fixed_point.
CurvatureShares curvature_shares(std::size_t max_clique, bool force_fixed_point);

// Renumbers the nodes set in `common` (a global row) to 0..c-1 in increasing order into
// `members` (local -> global) and writes their adjacency among themselves into `rows`,
// ceil(c / 64) words per row, so the walks touch only the link. Returns c.
std::size_t renumber_link(const BitGraph& g, const std::uint64_t* common, std::vector<std::uint32_t>& members,
                          std::vector<std::uint64_t>& rows);

// The same for any bitset rows: for each node of `set` (rows of `words` words, node x's
// row at rows + x * words), in increasing order, writes its adjacency to the other
// nodes of `set`, renumbered 0..|set|-1, as one row of `out_words` words into `out`.
// One PEXT per word on x86-64 with BMI2, a portable loop elsewhere.
void compact_rows(const std::uint64_t* rows, std::size_t words, const std::uint64_t* set, std::uint64_t* out,
                  std::size_t out_words);

// What the leaves of the trees of one grid interval add up to. Leaves are tallied by
// (holds h, pivots p) and turned into clique counts later (C(p, j) cliques of h + j
// link nodes each), so the hot loop only increments one counter.
struct IntervalTally {
  std::vector<std::uint64_t> leaves;   // [h * stride + p]
  std::size_t stride = 0;              // allocated p range
  std::size_t rows = 0;                // allocated h range
  int128 chi_delta = 0;          // chi_only: sum over the edges of -f(link) (link_euler.hpp)
  std::uint64_t work = 0;              // tree nodes visited (+1 per edge)
  std::uint64_t edges = 0;             // edges processed in this interval
  bool truncated = false;              // a clique above max_dimension was skipped
  bool overflow = false;               // a node count did not fit 128 bits
  std::vector<std::vector<int128>> node_delta;  // [node][k], when node counts are asked
  std::vector<Int256> curvature;                // [node]: sum of the node's leaf shares, when curvature is asked

  void add_leaf(std::size_t h, std::size_t p);
};

// Thrown out of the recursion when the poller says stop (budget or cancel).
struct StopWalk {};

class LinkCounter {
 public:
  // max_nodes: largest clique (in nodes) to count, 0 for no limit.
  LinkCounter(std::size_t nodes, std::size_t max_nodes, bool node_counts);

  // Counts the cliques of the common neighbourhood of u and v in g (the edge uv itself
  // need not be in g) into tally. Calls poll() about every 4096 tree nodes; poll()
  // returning true aborts with StopWalk.
  void count_edge(const BitGraph& g, std::uint32_t u, std::uint32_t v, IntervalTally& tally,
                  const std::function<bool()>& poll);

  // Node curvature: every leaf adds its shares (table above) to tally.curvature.
  void enable_curvature(const CurvatureShares& shares) { shares_ = &shares; }

  // Binomial C(n, k) in 128 bits, or -1 when it does not fit.
  int128 binomial(std::size_t n, std::size_t k);

 private:
  void walk(std::size_t depth, std::size_t lo, std::size_t hi, std::size_t h, std::size_t p);
  void leaf(std::size_t depth, std::size_t h, std::size_t p);
  // Curvature: adds the shares of the subtree below depth + 1 to the node x branched on
  // there (hold or pivot) and to the sums of depth.
  void take_shares(std::size_t depth, std::uint32_t x, bool as_hold);
  void tick();
  const std::uint64_t* row(std::size_t x) const { return rows_ + x * lw_; }
  std::uint32_t global(std::uint32_t x) const { return members_[x]; }

  IntervalTally* tally_ = nullptr;
  const std::function<bool()>* poll_ = nullptr;
  std::size_t max_nodes_;
  bool node_counts_;
  std::size_t words_;                  // words of a global row
  const std::uint64_t* rows_ = nullptr;  // the renumbered link's adjacency rows
  std::size_t lw_ = 0;                 // words of those rows
  std::vector<std::uint32_t> members_; // local number -> global node
  std::vector<std::uint64_t> common_, local_;
  std::vector<std::uint64_t> sets_;   // per depth: the candidate set
  std::vector<std::uint64_t> rest_;   // per depth: candidates not yet branched on
  std::vector<std::uint32_t> holds_, pivots_;  // node counts only: the path's roles
  const CurvatureShares* shares_ = nullptr;    // node curvature, when asked
  // Curvature, per depth: what the leaves below add up to for a hold node on their path
  // (own) and for a pivot on their path, so a node gets one addition per branch taken
  // on it instead of one per leaf below.
  struct ShareSums {
    Int256 own, pivot;
  };
  std::vector<ShareSums> share_sums_;
  std::uint32_t u_ = 0, v_ = 0;
  std::uint64_t since_poll_ = 0;
  std::vector<std::vector<int128>> binomials_;  // Pascal rows, grown on demand (-1: too big)
};

}  // namespace critplex::cliques
