// Unit tests of the pipeline stage's sweep: each engine over its own range, curvature
// beside a chi-only count, the wall-time budget, and option errors by kind; the null
// models against their draw-by-draw route and across thread counts. The
// reference for every range-limited result is the same engine run over the whole
// range (a property test on invented matrices): a cut must change nothing before it.
#include <catch2/catch.hpp>

#include <algorithm>
#include <atomic>
#include <cmath>
#include <optional>
#include <random>
#include <thread>

#include "base/error.hpp"
#include "base/random.hpp"
#include "connectivity/connect.hpp"
#include "pipeline/nulls.hpp"
#include "pipeline/sweep.hpp"
#include "simulate/latent_factor.hpp"
#include "simulate/surrogates.hpp"
#include "transitions/transitions.hpp"

using namespace critplex;

namespace {

// An invented symmetric matrix with distinct off-diagonal values (no ties).
connectivity::Matrix random_matrix(std::size_t n, unsigned seed) {
  std::mt19937_64 rng(seed);
  std::uniform_real_distribution<double> u(-1.0, 1.0);
  connectivity::Matrix m;
  m.values = Eigen::MatrixXd::Identity(static_cast<Eigen::Index>(n), static_cast<Eigen::Index>(n));
  for (std::size_t i = 0; i < n; ++i)
    for (std::size_t j = i + 1; j < n; ++j)
      m.values(static_cast<Eigen::Index>(i), static_cast<Eigen::Index>(j)) =
          m.values(static_cast<Eigen::Index>(j), static_cast<Eigen::Index>(i)) = u(rng);
  for (std::size_t i = 0; i < n; ++i) m.names.push_back("R" + std::to_string(i + 1));
  return m;
}

pipeline::SweepOptions options(const char* json) { return pipeline::parse_sweep_options(Json::parse(json)); }

ErrorKind kind_of(const std::function<void()>& body) {
  try {
    body();
  } catch (const Error& e) {
    return e.kind();
  }
  FAIL("no error was thrown");
  return ErrorKind::internal;
}

}  // namespace

TEST_CASE("homology over its own range equals the whole run before the cut and is absent after") {
  const auto m = random_matrix(30, 7);
  const auto whole = pipeline::run_sweep(m, options(R"({"homology": {"max_dimension": 2}})"), {});
  const auto part = pipeline::run_sweep(m, options(R"({"homology": {"max_dimension": 2, "max_density": 0.3}})"), {});
  REQUIRE(part.grid.size() == whole.grid.size());
  std::size_t inside = 0;
  while (inside < part.grid.size() && part.grid[inside].density <= 0.3 + 1e-12) ++inside;
  REQUIRE(inside > 10);
  REQUIRE(part.homology->betti.size() == inside);
  for (std::size_t g = 0; g < inside; ++g) CHECK(part.homology->betti[g] == whole.homology->betti[g]);
  // chi is untouched and still over the whole grid; Euler-Poincare checked where it can be.
  CHECK(part.cliques->chi == whole.cliques->chi);
  CHECK(part.cliques->complete_points == whole.grid.size());
  CHECK(part.euler_poincare_checked > 0);
}

TEST_CASE("curvature beside a chi-only count matches curvature from the full count") {
  const auto m = random_matrix(28, 11);
  const auto full = pipeline::run_sweep(m, options(R"({"curvature": {}})"), {});
  const auto split =
      pipeline::run_sweep(m, options(R"({"cliques": {"chi_only": true}, "curvature": {"max_density": 0.4}})"), {});
  REQUIRE(split.cliques->complete_points == split.grid.size());  // chi over the whole range
  CHECK(split.cliques->chi == full.cliques->chi);
  std::size_t computed = 0;
  for (std::size_t g = 0; g < split.grid.size(); ++g) {
    const auto& p = split.curvature->points[g];
    if (split.grid[g].density > 0.4 + 1e-12) {
      CHECK_FALSE(p.computed);
      CHECK_FALSE(p.forman_computed);
      continue;
    }
    REQUIRE(p.computed);
    ++computed;
    CHECK(p.kappa == full.curvature->points[g].kappa);
    CHECK(p.gauss_bonnet.exact);
  }
  CHECK(computed > 10);
  CHECK(split.curvature->all_exact);
}

