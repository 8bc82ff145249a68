#include "cliques/counts.hpp"

#include <algorithm>
#include <atomic>
#include <chrono>
#include <exception>
#include <memory>
#include <mutex>
#include <thread>

#include "base/error.hpp"
#include "cliques/link_euler.hpp"
#include "cliques/pivot_tree.hpp"

namespace critplex::cliques {

// Degeneracy order of the graph of all edges to be processed (Matula & Beck; Eppstein,
// Loffler & Strash 2010): relabelling nodes by it puts the dense core together at the
// end of every bitset row, so common neighbourhoods span few words.
// `degeneracy` receives the largest degree a node has when it is removed, so no clique
// has more than degeneracy + 1 nodes.
std::vector<std::uint32_t> degeneracy_labels(std::size_t n, const std::vector<filtration::Edge>& edges, std::size_t m,
                                             std::size_t& degeneracy) {
  std::vector<std::vector<std::uint32_t>> adjacency(n);
  for (std::size_t e = 0; e < m; ++e) {
    adjacency[edges[e].u].push_back(edges[e].v);
    adjacency[edges[e].v].push_back(edges[e].u);
  }
  std::vector<std::size_t> degree(n);
  std::size_t top = 0;
  for (std::size_t x = 0; x < n; ++x) top = std::max(top, degree[x] = adjacency[x].size());
  std::vector<std::vector<std::uint32_t>> buckets(top + 1);
  for (std::size_t x = n; x-- > 0;) buckets[degree[x]].push_back(static_cast<std::uint32_t>(x));
  std::vector<char> removed(n, 0);
  std::vector<std::uint32_t> label(n);
  std::size_t next = 0, d = 0;
  degeneracy = 0;
  while (next < n) {
    d = d > 0 ? d - 1 : 0;
    while (buckets[d].empty()) ++d;
    const std::uint32_t x = buckets[d].back();
    buckets[d].pop_back();
    if (removed[x] || degree[x] != d) continue;  // stale bucket entry
    removed[x] = 1;
    degeneracy = std::max(degeneracy, d);
    label[x] = static_cast<std::uint32_t>(next++);
    for (std::uint32_t y : adjacency[x])
      if (!removed[y]) buckets[--degree[y]].push_back(y);
  }
  return label;
}

namespace {

// One contiguous run of edges handed to a worker; chunks are taken in increasing
// order, so a worker only ever adds edges to its own copy of the graph.
struct Chunk {
  std::size_t begin = 0, end = 0;
  std::atomic<std::uint64_t> work{0};        // lower bound while running, exact when done
  std::atomic<std::size_t> done_until{0};    // edges [begin, done_until) processed
};

// Per worker, per interval: what its leaves add up to.
using Tallies = std::vector<std::vector<std::unique_ptr<IntervalTally>>>;

// Step 1, the schedule: the checkpoints the grid asks for and the chunks the workers take.
struct Schedule {
  // Checkpoints: the distinct edge counts the grid asks for, in increasing order.
  // Interval i holds the edges [checkpoints[i-1], checkpoints[i]) (interval 0 starts at 0).
  std::vector<std::size_t> checkpoints;
  std::size_t total_edges = 0;
  std::size_t intervals = 0;
  unsigned threads = 1;
  std::size_t chunk_size = 1, chunk_count = 0;

