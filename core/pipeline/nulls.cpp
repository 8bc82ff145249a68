#include "pipeline/nulls.hpp"

#include <cmath>
#include <limits>

#include "base/error.hpp"
#include "base/random.hpp"
#include "cliques/counts.hpp"
#include "cohort/statistics.hpp"
#include "simulate/rewire.hpp"
#include "simulate/surrogates.hpp"
#include "transitions/transitions.hpp"

namespace critplex::pipeline {

namespace {

// Independent, reproducible seeds for the j-th null draw.
std::uint64_t draw_seed(std::uint64_t seed, std::uint64_t j) { return derived_seed(seed, j + 1); }

std::vector<double> column(const SweepResult& s, const std::string& name) {
  for (std::size_t c = 0; c < s.columns.size(); ++c)
    if (s.columns[c] == name) {
      std::vector<double> v;
      for (const auto& row : s.rows) v.push_back(curve_cell_value(row[c]));
      return v;
    }
  fail(ErrorKind::internal, "sweep has no column \"" + name + "\"");
}

double first_zero_of(const std::vector<double>& density, const std::vector<double>& chi) {
  for (const auto& c : transitions::sign_changes(density, chi))
    if (!c.touch) return c.density;
  return std::numeric_limits<double>::quiet_NaN();
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
  auto counts = cliques::count_on_grid(f, {end}, o, nullptr);
  return counts.chi.at(0);
}

Json summary_of(const std::vector<double>& firsts, double observed) {
  std::vector<double> finite;
  for (double x : firsts)
    if (std::isfinite(x)) finite.push_back(x);
  Json j;
  j["values"] = Json::array();
  for (double x : firsts) j["values"].push_back(std::isfinite(x) ? Json(x) : Json(nullptr));
  j["with_zero"] = finite.size();
  j["observed"] = std::isfinite(observed) ? Json(observed) : Json(nullptr);
  if (finite.size() >= 2) {
    j["mean"] = cohort::mean(finite);
    j["sd"] = std::sqrt(cohort::sample_variance(finite));
    const double z = std::isfinite(observed) ? cohort::z_score(observed, finite) : std::nan("");
    j["z"] = std::isfinite(z) ? Json(z) : Json(nullptr);
  } else {
    j["mean"] = nullptr;
    j["sd"] = nullptr;
    j["z"] = nullptr;
  }
  return j;
}

}  // namespace

SweepOptions null_sweep_options(const SweepOptions& options) {
  SweepOptions o = options;
  Json cliques = Json::object();
  if (options.engine_options.contains("cliques") && options.engine_options["cliques"].is_object() &&
      options.engine_options["cliques"].contains("threads"))
    cliques["threads"] = options.engine_options["cliques"]["threads"];
  cliques["chi_only"] = true;
  o.engine_options = Json{{"cliques", cliques}, {"transitions", Json{{"random_graph", false}}}};
  return o;
}

double first_chi_zero(const SweepResult& sweep) { return first_zero_of(column(sweep, "density"), column(sweep, "chi")); }

Json run_null_model(const NullSpec& spec, const series::Series& series, const connectivity::ConnectOptions& connect,
                    const series::CleanInputs& inputs, std::size_t band_index, const SweepOptions& sweep_options,
                    const SweepResult& observed, const ProgressFn& progress) {
  const std::vector<double> density = column(observed, "density");
  const double observed_first = first_zero_of(density, column(observed, "chi"));
  const std::size_t points = density.size();
  std::vector<std::vector<double>> curves;  // [draw][grid point] chi of the null
  std::vector<double> firsts;
  Json details = Json::object();

  auto report = [&](std::size_t done) {
    if (progress && progress(static_cast<double>(done) / static_cast<double>(spec.count)))
      fail(ErrorKind::cancelled, "null model cancelled by the progress callback");
  };

  if (spec.model == "rewire") {
    // Degree-preserving rewiring of the graph at each grid density, chi of each.
    int threads = 0;
    if (sweep_options.engine_options.contains("cliques") && sweep_options.engine_options["cliques"].is_object())
      threads = static_cast<int>(sweep_options.engine_options["cliques"].value("threads", 0));
    std::size_t incomplete = 0;
    for (int j = 0; j < spec.count; ++j) {
      std::vector<double> chi(points, 0.0);
      for (std::size_t g = 0; g < points; ++g) {
        simulate::RewireOptions ro;
        ro.swaps_per_edge = spec.rewire_swaps_per_edge;
        ro.seed = draw_seed(spec.seed, static_cast<std::uint64_t>(j) * 100003u + g);
        const auto rewired = simulate::rewire_prefix(observed.filtration, observed.grid[g].edges, ro);
        if (!rewired.complete) ++incomplete;
        chi[g] = static_cast<double>(chi_of_graph(observed.nodes, rewired.edges, threads));
      }
      firsts.push_back(first_zero_of(density, chi));
      curves.push_back(std::move(chi));
      report(static_cast<std::size_t>(j) + 1);
    }
    details["swaps_per_edge"] = spec.rewire_swaps_per_edge;
    details["incomplete_rewirings"] = incomplete;
  } else {
    // Surrogate time series through the same cleaning, filtering and estimator.
    simulate::SurrogateOptions so;
    so.method = simulate::surrogate_method_from_name(spec.model);
    so.iaaft_iterations = spec.iaaft_iterations;
    const SweepOptions null_options = null_sweep_options(sweep_options);
    for (int j = 0; j < spec.count; ++j) {
      so.seed = draw_seed(spec.seed, static_cast<std::uint64_t>(j));
      series::Series surrogate = series;
      surrogate.values = simulate::make_surrogate(series.values, so).values;
      auto matrices = connectivity::connect(surrogate, connect, inputs);
      const auto sweep = run_sweep(matrices.at(band_index).matrix, null_options, nullptr);
      std::vector<double> chi = column(sweep, "chi");
      chi.resize(points, std::nan(""));
      firsts.push_back(first_zero_of(column(sweep, "density"), column(sweep, "chi")));
      curves.push_back(std::move(chi));
      report(static_cast<std::size_t>(j) + 1);
    }
    if (so.method == simulate::SurrogateMethod::iaaft) details["iaaft_iterations"] = spec.iaaft_iterations;
  }

  // Mean null chi curve on the subject's grid, and the null's first zeros.
  Json mean_chi = Json::array();
  for (std::size_t g = 0; g < points; ++g) {
    double sum = 0.0;
    std::size_t n = 0;
    for (const auto& c : curves)
      if (g < c.size() && std::isfinite(c[g])) {
        sum += c[g];
        ++n;
      }
    mean_chi.push_back(n ? Json(sum / static_cast<double>(n)) : Json(nullptr));
  }
  Json j = {{"model", spec.model}, {"count", spec.count}, {"seed", spec.seed}};
  j["first_chi_zero"] = summary_of(firsts, observed_first);
  j["mean_chi"] = std::move(mean_chi);
  j["details"] = std::move(details);
  return j;
}

}  // namespace critplex::pipeline
