#include "homology/persistence.hpp"

#include <algorithm>
#include <atomic>
#include <bit>
#include <cmath>
#include <functional>
#include <limits>
#include <thread>

#include "base/error.hpp"
#include "base/exact.hpp"
#include "base/numeric.hpp"

namespace critplex::homology {

namespace {

using u32 = std::uint32_t;
using u64 = std::uint64_t;

constexpr int kMaxVertices = 32;          // a (K+1)-simplex has K+2 vertices, K <= 30
// Edge ranks sit in an N x N table (one load per lookup) while it costs at most 4 MiB or
// a few times the neighbour lists; otherwise lookups search the sorted neighbour lists.
constexpr std::size_t kDenseBytes = std::size_t{4} << 20;

// The graph of the filtration: edge ranks (0 = absent), neighbour lists in
// decreasing vertex order, and the binomial table of the combinatorial number system.
class Graph {
 public:
  Graph(const filtration::Filtration& f, int max_vertices)
      : n_(static_cast<u32>(f.nodes)), k_(max_vertices), binomial_(f.nodes, static_cast<std::size_t>(max_vertices)) {
    if (f.edges.size() >= std::numeric_limits<u32>::max() - 2)
      fail(ErrorKind::overflow, "homology: more than 2^32 - 3 edges in the filtration");
    std::vector<u32> degree(n_ + 1, 0);
    for (const auto& e : f.edges) {
      ++degree[e.u];
      ++degree[e.v];
    }
    offset_.assign(n_ + 1, 0);
    for (u32 v = 0; v < n_; ++v) offset_[v + 1] = offset_[v] + degree[v];
    neighbour_.resize(offset_[n_]);
    neighbour_rank_.resize(offset_[n_]);
    std::vector<std::size_t> fill(offset_.begin(), offset_.end() - 1);
    for (std::size_t m = 0; m < f.edges.size(); ++m) {
      const auto& e = f.edges[m];
      const u32 r = static_cast<u32>(m + 1);
      neighbour_[fill[e.u]] = e.v;
      neighbour_rank_[fill[e.u]++] = r;
      neighbour_[fill[e.v]] = e.u;
      neighbour_rank_[fill[e.v]++] = r;
    }
    std::vector<std::pair<u32, u32>> buffer;
    for (u32 v = 0; v < n_; ++v) {
      buffer.clear();
      for (std::size_t i = offset_[v]; i < offset_[v + 1]; ++i) buffer.emplace_back(neighbour_[i], neighbour_rank_[i]);
      std::sort(buffer.begin(), buffer.end(), [](const auto& a, const auto& b) { return a.first > b.first; });
      for (std::size_t i = 0; i < buffer.size(); ++i) {
        neighbour_[offset_[v] + i] = buffer[i].first;
        neighbour_rank_[offset_[v] + i] = buffer[i].second;
      }
    }
    const std::size_t table_bytes = static_cast<std::size_t>(n_) * n_ * sizeof(u32);
    if (table_bytes <= std::max(kDenseBytes, 4 * f.edges.size() * 2 * 2 * sizeof(u32))) {
      dense_.assign(static_cast<std::size_t>(n_) * n_, 0);
      for (std::size_t m = 0; m < f.edges.size(); ++m) {
        const auto& e = f.edges[m];
        dense_[static_cast<std::size_t>(e.u) * n_ + e.v] = dense_[static_cast<std::size_t>(e.v) * n_ + e.u] =
            static_cast<u32>(m + 1);
      }
    }
    // C(n, k) for n <= N, k <= max_vertices; every simplex index is below C(N, k) and
    // C(n, k) <= C(N, k) for n <= N, so one check here makes all later index arithmetic
    // safe in 64 bits.
    const u64 limit = u64{1} << 62;
    for (int k = 1; k <= k_; ++k)
      if (binomial_(n_, static_cast<std::size_t>(k)) > limit)
        fail(ErrorKind::overflow, "homology: simplex indices for " + std::to_string(n_) + " nodes and " +
                                      std::to_string(k_) + " vertices per simplex exceed 62 bits; lower max_dimension");
  }

