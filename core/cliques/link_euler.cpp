#include "cliques/link_euler.hpp"

#include <algorithm>
#include <bit>

namespace critplex::cliques {

LinkEuler::LinkEuler(std::size_t nodes) : words_((nodes + 63) / 64), levels_(words_ + 1) {}

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

  // Renumber the link 0..c-1 into compact rows (the first level), so every set
  // operation of the walk touches only the link.
  const std::size_t width = (c + 63) / 64;
  if (degree_.size() < c) degree_.resize(c);
  order_.clear();
  enter_level(g.row(0), words_, common_.data(), c, width);
  tick();
  return walk_body(width, 0);
}

void LinkEuler::enter_level(const std::uint64_t* rows, std::size_t width, const std::uint64_t* set, std::size_t size,
                            std::size_t to) {
  Level& level = levels_[to];
  if (level.rows.size() < size * to) level.rows.resize(size * to);
  // Depth below the level's start never exceeds size + 1.
  if (level.sets.size() < (size + 2) * to) {
    level.sets.resize((size + 2) * to);
    level.rest.resize((size + 2) * to);
  }
  compact_rows(rows, width, set, level.rows.data(), to);
  std::uint64_t* root = level.sets.data();
  for (std::size_t w = 0; w < to; ++w) root[w] = ~std::uint64_t{0};
  if (size % 64) root[to - 1] = (std::uint64_t{1} << (size % 64)) - 1;
}

int128 LinkEuler::walk(std::size_t width, std::size_t depth) {
  tick();
  return walk_body(width, depth);
}

CRITPLEX_POPCOUNT_CLONES
int128 LinkEuler::walk_body(std::size_t width, std::size_t depth) {
  if (width == 1) return walk_word_body(levels_[1].sets[depth]);
  Level& level = levels_[width];
  const std::uint64_t* set = level.sets.data() + depth * width;
  std::size_t size = 0;
  for (std::size_t w = 0; w < width; ++w) size += static_cast<std::size_t>(std::popcount(set[w]));
  if (size == 0) return 1;
  if (size == 1) return 0;
  const std::size_t fits = (size + 63) / 64;
  // Renumbering costs about as much as one pass over the set's degrees, so it pays
  // only when the rows at least halve (or become single words); moving down one word
  // at a time made the widest links (density 0.8 and up) slower.
  if (fits == 1 || 2 * fits <= width) {
    // Same tree node, narrower rows: continue on the renumbered set.
    enter_level(level.rows.data(), width, set, size, fits);
    return walk_body(fits, 0);
  }
  const std::uint64_t* rows = level.rows.data();

  // Degrees within the candidates; a node joined to all the others makes a cone (0).
  std::size_t pivot = 0, best = 0;
  bool found = false;
  for (std::size_t w = 0; w < width; ++w)
    for (std::uint64_t bits = set[w]; bits; bits &= bits - 1) {
      const std::size_t x = w * 64 + static_cast<std::size_t>(std::countr_zero(bits));
      const std::uint64_t* nbr = rows + x * width;
      std::size_t d = 0;
      for (std::size_t i = 0; i < width; ++i) d += static_cast<std::size_t>(std::popcount(nbr[i] & set[i]));
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
  const std::uint64_t* pivot_row = rows + pivot * width;
  for (std::size_t w = 0; w < width; ++w)
    for (std::uint64_t bits = set[w] & ~pivot_row[w]; bits; bits &= bits - 1) {
      const std::size_t x = w * 64 + static_cast<std::size_t>(std::countr_zero(bits));
      if (x != pivot) order_.push_back((static_cast<std::uint64_t>(degree_[x]) << 32) | x);
    }
  std::sort(order_.begin() + static_cast<std::ptrdiff_t>(first), order_.end());

  std::uint64_t* rest = level.rest.data() + depth * width;
  std::uint64_t* child = level.sets.data() + (depth + 1) * width;
  for (std::size_t w = 0; w < width; ++w) rest[w] = set[w];
  rest[pivot / 64] &= ~(std::uint64_t{1} << (pivot % 64));
  int128 f = 0;
  for (std::size_t k = first; k < order_.size(); ++k) {
    const std::size_t x = static_cast<std::size_t>(order_[k] & 0xffffffffu);
    const std::uint64_t* nbr = rows + x * width;
    std::size_t child_size = 0;
    for (std::size_t w = 0; w < width; ++w) {
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
      for (std::size_t w = 0; w < width; ++w)
        for (std::uint64_t bits = child[w]; bits; bits &= bits - 1)
          pair[seen++] = w * 64 + static_cast<std::size_t>(std::countr_zero(bits));
      if (!((rows[pair[0] * width + pair[1] / 64] >> (pair[1] % 64)) & 1)) f += 1;
    } else if (child_size > 2) {
      f -= walk(width, depth + 1);
    }
  }
  order_.resize(first);
  return f;
}

int128 LinkEuler::walk_word(std::uint64_t set) {
  tick();
  return walk_word_body(set);
}

// walk_body for sets of at most 64 nodes: the same tree, on single words.
CRITPLEX_POPCOUNT_CLONES
int128 LinkEuler::walk_word_body(std::uint64_t set) {
  const std::uint64_t* rows = levels_[1].rows.data();
  const int size = std::popcount(set);
  if (size == 0) return 1;
  if (size == 1) return 0;
  int pivot = 0, best = -1;
  for (std::uint64_t bits = set; bits; bits &= bits - 1) {
    const int x = std::countr_zero(bits);
    const int d = std::popcount(rows[x] & set);
    if (d + 1 == size) return 0;
    degree_[static_cast<std::size_t>(x)] = static_cast<std::uint32_t>(d);
    if (d > best) {
      pivot = x;
      best = d;
    }
  }
  std::uint64_t order[64];
  std::size_t branches = 0;
  const std::uint64_t pivot_bit = std::uint64_t{1} << pivot;
  for (std::uint64_t bits = set & ~rows[pivot] & ~pivot_bit; bits; bits &= bits - 1) {
    const auto x = static_cast<std::size_t>(std::countr_zero(bits));
    order[branches++] = (static_cast<std::uint64_t>(degree_[x]) << 32) | x;
  }
  std::sort(order, order + branches);
  std::uint64_t rest = set & ~pivot_bit;
  int128 f = 0;
  for (std::size_t k = 0; k < branches; ++k) {
    const auto x = static_cast<std::size_t>(order[k] & 0xffffffffu);
    const std::uint64_t child = rest & rows[x];
    rest &= ~(std::uint64_t{1} << x);
    const int child_size = std::popcount(child);
    if (child_size == 0) {
      f -= 1;
    } else if (child_size == 2) {
      const int a = std::countr_zero(child), b = 63 - std::countl_zero(child);
      if (!((rows[a] >> b) & 1)) f += 1;
    } else if (child_size > 2) {
      f -= walk_word(child);
    }
  }
  return f;
}

}  // namespace critplex::cliques