  std::size_t interval_of(std::size_t e) const {
    return static_cast<std::size_t>(std::upper_bound(checkpoints.begin(), checkpoints.end(), e) - checkpoints.begin());
  }
  // The checkpoint a grid point asking for `edges` edges reads.
  std::size_t checkpoint_of(std::size_t edges) const {
    return static_cast<std::size_t>(std::lower_bound(checkpoints.begin(), checkpoints.end(), edges) - checkpoints.begin());
  }
};

Schedule make_schedule(const filtration::Filtration& f, const std::vector<filtration::GridPoint>& grid,
                       const Options& o) {
  Schedule s;
  for (const auto& p : grid) s.checkpoints.push_back(std::min(p.edges, f.edges.size()));
  std::sort(s.checkpoints.begin(), s.checkpoints.end());
  s.checkpoints.erase(std::unique(s.checkpoints.begin(), s.checkpoints.end()), s.checkpoints.end());
  s.total_edges = s.checkpoints.empty() ? 0 : s.checkpoints.back();
  s.intervals = s.checkpoints.size();

  const unsigned threads =
      o.threads > 0 ? static_cast<unsigned>(o.threads) : std::max(1u, std::thread::hardware_concurrency());
  // Chunks small enough to balance (late edges cost more) but few enough that budget
  // checks, which sum over earlier chunks, stay cheap.
  s.chunk_size = threads == 1 ? std::max<std::size_t>(s.total_edges, 1)
                              : std::max<std::size_t>(16, s.total_edges / (threads * 32) + 1);
  s.chunk_count = s.total_edges == 0 ? 0 : (s.total_edges + s.chunk_size - 1) / s.chunk_size;
  s.threads = static_cast<unsigned>(std::min<std::size_t>(threads, std::max<std::size_t>(s.chunk_count, 1)));
  return s;
}

// Step 2, the walk: the workers take the chunks in order and tally each edge's cliques
// into the interval the edge belongs to. Budgets (max_work, max_seconds) and the
// progress callback stop it; the edges done without a gap from the start are kept.
class Walk {
 public:
  Walk(const filtration::Filtration& f, const Options& o, const Schedule& s, const std::vector<std::uint32_t>& label,
       std::size_t max_nodes, const CurvatureShares& shares)
      : f_(f), o_(o), s_(s), label_(label), max_nodes_(max_nodes), shares_(shares), chunks_(s.chunk_count),
        tallies_(s.threads),
        max_work_(o.max_work > 0 ? static_cast<std::uint64_t>(std::min(o.max_work, 1.8e19)) : 0),
        deadline_(std::chrono::steady_clock::now() +
                  std::chrono::duration_cast<std::chrono::steady_clock::duration>(
                      std::chrono::duration<double>(o.max_seconds > 0 ? std::min(o.max_seconds, 1e9) : 0.0))) {
    for (std::size_t c = 0; c < s.chunk_count; ++c) {
      chunks_[c].begin = c * s.chunk_size;
      chunks_[c].end = std::min(s.total_edges, (c + 1) * s.chunk_size);
      chunks_[c].done_until = chunks_[c].begin;
    }
    for (auto& t : tallies_) t.resize(s.intervals);
  }

  // Runs the workers (the calling thread is worker 0); rethrows a worker's failure;
  // ErrorKind::cancelled when the progress callback asked to stop.
  void run(const std::function<bool(double)>& progress) {
    const auto start = std::chrono::steady_clock::now();
    auto last_report = start;
    // Progress runs only on the calling thread (worker 0), at most every 100 ms.
    auto report = [&](bool force) {
      if (!progress) return;
      const auto now = std::chrono::steady_clock::now();
      if (!force && now - last_report < std::chrono::milliseconds(100)) return;
      last_report = now;
      const double fraction = s_.total_edges == 0 ? 1.0 : static_cast<double>(edges_done_.load()) / static_cast<double>(s_.total_edges);
      if (progress(std::min(fraction, 1.0))) cancel_ = true;
    };
    const std::function<void(bool)> report_fn = report;
    auto worker = [&](unsigned t) {
      try {
        walk_chunks(t, report_fn);
      } catch (...) {
        std::lock_guard<std::mutex> lock(failure_mutex_);
        if (!failure_) failure_ = std::current_exception();
        cancel_ = true;
      }
    };
    {
      std::vector<std::thread> pool;
      for (unsigned t = 1; t < s_.threads; ++t) pool.emplace_back(worker, t);
      worker(0);
      for (auto& th : pool) th.join();
    }
    if (failure_) std::rethrow_exception(failure_);
    report(true);
    if (cancel_) fail(ErrorKind::cancelled, "sweep cancelled by the progress callback");
  }