  u32 nodes() const { return n_; }
  u64 binomial(u32 n, int k) const { return binomial_(n, static_cast<std::size_t>(k)); }
  std::size_t degree(u32 v) const { return offset_[v + 1] - offset_[v]; }
  const u32* neighbours(u32 v) const { return neighbour_.data() + offset_[v]; }
  const u32* neighbour_ranks(u32 v) const { return neighbour_rank_.data() + offset_[v]; }

  // Rank of edge ab (0 when absent).
  u32 rank(u32 a, u32 b) const {
    if (!dense_.empty()) return dense_[static_cast<std::size_t>(a) * n_ + b];
    if (degree(a) > degree(b)) std::swap(a, b);
    const u32* first = neighbours(a);
    const u32* last = first + degree(a);
    const u32* it = std::lower_bound(first, last, b, std::greater<u32>());
    return it != last && *it == b ? neighbour_ranks(a)[it - first] : 0;
  }

 private:
  u32 n_;
  int k_;
  std::vector<std::size_t> offset_;
  std::vector<u32> neighbour_;
  std::vector<u32> neighbour_rank_;
  std::vector<u32> dense_;
  BinomialTable<u64> binomial_;
};

// A simplex spelled out: vertices in decreasing order, its value (rank of its last
// edge) and its index in the combinatorial number system.
struct Simplex {
  u32 v[kMaxVertices + 1];
  int n = 0;
  u32 value = 0;
  u64 index = 0;
};

// Open addressing table from a pivot (a cofacet) to the column that owns it.
template <class Key>
class PivotMap {
 public:
  struct Entry {
    Key pivot;
    Key column;          // the simplex whose reduced coboundary has this pivot
    u64 chain_begin;     // its reduction chain (simplices added to it), in `chains`
    u32 chain_length;
  };
  static constexpr Key empty = ~Key(0);

  PivotMap() { rehash(16); }
  const Entry* find(Key k) const {
    for (std::size_t i = slot(k);; i = (i + 1) & mask_) {
      if (table_[i].pivot == k) return &table_[i];
      if (table_[i].pivot == empty) return nullptr;
    }
  }
  void insert(const Entry& e) {
    if ((count_ + 1) * 4 > table_.size() * 3) rehash(table_.size() * 2);
    std::size_t i = slot(e.pivot);
    while (table_[i].pivot != empty) i = (i + 1) & mask_;
    table_[i] = e;
    ++count_;
  }
  std::vector<Key> chains;

 private:
  std::size_t slot(Key k) const {
    u64 h = static_cast<u64>(k);
    if constexpr (sizeof(Key) > 8) h ^= static_cast<u64>(k >> 64) * 0xC2B2AE3D27D4EB4FULL;
    h *= 0x9E3779B97F4A7C15ULL;
    return static_cast<std::size_t>(h >> shift_);
  }
  void rehash(std::size_t size) {
    std::vector<Entry> old(size, Entry{empty, 0, 0, 0});
    old.swap(table_);
    mask_ = size - 1;
    shift_ = 64 - std::countr_zero(size);
    count_ = 0;
    for (const auto& e : old)
      if (e.pivot != empty) insert(e);
  }
  std::vector<Entry> table_;
  std::size_t mask_ = 0;
  int shift_ = 0;
  std::size_t count_ = 0;
};

// Filtration order of simplices of one dimension as one integer: value first, then
// larger index first. key = value * 2^B + (2^B - 1 - index). The pivot of a
// coboundary is its smallest key; columns are reduced from the largest key down.
template <class Key>
class Engine {
 public:
  Engine(const Graph& g, int index_bits, const Options& options, const std::function<bool(double)>& progress)
      : g_(g), bits_(index_bits), mask_((Key(1) << index_bits) - 1), options_(options), progress_(progress) {
    threads_ = options.threads > 0 ? options.threads : static_cast<int>(std::max(1u, std::thread::hardware_concurrency()));
  }

  Key key(u64 index, u32 value) const { return (Key(value) << bits_) | (mask_ - Key(index)); }
  u64 index_of(Key k) const { return static_cast<u64>(mask_ - (k & mask_)); }
  u32 value_of(Key k) const { return static_cast<u32>(k >> bits_); }
  static constexpr Key none = ~Key(0);

