// The Euler characteristic alone: what one new edge of the filtration changes in chi.
// Internal to the clique engine (counts.cpp uses it when only chi is asked).
//
// When edge uv enters, the new simplices are uv + S for every clique S (empty
// included) of the common neighbourhood L of u and v, so chi changes by
//   delta = -f(L),  f(L) = sum over cliques S of L of (-1)^|S|
// (f(L) is minus the reduced Euler characteristic of L's clique complex). f is computed
// by the pivot-free branches of the pivoting tree (METHODS.md, "Consequences worth
// exploiting"): for a pivot p, the cliques inside p's closed neighbourhood form a cone
// and add 0, so f(P) = -sum over the non-neighbours x of p of f(N(x) ∩ rest), where
// rest drops p and the non-neighbours already branched on. Any order of those
// branches is exact; taking the least connected first leaves the largest candidate
// sets for last, when the most nodes have been dropped from them, which shrinks the
// tree (about 1.5-2x fewer nodes on brain-like links).
#pragma once

#include <cstddef>
#include <cstdint>
#include <functional>
#include <vector>

#include "base/exact.hpp"
#include "cliques/pivot_tree.hpp"

namespace critplex::cliques {

class LinkEuler {
 public:
  explicit LinkEuler(std::size_t nodes);

  // f(L) for L = common neighbourhood of u and v in g (the edge uv itself need not be
  // in g). Adds the tree nodes visited to `work`, calls poll() about every 4096 of them
  // (true: throw StopWalk).
  int128 link_sum(const BitGraph& g, std::uint32_t u, std::uint32_t v, std::uint64_t& work,
                  const std::function<bool()>& poll);

 private:
  int128 walk(std::size_t depth);
  void tick();
  const std::uint64_t* row(std::size_t x) const { return local_.data() + x * lw_; }

  std::size_t words_;                   // words of a global row
  std::size_t lw_ = 0;                  // words of a local (renumbered link) row
  std::vector<std::uint32_t> members_;  // local number -> global node
  std::vector<std::uint64_t> common_, local_;
  std::vector<std::uint64_t> sets_, rest_;        // per depth, lw_ words each
  std::vector<std::uint32_t> degree_;             // per depth, one entry per link node
  std::vector<std::uint64_t> order_;              // per depth: (degree << 32 | node) of the branch nodes
  std::uint64_t* work_ = nullptr;
  const std::function<bool()>* poll_ = nullptr;
  std::uint64_t since_poll_ = 0;
};

}  // namespace critplex::cliques