  // Edges processed without a gap from the start.
  std::size_t completed_edges() const {
    std::size_t completed = 0;
    for (const Chunk& chunk : chunks_) {
      completed = chunk.done_until.load();
      if (completed < chunk.end) break;
    }
    return s_.chunk_count == 0 ? 0 : completed;
  }
  const Tallies& tallies() const { return tallies_; }
  bool ran_out_of_time() const { return out_of_time_.load(); }
  std::uint64_t max_work() const { return max_work_; }

 private:
  // max_seconds: past the deadline the workers stop as with a budget; the points
  // completed in order are kept.
  bool time_spent() {
    if (o_.max_seconds <= 0) return false;
    if (!out_of_time_.load(std::memory_order_relaxed) && std::chrono::steady_clock::now() > deadline_) out_of_time_ = true;
    return out_of_time_.load(std::memory_order_relaxed);
  }
  // True when the work of every edge before the current point of chunk c certainly
  // exceeds the budget: then nothing from here on can be reported.
  bool beyond_budget(std::size_t c, std::uint64_t own) const {
    if (max_work_ == 0) return false;
    std::uint64_t sum = own;
    for (std::size_t i = 0; i < c && sum <= max_work_; ++i) sum += chunks_[i].work.load(std::memory_order_relaxed);
    return sum > max_work_;
  }
  IntervalTally* tally_for(unsigned t, std::size_t i) {
    auto& slot = tallies_[t][i];
    if (!slot) {
      slot = std::make_unique<IntervalTally>();
      if (o_.node_counts) slot->node_delta.resize(f_.nodes);
      if (o_.node_curvature) slot->curvature.resize(f_.nodes);
    }
    return slot.get();
  }

  void walk_chunks(unsigned t, const std::function<void(bool)>& report) {
    BitGraph graph(f_.nodes);
    std::size_t applied = 0;
    LinkCounter counter(f_.nodes, max_nodes_, o_.node_counts);
    LinkEuler euler(f_.nodes);
    if (o_.node_curvature) counter.enable_curvature(shares_);
    auto add_edge = [&](std::size_t e) { graph.add_edge(label_[f_.edges[e].u], label_[f_.edges[e].v]); };
    for (;;) {
      const std::size_t c = next_chunk_.fetch_add(1);
      if (c >= s_.chunk_count) break;
      Chunk& chunk = chunks_[c];
      if (cancel_ || time_spent() || beyond_budget(c, 0)) continue;
      std::uint64_t chunk_work = 0;
      std::uint64_t edge_start_work = 0;
      IntervalTally* tally = nullptr;
      const std::function<bool()> poll = [&]() {
        chunk.work.store(chunk_work + (tally->work - edge_start_work), std::memory_order_relaxed);
        if (t == 0) report(false);
        return cancel_.load() || time_spent() || beyond_budget(c, chunk_work + (tally->work - edge_start_work));
      };
      bool stopped = false;
      for (std::size_t e = chunk.begin; e < chunk.end && !stopped; ++e) {
        while (applied < e) add_edge(applied++);
        tally = tally_for(t, s_.interval_of(e));
        edge_start_work = tally->work;
        const std::uint32_t u = label_[f_.edges[e].u], v = label_[f_.edges[e].v];
        if (max_nodes_ == 1) {
          // Edges are already above the dimension cap: count them nowhere.
          tally->truncated = true;
          ++tally->work;
        } else {
          try {
            if (o_.chi_only) {
              // chi changes by -f(link) (link_euler.hpp); the edge itself is the
              // empty clique's term.
              ++tally->edges;
              const int128 change = -euler.link_sum(graph, u, v, tally->work, poll);
              if (__builtin_add_overflow(tally->chi_delta, change, &tally->chi_delta)) tally->overflow = true;
            } else {
              counter.count_edge(graph, u, v, *tally, poll);
            }
          } catch (const StopWalk&) {
            stopped = true;
            break;
          }
        }
        chunk_work += tally->work - edge_start_work;
        add_edge(applied++);
        chunk.done_until.store(e + 1);
        edges_done_.fetch_add(1);
        if (t == 0) report(false);
        if ((e & 63) == 0 && (cancel_ || time_spent() || beyond_budget(c, chunk_work))) stopped = true;
      }
      chunk.work.store(chunk_work);
    }
  }