  // Runs dimensions 1..K after dimension 0 (given as the tree edges by rank).
  // Returns the last dimension completed.
  int run(int max_dimension, const std::vector<char>& tree_edge, std::vector<Bar>& bars, double& work,
          std::string& stopped_by) {
    PivotMap<Key> previous;
    for (int d = 1; d <= max_dimension; ++d) {
      std::vector<Key> columns;
      if (!assemble(d + 1, tree_edge, previous, d, max_dimension, columns, work)) {
        stopped_by = "max_work";
        return d - 1;
      }
      previous = PivotMap<Key>();  // clearing for this dimension is done; free it
      std::vector<Bar> found;
      if (!reduce(d, columns, previous, found, work, max_dimension)) {
        stopped_by = "max_work";
        return d - 1;
      }
      bars.insert(bars.end(), found.begin(), found.end());
    }
    return max_dimension;
  }

 private:
  bool over_budget(double work) const { return options_.max_work > 0 && work > options_.max_work; }
  void report(double fraction) const {
    if (progress_ && progress_(fraction)) fail(ErrorKind::cancelled, "homology cancelled by the progress callback");
  }

  // Vertices of the simplex with `n` vertices and index `index`, largest first.
  void decode(Key k, int n, Simplex& s) const {
    s.n = n;
    s.value = value_of(k);
    s.index = index_of(k);
    u64 rest = s.index;
    u32 top = g_.nodes();
    for (int j = n; j >= 1; --j) {
      // Largest v < top with C(v, j) <= rest (C(j - 1, j) = 0 always qualifies).
      u32 lo = static_cast<u32>(j - 1), hi = top - 1;
      while (lo < hi) {
        const u32 mid = lo + (hi - lo + 1) / 2;
        if (g_.binomial(mid, j) <= rest) lo = mid;
        else hi = mid - 1;
      }
      s.v[n - j] = lo;
      rest -= g_.binomial(lo, j);
      top = lo;
    }
  }

  u64 index_from_vertices(const u32* v, int n) const {
    u64 index = 0;
    for (int i = 0; i < n; ++i) index += g_.binomial(v[i], n - i);
    return index;
  }

  // Vertex with the fewest neighbours: its list is the one walked for cofacets.
  int sparsest(const Simplex& s) const {
    int best = 0;
    for (int i = 1; i < s.n; ++i)
      if (g_.degree(s.v[i]) < g_.degree(s.v[best])) best = i;
    return best;
  }

  // Calls visit(w, index, value) for each cofacet s + {w}, in decreasing index (that is,
  // decreasing w), only for w > floor; visit returns false to stop. With
  // same_value_only, only cofacets of the same value as s are visited.
  template <class Visit>
  void for_each_cofacet(const Simplex& s, long long floor, bool same_value_only, Visit&& visit) const {
    const int best = sparsest(s);
    const u32 a = s.v[best];
    const u32* w_list = g_.neighbours(a);
    const u32* r_list = g_.neighbour_ranks(a);
    const std::size_t count = g_.degree(a);
    u64 above = 0, below = s.index;
    int p = 0;
    for (std::size_t t = 0; t < count; ++t) {
      const u32 w = w_list[t];
      if (static_cast<long long>(w) <= floor) return;
      u32 value = r_list[t];
      if (same_value_only ? value > s.value : false) continue;
      while (p < s.n && s.v[p] > w) {
        below -= g_.binomial(s.v[p], s.n - p);
        above += g_.binomial(s.v[p], s.n - p + 1);
        ++p;
      }
      if (p < s.n && s.v[p] == w) continue;
      bool adjacent = true;
      for (int i = 0; i < s.n; ++i) {
        if (i == best) continue;
        const u32 r = g_.rank(w, s.v[i]);
        if (r == 0 || (same_value_only && r > s.value)) {
          adjacent = false;
          break;
        }
        value = std::max(value, r);
      }
      if (!adjacent) continue;
      value = std::max(value, s.value);
      if (!visit(w, above + g_.binomial(w, s.n - p + 1) + below, value)) return;
    }
  }

  // Positions of the two vertices of the simplex's last edge (the one of rank s.value).
  std::pair<int, int> last_edge(const Simplex& s) const {
    for (int i = 0; i < s.n; ++i)
      for (int j = i + 1; j < s.n; ++j)
        if (g_.rank(s.v[i], s.v[j]) == s.value) return {i, j};
    fail(ErrorKind::internal, "homology: a simplex without its last edge");
  }
  // Position of the largest vertex outside the last edge (-1 for an edge).
  int largest_outside_last_edge(const Simplex& s) const {
    if (s.n < 3) return -1;
    auto [i, j] = last_edge(s);
    for (int q = 0; q < s.n; ++q)
      if (q != i && q != j) return q;
    return -1;
  }

