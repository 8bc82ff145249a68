#include "pipeline/nulls.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <limits>

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
                                  const std::vector<filtration::GridPoint>& grid, int threads) {
  filtration::Filtration f;
  f.nodes = nodes;
  f.edges.reserve(edges.size());
  for (std::size_t k = 0; k < edges.size(); ++k)
    f.edges.push_back({edges[k].first, edges[k].second, static_cast<double>(edges.size() - k), 0.0});
  cliques::Options o;
  o.chi_only = true;
  o.threads = threads;
  const auto counts = cliques::count_on_grid(f, grid, o, nullptr);
  std::vector<double> chi(grid.size(), std::numeric_limits<double>::quiet_NaN());
  for (std::size_t g = 0; g < counts.complete_points; ++g) chi[g] = to_double(counts.chi[g]);
  return chi;
}

// chi of the clique complex of a graph given as an edge list.
int128 chi_of_graph(std::size_t nodes, const simulate::EdgeList& edges, int threads) {
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
  return cliques::count_on_grid(f, {end}, o, nullptr).chi.at(0);
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

std::optional<double> null_range(const SweepOptions& options, std::size_t nodes, std::optional<double> max_density) {
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
  std::vector<std::vector<double>> curves;  // [draw][grid point] chi of the null

  auto report = [&](std::size_t done) {
    if (progress && progress(static_cast<double>(done) / static_cast<double>(spec.count)))
      fail(ErrorKind::cancelled, "null model cancelled by the progress callback");
  };
  const int threads = observed.options.cliques ? observed.options.cliques->threads : 0;

  if (spec.model == "rewire_nested") {
    // One nested rewiring per draw (layers between grid points), chi in one pass.
    const std::optional<double> limit = null_range(observed.options, observed.nodes, spec.max_density);
    std::vector<filtration::GridPoint> grid;
    std::vector<std::size_t> ends;
    for (const auto& p : observed.grid) {
      if (limit && p.density > *limit + 1e-12) break;
      grid.push_back(p);
      if (ends.empty() || p.edges > ends.back()) ends.push_back(p.edges);
    }
    for (int j = 0; j < spec.count; ++j) {
      simulate::RewireOptions ro;
      ro.swaps_per_edge = spec.rewire_swaps_per_edge;
      ro.seed = draw_seed(spec.seed, static_cast<std::uint64_t>(j));
      const auto rewired = simulate::rewire_nested(observed.filtration, ends, ro);
      if (!rewired.complete) ++result.incomplete_rewirings;
      std::vector<double> chi = chi_of_nested(observed.nodes, rewired.edges, grid, threads);
      chi.resize(points, std::numeric_limits<double>::quiet_NaN());
      result.first_zeros.push_back(first_zero_of(density, chi));
      curves.push_back(std::move(chi));
      report(static_cast<std::size_t>(j) + 1);
    }
  } else if (spec.model == "rewire") {
    // Degree-preserving rewiring of the graph at each grid density, chi of each.
    for (int j = 0; j < spec.count; ++j) {
      std::vector<double> chi(points, 0.0);
      for (std::size_t g = 0; g < points; ++g) {
        simulate::RewireOptions ro;
        ro.swaps_per_edge = spec.rewire_swaps_per_edge;
        ro.seed = draw_seed(spec.seed, static_cast<std::uint64_t>(j) * 100003u + g);
        const auto rewired = simulate::rewire_prefix(observed.filtration, observed.grid[g].edges, ro);
        if (!rewired.complete) ++result.incomplete_rewirings;
        chi[g] = to_double(chi_of_graph(observed.nodes, rewired.edges, threads));
      }
      result.first_zeros.push_back(first_zero_of(density, chi));
      curves.push_back(std::move(chi));
      report(static_cast<std::size_t>(j) + 1);
    }
  } else {
    // Surrogate time series through the same cleaning, filtering and estimator.
    simulate::SurrogateOptions so;
    so.method = simulate::surrogate_method_from_name(spec.model);
    so.iaaft_iterations = spec.iaaft_iterations;
    const SweepOptions null_options = null_sweep_options(observed.options, observed.nodes, spec.max_density);
    for (int j = 0; j < spec.count; ++j) {
      so.seed = draw_seed(spec.seed, static_cast<std::uint64_t>(j));
      series::Series surrogate = series;
      surrogate.values = simulate::make_surrogate(series.values, so).values;
      auto matrices = connectivity::connect(surrogate, connect, inputs);
      const SweepResult sweep = run_sweep(matrices.at(band_index).matrix, null_options, nullptr);
      std::vector<double> chi = sweep.chi_curve();
      result.first_zeros.push_back(first_zero_of(sweep.densities(), chi));
      chi.resize(points, std::numeric_limits<double>::quiet_NaN());
      curves.push_back(std::move(chi));
      report(static_cast<std::size_t>(j) + 1);
    }
  }

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
