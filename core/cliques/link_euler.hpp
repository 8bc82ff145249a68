// The Euler characteristic alone: what one new edge of the filtration changes in chi.
// Internal to the clique engine (counts.cpp uses it when only chi is asked).
//
// When edge uv enters, the new simplices are uv + S for every clique S (empty
// included) of the common neighbourhood L of u and v, so chi changes by
//   delta = -f(L),  f(L) = sum over cliques S of L of (-1)^|S|
// (f(L) is minus the reduced Euler characteristic of L's clique complex). f is computed
// by the pivot-free branches of the pivoting tree (docs/methods.md, "Counting by edge
// increments"): for a pivot p, the cliques inside p's closed neighbourhood form a cone
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
  // The candidate sets shrink as the walk goes down; once a set fits in half the words
  // of its rows (or in one), its nodes are renumbered into rows of that width (a
  // level), so the operations below touch only the words the set needs. Along one
  // path the width only decreases, so one level per width is enough.
  struct Level {
    std::vector<std::uint64_t> rows;  // renumbered adjacency, `width` words per node
    std::vector<std::uint64_t> sets;  // per depth below the level's start: the candidates
    std::vector<std::uint64_t> rest;  // per depth: candidates not yet branched on
  };
  // f of one tree node: its candidates are sets[depth] of the level of that width.
  // walk() counts the node (tick) and calls walk_body(), which does not, so a node
  // that moves to a narrower level is counted once.
  int128 walk(std::size_t width, std::size_t depth);
  int128 walk_body(std::size_t width, std::size_t depth);
  // The same for width 1, where a set is a single word and is passed by value.
  int128 walk_word(std::uint64_t set);
  int128 walk_word_body(std::uint64_t set);
  // Renumbers the nodes of `set` (over `rows`, `width` words each) into level `to` and
  // sets that level's root to all of them.
  void enter_level(const std::uint64_t* rows, std::size_t width, const std::uint64_t* set, std::size_t size,
                   std::size_t to);
  void tick();

  std::size_t words_;                   // words of a global row
  std::vector<std::uint64_t> common_;
  std::vector<Level> levels_;           // [width]
  std::vector<std::uint32_t> degree_;   // per node of the current level
  std::vector<std::uint64_t> order_;    // per depth: (degree << 32 | node) of the branch nodes
  std::uint64_t* work_ = nullptr;
  const std::function<bool()>* poll_ = nullptr;
  std::uint64_t since_poll_ = 0;
};

}  // namespace critplex::cliques