  // True when s is the younger half of an apparent pair: its oldest cofacet (same
  // value, largest index) has s as its youngest facet (same value, smallest index).
  bool has_apparent_cofacet(const Simplex& s) const {
    const int q = largest_outside_last_edge(s);
    const long long floor = q < 0 ? -1 : static_cast<long long>(s.v[q]);
    bool found = false;
    for_each_cofacet(s, floor, true, [&](u32, u64, u32) {
      found = true;
      return false;
    });
    return found;
  }

  // When t is the older half of an apparent pair (the cofacet), returns its facet.
  Key apparent_facet(const Simplex& t) const {
    const int q = largest_outside_last_edge(t);
    if (q < 0) return none;
    Simplex s;
    s.n = t.n - 1;
    s.value = t.value;
    for (int i = 0, o = 0; i < t.n; ++i)
      if (i != q) s.v[o++] = t.v[i];
    s.index = index_from_vertices(s.v, s.n);
    bool older = false;  // a cofacet of s with the same value and a larger index than t
    for_each_cofacet(s, static_cast<long long>(t.v[q]), true, [&](u32, u64, u32) {
      older = true;
      return false;
    });
    return older ? none : key(s.index, s.value);
  }

  // The simplices of one dimension (n vertices) that need a column: not cleared by a
  // pair of the dimension below and not the younger half of an apparent pair.
  // Enumerated as cliques, top vertex by top vertex, on every thread; sorted after.
  bool assemble(int n, const std::vector<char>& tree_edge, const PivotMap<Key>& previous, int d, int max_d,
                std::vector<Key>& columns, double& work) {
    const u32 nodes = g_.nodes();
    std::atomic<u32> next_top{0};
    std::atomic<bool> stop{false};
    std::atomic<u64> visited{0};
    const int threads = std::max(1, std::min<int>(threads_, static_cast<int>(nodes)));
    std::vector<std::vector<Key>> local(static_cast<std::size_t>(threads));
    const double work_before = work;
    auto worker = [&](int id) {
      std::vector<Key>& out = local[static_cast<std::size_t>(id)];
      // candidates[level]: vertices below the chosen ones and adjacent to all of them,
      // with the largest rank to the chosen ones.
      std::vector<std::vector<std::pair<u32, u32>>> candidates(static_cast<std::size_t>(n) + 1);
      Simplex s;
      s.n = n;
      u64 count = 0;
      auto consider = [&](u64 index, u32 value) {
        ++count;
        s.index = index;
        s.value = value;
        const Key k = key(index, value);
        if (n == 2) {
          if (tree_edge[value]) return;
        } else {
          if (previous.find(k) != nullptr) return;
          if (apparent_facet(s) != none) return;
        }
        if (has_apparent_cofacet(s)) return;
        out.push_back(k);
      };
      std::function<void(int, u64, u32)> extend = [&](int level, u64 index, u32 value) {
        if (level == n) {
          consider(index, value);
          return;
        }
        const auto& here = candidates[static_cast<std::size_t>(level)];
        auto& there = candidates[static_cast<std::size_t>(level) + 1];
        for (std::size_t c = 0; c < here.size(); ++c) {
          const u32 v = here[c].first;
          s.v[level] = v;
          const u64 next_index = index + g_.binomial(v, n - level);
          const u32 next_value = std::max(value, here[c].second);
          if (level + 1 < n) {
            there.clear();
            for (std::size_t x = c + 1; x < here.size(); ++x) {
              const u32 r = g_.rank(v, here[x].first);
              if (r != 0) there.emplace_back(here[x].first, std::max(here[x].second, r));
            }
            if (there.size() < static_cast<std::size_t>(n - level - 1)) continue;
          }
          extend(level + 1, next_index, next_value);
        }
      };
      while (!stop.load(std::memory_order_relaxed)) {
        const u32 top = next_top.fetch_add(1);
        if (top >= nodes) break;
        s.v[0] = top;
        auto& first = candidates[1];
        first.clear();
        const u32* w = g_.neighbours(top);
        const u32* r = g_.neighbour_ranks(top);
        for (std::size_t i = 0; i < g_.degree(top); ++i)
          if (w[i] < top) first.emplace_back(w[i], r[i]);
        if (first.size() + 1 >= static_cast<std::size_t>(n)) extend(1, g_.binomial(top, n), 0);
        const u64 total = visited.fetch_add(count) + count;
        count = 0;
        if (over_budget(work_before + static_cast<double>(total))) stop = true;
        if (id == 0 && top % 16 == 0) {
          const double fraction = (d - 1 + 0.3 * top / static_cast<double>(nodes)) / (max_d + 1.0);
          if (progress_ && progress_(fraction)) stop = true, cancelled_ = true;
        }
      }
      visited.fetch_add(count);
      std::sort(out.begin(), out.end(), std::greater<Key>());
    };
    std::vector<std::thread> pool;
    for (int id = 1; id < threads; ++id) pool.emplace_back(worker, id);
    worker(0);
    for (auto& t : pool) t.join();
    if (cancelled_) fail(ErrorKind::cancelled, "homology cancelled by the progress callback");
    work += static_cast<double>(visited.load());
    if (over_budget(work)) return false;
    // Merge the sorted pieces: the order is total, so the result does not depend on threads.
    std::size_t total = 0;
    for (const auto& piece : local) total += piece.size();
    columns.reserve(total);
    for (auto& piece : local) {
      const auto middle = columns.size();
      columns.insert(columns.end(), piece.begin(), piece.end());
      std::vector<Key>().swap(piece);
      std::inplace_merge(columns.begin(), columns.begin() + static_cast<std::ptrdiff_t>(middle), columns.end(),
                         std::greater<Key>());
    }
    return true;
  }

