// Unit checks of the simulate stage: rewiring keeps degrees, surrogates are seeded and keep
// what they promise on small inputs, and the demo cohort model behaves as documented.
// Reference checks (numpy FFT, networkx, nitime data) are in tests/reference/test_surrogates_fft.py.
#include <catch2/catch.hpp>

#include <cmath>
#include <set>

#include "base/error.hpp"
#include "base/random.hpp"
#include "connectivity/pearson.hpp"
#include "simulate/cohort_model.hpp"
#include "simulate/rewire.hpp"
#include "simulate/surrogates.hpp"
#include "check_error.hpp"

using namespace critplex;
using namespace critplex::simulate;

TEST_CASE("rewiring keeps every degree and is seeded", "[simulate]") {
  // Two 5-cliques joined by one edge (21 edges), a graph with many legal swaps.
  EdgeList edges;
  for (std::uint32_t base : {0u, 5u})
    for (std::uint32_t i = 0; i < 5; ++i)
      for (std::uint32_t j = i + 1; j < 5; ++j) edges.emplace_back(base + i, base + j);
  edges.emplace_back(4, 5);
  RewireOptions o;
  o.seed = 3;
  const auto r = rewire(10, edges, o);
  CHECK(r.edges.size() == edges.size());
  CHECK(degrees(10, r.edges) == degrees(10, edges));
  CHECK(r.swaps > 0);
  CHECK(rewire(10, edges, o).edges == r.edges);
  for (const auto& [u, v] : r.edges) CHECK(u < v);
}

TEST_CASE("a complete graph has no legal swap: reported, not looped forever", "[simulate]") {
  EdgeList k4{{0, 1}, {0, 2}, {0, 3}, {1, 2}, {1, 3}, {2, 3}};
  const auto r = rewire(4, k4, {});
  CHECK_FALSE(r.complete);
  CHECK(r.swaps == 0);
  CHECK(r.edges == k4);
}

TEST_CASE("nested rewiring keeps every degree at every layer end, nests, and mixes", "[simulate]") {
  // An invented filtration: 40 nodes, every pair, in a seeded random order.
  const std::uint32_t n = 40;
  filtration::Filtration f;
  f.nodes = n;
  for (std::uint32_t i = 0; i < n; ++i)
    for (std::uint32_t j = i + 1; j < n; ++j) f.edges.push_back({i, j, 0.0, 0.0});
  critplex::Random shuffle(5);
  for (std::size_t k = f.edges.size() - 1; k > 0; --k)
    std::swap(f.edges[k], f.edges[static_cast<std::size_t>(shuffle.below(k + 1))]);
  const std::vector<std::size_t> ends{0, 78, 156, 234, 312, 390};  // density steps of 0.1 up to 0.5
  RewireOptions o;
  o.seed = 9;
  const auto r = rewire_nested(f, ends, o);
  REQUIRE(r.edges.size() == ends.back());
  CHECK(r.complete);
  std::set<std::pair<std::uint32_t, std::uint32_t>> seen;
  std::size_t changed = 0;
  for (std::size_t k = 1; k < ends.size(); ++k) {
    EdgeList before, after;
    for (std::size_t i = 0; i < ends[k]; ++i) {
      before.emplace_back(std::min(f.edges[i].u, f.edges[i].v), std::max(f.edges[i].u, f.edges[i].v));
      after.push_back(r.edges[i]);
    }
    // The rewired graph at each end is the prefix of the list: nested by construction,
    // and it keeps every node's degree there.
    CHECK(degrees(n, after) == degrees(n, before));
  }
  for (std::size_t i = 0; i < r.edges.size(); ++i) {
    CHECK(r.edges[i].first < r.edges[i].second);
    CHECK(seen.insert(r.edges[i]).second);  // no edge twice, across layers too
    const auto orig = std::make_pair(std::min(f.edges[i].u, f.edges[i].v), std::max(f.edges[i].u, f.edges[i].v));
    if (r.edges[i] != orig) ++changed;
  }
  CHECK(changed > r.edges.size() / 2);  // 10 swaps per edge leave few edges in place
  CHECK(rewire_nested(f, ends, o).edges == r.edges);
  o.seed = 10;
  CHECK(rewire_nested(f, ends, o).edges != r.edges);
  CHECK_ERROR_KIND_WITH(rewire_nested(f, {5, 3}, o), ErrorKind::argument, "increase");
}

TEST_CASE("rewiring rejects self-loops, duplicates and unknown nodes", "[simulate]") {
  CHECK_ERROR_KIND_WITH(rewire(3, {{0, 1}, {1, 0}}, {}), ErrorKind::argument, Catch::Contains("edge 2") && Catch::Contains("twice"));
  CHECK_ERROR_KIND_WITH(rewire(3, {{2, 2}}, {}), ErrorKind::argument, Catch::Contains("self-loop"));
  CHECK_ERROR_KIND_WITH(rewire(3, {{0, 3}}, {}), ErrorKind::argument, Catch::Contains("node 3"));
}