  const filtration::Filtration& f_;
  const Options& o_;
  const Schedule& s_;
  const std::vector<std::uint32_t>& label_;
  std::size_t max_nodes_;
  const CurvatureShares& shares_;
  std::vector<Chunk> chunks_;
  Tallies tallies_;
  std::uint64_t max_work_;
  std::chrono::steady_clock::time_point deadline_;
  std::atomic<std::size_t> next_chunk_{0};
  std::atomic<bool> cancel_{false};
  std::atomic<bool> out_of_time_{false};
  std::atomic<std::size_t> edges_done_{0};
  std::mutex failure_mutex_;
  std::exception_ptr failure_;
};

// What the workers' tallies of one interval add up to.
struct IntervalSum {
  std::uint64_t work = 0;
  bool truncated = false, overflow = false;
  std::vector<int128> delta;  // [k]: new k-simplices
  int128 chi_delta = 0;
  std::uint64_t edges = 0;
};

// Step 3, the reduction: walks the intervals in grid order, adding each one's
// increments (summed over the workers) to the running totals, and keeps a snapshot of
// the totals at every checkpoint. Stops at the first interval past a budget or whose
// counts do not fit.
class Reduction {
 public:
  // What the reduction found, read by map_to_grid.
  std::vector<std::vector<int128>> counts_at;    // [interval]: snapshots at each checkpoint
  std::vector<int128> chi_at;
  std::vector<std::vector<std::vector<int128>>> node_at;
  std::vector<std::vector<Int256>> curvature_at;
  std::size_t exact_intervals;    // chi and every count exact
  std::size_t reached_intervals;  // counts up to the cap exact
  std::uint64_t work = 0;
  std::string reason;

  Reduction(std::size_t n, const Options& o, const Schedule& s, const std::vector<std::uint32_t>& original,
            std::size_t max_nodes, const CurvatureShares& shares)
      : counts_at(s.intervals), chi_at(s.intervals, 0), node_at(o.node_counts ? s.intervals : 0),
        curvature_at(o.node_curvature ? s.intervals : 0), exact_intervals(s.intervals), reached_intervals(s.intervals),
        n_(n), o_(o), s_(s), original_(original), max_nodes_(max_nodes), binomials_(0, 0, false),
        counts_{static_cast<int128>(n)}, chi_(static_cast<int128>(n)),
        node_(o.node_counts ? n : 0, std::vector<int128>{1}),
        // Curvature sums are integers modulo 2^256: any order gives the same totals.
        // Every node starts with its own 0-simplex: kappa_i = 1.
        curvature_(o.node_curvature ? n : 0, Int256::of(shares.denominator)) {}

  void run(const Walk& walk) {
    const std::size_t completed = walk.completed_edges();
    for (std::size_t i = 0; i < s_.intervals; ++i) {
      if (s_.checkpoints[i] > completed) {
        stop(i, walk.ran_out_of_time() ? "max_seconds" : "max_work");
        break;
      }
      IntervalSum sum = sum_interval(walk.tallies(), i);
      if (walk.max_work() != 0 && work + sum.work > walk.max_work()) {
        stop(i, "max_work");
        break;
      }
      if (!advance(sum)) {
        stop(i, "count_overflow");
        break;
      }
      if (sum.truncated && exact_intervals == s_.intervals) {
        exact_intervals = i;
        if (reason.empty()) reason = "max_dimension";
      }
      work += sum.work;
      counts_at[i] = counts_;
      chi_at[i] = chi_;
      if (o_.node_counts) node_at[i] = node_;
      if (o_.node_curvature) curvature_at[i] = curvature_;
    }
    exact_intervals = std::min(exact_intervals, reached_intervals);
  }