TEST_CASE("the clique engine's own range leaves chi n/a past it and says why") {
  const auto m = random_matrix(25, 3);
  const auto r = pipeline::run_sweep(m, options(R"({"cliques": {"max_density": 0.3}})"), {});
  CHECK(r.cliques->stopped_by == "max_density");
  CHECK(r.cliques->counts.size() == r.grid.size());
  for (std::size_t g = 0; g < r.grid.size(); ++g)
    CHECK((g < r.cliques->complete_points) == (r.grid[g].density <= 0.3 + 1e-12));
  const auto chi = r.chi_curve();
  CHECK(std::isnan(chi.back()));
}

TEST_CASE("an engine range beyond the sweep's, and bad range values, are argument errors") {
  CHECK(kind_of([] { options(R"({"max_density": 0.4, "homology": {"max_density": 0.5}})"); }) == ErrorKind::argument);
  CHECK(kind_of([] { options(R"({"cliques": {"max_density": 0}})"); }) == ErrorKind::argument);
  CHECK(kind_of([] { options(R"({"curvature": {"max_density": 1.5}})"); }) == ErrorKind::argument);
  CHECK(kind_of([] { options(R"({"cliques": {"max_seconds": -1}})"); }) == ErrorKind::argument);
  CHECK(kind_of([] { options(R"({"cliques": {"max_density": null}})"); }) == ErrorKind::argument);
}

TEST_CASE("a wall-time budget keeps what is complete, exact") {
  const auto m = random_matrix(120, 5);
  const auto whole = pipeline::run_sweep(m, options(R"({"cliques": {"threads": 2}})"), {});
  const auto timed = pipeline::run_sweep(m, options(R"({"cliques": {"threads": 2, "max_seconds": 1e-6}})"), {});
  CHECK(timed.cliques->stopped_by == "max_seconds");
  REQUIRE(timed.cliques->complete_points < whole.grid.size());
  for (std::size_t g = 0; g < timed.cliques->complete_points; ++g) {
    CHECK(timed.cliques->counts[g] == whole.cliques->counts[g]);
    CHECK(timed.cliques->chi[g] == whole.cliques->chi[g]);
  }
}

TEST_CASE("a cancelling progress callback stops the sweep with the cancelled kind") {
  const auto m = random_matrix(60, 9);
  CHECK(kind_of([&] { pipeline::run_sweep(m, options("{}"), [](double) { return true; }); }) == ErrorKind::cancelled);
}

TEST_CASE("default engine ranges: above 100 regions chi to 0.5, every clique size to 0.1, Betti to 0.3") {
  // Reference: the same engines run with every range given (a cut changes nothing before it).
  const auto m = random_matrix(150, 21);
  const auto cheap = pipeline::run_sweep(m, options(R"({"grid": 0.02, "homology": {"max_dimension": 1}})"), {});
  const auto whole = pipeline::run_sweep(
      m, options(R"({"grid": 0.02, "cliques": {"max_density": 1, "counts_max_density": 1}, "homology": {"max_dimension": 1, "max_density": 1}})"), {});
  REQUIRE(cheap.options.cliques->max_density == 0.5);
  REQUIRE(cheap.options.cliques->counts_max_density == 0.1);
  REQUIRE(cheap.options.homology->max_density == 0.3);
  std::size_t chi_points = 0, every_size = 0;
  for (std::size_t g = 0; g < cheap.grid.size(); ++g) {
    const double rho = cheap.grid[g].density;
    if (rho <= 0.5 + 1e-12) {
      REQUIRE(g < cheap.cliques->complete_points);
      CHECK(cheap.cliques->chi[g] == whole.cliques->chi[g]);  // the chi walk
      ++chi_points;
    }
    if (rho <= 0.1 + 1e-12) {
      CHECK(cheap.cliques->counts[g] == whole.cliques->counts[g]);  // every size, joined in
      ++every_size;
    } else if (g < cheap.cliques->complete_points) {
      CHECK(cheap.cliques->counts[g].size() == 2);  // Cl_0 and Cl_1 only
    }
    if (rho <= 0.3 + 1e-12) CHECK(cheap.homology->betti[g] == whole.homology->betti[g]);
  }
  CHECK(cheap.cliques->complete_points == chi_points);
  CHECK(cheap.cliques->every_size_points == every_size);
  CHECK(cheap.euler_poincare_checked >= 1);  // only where no simplex lies above the Betti dimensions
  CHECK(cheap.euler_poincare_checked <= every_size);
  CHECK(cheap.options.transitions.max_p == 0.5);  // the reference's search stops at chi's range
}

