// Unit tests of the pipeline stage's sweep: each engine over its own range, curvature
// beside a chi-only count, the wall-time budget, and option errors by kind. The
// reference for every range-limited result is the same engine run over the whole
// range (a property test on invented matrices): a cut must change nothing before it.
#include <catch2/catch.hpp>

#include <cmath>
#include <random>

#include "base/error.hpp"
#include "pipeline/sweep.hpp"

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