 private:
  static bool add_to(std::vector<int128>& v, std::size_t k, int128 amount) {
    if (v.size() <= k) v.resize(k + 1, 0);
    return amount >= 0 && !__builtin_add_overflow(v[k], amount, &v[k]);
  }
  void stop(std::size_t i, const char* why) {
    if (reason.empty()) reason = why;
    reached_intervals = i;
  }

  // Sums interval i over the workers. A leaf of h held nodes and p free ones stands for
  // the cliques of 1 + h + j nodes beyond the edge, C(p, j) of each. Node counts and
  // curvature go straight into the running totals.
  IntervalSum sum_interval(const Tallies& tallies, std::size_t i) {
    IntervalSum sum;
    for (unsigned t = 0; t < s_.threads; ++t) {
      const IntervalTally* tally = tallies[t][i].get();
      if (!tally) continue;
      sum.work += tally->work;
      sum.truncated |= tally->truncated;
      sum.overflow |= tally->overflow;
      if (__builtin_add_overflow(sum.chi_delta, tally->chi_delta, &sum.chi_delta)) sum.overflow = true;
      sum.edges += tally->edges;
      for (std::size_t h = 0; h < tally->rows; ++h)
        for (std::size_t p = 0; p < tally->stride; ++p) {
          const std::uint64_t leaves = tally->leaves[h * tally->stride + p];
          if (leaves == 0) continue;
          std::size_t top_j = p;
          if (max_nodes_ != 0) top_j = std::min(p, max_nodes_ - 2 - h);
          for (std::size_t j = 0; j <= top_j; ++j) {
            const int128 c = binomials_.binomial(p, j);
            int128 amount;
            if (c < 0 || __builtin_mul_overflow(c, static_cast<int128>(leaves), &amount) ||
                !add_to(sum.delta, 1 + h + j, amount))
              sum.overflow = true;
          }
        }
      if (o_.node_counts)
        for (std::size_t x = 0; x < n_ && !sum.overflow; ++x) {
          const auto& row = tally->node_delta[x];
          for (std::size_t k = 0; k < row.size(); ++k)
            if (!add_to(node_[original_[x]], k, row[k])) sum.overflow = true;
        }
      if (o_.node_curvature)
        for (std::size_t x = 0; x < n_; ++x) curvature_[original_[x]] += tally->curvature[x];
    }
    return sum;
  }

  // Adds one interval to the running counts and chi; false when a total does not fit.
  bool advance(IntervalSum& sum) {
    bool overflow = sum.overflow;
    std::vector<int128>& delta = sum.delta;
    if (o_.chi_only && max_nodes_ != 1 && !add_to(delta, 1, static_cast<int128>(sum.edges))) overflow = true;
    for (std::size_t k = 0; k < delta.size() && !overflow; ++k)
      if (!add_to(counts_, k, delta[k])) overflow = true;
    if (overflow) return false;
    if (o_.chi_only) return !__builtin_add_overflow(chi_, sum.chi_delta, &chi_);
    // chi = sum_k (-1)^k Cl_k; the partial sums stay below the largest count in size.
    int128 s = 0;
    for (std::size_t k = 0; k < counts_.size() && !overflow; ++k)
      overflow = (k % 2 == 0) ? __builtin_add_overflow(s, counts_[k], &s) : __builtin_sub_overflow(s, counts_[k], &s);
    if (overflow) return false;
    chi_ = s;
    return true;
  }

