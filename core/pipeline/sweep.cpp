#include "pipeline/sweep.hpp"

#include <cmath>
#include <limits>

#include "base/error.hpp"
#include "curvature/static_count.hpp"

namespace critplex::pipeline {

const OptionSection& sweep_option_section() {
  static const OptionSection section{
      "sweep",
      "sweep options",
      "cpx_sweep_run, critplex sweep --options, the subject config's \"sweep\"",
      "The density filtration, its reporting grid, and one section per engine.",
      {{.key = "weights", .type = "choice", .default_value = "positive", .choices = {"positive", "absolute", "negative"},
        .meaning = "positive: edge weight r, only r > 0 enter; absolute: |r|, every pair; negative: -r, only r < 0"},
       {.key = "max_density", .type = "number", .default_value = 1.0, .min = 0, .max = 1, .min_open = true,
        .meaning = "stop the filtration at this edge density m / (N(N-1)/2)"},
       {.key = "grid", .type = "number, \"every\", list of densities, or object", .default_value = 0.01,
        .meaning = "reporting grid: a density step, \"every\" (after every edge or tie group), a list of densities, "
                   "or {\"step\"}, {\"densities\"}, {\"thresholds\"}"},
       {.key = "cliques", .type = "object or false", .default_value = Json::object(),
        .meaning = "the clique engine (section sweep.cliques); on by default"},
       {.key = "homology", .type = "object", .meaning = "the homology engine (section sweep.homology); on when given"},
       {.key = "curvature", .type = "object or true", .meaning = "the curvature engine (section sweep.curvature); on when given"},
       {.key = "transitions", .type = "object or boolean", .default_value = true,
        .meaning = "the transitions engine (section sweep.transitions); on whenever chi or Betti curves exist"}}};
  return section;
}

const OptionSection& grid_option_section() {
  static const OptionSection section{
      "sweep.grid",
      "sweep options",
      "the \"grid\" of the sweep options, when given as an object",
      "The reporting grid as an object: one of its keys.",
      {{.key = "step", .type = "number", .min = 0, .max = 1, .min_open = true, .meaning = "a density step"},
       {.key = "densities", .type = "numbers", .min = 0, .max = 1, .meaning = "a list of densities"},
       {.key = "thresholds", .type = "numbers", .meaning = "a list of matrix values (edges at least this strong)"},
       {.key = "every", .type = "boolean", .default_value = false,
        .meaning = "true: after every edge (every tie group)"}}};
  return section;
}

namespace {

filtration::GridSpec parse_grid(const Json& g, double max_density) {
  filtration::GridSpec spec;
  spec.max_density = max_density;
  const std::string where = "sweep options: grid";
  if (g.is_string()) {
    if (g.get<std::string>() != "every") fail(ErrorKind::argument, where + " as text must be \"every\", got " + g.dump());
    spec.kind = "every";
  } else if (g.is_number()) {
    spec.kind = "step";
    spec.step = g.get<double>();
  } else if (g.is_array()) {
    spec.kind = "list";
    for (const auto& x : g) {
      if (!x.is_number()) fail(ErrorKind::argument, where + ": a list must hold numbers, got " + x.dump());
      spec.values.push_back(x.get<double>());
    }
  } else if (g.is_object()) {
    SchemaReader r(g, grid_option_section());
    if (r.has("step")) {
      spec.kind = "step";
      spec.step = r.number("step");
    } else if (r.has("densities")) {
      spec.kind = "list";
      spec.values = r.numbers("densities");
    } else if (r.has("thresholds")) {
      spec.kind = "list";
      spec.parameter = "threshold";
      spec.values = r.numbers("thresholds");
    } else if (r.boolean("every")) {
      spec.kind = "every";
    }
    r.finish();
    if (static_cast<int>(r.has("step")) + r.has("densities") + r.has("thresholds") + r.has("every") > 1)
      fail(ErrorKind::argument, where + ": give one of \"step\", \"densities\", \"thresholds\" and \"every\"");
  } else {
    fail(ErrorKind::argument, where + " must be \"every\", a step, a list of densities or an object");
  }
  if (spec.kind == "step" && !(spec.step > 0.0 && spec.step <= 1.0))
    fail(ErrorKind::argument, where + ": the density step must be in (0, 1], got " + g.dump());
  if (spec.kind == "list" && spec.values.empty()) fail(ErrorKind::argument, where + ": the list is empty");
  return spec;
}

bool turned_off(const Json* section) { return section != nullptr && section->is_boolean() && !section->get<bool>(); }

// What an engine with its own maximum density sees: the grid points up to it, and the
// filtration cut after the last of them (a tie-group end, so the cut splits no tie).
// `cut` is empty when the engine's range is the whole sweep.
struct EngineRange {
  std::vector<filtration::GridPoint> grid;
  std::optional<filtration::Filtration> cut;
  const filtration::Filtration& filtration(const filtration::Filtration& whole) const { return cut ? *cut : whole; }
};

EngineRange engine_range(const filtration::Filtration& f, const std::vector<filtration::GridPoint>& grid,
                         std::optional<double> max_density) {
  EngineRange range;
  if (!max_density) {
    range.grid = grid;
    return range;
  }
  constexpr double kDensitySlack = 1e-12;  // a grid point asked at exactly the limit is inside
  for (const auto& p : grid)
    if (p.density <= *max_density + kDensitySlack) range.grid.push_back(p);
  const std::size_t last_edges = range.grid.empty() ? 0 : range.grid.back().edges;
  if (range.grid.size() < grid.size() || last_edges < f.edges.size()) {
    range.cut = f;
    range.cut->edges.resize(std::min(last_edges, f.edges.size()));
  }
  return range;
}

void check_engine_range(const std::optional<double>& engine, double sweep, const std::string& key) {
  if (engine && *engine > sweep)
    fail(ErrorKind::argument, "sweep options: \"" + key + "\" (" + quoted_value(Json(*engine)) +
                                  ") is beyond the sweep's max_density (" + quoted_value(Json(sweep)) + ")");
}

// An engine run over a shorter grid, stretched back to the whole grid: the points past
// its range are incomplete (empty), and the result says why ("max_density").
void pad_to_grid(cliques::GridCounts& gc, std::size_t points) {
  if (gc.counts.size() >= points) return;
  if (gc.stopped_by.empty()) gc.stopped_by = "max_density";
  gc.counts.resize(points);
  gc.chi.resize(points, 0);
  if (!gc.node_counts.empty()) gc.node_counts.resize(points);
  if (!gc.curvature_numerators.empty()) gc.curvature_numerators.resize(points);
}

// Every-size counts (the shorter range) joined into the chi walk's result: their chi
// must agree wherever both are complete (an independent check of both walks).
void join_every_size_counts(const cliques::GridCounts& every, cliques::GridCounts& chi) {
  const std::size_t both = std::min(every.complete_points, chi.complete_points);
  for (std::size_t g = 0; g < both; ++g) {
    if (every.chi[g] != chi.chi[g])
      fail(ErrorKind::internal, "clique engine: chi of the every-size counts and of the chi walk differ at grid point " +
                                    std::to_string(g));
    chi.counts[g] = every.counts[g];
  }
  chi.every_size_points = both;
  if (!every.node_counts.empty()) chi.node_counts = every.node_counts;
  chi.work += every.work;
}

void resolve_engine_ranges(SweepOptions& o, std::size_t nodes) {
  const double sweep = o.grid.max_density;
  // A sweep range the user gave is the range of interest: every engine defaults to it.
  const EngineDefaults d = o.range_given ? EngineDefaults{sweep, sweep, sweep, sweep} : default_engine_ranges(nodes);
  // A range that reaches the sweep's stays unset: the engine sees the whole filtration
  // (with a tie group that runs past the last grid point).
  auto limit = [sweep](double x) { return x < sweep ? std::optional<double>(x) : std::nullopt; };
  const auto value = [sweep](const std::optional<double>& x) { return x.value_or(sweep); };
  if (o.cliques) {
    cliques::Options& c = *o.cliques;
    if (!c.max_density) c.max_density = limit(std::max(d.chi, c.counts_max_density.value_or(0.0)));
    if (!c.chi_only && !c.counts_max_density) c.counts_max_density = limit(std::min(d.counts, value(c.max_density)));
  }
  if (o.homology && !o.homology->max_density) o.homology->max_density = limit(d.homology);
  // Node curvature on the whole grid needs every clique size: the counts' range. At
  // chosen points (curvature.at) it needs one count per point: a list sets its own
  // range, the transitions are looked for up to the Betti curves' default range.
  if (o.curvature && !o.curvature->max_density) {
    if (o.curvature->at == curvature::Options::At::list)  // the listed points are the user's range
      o.curvature->max_density = o.cliques->max_density;
    else if (o.curvature->at == curvature::Options::At::transitions)
      o.curvature->max_density = limit(std::min(d.homology, value(o.cliques->max_density)));
    else if (o.cliques->chi_only)
      o.curvature->max_density = limit(std::min(d.counts, value(o.cliques->max_density)));
    else
      o.curvature->max_density = o.cliques->counts_max_density;
  }
  // The Erdos-Renyi reference is searched up to the furthest engine range, not beyond.
  if (o.transitions.max_p == 0.0) {
    double furthest = 0.0;
    if (o.cliques) furthest = std::max(furthest, value(o.cliques->max_density));
    if (o.homology) furthest = std::max(furthest, value(o.homology->max_density));
    if (furthest > 0.0 && furthest < sweep) o.transitions.max_p = std::max(0.05, furthest);
  }
}

}  // namespace

EngineDefaults default_engine_ranges(std::size_t nodes) {
  // Up to 100 regions every engine over the whole range costs about 2 s; at 150 regions
  // the every-size counts alone take minutes (docs/performance.md).
  constexpr std::size_t kSmallNetwork = 100;
  if (nodes <= kSmallNetwork) return {1.0, 1.0, 1.0, 1.0};
  return {0.5, 0.1, 0.3, 0.3};
}

void SweepOptions::validate() const {
  if (curvature && !cliques)
    fail(ErrorKind::argument, "sweep options: \"curvature\" needs the clique engine (remove \"cliques\": false)");
  if (cliques) check_engine_range(cliques->max_density, grid.max_density, "cliques.max_density");
  if (cliques && cliques->counts_max_density && cliques->max_density &&
      *cliques->counts_max_density > *cliques->max_density)
    fail(ErrorKind::argument, "sweep options: \"cliques.counts_max_density\" (" +
                                  quoted_value(Json(*cliques->counts_max_density)) +
                                  ") is beyond \"cliques.max_density\" (" + quoted_value(Json(*cliques->max_density)) + ")");
  if (cliques) check_engine_range(cliques->counts_max_density, grid.max_density, "cliques.counts_max_density");
  if (homology) check_engine_range(homology->max_density, grid.max_density, "homology.max_density");
  if (curvature) check_engine_range(curvature->max_density, grid.max_density, "curvature.max_density");
  if (curvature)
    for (double rho : curvature->at_densities)
      if (rho > std::min(grid.max_density, curvature->max_density.value_or(1.0)) + 1e-12)
        fail(ErrorKind::argument, "sweep options: \"curvature.at\" density " + quoted_value(Json(rho)) +
                                      " is beyond the curvature range (max_density " +
                                      quoted_value(Json(std::min(grid.max_density, curvature->max_density.value_or(1.0)))) + ")");
}

SweepOptions parse_sweep_options(const Json& options) {
  SchemaReader r(options, sweep_option_section());
  SweepOptions o;
  o.weights = filtration::weight_mode_from_name(r.choice("weights"));
  const double max_density = r.number("max_density");
  o.range_given = r.has("max_density");
  const Json* grid = r.raw("grid");
  o.grid = grid != nullptr ? parse_grid(*grid, max_density) : parse_grid(Json(0.01), max_density);
  const Json* cliques = r.raw("cliques");
  if (turned_off(cliques)) o.cliques.reset();
  else o.cliques = cliques::parse_options(cliques == nullptr || cliques->is_boolean() ? Json() : *cliques);
  if (const Json* h = r.raw("homology"); h != nullptr && !turned_off(h)) o.homology = homology::parse_options(*h);
  if (const Json* c = r.raw("curvature"); c != nullptr && !turned_off(c)) o.curvature = curvature::parse_options(*c);
  const Json* t = r.raw("transitions");
  o.transitions = transitions::parse_options(t == nullptr ? Json() : *t, "sweep options", "transitions");
  r.finish();
  o.validate();
  return o;
}

std::vector<double> SweepResult::densities() const {
  std::vector<double> d;
  d.reserve(grid.size());
  for (const auto& p : grid) d.push_back(p.density);
  return d;
}

std::vector<double> SweepResult::chi_curve() const {
  std::vector<double> chi;
  if (!cliques) return chi;
  chi.assign(grid.size(), std::numeric_limits<double>::quiet_NaN());
  // The sign and zeros are exact; the magnitude is only for interpolation.
  for (std::size_t g = 0; g < grid.size() && g < cliques->complete_points; ++g) chi[g] = to_double(cliques->chi[g]);
  return chi;
}

transitions::Curves transition_curves(const SweepResult& r) {
  transitions::Curves cv;
  cv.density = r.densities();
  const std::size_t n = cv.density.size();
  if (r.cliques) {
    cv.chi = r.chi_curve();
    cv.chi_exact.assign(n, 0);
    for (std::size_t g = 0; g < n && g < r.cliques->complete_points; ++g) cv.chi_exact[g] = r.cliques->chi[g];
  }
  if (r.homology) {
    const std::size_t dims = static_cast<std::size_t>(r.homology->max_dimension + 1);
    cv.betti.assign(n, std::vector<double>(dims, std::numeric_limits<double>::quiet_NaN()));
    for (std::size_t g = 0; g < n && g < r.homology->betti.size(); ++g)
      for (std::size_t k = 0; k < dims && static_cast<int>(k) <= r.homology->complete_dimension; ++k)
        cv.betti[g][k] = static_cast<double>(r.homology->betti[g][k]);
  }
  if (r.curvature) {
    const double nan = std::numeric_limits<double>::quiet_NaN();
    for (const auto& p : r.curvature->points) {
      cv.kappa_mean.push_back(p.computed ? p.node.mean : nan);
      cv.kappa_sd.push_back(p.computed ? p.node.sd : nan);
      cv.kappa_skewness.push_back(p.computed ? p.node.skewness : nan);
      cv.kappa_kurtosis.push_back(p.computed ? p.node.kurtosis : nan);
      cv.forman_mean.push_back(p.forman_computed ? p.forman.mean : nan);
    }
  }
  return cv;
}

SweepResult run_sweep(const connectivity::Matrix& matrix, const SweepOptions& options, const ProgressFn& progress) {
  options.validate();
  SweepResult result;
  result.options = options;
  result.nodes = static_cast<std::size_t>(matrix.values.rows());
  result.names = matrix.names;
  result.filtration = filtration::build(matrix.values, options.weights, options.grid.max_density);
  result.grid = filtration::make_grid(result.filtration, options.grid);

  // Each engine runs over its own range (its max_density, resolved from the defaults
  // below); the shared filtration is cut for it, and its curves end there (n/a beyond).
  SweepOptions& run = result.options;
  resolve_engine_ranges(run, result.nodes);
  // Cliques: exact chi over the engine's range, every-size counts Cl_k over the shorter
  // counts range (a chi-only walk covers the rest; core/cliques). With curvature on over
  // the counts range, the counting walk also sums each node's Gauss-Bonnet share.
  std::optional<cliques::GridCounts> every_size, curvature_counts;
  const std::optional<double> curvature_limit = run.curvature ? run.curvature->max_density : std::nullopt;
  const bool curvature_on_grid = run.curvature && run.curvature->at == curvature::Options::At::grid;
  const bool shared_counts = curvature_on_grid && !run.cliques->chi_only &&
                             curvature_limit.value_or(2.0) == run.cliques->counts_max_density.value_or(2.0);
  if (run.cliques) {
    const cliques::Options& c = *run.cliques;
    const bool split = !c.chi_only && c.counts_max_density.value_or(2.0) != c.max_density.value_or(2.0);
    if (!c.chi_only) {
      const EngineRange range = engine_range(result.filtration, result.grid, c.counts_max_density);
      cliques::Options copt = c;
      copt.node_curvature = shared_counts;
      every_size = cliques::count_on_grid(range.filtration(result.filtration), range.grid, copt, progress);
      pad_to_grid(*every_size, result.grid.size());
    }
    if (split || c.chi_only) {
      const EngineRange range = engine_range(result.filtration, result.grid, c.max_density);
      cliques::Options copt = c;
      copt.chi_only = true;
      copt.node_counts = false;
      result.cliques = cliques::count_on_grid(range.filtration(result.filtration), range.grid, copt, progress);
      pad_to_grid(*result.cliques, result.grid.size());
      if (every_size) join_every_size_counts(*every_size, *result.cliques);
    } else {
      result.cliques = std::move(every_size);
      every_size.reset();
    }
  }
  // Homology: bars and Betti curves (core/homology). Where the clique engine ran and no
  // simplex lies above the computed dimensions, Euler-Poincare (chi = sum (-1)^k beta_k)
  // must hold exactly: a mismatch is a bug, never output.
  if (run.homology) {
    const EngineRange range = engine_range(result.filtration, result.grid, run.homology->max_density);
    result.homology = homology::compute(range.filtration(result.filtration), range.grid, *run.homology, progress);
    // chi_only counts hold Cl_0 and Cl_1 only, which cannot show that no simplex lies
    // above the Betti dimensions: the check needs every count.
    if (result.cliques)
      result.euler_poincare_checked = homology::check_euler_poincare(
          *result.homology, result.cliques->counts, result.cliques->chi,
          std::min(result.cliques->every_size_points, result.homology->betti.size()));
  }
  // Curvature: node curvature with Gauss-Bonnet checked at every point, Forman-Ricci.
  // Over a shorter range than chi's (or beside chi_only) it gets its own full count.
  // At chosen points only (curvature.at): one static count of the graph per point, or
  // one walk to the last of them when that is expected to be cheaper (curvature.count).
  if (run.curvature && !curvature_on_grid) {
    const EngineRange range = engine_range(result.filtration, result.grid, curvature_limit);
    std::vector<char> in_range(result.grid.size(), 0);
    for (std::size_t g = 0; g < result.grid.size(); ++g)
      in_range[g] = range.grid.size() == result.grid.size() || result.grid[g].density <= *curvature_limit + 1e-12;
    curvature::Selection selection =
        run.curvature->at == curvature::Options::At::list
            ? curvature::select_listed(result.filtration, result.grid, in_range, run.curvature->at_densities)
            : curvature::select_transitions(result.grid, in_range, result.chi_curve(), run.curvature->window);
    std::vector<std::size_t> edge_counts;
    for (std::size_t g : selection.points) edge_counts.push_back(result.grid[g].edges);
    selection.walk = run.curvature->count == curvature::Options::Count::walk ||
                     (run.curvature->count == curvature::Options::Count::automatic &&
                      !curvature::static_counts_cheaper(edge_counts));
    const curvature::StaticCounts counts =
        curvature::count_selected(result.filtration, result.grid, selection, selection.walk, *run.cliques,
                                  result.cliques ? &*result.cliques : nullptr, progress);
    result.curvature = curvature::on_grid(range.filtration(result.filtration), result.grid, counts.sources, *run.curvature);
    result.curvature->selection = selection;
    result.curvature->stopped = counts.stopped;
  } else if (run.curvature) {
    const EngineRange range = engine_range(result.filtration, result.grid, curvature_limit);
    if (!shared_counts) {
      cliques::Options copt = *run.cliques;
      copt.chi_only = false;
      copt.node_curvature = true;
      copt.node_counts = false;
      curvature_counts = cliques::count_on_grid(range.filtration(result.filtration), range.grid, copt, progress);
      pad_to_grid(*curvature_counts, result.grid.size());
    }
    result.curvature = curvature::on_grid(range.filtration(result.filtration), result.grid,
                                          shared_counts ? (every_size ? *every_size : *result.cliques) : *curvature_counts, *run.curvature);
  }
  // Transitions: zeros of chi, Betti crossings and peaks, the random-graph reference.
  if (run.transitions.enabled && (result.cliques || result.homology))
    result.transitions = transitions::analyse(transition_curves(result), result.nodes, run.transitions);

  if (progress && progress(1.0)) fail(ErrorKind::cancelled, "sweep cancelled by the progress callback");
  return result;
}

}  // namespace critplex::pipeline