  // Smallest key of odd multiplicity in the heap (Z/2: pairs cancel), removed; none if empty.
  Key pop_pivot(std::vector<Key>& heap) const {
    while (!heap.empty()) {
      std::pop_heap(heap.begin(), heap.end(), std::greater<Key>());
      const Key p = heap.back();
      heap.pop_back();
      if (!heap.empty() && heap.front() == p) {
        std::pop_heap(heap.begin(), heap.end(), std::greater<Key>());
        heap.pop_back();
        continue;
      }
      return p;
    }
    return none;
  }

  void push_coboundary(Key k, int n, std::vector<Key>& heap, double& work) const {
    Simplex s;
    decode(k, n, s);
    std::size_t pushed = 0;
    for_each_cofacet(s, -1, false, [&](u32, u64 index, u32 value) {
      heap.push_back(key(index, value));
      std::push_heap(heap.begin(), heap.end(), std::greater<Key>());
      ++pushed;
      return true;
    });
    work += static_cast<double>(pushed + 1);
  }

  // Reduces the coboundary columns of dimension d (largest key first) and records the bars.
  bool reduce(int d, const std::vector<Key>& columns, PivotMap<Key>& pivots, std::vector<Bar>& bars, double& work,
              int max_d) {
    const int n = d + 1;
    std::vector<Key> heap, chain;
    Simplex s, t;
    for (std::size_t j = 0; j < columns.size(); ++j) {
      if ((j & 1023) == 0) {
        if (over_budget(work)) return false;
        report((d - 0.7 + 0.7 * static_cast<double>(j) / static_cast<double>(columns.size())) / (max_d + 1.0));
      }
      const Key column = columns[j];
      decode(column, n, s);
      heap.clear();
      chain.clear();
      // The coboundary, with the emergent shortcut: the oldest cofacet of the same
      // value is the pivot; if no other column owns it, the pair is found at once.
      Key pivot = none;
      bool settled = false;
      bool look = true;
      for_each_cofacet(s, -1, false, [&](u32 w, u64 index, u32 value) {
        const Key c = key(index, value);
        if (look && value == s.value) {
          look = false;
          if (pivots.find(c) == nullptr) {
            cofacet(s, w, index, value, t);
            if (apparent_facet(t) == none) {
              pivot = c;
              settled = true;
              return false;
            }
          }
        }
        heap.push_back(c);
        return true;
      });
      work += static_cast<double>(heap.size() + 1);
      if (!settled) {
        std::make_heap(heap.begin(), heap.end(), std::greater<Key>());
        pivot = pop_pivot(heap);
      }
      while (!settled) {
        if (pivot == none) break;
        if (const auto* owner = pivots.find(pivot)) {
          heap.push_back(pivot);
          std::push_heap(heap.begin(), heap.end(), std::greater<Key>());
          chain.push_back(owner->column);
          push_coboundary(owner->column, n, heap, work);
          for (u32 i = 0; i < owner->chain_length; ++i) {
            const Key other = pivots.chains[owner->chain_begin + i];
            chain.push_back(other);
            push_coboundary(other, n, heap, work);
          }
          pivot = pop_pivot(heap);
          continue;
        }
        decode(pivot, n + 1, t);
        const Key facet = apparent_facet(t);
        if (facet != none) {
          heap.push_back(pivot);
          std::push_heap(heap.begin(), heap.end(), std::greater<Key>());
          chain.push_back(facet);
          push_coboundary(facet, n, heap, work);
          pivot = pop_pivot(heap);
          continue;
        }
        settled = true;
      }
      if (pivot == none) {
        bars.push_back(Bar{d, value_of(column), 0, true});
        continue;
      }
      // Keep the reduction chain (Z/2: simplices added an even number of times drop out).
      std::sort(chain.begin(), chain.end());
      const u64 begin = pivots.chains.size();
      for (std::size_t i = 0; i < chain.size();) {
        std::size_t e = i;
        while (e < chain.size() && chain[e] == chain[i]) ++e;
        if ((e - i) % 2 == 1) pivots.chains.push_back(chain[i]);
        i = e;
      }
      pivots.insert({pivot, column, begin, static_cast<u32>(pivots.chains.size() - begin)});
      if (value_of(pivot) > value_of(column)) bars.push_back(Bar{d, value_of(column), value_of(pivot), false});
    }
    return true;
  }