  std::size_t n_;
  const Options& o_;
  const Schedule& s_;
  const std::vector<std::uint32_t>& original_;
  std::size_t max_nodes_;
  LinkCounter binomials_;
  std::vector<int128> counts_;                   // running totals
  int128 chi_;
  std::vector<std::vector<int128>> node_;
  std::vector<Int256> curvature_;
};

// Step 4: map the grid points to the checkpoints' snapshots.
void map_to_grid(const filtration::Filtration& f, const std::vector<filtration::GridPoint>& grid, const Options& o,
                 const Schedule& s, Reduction& r, GridCounts& result) {
  auto checkpoint_of = [&](std::size_t g) { return s.checkpoint_of(std::min(grid[g].edges, f.edges.size())); };
  // Curvature snapshots move to their last grid point instead of being copied.
  std::vector<std::size_t> last_use(o.node_curvature ? s.intervals : 0, 0);
  if (o.node_curvature)
    for (std::size_t g = 0; g < grid.size(); ++g) last_use[checkpoint_of(g)] = g;
  result.complete_points = 0;
  bool leading = true;
  for (std::size_t g = 0; g < grid.size(); ++g) {
    const std::size_t i = checkpoint_of(g);
    if (i < r.reached_intervals) {
      result.counts[g] = r.counts_at[i];
      result.chi[g] = r.chi_at[i];
      if (o.node_counts) {
        result.node_counts[g] = r.node_at[i];
        for (auto& row : result.node_counts[g])
          if (row.size() < result.counts[g].size()) row.resize(result.counts[g].size(), 0);
      }
    }
    if (leading && i < r.exact_intervals) {
      ++result.complete_points;
      if (o.node_curvature)
        result.curvature_numerators[g] = last_use[i] == g ? std::move(r.curvature_at[i]) : r.curvature_at[i];
    } else {
      leading = false;
    }
  }
  result.stopped_by = r.reason;
  result.complete_edges = r.exact_intervals == 0 ? 0 : s.checkpoints[r.exact_intervals - 1];
  result.work = static_cast<double>(r.work);
}

}  // namespace

GridCounts count_on_grid(const filtration::Filtration& f, const std::vector<filtration::GridPoint>& grid,
                         const Options& o, const std::function<bool(double)>& progress) {
  const std::size_t n = f.nodes;
  GridCounts result;
  result.counts.resize(grid.size());
  result.chi.assign(grid.size(), 0);
  if (o.node_counts) result.node_counts.resize(grid.size());
  if (o.node_curvature) result.curvature_numerators.resize(grid.size());

  const Schedule schedule = make_schedule(f, grid, o);
  const std::size_t max_nodes = o.max_dimension < 0 ? 0 : static_cast<std::size_t>(o.max_dimension) + 1;
  std::size_t degeneracy = 0;
  const std::vector<std::uint32_t> label = degeneracy_labels(n, f.edges, schedule.total_edges, degeneracy);
  if (o.node_curvature && o.chi_only)
    fail(ErrorKind::internal, "clique engine: node curvature needs every clique size, not chi_only");
  // Curvature shares per leaf shape over one common denominator (pivot_tree.hpp).
  const CurvatureShares shares = o.node_curvature ? curvature_shares(degeneracy + 1, o.curvature_fixed_point)
                                                  : CurvatureShares{};
  std::vector<std::uint32_t> original(n);
  for (std::size_t x = 0; x < n; ++x) original[label[x]] = static_cast<std::uint32_t>(x);

  Walk walk(f, o, schedule, label, max_nodes, shares);
  walk.run(progress);
  Reduction reduction(n, o, schedule, original, max_nodes, shares);
  reduction.run(walk);
  map_to_grid(f, grid, o, schedule, reduction, result);
  result.every_size_points = o.chi_only ? 0 : result.complete_points;
  result.curvature_exact = shares.exact;
  result.curvature_denominator = shares.denominator;
  return result;
}

}  // namespace critplex::cliques