TEST_CASE("a sweep range that is given, or a network of at most 100 regions, keeps every engine on it") {
  const auto big = pipeline::run_sweep(random_matrix(150, 22), options(R"({"max_density": 0.3, "grid": 0.05})"), {});
  CHECK_FALSE(big.options.cliques->max_density.has_value());  // the sweep's own, 0.3
  CHECK_FALSE(big.options.cliques->counts_max_density.has_value());
  CHECK(big.cliques->every_size_points == big.grid.size());
  const auto small = pipeline::run_sweep(random_matrix(100, 23), options(R"({"grid": 0.05})"), {});
  CHECK_FALSE(small.options.cliques->max_density.has_value());
  CHECK(small.cliques->every_size_points == small.grid.size());
  CHECK(small.grid.back().density > 0.45);
}

TEST_CASE("counts_max_density errors name the key") {
  CHECK(kind_of([] { options(R"({"cliques": {"max_density": 0.2, "counts_max_density": 0.3}})"); }) == ErrorKind::argument);
  CHECK(kind_of([] { options(R"({"cliques": {"chi_only": true, "counts_max_density": 0.1}})"); }) == ErrorKind::argument);
  CHECK(kind_of([] { options(R"({"max_density": 0.2, "cliques": {"counts_max_density": 0.3}})"); }) == ErrorKind::argument);
}

// ---- null models -----------------------------------------------------------------------

namespace {

struct Observed {
  series::Series series;
  connectivity::ConnectOptions connect;
  series::CleanInputs inputs;
  pipeline::SweepResult sweep;
};

// An invented subject (latent-factor series), cleaned with a trend and a censoring mask,
// two bands; the sweep of band `band`, chi only, with `threads` clique threads.
Observed observed_subject(std::size_t band, int threads) {
  simulate::LatentFactorOptions lf;
  lf.regions = 18;
  lf.frames = 240;
  lf.seed = 11;
  Observed o;
  o.series = simulate::latent_factor(lf).series;
  o.series.sampling_interval = 0.8;
  o.connect = connectivity::parse_connect_options(
      Json::parse(R"({"method": "ledoit_wolf", "clean": {"trend_order": 1},
                      "bands": {"slow": [0.01, 0.1], "fast": [0.1, 0.3]}})"),
      "opts");
  o.inputs.mask = Eigen::VectorXd::Ones(240);
  for (Eigen::Index t = 3; t < 240; t += 41) o.inputs.mask(t) = 0.0;
  const auto matrices = connectivity::connect(o.series, o.connect, o.inputs);
  o.sweep = pipeline::run_sweep(
      matrices.at(band).matrix,
      options(("{\"max_density\": 0.6, \"grid\": 0.02, \"cliques\": {\"chi_only\": true, \"threads\": " +
               std::to_string(threads) + "}}").c_str()),
      {});
  return o;
}

pipeline::NullSpec null_spec(const char* model, int count) {
  pipeline::NullSpec spec;
  spec.model = model;
  spec.count = count;
  spec.seed = 17;
  spec.iaaft_iterations = 20;
  spec.rewire_swaps_per_edge = 2.0;
  spec.max_density = 0.5;
  return spec;
}

double first_zero(const std::vector<double>& density, const std::vector<double>& chi) {
  for (const auto& c : transitions::sign_changes(density, chi))
    if (!c.touch) return c.density;
  return std::nan("");
}

// Equal to the last bit, NaN equal to NaN.
bool same(const std::vector<double>& a, const std::vector<double>& b) {
  if (a.size() != b.size()) return false;
  for (std::size_t i = 0; i < a.size(); ++i)
    if (!(a[i] == b[i] || (std::isnan(a[i]) && std::isnan(b[i])))) return false;
  return true;
}

}  // namespace

