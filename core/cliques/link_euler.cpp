#include "cliques/link_euler.hpp"

#include <algorithm>
#include <bit>

namespace critplex::cliques {

LinkEuler::LinkEuler(std::size_t nodes) : words_((nodes + 63) / 64) {}

void LinkEuler::tick() {
  ++*work_;
  if (++since_poll_ >= 4096) {
    since_poll_ = 0;
    if ((*poll_)()) throw StopWalk{};
  }
}

CRITPLEX_POPCOUNT_CLONES
int128 LinkEuler::link_sum(const BitGraph& g, std::uint32_t u, std::uint32_t v, std::uint64_t& work,
                           const std::function<bool()>& poll) {
  work_ = &work;
  poll_ = &poll;
  tick();
  const std::uint64_t* ru = g.row(u);
  const std::uint64_t* rv = g.row(v);
  common_.resize(words_);
  std::size_t c = 0, lo = words_, hi = 0;
  for (std::size_t w = 0; w < words_; ++w) {
    common_[w] = ru[w] & rv[w];
    if (common_[w]) {
      c += static_cast<std::size_t>(std::popcount(common_[w]));
      lo = std::min(lo, w);
      hi = w + 1;
    }
  }
  if (c == 0) return 1;  // only the empty clique
  if (c == 1) return 0;  // a point: 1 - 1

  // Most links are cones on the node of highest degree in the whole graph: found here
  // on the global rows, before paying for the renumbering below.
  std::size_t hub = 0;
  std::uint32_t hub_degree = 0;
  for (std::size_t w = lo; w < hi; ++w)
    for (std::uint64_t bits = common_[w]; bits; bits &= bits - 1) {
      const std::size_t x = w * 64 + static_cast<std::size_t>(std::countr_zero(bits));
      if (g.degree(x) >= hub_degree) {
        hub = x;
        hub_degree = g.degree(x);
      }
    }
  {
    const std::uint64_t* nbr = g.row(hub);
    std::size_t d = 0;
    for (std::size_t w = lo; w < hi; ++w) d += static_cast<std::size_t>(std::popcount(nbr[w] & common_[w]));
    if (d + 1 == c) return 0;
  }

  // Renumber the link 0..c-1 with compact rows, so every set operation of the walk
  // touches only the link.
  renumber_link(g, common_.data(), members_, local_);
  lw_ = (c + 63) / 64;
  // Depth never exceeds c + 1; every depth has its candidate set and its rest.
  if (sets_.size() < (c + 2) * lw_) {
    sets_.resize((c + 2) * lw_);
    rest_.resize((c + 2) * lw_);
  }
  if (degree_.size() < c) degree_.resize(c);
  std::uint64_t* root = sets_.data();
  for (std::size_t w = 0; w < lw_; ++w) root[w] = ~std::uint64_t{0};
  if (c % 64) root[lw_ - 1] = (std::uint64_t{1} << (c % 64)) - 1;
  order_.clear();
  return walk(0);
}

CRITPLEX_POPCOUNT_CLONES
int128 LinkEuler::walk(std::size_t depth) {
  tick();
  const std::uint64_t* set = sets_.data() + depth * lw_;
  std::size_t size = 0;
  for (std::size_t w = 0; w < lw_; ++w) size += static_cast<std::size_t>(std::popcount(set[w]));
  if (size == 0) return 1;
  if (size == 1) return 0;

  // Degrees within the candidates; a node joined to all the others makes a cone (0).
  std::size_t pivot = 0, best = 0;
  bool found = false;
  for (std::size_t w = 0; w < lw_; ++w)
    for (std::uint64_t bits = set[w]; bits; bits &= bits - 1) {
      const std::size_t x = w * 64 + static_cast<std::size_t>(std::countr_zero(bits));
      const std::uint64_t* nbr = row(x);
      std::size_t d = 0;
      for (std::size_t i = 0; i < lw_; ++i) d += static_cast<std::size_t>(std::popcount(nbr[i] & set[i]));
      if (d + 1 == size) return 0;
      degree_[x] = static_cast<std::uint32_t>(d);
      if (!found || d > best) {
        pivot = x;
        best = d;
        found = true;
      }
    }

  // The pivot's non-neighbours, least connected first (ties by node: deterministic).
  const std::size_t first = order_.size();
  const std::uint64_t* pivot_row = row(pivot);
  for (std::size_t w = 0; w < lw_; ++w)
    for (std::uint64_t bits = set[w] & ~pivot_row[w]; bits; bits &= bits - 1) {
      const std::size_t x = w * 64 + static_cast<std::size_t>(std::countr_zero(bits));
      if (x != pivot) order_.push_back((static_cast<std::uint64_t>(degree_[x]) << 32) | x);
    }
  std::sort(order_.begin() + static_cast<std::ptrdiff_t>(first), order_.end());

  std::uint64_t* rest = rest_.data() + depth * lw_;
  std::uint64_t* child = sets_.data() + (depth + 1) * lw_;
  for (std::size_t w = 0; w < lw_; ++w) rest[w] = set[w];
  rest[pivot / 64] &= ~(std::uint64_t{1} << (pivot % 64));
  int128 f = 0;
  for (std::size_t k = first; k < order_.size(); ++k) {
    const std::size_t x = static_cast<std::size_t>(order_[k] & 0xffffffffu);
    const std::uint64_t* nbr = row(x);
    std::size_t child_size = 0;
    for (std::size_t w = 0; w < lw_; ++w) {
      child[w] = rest[w] & nbr[w];
      child_size += static_cast<std::size_t>(std::popcount(child[w]));
    }
    rest[x / 64] &= ~(std::uint64_t{1} << (x % 64));
    // Small candidate sets in closed form (most of the tree's nodes are these):
    // empty: f = 1; one node: 1 - 1 = 0; two nodes: 0 if joined (a cone), else 1 - 2.
    if (child_size == 0) {
      f -= 1;
    } else if (child_size == 2) {
      std::size_t pair[2] = {0, 0}, seen = 0;
      for (std::size_t w = 0; w < lw_; ++w)
        for (std::uint64_t bits = child[w]; bits; bits &= bits - 1)
          pair[seen++] = w * 64 + static_cast<std::size_t>(std::countr_zero(bits));
      if (!((row(pair[0])[pair[1] / 64] >> (pair[1] % 64)) & 1)) f += 1;
    } else if (child_size > 2) {
      f -= walk(depth + 1);
    }
  }
  order_.resize(first);
  return f;
}

}  // namespace critplex::cliques