TEST_CASE("surrogates keep the mean and are seeded", "[simulate]") {
  Eigen::MatrixXd x(64, 3);
  for (int t = 0; t < 64; ++t)
    for (int j = 0; j < 3; ++j) x(t, j) = std::sin(0.3 * t * (j + 1)) + 0.1 * t + j;
  for (const char* name : {"phase_multivariate", "phase_independent", "iaaft"}) {
    SurrogateOptions o;
    o.method = surrogate_method_from_name(name);
    o.seed = 9;
    const auto a = make_surrogate(x, o), b = make_surrogate(x, o);
    CHECK(a.values == b.values);
    for (int j = 0; j < 3; ++j) CHECK(a.values.col(j).mean() == Approx(x.col(j).mean()).margin(1e-10));
    CHECK((a.values - x).cwiseAbs().maxCoeff() > 1e-3);
  }
  CHECK_ERROR_KIND(surrogate_method_from_name("shuffle"), ErrorKind::argument);
  Eigen::MatrixXd bad = x;
  bad(5, 1) = std::nan("");
  CHECK_ERROR_KIND_WITH(make_surrogate(bad, {}), ErrorKind::data, Catch::Contains("region 2") && Catch::Contains("time point 6"));
}

TEST_CASE("one surrogate basis draws exactly what make_surrogate makes, on any plans", "[simulate]") {
  // Null models make the basis once and draw from it on several threads; each draw must
  // equal a fresh make_surrogate of the same seed bit for bit, whichever plans it uses.
  Eigen::MatrixXd x(101, 4);  // odd length: no Nyquist bin
  for (int t = 0; t < 101; ++t)
    for (int j = 0; j < 4; ++j) x(t, j) = std::cos(0.21 * t * (j + 1)) + 0.05 * t * t / 101.0 - j;
  for (const char* name : {"phase_multivariate", "phase_independent", "iaaft"}) {
    INFO(name);
    SurrogateOptions o;
    o.method = surrogate_method_from_name(name);
    o.iaaft_iterations = 30;
    const SurrogateBasis basis(x, o);
    series::FftPlans first(101), second(101);
    for (std::uint64_t seed : {5u, 6u, 5u}) {
      o.seed = seed;
      const auto fresh = make_surrogate(x, o);
      const auto a = basis.draw(seed, first), b = basis.draw(seed, second);
      CHECK(a.values == fresh.values);
      CHECK(b.values == fresh.values);
      CHECK(a.iaaft_iterations_used == fresh.iaaft_iterations_used);
    }
  }
}

TEST_CASE("demo cohort: manifest, shapes, determinism and stronger coupling when deprived", "[simulate]") {
  CohortModel m;
  m.regions = 21;
  m.frames = 300;
  m.groups = {{"rested", 4, 0.2, 0.05}, {"deprived", 4, 0.7, 0.05}};
  const auto plan = plan_cohort(m);
  REQUIRE(plan.subjects.size() == 8);
  CHECK(plan.subjects[0].id == "rested01");
  CHECK(plan.subjects[7].id == "deprived04");
  CHECK(plan.module.back() == 6);
  const auto s0 = simulate_subject(m, plan, 0);
  CHECK(s0.frames() == 300);
  CHECK(s0.regions() == 21);
  CHECK(s0.sampling_interval == 0.8);
  CHECK(simulate_subject(m, plan, 0).values == s0.values);
  // Mean off-diagonal correlation between modules rises with the global signal.
  auto between_modules = [&](std::size_t index) {
    const Eigen::MatrixXd r = connectivity::pearson(simulate_subject(m, plan, index).values);
    double sum = 0.0;
    int count = 0;
    for (std::size_t i = 0; i < m.regions; ++i)
      for (std::size_t j = i + 1; j < m.regions; ++j)
        if (plan.module[i] != plan.module[j]) {
          sum += r(static_cast<Eigen::Index>(i), static_cast<Eigen::Index>(j));
          ++count;
        }
    return sum / count;
  };
  double rested = 0.0, deprived = 0.0;
  for (std::size_t k = 0; k < 4; ++k) {
    rested += between_modules(k);
    deprived += between_modules(4 + k);
  }
  CHECK(deprived > rested + 0.4);
  CHECK_ERROR_KIND_WITH(simulate_subject(m, plan, 8), ErrorKind::argument, Catch::Contains("outside"));
  m.groups[0].name = "well rested";
  CHECK_ERROR_KIND_WITH(plan_cohort(m), ErrorKind::argument, Catch::Contains("letters and digits"));
}