TEST_CASE("surrogate nulls equal the draw-by-draw route: fresh surrogate, connect, sweep") {
  // The reference is the route without any reuse or threads, composed from the public
  // stages: for draw j, make_surrogate with the derived seed, connect() of every band, and
  // run_sweep with the null's options. Reusing spectra, the confound fit and the filter, and
  // running draws side by side, must not change a bit of the first zeros or the mean curve.
  const std::size_t band = 1;
  const Observed o = observed_subject(band, 0);
  for (const char* model : {"phase_multivariate", "phase_independent", "iaaft"}) {
    INFO(model);
    const auto spec = null_spec(model, 5);
    const auto result = pipeline::run_null_model(spec, o.series, o.connect, o.inputs, band, o.sweep, {});
    const auto null_options = pipeline::null_sweep_options(o.sweep.options, o.sweep.nodes, spec.max_density);
    std::vector<double> zeros, sum(o.sweep.grid.size(), 0.0);
    std::vector<std::size_t> counted(sum.size(), 0);
    for (int j = 0; j < spec.count; ++j) {
      simulate::SurrogateOptions so;
      so.method = simulate::surrogate_method_from_name(model);
      so.iaaft_iterations = spec.iaaft_iterations;
      so.seed = derived_seed(spec.seed, static_cast<std::uint64_t>(j) + 1);
      series::Series s = o.series;
      s.values = simulate::make_surrogate(o.series.values, so).values;
      const auto sweep = pipeline::run_sweep(connectivity::connect(s, o.connect, o.inputs).at(band).matrix, null_options, {});
      const auto chi = sweep.chi_curve();
      zeros.push_back(first_zero(sweep.densities(), chi));
      for (std::size_t g = 0; g < chi.size() && g < sum.size(); ++g)
        if (std::isfinite(chi[g])) {
          sum[g] += chi[g];
          ++counted[g];
        }
    }
    std::vector<double> mean(sum.size(), std::nan(""));
    for (std::size_t g = 0; g < sum.size(); ++g)
      if (counted[g]) mean[g] = sum[g] / static_cast<double>(counted[g]);
    CHECK(same(result.first_zeros, zeros));
    CHECK(same(result.mean_chi, mean));
    CHECK(result.with_zero() > 0);
  }
}

TEST_CASE("null draws do not depend on the thread count") {
  // 1 thread: draws one after another, each sweep on 1 thread; 2 and 3 threads: draws side
  // by side, each sweep on 1 thread; 0: every core. Every field of the result must agree.
  const std::size_t band = 0;
  for (const char* model : {"phase_multivariate", "rewire_nested", "rewire"}) {
    INFO(model);
    const auto spec = null_spec(model, std::string(model) == "rewire" ? 3 : 6);
    std::optional<pipeline::NullResult> first;
    for (int threads : {1, 2, 3, 0}) {
      INFO("threads " << threads);
      const Observed o = observed_subject(band, threads);
      const auto r = pipeline::run_null_model(spec, o.series, o.connect, o.inputs, band, o.sweep, {});
      if (!first) {
        first = r;
        continue;
      }
      CHECK(same(r.first_zeros, first->first_zeros));
      CHECK(same(r.mean_chi, first->mean_chi));
      CHECK(r.observed_first == first->observed_first);
      CHECK(r.incomplete_rewirings == first->incomplete_rewirings);
    }
  }
}

TEST_CASE("cancelling null draws: the cancelled kind, progress only on the calling thread") {
  for (int threads : {1, 2})
  for (const char* model : {"phase_multivariate", "rewire_nested"}) {
    INFO(model << ", threads " << threads);
    const Observed o = observed_subject(0, threads);
    const auto caller = std::this_thread::get_id();
    std::atomic<int> calls{0}, elsewhere{0};
    const auto progress = [&](double f) {
      ++calls;
      if (std::this_thread::get_id() != caller) ++elsewhere;
      return f > 0.0;  // cancel once a draw has finished
    };
    CHECK(kind_of([&] {
            pipeline::run_null_model(null_spec(model, 40), o.series, o.connect, o.inputs, 0, o.sweep, progress);
          }) == ErrorKind::cancelled);
    CHECK(calls > 0);
    CHECK(elsewhere == 0);
    // Progress without cancelling ends at 1 and never goes back.
    std::vector<double> seen;
    pipeline::run_null_model(null_spec(model, 4), o.series, o.connect, o.inputs, 0, o.sweep, [&](double f) {
      seen.push_back(f);
      return false;
    });
    REQUIRE(!seen.empty());
    CHECK(seen.back() == 1.0);
    CHECK(std::is_sorted(seen.begin(), seen.end()));
  }
}