  // The cofacet s + {w} spelled out.
  void cofacet(const Simplex& s, u32 w, u64 index, u32 value, Simplex& t) const {
    t.n = s.n + 1;
    t.value = value;
    t.index = index;
    int o = 0, i = 0;
    while (i < s.n && s.v[i] > w) t.v[o++] = s.v[i++];
    t.v[o++] = w;
    while (i < s.n) t.v[o++] = s.v[i++];
  }

  const Graph& g_;
  int bits_;
  Key mask_;
  Options options_;
  std::function<bool(double)> progress_;
  int threads_ = 1;
  bool cancelled_ = false;
};

// Dimension 0 by union-find: a merging edge ends the bar of one component.
void dimension_zero(const filtration::Filtration& f, std::vector<Bar>& bars, std::vector<char>& tree_edge) {
  std::vector<u32> parent(f.nodes);
  for (u32 v = 0; v < f.nodes; ++v) parent[v] = v;
  auto root = [&](u32 v) {
    while (parent[v] != v) v = parent[v] = parent[parent[v]];
    return v;
  };
  tree_edge.assign(f.edges.size() + 1, 0);
  std::size_t components = f.nodes;
  for (std::size_t m = 0; m < f.edges.size(); ++m) {
    const u32 a = root(f.edges[m].u), b = root(f.edges[m].v);
    if (a == b) continue;
    parent[std::max(a, b)] = std::min(a, b);
    tree_edge[m + 1] = 1;
    bars.push_back(Bar{0, 0, m + 1, false});
    --components;
  }
  for (std::size_t c = 0; c < components; ++c) bars.push_back(Bar{0, 0, 0, true});
}

}  // namespace

Result compute(const filtration::Filtration& f, const std::vector<filtration::GridPoint>& grid, const Options& options,
               const std::function<bool(double)>& progress) {
  if (options.max_dimension < 0 || options.max_dimension > 30)
    fail(ErrorKind::argument, "homology: max_dimension must be in 0..30, got " + std::to_string(options.max_dimension));
  Result result;
  result.max_dimension = options.max_dimension;
  std::vector<char> tree_edge;
  dimension_zero(f, result.bars, tree_edge);
  int complete = 0;
  if (options.max_dimension >= 1) {
    const int vertices = options.max_dimension + 2;  // of the cofacets of the top dimension
    const Graph g(f, vertices);
    u64 largest_index = 0;
    for (int k = 1; k <= vertices; ++k) largest_index = std::max(largest_index, g.binomial(g.nodes(), k));
    const int index_bits = std::max(1, static_cast<int>(std::bit_width(largest_index)));
    const int value_bits = static_cast<int>(std::bit_width(static_cast<u64>(f.edges.size() + 1)));
    if (index_bits + value_bits <= 64) {
      Engine<u64> engine(g, index_bits, options, progress);
      complete = engine.run(options.max_dimension, tree_edge, result.bars, result.work, result.stopped_by);
    } else {
      Engine<uint128> engine(g, index_bits, options, progress);
      complete = engine.run(options.max_dimension, tree_edge, result.bars, result.work, result.stopped_by);
    }
  }
  if (!result.stopped_by.empty()) result.work = options.max_work;  // the same whatever the thread count
  result.complete_dimension = complete;
  result.complete_to_density = f.density(f.edges.size());
  std::sort(result.bars.begin(), result.bars.end(), [](const Bar& a, const Bar& b) {
    if (a.dimension != b.dimension) return a.dimension < b.dimension;
    if (a.birth_rank != b.birth_rank) return a.birth_rank < b.birth_rank;
    if (a.essential != b.essential) return !a.essential;
    return a.death_rank < b.death_rank;
  });
  result.betti = betti_on_grid(result.bars, complete + 1, grid);
  if (progress && progress(1.0)) fail(ErrorKind::cancelled, "homology cancelled by the progress callback");
  return result;
}

std::vector<std::vector<long long>> betti_on_grid(const std::vector<Bar>& bars, int dimensions,
                                                  const std::vector<filtration::GridPoint>& grid) {
  // beta_k(m) = #(births <= m) - #(finite deaths <= m), since every death follows its birth.
  std::vector<std::vector<std::size_t>> births(static_cast<std::size_t>(dimensions)),
      deaths(static_cast<std::size_t>(dimensions));
  for (const auto& b : bars) {
    if (b.dimension >= dimensions) continue;
    births[static_cast<std::size_t>(b.dimension)].push_back(b.birth_rank);
    if (!b.essential) deaths[static_cast<std::size_t>(b.dimension)].push_back(b.death_rank);
  }
  for (auto& v : births) std::sort(v.begin(), v.end());
  for (auto& v : deaths) std::sort(v.begin(), v.end());
  std::vector<std::vector<long long>> betti(grid.size(), std::vector<long long>(static_cast<std::size_t>(dimensions)));
  for (std::size_t g = 0; g < grid.size(); ++g)
    for (std::size_t k = 0; k < static_cast<std::size_t>(dimensions); ++k) {
      const auto born = std::upper_bound(births[k].begin(), births[k].end(), grid[g].edges) - births[k].begin();
      const auto died = std::upper_bound(deaths[k].begin(), deaths[k].end(), grid[g].edges) - deaths[k].begin();
      betti[g][k] = static_cast<long long>(born - died);
    }
  return betti;
}

double rank_density(const filtration::Filtration& f, std::size_t rank) {
  return rank == 0 ? 0.0 : f.density(f.tie_group_end(rank));
}

std::size_t check_euler_poincare(const Result& result, const std::vector<std::vector<int128>>& counts,
                                 const std::vector<int128>& chi, std::size_t complete_points) {
  std::size_t checked = 0;
  const std::size_t points = std::min({complete_points, counts.size(), chi.size(), result.betti.size()});
  for (std::size_t g = 0; g < points; ++g) {
    if (counts[g].empty()) continue;
    bool all_present = true;
    for (std::size_t k = static_cast<std::size_t>(result.complete_dimension + 1); k < counts[g].size(); ++k)
      if (counts[g][k] != 0) all_present = false;
    if (!all_present) continue;
    int128 alternating = 0;
    for (std::size_t k = 0; k < result.betti[g].size(); ++k)
      alternating += (k % 2 == 0 ? 1 : -1) * static_cast<int128>(result.betti[g][k]);
    if (alternating != chi[g])
      fail(ErrorKind::internal, "homology: Euler-Poincare fails at grid point " + std::to_string(g + 1) +
                                    ": chi = " + to_decimal(chi[g]) + " but the Betti numbers give " +
                                    to_decimal(alternating));
    ++checked;
  }
  return checked;
}

}  // namespace critplex::homology
