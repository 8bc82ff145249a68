#include "cliques/pivot_tree.hpp"

#include <algorithm>
#include <bit>
#include <utility>

#if defined(__x86_64__) && defined(__GNUC__)
#include <immintrin.h>
#endif

namespace critplex::cliques {

BitGraph::BitGraph(std::size_t nodes)
    : degree_(nodes, 0), nodes_(nodes), words_((nodes + 63) / 64), bits_(nodes * words_, 0) {}

void BitGraph::add_edge(std::uint32_t u, std::uint32_t v) {
  bits_[u * words_ + v / 64] |= std::uint64_t{1} << (v % 64);
  bits_[v * words_ + u / 64] |= std::uint64_t{1} << (u % 64);
  ++degree_[u];
  ++degree_[v];
}

namespace {

// The bits of `value` at the positions set in `mask`, packed to the low end (what the
// BMI2 instruction PEXT does): renumbers one word of a row onto the link's members.
std::uint64_t extract_portable(std::uint64_t value, std::uint64_t mask) {
  std::uint64_t out = 0;
  for (std::uint64_t bit = 1; mask; mask &= mask - 1, bit <<= 1)
    if (value & mask & (~mask + 1)) out |= bit;
  return out;
}

#if defined(__x86_64__) && defined(__GNUC__)
__attribute__((target("bmi2"))) std::uint64_t extract_bmi2(std::uint64_t value, std::uint64_t mask) {
  return _pext_u64(value, mask);
}
#endif

// The chi-only walk renumbers often (whenever a candidate set fits in half its words),
// so the extraction must be inlined: the loop is compiled once per extractor.
template <std::uint64_t (*extract)(std::uint64_t, std::uint64_t)>
inline void compact_rows_with(const std::uint64_t* rows, std::size_t words, const std::uint64_t* set,
                              std::uint64_t* out, std::size_t out_words) {
  std::size_t lo = words, hi = 0;
  for (std::size_t w = 0; w < words; ++w)
    if (set[w]) {
      lo = std::min(lo, w);
      hi = w + 1;
    }
  std::uint64_t* row_out = out;
  for (std::size_t w = lo; w < hi; ++w)
    for (std::uint64_t bits = set[w]; bits; bits &= bits - 1, row_out += out_words) {
      const std::uint64_t* in = rows + (w * 64 + static_cast<std::size_t>(std::countr_zero(bits))) * words;
      std::fill(row_out, row_out + out_words, 0);
      std::size_t at = 0;  // new number of the first member in word x
      for (std::size_t x = lo; x < hi; ++x) {
        if (!set[x]) continue;
        const std::uint64_t packed = extract(in[x], set[x]);
        const std::size_t length = static_cast<std::size_t>(std::popcount(set[x]));
        const std::size_t shift = at % 64;
        row_out[at / 64] |= packed << shift;
        if (shift != 0 && shift + length > 64) row_out[at / 64 + 1] |= packed >> (64 - shift);
        at += length;
      }
    }
}

void compact_rows_portable(const std::uint64_t* rows, std::size_t words, const std::uint64_t* set,
                           std::uint64_t* out, std::size_t out_words) {
  compact_rows_with<extract_portable>(rows, words, set, out, out_words);
}

#if defined(__x86_64__) && defined(__GNUC__)
__attribute__((target("bmi2,popcnt"), flatten)) void compact_rows_bmi2(const std::uint64_t* rows, std::size_t words,
                                                                       const std::uint64_t* set, std::uint64_t* out,
                                                                       std::size_t out_words) {
  compact_rows_with<extract_bmi2>(rows, words, set, out, out_words);
}
#endif

using CompactRows = void (*)(const std::uint64_t*, std::size_t, const std::uint64_t*, std::uint64_t*, std::size_t);
CompactRows pick_compact_rows() {
#if defined(__x86_64__) && defined(__GNUC__)
  __builtin_cpu_init();
  if (__builtin_cpu_supports("bmi2") && __builtin_cpu_supports("popcnt")) return compact_rows_bmi2;
#endif
  return compact_rows_portable;
}

}  // namespace

void compact_rows(const std::uint64_t* rows, std::size_t words, const std::uint64_t* set, std::uint64_t* out,
                  std::size_t out_words) {
  static const CompactRows compact = pick_compact_rows();
  compact(rows, words, set, out, out_words);
}

std::size_t renumber_link(const BitGraph& g, const std::uint64_t* common, std::vector<std::uint32_t>& members,
                          std::vector<std::uint64_t>& rows) {
  members.clear();
  for (std::size_t w = 0; w < g.words(); ++w)
    for (std::uint64_t bits = common[w]; bits; bits &= bits - 1)
      members.push_back(static_cast<std::uint32_t>(w * 64 + static_cast<std::size_t>(std::countr_zero(bits))));
  const std::size_t c = members.size();
  const std::size_t lw = (c + 63) / 64;
  rows.resize(c * lw);
  compact_rows(g.row(0), g.words(), common, rows.data(), lw);
  return c;
}

void IntervalTally::add_leaf(std::size_t h, std::size_t p) {
  if (h >= rows || p >= stride) {
    // Grow with slack so a deep tree does not reallocate on every new maximum.
    std::size_t new_rows = std::max({rows, h + 1 + h / 2, std::size_t{8}});
    std::size_t new_stride = std::max({stride, p + 1 + p / 2, std::size_t{8}});
    std::vector<std::uint64_t> grown(new_rows * new_stride, 0);
    for (std::size_t i = 0; i < rows; ++i)
      for (std::size_t j = 0; j < stride; ++j) grown[i * new_stride + j] = leaves[i * stride + j];
    leaves = std::move(grown);
    rows = new_rows;
    stride = new_stride;
  }
  ++leaves[h * stride + p];
}

LinkCounter::LinkCounter(std::size_t nodes, std::size_t max_nodes, bool node_counts)
    : max_nodes_(max_nodes), node_counts_(node_counts), words_((nodes + 63) / 64) {
  // Depth never exceeds the size of a common neighbourhood (< nodes) plus the root.
  sets_.assign((nodes + 2) * words_, 0);
  rest_.assign((nodes + 2) * words_, 0);
}

CurvatureShares curvature_shares(std::size_t max_clique, bool force_fixed_point) {
  __extension__ typedef __float128 quad;
  CurvatureShares s;
  const std::size_t m = std::max<std::size_t>(max_clique, 2);
  s.stride = m - 1;  // p <= m - 2
  s.numerators.assign((m - 1) * s.stride, 0);
  // Exact: D = lcm(1..m) when it fits 127 bits (m <= 88).
  int128 lcm = 1;
  bool fits = !force_fixed_point;
  for (std::size_t d = 2; d <= m && fits; ++d) {
    int128 a = lcm, b = static_cast<int128>(d);
    while (b != 0) a = std::exchange(b, a % b);
    fits = !__builtin_mul_overflow(lcm / a, static_cast<int128>(d), &lcm);
  }
  if (fits) {
    s.exact = true;
    s.denominator = lcm;
    // Pascal rows up to m - 1; every entry divides lcm(1..m) / (row + 1), so fits.
    std::vector<std::vector<int128>> pascal{{1}};
    for (std::size_t n = 1; n < m; ++n) {
      std::vector<int128> row(n + 1, 1);
      for (std::size_t j = 1; j < n; ++j) row[j] = pascal[n - 1][j - 1] + pascal[n - 1][j];
      pascal.push_back(std::move(row));
    }
    for (std::size_t h = 0; h + 2 <= m; ++h)
      for (std::size_t p = 0; h + p + 2 <= m; ++p) {
        const std::size_t n = h + p + 1;  // share = 1 / ((n + 1) C(n, p))
        const int128 magnitude = lcm / (static_cast<int128>(n + 1) * pascal[n][p]);
        s.numerators[h * s.stride + p] = h % 2 == 1 ? magnitude : -magnitude;
      }
    return s;
  }
  // Fixed point: D = 2^126; shares (at most 1/2) by the recurrence
  // share(h, p) = share(h, p - 1) p / (h + p + 2) in binary128, then rounded.
  s.denominator = int128{1} << 126;
  const quad scale = static_cast<quad>(s.denominator);
  for (std::size_t h = 0; h + 2 <= m; ++h) {
    quad share = quad{1} / static_cast<quad>(h + 2);
    for (std::size_t p = 0; h + p + 2 <= m; ++p) {
      if (p > 0) share = share * static_cast<quad>(p) / static_cast<quad>(h + p + 2);
      const int128 magnitude = static_cast<int128>(share * scale + quad{0.5});
      s.numerators[h * s.stride + p] = h % 2 == 1 ? magnitude : -magnitude;
    }
  }
  return s;
}

int128 LinkCounter::binomial(std::size_t n, std::size_t k) {
  if (k > n) return 0;
  while (binomials_.size() <= n) {
    const std::size_t m = binomials_.size();
    std::vector<int128> row(m + 1, 1);
    for (std::size_t j = 1; j < m; ++j) {
      const int128 a = binomials_[m - 1][j - 1], b = binomials_[m - 1][j];
      int128 s;
      row[j] = (a < 0 || b < 0 || __builtin_add_overflow(a, b, &s)) ? int128{-1} : s;
    }
    binomials_.push_back(std::move(row));
  }
  return binomials_[n][k];
}

void LinkCounter::tick() {
  ++tally_->work;
  if (++since_poll_ >= 4096) {
    since_poll_ = 0;
    if ((*poll_)()) throw StopWalk{};
  }
}

CRITPLEX_POPCOUNT_CLONES
void LinkCounter::count_edge(const BitGraph& g, std::uint32_t u, std::uint32_t v, IntervalTally& tally,
                             const std::function<bool()>& poll) {
  tally_ = &tally;
  poll_ = &poll;
  u_ = u;
  v_ = v;
  holds_.clear();
  pivots_.clear();
  const std::uint64_t* ru = g.row(u);
  const std::uint64_t* rv = g.row(v);
  ++tally.edges;
  ++tally.work;
  common_.resize(words_);
  for (std::size_t w = 0; w < words_; ++w) common_[w] = ru[w] & rv[w];
  const std::size_t c = renumber_link(g, common_.data(), members_, local_);
  lw_ = (c + 63) / 64;
  rows_ = local_.data();
  std::uint64_t* root = sets_.data();
  for (std::size_t w = 0; w < lw_; ++w) root[w] = ~std::uint64_t{0};
  if (c % 64) root[lw_ - 1] = (std::uint64_t{1} << (c % 64)) - 1;
  if (shares_ && share_sums_.size() < c + 2) share_sums_.resize(c + 2);  // depth <= c + 1
  walk(0, 0, lw_, 0, 0);
  if (shares_) {
    // u and v are in every leaf's simplices, like a hold node.
    tally.curvature[u] += share_sums_[0].own;
    tally.curvature[v] += share_sums_[0].own;
  }
}

void LinkCounter::leaf(std::size_t depth, std::size_t h, std::size_t p) {
  // Link cliques of h + j nodes are simplices of dimension 1 + h + j.
  std::size_t top_j = p;
  if (max_nodes_ != 0 && 2 + h + p > max_nodes_) {
    tally_->truncated = true;
    top_j = max_nodes_ - 2 - h;  // walk() never lets 2 + h exceed max_nodes_
  }
  tally_->add_leaf(h, p);
  if (shares_) {
    // Curvature takes the whole leaf (points past a truncation are never reported). The
    // nodes on the leaf's path get these shares from take_shares() on the way up.
    ShareSums& here = share_sums_[depth];
    here.own += shares_->hold(h, p);
    if (p > 0) here.pivot += shares_->hold(h + 1, p - 1);
  }
  if (!node_counts_) return;
  auto add = [&](std::uint32_t node, std::size_t dim, int128 amount) {
    auto& row = tally_->node_delta[node];
    if (row.size() <= dim) row.resize(dim + 1, 0);
    if (amount < 0 || __builtin_add_overflow(row[dim], amount, &row[dim])) tally_->overflow = true;
  };
  // The edge's ends and every hold node are in all C(p, j) cliques of the leaf.
  for (std::size_t j = 0; j <= top_j; ++j) {
    const int128 c = binomial(p, j);
    add(u_, 1 + h + j, c);
    add(v_, 1 + h + j, c);
    for (std::uint32_t x : holds_) add(global(x), 1 + h + j, c);
  }
  // A pivot node is in C(p - 1, j - 1) of the cliques with j pivots.
  for (std::size_t j = 1; j <= top_j; ++j) {
    const int128 c = binomial(p - 1, j - 1);
    for (std::uint32_t x : pivots_) add(global(x), 1 + h + j, c);
  }
}

void LinkCounter::take_shares(std::size_t depth, std::uint32_t x, bool as_hold) {
  const ShareSums& child = share_sums_[depth + 1];
  tally_->curvature[global(x)] += as_hold ? child.own : child.pivot;
  share_sums_[depth].own += child.own;
  share_sums_[depth].pivot += child.pivot;
}

CRITPLEX_POPCOUNT_CLONES
void LinkCounter::walk(std::size_t depth, std::size_t lo, std::size_t hi, std::size_t h, std::size_t p) {
  tick();
  if (shares_) share_sums_[depth] = ShareSums{};
  const std::uint64_t* set = sets_.data() + depth * lw_;
  std::size_t size = 0;
  for (std::size_t w = lo; w < hi; ++w) size += static_cast<std::size_t>(std::popcount(set[w]));
  if (size == 0) {
    leaf(depth, h, p);
    return;
  }

  // Pivot: the candidate with the most neighbours among the candidates (first on ties).
  std::size_t pivot = 0, best = 0, degree_sum = 0;
  bool found = false, universal = false;
  for (std::size_t w = lo; w < hi; ++w) {
    for (std::uint64_t bits = set[w]; bits; bits &= bits - 1) {
      const std::size_t x = w * 64 + static_cast<std::size_t>(std::countr_zero(bits));
      const std::uint64_t* nbr = row(x);
      std::size_t d = 0;
      for (std::size_t i = lo; i < hi; ++i) d += static_cast<std::size_t>(std::popcount(nbr[i] & set[i]));
      if (!found || d > best) {
        pivot = x;
        best = d;
        found = true;
      }
      degree_sum += d;
      if (d + 1 == size) {
        pivot = x;  // joined to every other candidate: no branch but the pivot's
        universal = true;
        break;
      }
    }
    if (universal) break;
  }

  std::uint64_t* child = sets_.data() + (depth + 1) * lw_;
  auto fill_child = [&](const std::uint64_t* a, const std::uint64_t* b, std::size_t& clo, std::size_t& chi) {
    clo = hi;
    chi = lo;
    for (std::size_t w = lo; w < hi; ++w) {
      child[w] = a[w] & b[w];
      if (child[w]) {
        if (clo == hi) clo = w;
        chi = w + 1;
      }
    }
    if (chi <= clo) clo = chi = lo;
  };

  if (!universal && degree_sum == size * (size - 1)) {
    // The candidates form a clique: one leaf with all of them as pivots.
    if (node_counts_)
      for (std::size_t w = lo; w < hi; ++w)
        for (std::uint64_t bits = set[w]; bits; bits &= bits - 1)
          pivots_.push_back(static_cast<std::uint32_t>(w * 64 + static_cast<std::size_t>(std::countr_zero(bits))));
    leaf(depth, h, p + size);
    if (shares_) {
      // This leaf's own pivots: every candidate.
      const int128 share = shares_->hold(h + 1, p + size - 1);
      for (std::size_t w = lo; w < hi; ++w)
        for (std::uint64_t bits = set[w]; bits; bits &= bits - 1)
          tally_->curvature[global(static_cast<std::uint32_t>(w * 64 + static_cast<std::size_t>(std::countr_zero(bits))))] += share;
    }
    if (node_counts_) pivots_.resize(pivots_.size() - size);
    return;
  }
  {
    std::size_t clo, chi;
    fill_child(set, row(pivot), clo, chi);
    if (node_counts_) pivots_.push_back(static_cast<std::uint32_t>(pivot));
    walk(depth + 1, clo, chi, h, p + 1);
    if (node_counts_) pivots_.pop_back();
    if (shares_) take_shares(depth, static_cast<std::uint32_t>(pivot), false);
  }

  // Branches on the candidates outside the pivot's neighbourhood, each taken as a hold
  // node and removed from later branches so every clique is counted once.
  const std::uint64_t* pivot_row = row(pivot);
  bool any = false;
  for (std::size_t w = lo; w < hi && !any; ++w)
    any = (set[w] & ~pivot_row[w] & ~(w == pivot / 64 ? std::uint64_t{1} << (pivot % 64) : 0)) != 0;
  if (!any) return;
  if (max_nodes_ != 0 && 3 + h > max_nodes_) {
    tally_->truncated = true;
    return;
  }
  std::uint64_t* rest = rest_.data() + depth * lw_;
  for (std::size_t w = lo; w < hi; ++w) rest[w] = set[w];
  rest[pivot / 64] &= ~(std::uint64_t{1} << (pivot % 64));
  for (std::size_t w = lo; w < hi; ++w) {
    for (std::uint64_t bits = set[w] & ~pivot_row[w]; bits; bits &= bits - 1) {
      const std::size_t x = w * 64 + static_cast<std::size_t>(std::countr_zero(bits));
      if (x == pivot) continue;
      std::size_t clo, chi;
      fill_child(rest, row(x), clo, chi);
      if (node_counts_) holds_.push_back(static_cast<std::uint32_t>(x));
      walk(depth + 1, clo, chi, h + 1, p);
      if (node_counts_) holds_.pop_back();
      if (shares_) take_shares(depth, static_cast<std::uint32_t>(x), true);
      rest[w] &= ~(std::uint64_t{1} << (x % 64));
    }
  }
}

}  // namespace critplex::cliques
