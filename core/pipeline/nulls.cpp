#include "pipeline/nulls.hpp"

#include <algorithm>
#include <atomic>
#include <chrono>
#include <cmath>
#include <condition_variable>
#include <cstdio>
#include <exception>
#include <limits>
#include <memory>
#include <mutex>
#include <thread>

#include "base/error.hpp"
#include "base/random.hpp"
#include "cliques/counts.hpp"
#include "cohort/statistics.hpp"
#include "simulate/rewire.hpp"
#include "simulate/surrogates.hpp"
#include "transitions/transitions.hpp"

namespace critplex::pipeline {

const OptionSection& null_option_section() {
  static const OptionSection section{
      "subject.null",
      "subject config: null",
      "the subject and cohort config's \"null\"",
      "The null model a subject's first transition is read against.",
      {{.key = "model", .type = "choice", .default_value = "none",
        .choices = {"none", "phase_multivariate", "phase_independent", "iaaft", "rewire", "rewire_nested"},
        .meaning = "surrogate series through the same cleaning, filtering, estimator and sweep (chi only); "
                   "rewire: the graph at every grid density rewired on its own (degrees kept); rewire_nested: one "
                   "rewiring per draw that keeps every node's degree at every grid density and nests the graphs "
                   "like the observed filtration, with chi in one pass (much cheaper)"},
       {.key = "count", .type = "integer", .default_value = 19, .min = 2, .max = 10000,
        .meaning = "null draws (surrogates or rewirings)"},
       {.key = "seed", .type = "integer", .default_value = 1, .min = 0, .meaning = "seed of every random choice"},
       {.key = "iaaft_iterations", .type = "integer", .default_value = 100, .min = 1, .max = 100000,
        .meaning = "IAAFT iterations (stops early at a fixed point)"},
       {.key = "rewire_swaps_per_edge", .type = "number", .default_value = 10.0, .min = 0, .min_open = true,
        .meaning = "degree-preserving swaps per edge (Maslov & Sneppen 2002)"},
       {.key = "min_draws_for_z", .type = "integer", .default_value = 100, .min = 2, .max = 10000,
        .meaning = "null draws with a transition needed before a z-score is reported; with fewer, only the "
                   "empirical percentile rank (resolution 1/(count+1)) and a warning"},
       {.key = "max_density", .type = "number", .default_note = "0.3 above 100 regions, else the clique engine's range (never past it)", .min = 0,
        .max = 1, .min_open = true,
        .meaning = "the null sweeps' own range (chi only); null graphs are near random, whose chi is costly at high "
                   "density, so a range just past the transitions of interest cuts a null's cost most. A draw "
                   "without a chi zero in range counts as above every density in the percentile rank"}}};
  return section;
}

NullSpec parse_null_spec(const Json& section, const std::string& where) {
  SchemaReader r(section.is_null() ? Json::object() : section, null_option_section(), where);
  NullSpec s;
  s.model = r.choice("model");
  s.count = static_cast<int>(r.integer("count"));
  s.seed = static_cast<std::uint64_t>(r.integer("seed"));
  s.iaaft_iterations = static_cast<int>(r.integer("iaaft_iterations"));
  s.rewire_swaps_per_edge = r.number("rewire_swaps_per_edge");
  s.min_draws_for_z = static_cast<int>(r.integer("min_draws_for_z"));
  s.max_density = r.optional_number("max_density");
  r.finish();
  return s;
}

namespace {

// Independent, reproducible seeds for the j-th null draw.
std::uint64_t draw_seed(std::uint64_t seed, std::uint64_t j) { return derived_seed(seed, j + 1); }

double first_zero_of(const std::vector<double>& density, const std::vector<double>& chi) {
  for (const auto& c : transitions::sign_changes(density, chi))
    if (!c.touch) return c.density;
  return std::numeric_limits<double>::quiet_NaN();
}

// chi at every grid point of a null filtration whose edges are listed in entry order.
std::vector<double> chi_of_nested(std::size_t nodes, const simulate::EdgeList& edges,
                                  const std::vector<filtration::GridPoint>& grid, int threads, const ProgressFn& stop) {
  filtration::Filtration f;
  f.nodes = nodes;
  f.edges.reserve(edges.size());
  for (std::size_t k = 0; k < edges.size(); ++k)
    f.edges.push_back({edges[k].first, edges[k].second, static_cast<double>(edges.size() - k), 0.0});
  cliques::Options o;
  o.chi_only = true;
  o.threads = threads;
  const auto counts = cliques::count_on_grid(f, grid, o, stop);
  std::vector<double> chi(grid.size(), std::numeric_limits<double>::quiet_NaN());
  for (std::size_t g = 0; g < counts.complete_points; ++g) chi[g] = to_double(counts.chi[g]);
  return chi;
}

// chi of the clique complex of a graph given as an edge list.
int128 chi_of_graph(std::size_t nodes, const simulate::EdgeList& edges, int threads, const ProgressFn& stop) {
  filtration::Filtration f;
  f.nodes = nodes;
  f.edges.reserve(edges.size());
  // Distinct decreasing weights: the order does not matter for the final complex.
  for (std::size_t k = 0; k < edges.size(); ++k)
    f.edges.push_back({edges[k].first, edges[k].second, static_cast<double>(edges.size() - k), 0.0});
  filtration::GridPoint end;
  end.edges = edges.size();
  end.density = f.density(edges.size());
  cliques::Options o;
  o.chi_only = true;
  o.threads = threads;
  return cliques::count_on_grid(f, {end}, o, stop).chi.at(0);
}

// How the draws share the cores: `workers` draws at once, each engine of a draw with
// `engine_threads` threads (the clique engine's option, 0 = every core). With one worker
// the draws run on the calling thread and the engine keeps the option's threads.
struct DrawPlan {
  std::size_t workers = 1;
  int engine_threads = 0;
};

DrawPlan plan_draws(std::size_t count, int threads) {
  const std::size_t cores = threads > 0 ? static_cast<std::size_t>(threads)
                                        : std::max(1u, std::thread::hardware_concurrency());
  DrawPlan plan;
  plan.workers = std::max<std::size_t>(1, std::min(cores, count));
  plan.engine_threads = plan.workers == 1 ? threads : static_cast<int>(std::max<std::size_t>(1, cores / plan.workers));
  return plan;
}

// One draw: its index, the worker running it (for per-thread workspaces), the engine's
// threads, and a progress function for the draw's engines (true: stop; they then throw
// ErrorKind::cancelled).
using DrawFn = std::function<void(std::size_t draw, std::size_t worker, int engine_threads, const ProgressFn& stop)>;

// Runs draw(j, ...) for every j < count. Every draw writes only its own slots and takes its
// randomness from its own seed, so the results do not depend on plan.workers. `progress`
// (fraction of draws done; true cancels) is called only on the calling thread: hosts such
// as R and MATLAB cannot take callbacks from other threads. A failing draw stops the others;
// the failure of the lowest-numbered draw is rethrown.
void run_draws(const DrawPlan& plan, std::size_t count, const DrawFn& draw, const ProgressFn& progress) {
  const auto fraction = [count](double done) { return done / static_cast<double>(count); };
  if (plan.workers <= 1) {
    for (std::size_t j = 0; j < count; ++j) {
      draw(j, 0, plan.engine_threads,
           [&](double f) { return progress && progress(fraction(static_cast<double>(j) + std::min(f, 1.0))); });
      if (progress && progress(fraction(static_cast<double>(j + 1))))
        fail(ErrorKind::cancelled, "null model cancelled by the progress callback");
    }
    return;
  }
  std::atomic<std::size_t> next{0};
  std::size_t finished = 0;  // guarded by mutex
  std::atomic<bool> stop{false};
  std::vector<std::exception_ptr> errors(count);
  std::mutex mutex;
  std::condition_variable changed;
  const ProgressFn stopped = [&](double) { return stop.load(); };
  auto work = [&](std::size_t worker) {
    while (!stop) {
      const std::size_t j = next++;
      if (j >= count) break;
      try {
        draw(j, worker, plan.engine_threads, stopped);
      } catch (...) {
        errors[j] = std::current_exception();
        stop = true;
      }
      {
        std::lock_guard<std::mutex> lock(mutex);
        ++finished;
      }
      changed.notify_all();
    }
    std::lock_guard<std::mutex> lock(mutex);
    changed.notify_all();
  };
  std::vector<std::thread> pool;
  bool cancelled = false;
  try {
    for (std::size_t w = 0; w < plan.workers; ++w) pool.emplace_back(work, w);
    std::unique_lock<std::mutex> lock(mutex);
    while (finished < count && !stop) {
      changed.wait_for(lock, std::chrono::milliseconds(100));
      const double done = fraction(static_cast<double>(finished));
      lock.unlock();  // the callback may take its time; workers must not wait for it
      if (progress && progress(done)) cancelled = stop = true;
      lock.lock();
    }
  } catch (...) {  // a thread that would not start, or a callback that threw: stop the others first
    stop = true;
    for (auto& t : pool) t.join();
    throw;
  }
  for (auto& t : pool) t.join();
  // A real failure wins over the cancellations it caused in other draws.
  for (const auto& e : errors) {
    if (!e) continue;
    try {
      std::rethrow_exception(e);
    } catch (const Error& error) {
      if (error.kind() != ErrorKind::cancelled) throw;
    }
  }
  if (cancelled || (progress && progress(1.0))) fail(ErrorKind::cancelled, "null model cancelled by the progress callback");
  for (const auto& e : errors)
    if (e) std::rethrow_exception(e);
}

std::vector<double> finite_values(const std::vector<double>& x) {
  std::vector<double> out;
  for (double v : x)
    if (std::isfinite(v)) out.push_back(v);
  return out;
}

}  // namespace

std::size_t NullResult::with_zero() const { return finite_values(first_zeros).size(); }

double NullResult::mean() const {
  const auto f = finite_values(first_zeros);
  return f.size() >= 2 ? cohort::mean(f) : std::numeric_limits<double>::quiet_NaN();
}

double NullResult::sd() const {
  const auto f = finite_values(first_zeros);
  return f.size() >= 2 ? std::sqrt(cohort::sample_variance(f)) : std::numeric_limits<double>::quiet_NaN();
}

double NullResult::z() const {
  const auto f = finite_values(first_zeros);
  const std::size_t needed = static_cast<std::size_t>(std::max(2, spec.min_draws_for_z));
  if (f.size() < needed || !std::isfinite(observed_first)) return std::numeric_limits<double>::quiet_NaN();
  return cohort::z_score(observed_first, f);
}

double NullResult::percentile() const {
  if (first_zeros.empty() || !std::isfinite(observed_first)) return std::numeric_limits<double>::quiet_NaN();
  double below = 0.0, equal = 0.0;
  for (double x : first_zeros) {
    if (!std::isfinite(x)) continue;  // no zero in range: above every density
    below += x < observed_first ? 1.0 : 0.0;
    equal += x == observed_first ? 1.0 : 0.0;
  }
  return (below + (equal + 1.0) / 2.0) / (static_cast<double>(first_zeros.size()) + 1.0);
}

double NullResult::percentile_resolution() const { return 1.0 / (static_cast<double>(first_zeros.size()) + 1.0); }

std::string NullResult::warning() const {
  if (!std::isnan(z()) || !std::isfinite(observed_first)) return "";
  char buf[320];
  std::snprintf(buf, sizeof buf,
                "%zu of %zu null draws have a transition, fewer than min_draws_for_z = %d: no z-score; the empirical "
                "percentile rank has resolution 1/%zu = %.3g",
                with_zero(), first_zeros.size(), spec.min_draws_for_z, first_zeros.size() + 1, percentile_resolution());
  return buf;
}

double null_range(const SweepOptions& options, std::size_t nodes, std::optional<double> max_density) {
  // The default (docs/options.md, subject.null), within the clique engine's range.
  const std::optional<double> chi_range = options.cliques ? options.cliques->max_density : std::nullopt;
  if (!max_density) max_density = std::min(default_engine_ranges(nodes).null, chi_range.value_or(options.grid.max_density));
  return std::min(*max_density, options.grid.max_density);
}

SweepOptions null_sweep_options(const SweepOptions& options, std::size_t nodes, std::optional<double> max_density) {
  SweepOptions o;
  o.weights = options.weights;
  o.grid = options.grid;
  cliques::Options c;
  c.chi_only = true;
  if (options.cliques) c.threads = options.cliques->threads;
  c.max_density = null_range(options, nodes, max_density);
  o.cliques = c;
  o.transitions.random_graph = false;
  return o;
}

NullResult run_null_model(const NullSpec& spec, const series::Series& series,
                          const connectivity::ConnectOptions& connect, const series::CleanInputs& inputs,
                          std::size_t band_index, const SweepResult& observed, const ProgressFn& progress) {
  const std::vector<double> density = observed.densities();
  const std::size_t points = density.size();
  NullResult result;
  result.spec = spec;
  result.observed_first = first_zero_of(density, observed.chi_curve());
  const auto count = static_cast<std::size_t>(std::max(spec.count, 0));
  std::vector<std::vector<double>> curves(count);  // [draw][grid point] chi of the null
  result.first_zeros.assign(count, std::numeric_limits<double>::quiet_NaN());
  std::vector<std::size_t> incomplete(count, 0);     // rewirings with too few legal swaps, per draw
  const DrawPlan plan = plan_draws(count, observed.options.cliques ? observed.options.cliques->threads : 0);

  if (spec.model == "rewire_nested") {
    // One nested rewiring per draw (layers between grid points), chi in one pass.
    const double limit = null_range(observed.options, observed.nodes, spec.max_density);
    std::vector<filtration::GridPoint> grid;
    std::vector<std::size_t> ends;
    for (const auto& p : observed.grid) {
      if (p.density > limit + 1e-12) break;
      grid.push_back(p);
      if (ends.empty() || p.edges > ends.back()) ends.push_back(p.edges);
    }
    run_draws(plan, count, [&](std::size_t j, std::size_t, int threads, const ProgressFn& stop) {
      simulate::RewireOptions ro;
      ro.swaps_per_edge = spec.rewire_swaps_per_edge;
      ro.seed = draw_seed(spec.seed, j);
      const auto rewired = simulate::rewire_nested(observed.filtration, ends, ro);
      if (!rewired.complete) ++incomplete[j];
      std::vector<double> chi = chi_of_nested(observed.nodes, rewired.edges, grid, threads, stop);
      chi.resize(points, std::numeric_limits<double>::quiet_NaN());
      result.first_zeros[j] = first_zero_of(density, chi);
      curves[j] = std::move(chi);
    }, progress);
  } else if (spec.model == "rewire") {
    // Degree-preserving rewiring of the graph at each grid density, chi of each.
    run_draws(plan, count, [&](std::size_t j, std::size_t, int threads, const ProgressFn& stop) {
      std::vector<double> chi(points, 0.0);
      for (std::size_t g = 0; g < points; ++g) {
        simulate::RewireOptions ro;
        ro.swaps_per_edge = spec.rewire_swaps_per_edge;
        ro.seed = draw_seed(spec.seed, j * 100003u + g);
        const auto rewired = simulate::rewire_prefix(observed.filtration, observed.grid[g].edges, ro);
        if (!rewired.complete) ++incomplete[j];
        chi[g] = to_double(chi_of_graph(observed.nodes, rewired.edges, threads, stop));
      }
      result.first_zeros[j] = first_zero_of(density, chi);
      curves[j] = std::move(chi);
    }, progress);
  } else {
    // Surrogate time series through the same cleaning, filtering and estimator. What does
    // not change between draws is made once: the spectra of the series (surrogates); the
    // censoring mask, confound design with its factorisation and the filters (the connect
    // chain); FFT plans once per worker.
    simulate::SurrogateOptions so;
    so.method = simulate::surrogate_method_from_name(spec.model);
    so.iaaft_iterations = spec.iaaft_iterations;
    const simulate::SurrogateBasis basis(series.values, so);
    const connectivity::ConnectChain chain(series, connect, inputs);
    if (band_index >= chain.bands()) fail(ErrorKind::internal, "null model: no band " + std::to_string(band_index));
    std::vector<std::unique_ptr<series::FftPlans>> plans;
    for (std::size_t w = 0; w < plan.workers; ++w) plans.push_back(std::make_unique<series::FftPlans>(basis.frames()));
    const SweepOptions null_options = null_sweep_options(observed.options, observed.nodes, spec.max_density);
    run_draws(plan, count, [&](std::size_t j, std::size_t worker, int threads, const ProgressFn& stop) {
      series::Series surrogate;
      surrogate.values = basis.draw(draw_seed(spec.seed, j), *plans[worker]).values;
      surrogate.names = series.names;
      surrogate.sampling_interval = series.sampling_interval;
      surrogate.source = series.source;
      const connectivity::Matrix matrix = chain.run_band(surrogate, band_index).matrix;
      SweepOptions o = null_options;
      o.cliques->threads = threads;
      const SweepResult sweep = run_sweep(matrix, o, stop);
      std::vector<double> chi = sweep.chi_curve();
      result.first_zeros[j] = first_zero_of(sweep.densities(), chi);
      chi.resize(points, std::numeric_limits<double>::quiet_NaN());
      curves[j] = std::move(chi);
    }, progress);
  }
  for (std::size_t k : incomplete) result.incomplete_rewirings += k;

  // Mean null chi curve on the subject's grid.
  result.mean_chi.assign(points, std::numeric_limits<double>::quiet_NaN());
  for (std::size_t g = 0; g < points; ++g) {
    double sum = 0.0;
    std::size_t n = 0;
    for (const auto& c : curves)
      if (g < c.size() && std::isfinite(c[g])) {
        sum += c[g];
        ++n;
      }
    if (n) result.mean_chi[g] = sum / static_cast<double>(n);
  }
  return result;
}

}  // namespace critplex::pipeline
