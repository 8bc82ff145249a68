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

namespace {

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

// One contiguous run of edges handed to a worker; chunks are taken in increasing
// order, so a worker only ever adds edges to its own copy of the graph.
struct Chunk {
  std::size_t begin = 0, end = 0;
  std::atomic<std::uint64_t> work{0};        // lower bound while running, exact when done
  std::atomic<std::size_t> done_until{0};    // edges [begin, done_until) processed
};

}  // namespace

GridCounts count_on_grid(const filtration::Filtration& f, const std::vector<filtration::GridPoint>& grid,
                         const Options& o, const std::function<bool(double)>& progress) {
  const std::size_t n = f.nodes;
  GridCounts result;
  result.counts.resize(grid.size());
  result.chi.assign(grid.size(), 0);
  if (o.node_counts) result.node_counts.resize(grid.size());
  if (o.node_curvature) result.curvature_numerators.resize(grid.size());

  // Checkpoints: the distinct edge counts the grid asks for, in increasing order.
  std::vector<std::size_t> checkpoints;
  for (const auto& p : grid) checkpoints.push_back(std::min(p.edges, f.edges.size()));
  std::sort(checkpoints.begin(), checkpoints.end());
  checkpoints.erase(std::unique(checkpoints.begin(), checkpoints.end()), checkpoints.end());
  const std::size_t total_edges = checkpoints.empty() ? 0 : checkpoints.back();
  const std::size_t intervals = checkpoints.size();
  // Interval i holds the edges [checkpoints[i-1], checkpoints[i]) (interval 0 starts at 0).
  auto interval_of = [&](std::size_t e) {
    return static_cast<std::size_t>(std::upper_bound(checkpoints.begin(), checkpoints.end(), e) - checkpoints.begin());
  };

  const std::size_t max_nodes = o.max_dimension < 0 ? 0 : static_cast<std::size_t>(o.max_dimension) + 1;
  std::size_t degeneracy = 0;
  const std::vector<std::uint32_t> label = degeneracy_labels(n, f.edges, total_edges, degeneracy);
  if (o.node_curvature && o.chi_only)
    fail(ErrorKind::internal, "clique engine: node curvature needs every clique size, not chi_only");
  // Curvature shares per leaf shape over one common denominator (pivot_tree.hpp).
  const CurvatureShares shares = o.node_curvature ? curvature_shares(degeneracy + 1, o.curvature_fixed_point)
                                                  : CurvatureShares{};
  std::vector<std::uint32_t> original(n);
  for (std::size_t x = 0; x < n; ++x) original[label[x]] = static_cast<std::uint32_t>(x);

  unsigned threads = o.threads > 0 ? static_cast<unsigned>(o.threads) : std::max(1u, std::thread::hardware_concurrency());
  // Chunks small enough to balance (late edges cost more) but few enough that budget
  // checks, which sum over earlier chunks, stay cheap.
  const std::size_t chunk_size = threads == 1 ? std::max<std::size_t>(total_edges, 1)
                                              : std::max<std::size_t>(16, total_edges / (threads * 32) + 1);
  const std::size_t chunk_count = total_edges == 0 ? 0 : (total_edges + chunk_size - 1) / chunk_size;
  threads = static_cast<unsigned>(std::min<std::size_t>(threads, std::max<std::size_t>(chunk_count, 1)));
  std::vector<Chunk> chunks(chunk_count);
  for (std::size_t c = 0; c < chunk_count; ++c) {
    chunks[c].begin = c * chunk_size;
    chunks[c].end = std::min(total_edges, (c + 1) * chunk_size);
    chunks[c].done_until = chunks[c].begin;
  }

  const std::uint64_t max_work = o.max_work > 0 ? static_cast<std::uint64_t>(std::min(o.max_work, 1.8e19)) : 0;
  std::atomic<std::size_t> next_chunk{0};
  std::atomic<bool> cancel{false};
  // max_seconds: past the deadline the workers stop as with a budget; the points
  // completed in order are kept.
  std::atomic<bool> out_of_time{false};
  const auto deadline = std::chrono::steady_clock::now() +
                        std::chrono::duration_cast<std::chrono::steady_clock::duration>(
                            std::chrono::duration<double>(o.max_seconds > 0 ? std::min(o.max_seconds, 1e9) : 0.0));
  auto time_spent = [&]() {
    if (o.max_seconds <= 0) return false;
    if (!out_of_time.load(std::memory_order_relaxed) && std::chrono::steady_clock::now() > deadline) out_of_time = true;
    return out_of_time.load(std::memory_order_relaxed);
  };
  std::atomic<std::size_t> edges_done{0};
  std::mutex failure_mutex;
  std::exception_ptr failure;
  // Per worker, per interval: what its leaves add up to.
  std::vector<std::vector<std::unique_ptr<IntervalTally>>> tallies(threads);
  for (auto& t : tallies) t.resize(intervals);

  const auto start = std::chrono::steady_clock::now();
  auto last_report = start;
  // Progress runs only on the calling thread (worker 0), at most every 100 ms.
  auto report = [&](bool force) {
    if (!progress) return;
    const auto now = std::chrono::steady_clock::now();
    if (!force && now - last_report < std::chrono::milliseconds(100)) return;
    last_report = now;
    const double fraction = total_edges == 0 ? 1.0 : static_cast<double>(edges_done.load()) / static_cast<double>(total_edges);
    if (progress(std::min(fraction, 1.0))) cancel = true;
  };
  // True when the work of every edge before the current point of chunk c certainly
  // exceeds the budget: then nothing from here on can be reported.
  auto beyond_budget = [&](std::size_t c, std::uint64_t own) {
    if (max_work == 0) return false;
    std::uint64_t sum = own;
    for (std::size_t i = 0; i < c && sum <= max_work; ++i) sum += chunks[i].work.load(std::memory_order_relaxed);
    return sum > max_work;
  };

  auto worker = [&](unsigned t) {
    try {
      BitGraph graph(n);
      std::size_t applied = 0;
      LinkCounter counter(n, max_nodes, o.node_counts);
      LinkEuler euler(n);
      if (o.node_curvature) counter.enable_curvature(shares);
      auto& mine = tallies[t];
      auto add_edge = [&](std::size_t e) { graph.add_edge(label[f.edges[e].u], label[f.edges[e].v]); };
      for (;;) {
        const std::size_t c = next_chunk.fetch_add(1);
        if (c >= chunk_count) break;
        Chunk& chunk = chunks[c];
        if (cancel || time_spent() || beyond_budget(c, 0)) continue;
        std::uint64_t chunk_work = 0;
        std::uint64_t edge_start_work = 0;
        IntervalTally* tally = nullptr;
        const std::function<bool()> poll = [&]() {
          chunk.work.store(chunk_work + (tally->work - edge_start_work), std::memory_order_relaxed);
          if (t == 0) report(false);
          return cancel.load() || time_spent() || beyond_budget(c, chunk_work + (tally->work - edge_start_work));
        };
        bool stopped = false;
        for (std::size_t e = chunk.begin; e < chunk.end && !stopped; ++e) {
          while (applied < e) add_edge(applied++);
          const std::size_t i = interval_of(e);
          if (!mine[i]) {
            mine[i] = std::make_unique<IntervalTally>();
            if (o.node_counts) mine[i]->node_delta.resize(n);
            if (o.node_curvature) mine[i]->curvature.resize(n);
          }
          tally = mine[i].get();
          edge_start_work = tally->work;
          const std::uint32_t u = label[f.edges[e].u], v = label[f.edges[e].v];
          if (max_nodes == 1) {
            // Edges are already above the dimension cap: count them nowhere.
            tally->truncated = true;
            ++tally->work;
          } else {
            try {
              if (o.chi_only) {
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
          edges_done.fetch_add(1);
          if (t == 0) report(false);
          if ((e & 63) == 0 && (cancel || time_spent() || beyond_budget(c, chunk_work))) stopped = true;
        }
        chunk.work.store(chunk_work);
      }
    } catch (...) {
      std::lock_guard<std::mutex> lock(failure_mutex);
      if (!failure) failure = std::current_exception();
      cancel = true;
    }
  };

  {
    std::vector<std::thread> pool;
    for (unsigned t = 1; t < threads; ++t) pool.emplace_back(worker, t);
    worker(0);
    for (auto& th : pool) th.join();
  }
  if (failure) std::rethrow_exception(failure);
  report(true);
  if (cancel) fail(ErrorKind::cancelled, "sweep cancelled by the progress callback");

  // Edges processed without a gap from the start.
  std::size_t completed = 0;
  for (const Chunk& chunk : chunks) {
    completed = chunk.done_until.load();
    if (completed < chunk.end) break;
  }
  if (chunk_count == 0) completed = 0;

  // Walk the intervals in order, adding each one's increments to the running totals.
  LinkCounter binomials(0, 0, false);
  std::vector<int128> counts{static_cast<int128>(n)};
  int128 chi = static_cast<int128>(n);
  std::vector<std::vector<int128>> node(o.node_counts ? n : 0, std::vector<int128>{1});
  std::vector<std::vector<int128>> counts_at(intervals);
  std::vector<int128> chi_at(intervals, 0);
  std::vector<std::vector<std::vector<int128>>> node_at(o.node_counts ? intervals : 0);
  // Curvature sums are integers modulo 2^256: any order gives the same totals.
  // Every node starts with its own 0-simplex: kappa_i = 1.
  std::vector<Int256> curvature(o.node_curvature ? n : 0, Int256::of(shares.denominator));
  std::vector<std::vector<Int256>> curvature_at(o.node_curvature ? intervals : 0);
  std::size_t exact_intervals = intervals;   // chi and every count exact
  std::size_t reached_intervals = intervals; // counts up to the cap exact
  std::uint64_t work = 0;
  std::string reason;
  auto add_to = [](std::vector<int128>& v, std::size_t k, int128 amount) {
    if (v.size() <= k) v.resize(k + 1, 0);
    return amount >= 0 && !__builtin_add_overflow(v[k], amount, &v[k]);
  };
  for (std::size_t i = 0; i < intervals; ++i) {
    if (checkpoints[i] > completed) {
      if (reason.empty()) reason = out_of_time ? "max_seconds" : "max_work";
      reached_intervals = i;
      break;
    }
    std::uint64_t interval_work = 0;
    bool truncated = false, overflow = false;
    std::vector<int128> delta;
    int128 chi_delta = 0;
    std::uint64_t edges = 0;
    for (unsigned t = 0; t < threads; ++t) {
      const IntervalTally* tally = tallies[t][i].get();
      if (!tally) continue;
      interval_work += tally->work;
      truncated |= tally->truncated;
      overflow |= tally->overflow;
      if (__builtin_add_overflow(chi_delta, tally->chi_delta, &chi_delta)) overflow = true;
      edges += tally->edges;
      for (std::size_t h = 0; h < tally->rows; ++h)
        for (std::size_t p = 0; p < tally->stride; ++p) {
          const std::uint64_t leaves = tally->leaves[h * tally->stride + p];
          if (leaves == 0) continue;
          std::size_t top_j = p;
          if (max_nodes != 0) top_j = std::min(p, max_nodes - 2 - h);
          for (std::size_t j = 0; j <= top_j; ++j) {
            const int128 c = binomials.binomial(p, j);
            int128 amount;
            if (c < 0 || __builtin_mul_overflow(c, static_cast<int128>(leaves), &amount) || !add_to(delta, 1 + h + j, amount))
              overflow = true;
          }
        }
      if (o.node_counts)
        for (std::size_t x = 0; x < n && !overflow; ++x) {
          const auto& row = tally->node_delta[x];
          for (std::size_t k = 0; k < row.size(); ++k)
            if (!add_to(node[original[x]], k, row[k])) overflow = true;
        }
      if (o.node_curvature)
        for (std::size_t x = 0; x < n; ++x) curvature[original[x]] += tally->curvature[x];
    }
    if (max_work != 0 && work + interval_work > max_work) {
      if (reason.empty()) reason = "max_work";
      reached_intervals = i;
      break;
    }
    if (o.chi_only && max_nodes != 1 && !add_to(delta, 1, static_cast<int128>(edges))) overflow = true;
    for (std::size_t k = 0; k < delta.size() && !overflow; ++k)
      if (!add_to(counts, k, delta[k])) overflow = true;
    if (overflow) {
      if (reason.empty()) reason = "count_overflow";
      reached_intervals = i;
      break;
    }
    if (o.chi_only) {
      if (__builtin_add_overflow(chi, chi_delta, &chi)) {
        if (reason.empty()) reason = "count_overflow";
        reached_intervals = i;
        break;
      }
    } else {
      // chi = sum_k (-1)^k Cl_k; the partial sums stay below the largest count in size.
      int128 s = 0;
      for (std::size_t k = 0; k < counts.size() && !overflow; ++k)
        overflow = (k % 2 == 0) ? __builtin_add_overflow(s, counts[k], &s) : __builtin_sub_overflow(s, counts[k], &s);
      if (overflow) {
        if (reason.empty()) reason = "count_overflow";
        reached_intervals = i;
        break;
      }
      chi = s;
    }
    if (truncated && exact_intervals == intervals) {
      exact_intervals = i;
      if (reason.empty()) reason = "max_dimension";
    }
    work += interval_work;
    counts_at[i] = counts;
    chi_at[i] = chi;
    if (o.node_counts) node_at[i] = node;
    if (o.node_curvature) curvature_at[i] = curvature;
  }
  exact_intervals = std::min(exact_intervals, reached_intervals);

  // Map grid points to checkpoints.
  auto checkpoint_of = [&](std::size_t g) {
    const std::size_t e = std::min(grid[g].edges, f.edges.size());
    return static_cast<std::size_t>(std::lower_bound(checkpoints.begin(), checkpoints.end(), e) - checkpoints.begin());
  };
  // Curvature snapshots move to their last grid point instead of being copied.
  std::vector<std::size_t> last_use(o.node_curvature ? intervals : 0, 0);
  if (o.node_curvature)
    for (std::size_t g = 0; g < grid.size(); ++g) last_use[checkpoint_of(g)] = g;
  result.complete_points = 0;
  bool leading = true;
  for (std::size_t g = 0; g < grid.size(); ++g) {
    const std::size_t i = checkpoint_of(g);
    if (i < reached_intervals) {
      result.counts[g] = counts_at[i];
      result.chi[g] = chi_at[i];
      if (o.node_counts) {
        result.node_counts[g] = node_at[i];
        for (auto& row : result.node_counts[g])
          if (row.size() < result.counts[g].size()) row.resize(result.counts[g].size(), 0);
      }
    }
    if (leading && i < exact_intervals) {
      ++result.complete_points;
      if (o.node_curvature)
        result.curvature_numerators[g] = last_use[i] == g ? std::move(curvature_at[i]) : curvature_at[i];
    } else {
      leading = false;
    }
  }
  result.stopped_by = reason;
  result.curvature_exact = shares.exact;
  result.curvature_denominator = shares.denominator;
  result.complete_edges = exact_intervals == 0 ? 0 : checkpoints[exact_intervals - 1];
  result.work = static_cast<double>(work);
  return result;
}

}  // namespace critplex::cliques
