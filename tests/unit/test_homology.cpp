// Unit tests of the homology engine (core/homology): known spaces built as flag
// complexes, an independent boundary-matrix reduction on small random graphs,
// thread independence, budgets, cancellation, options and overflow checks.
// The comparisons with the ripser command and gudhi are in
// tests/reference/test_homology_ripser.py.
#include <catch2/catch.hpp>

#include <algorithm>
#include <map>
#include <random>
#include <set>
#include <tuple>
#include <vector>

#include "base/error.hpp"
#include "cliques/counts.hpp"
#include "filtration/filtration.hpp"
#include "output/sweep.hpp"
#include "homology/persistence.hpp"
#include "check_error.hpp"

using namespace critplex;
using Edges = std::vector<std::pair<int, int>>;

namespace {

// A weighted matrix whose positive entries are exactly the graph's edges, with
// distinct random weights (the order of entry), so the full filtration is the flag
// complex of the graph.
Eigen::MatrixXd matrix_of(int n, const Edges& edges, unsigned seed) {
  std::mt19937_64 rng(seed);
  std::uniform_real_distribution<double> weight(0.1, 1.0);
  Eigen::MatrixXd m = Eigen::MatrixXd::Zero(n, n);
  for (int i = 0; i < n; ++i) m(i, i) = 1.0;
  for (auto [a, b] : edges) m(a, b) = m(b, a) = weight(rng);
  return m;
}

homology::Result run(const Eigen::MatrixXd& m, int max_dimension, int threads = 1, double max_work = 0) {
  const auto f = filtration::build(m, filtration::WeightMode::positive);
  filtration::GridSpec spec;
  spec.kind = "every";
  const auto grid = filtration::make_grid(f, spec);
  homology::Options o;
  o.max_dimension = max_dimension;
  o.threads = threads;
  o.max_work = max_work;
  return homology::compute(f, grid, o, {});
}

std::vector<long long> final_betti(const Eigen::MatrixXd& m, int max_dimension) {
  const auto r = run(m, max_dimension);
  std::vector<long long> essential(static_cast<std::size_t>(max_dimension + 1), 0);
  for (const auto& b : r.bars)
    if (b.essential) ++essential[static_cast<std::size_t>(b.dimension)];
  // The curve's last point and the essential bars must tell the same story.
  REQUIRE(r.betti.back() == essential);
  return r.betti.back();
}

// The order complex of the face poset of a simplicial complex (its barycentric
// subdivision), which is always a flag complex: one node per face, edges between
// a face and its proper faces.
std::pair<int, Edges> barycentric_subdivision(const std::vector<std::vector<int>>& facets) {
  std::set<std::vector<int>> faces;
  for (const auto& f : facets)
    for (unsigned mask = 1; mask < (1u << f.size()); ++mask) {
      std::vector<int> face;
      for (std::size_t i = 0; i < f.size(); ++i)
        if (mask & (1u << i)) face.push_back(f[i]);
      std::sort(face.begin(), face.end());
      faces.insert(face);
    }
  std::vector<std::vector<int>> list(faces.begin(), faces.end());
  Edges edges;
  for (std::size_t i = 0; i < list.size(); ++i)
    for (std::size_t j = 0; j < list.size(); ++j)
      if (list[i].size() < list[j].size() && std::includes(list[j].begin(), list[j].end(), list[i].begin(), list[i].end()))
        edges.emplace_back(static_cast<int>(i), static_cast<int>(j));
  return {static_cast<int>(list.size()), edges};
}

// Independent reference: every clique listed, the boundary matrix in filtration
// order (value, then dimension), the textbook column reduction over Z/2
// (Edelsbrunner, Letscher & Zomorodian 2002; Zomorodian & Carlsson 2005).
std::multiset<std::tuple<int, std::size_t, std::size_t>> textbook_bars(const filtration::Filtration& f, int max_dimension) {
  const std::size_t n = f.nodes;
  std::vector<std::vector<std::size_t>> rank(n, std::vector<std::size_t>(n, 0));
  for (std::size_t m = 0; m < f.edges.size(); ++m) rank[f.edges[m].u][f.edges[m].v] = rank[f.edges[m].v][f.edges[m].u] = m + 1;
  struct Cell {
    std::size_t value;
    std::vector<std::size_t> vertices;
  };
  std::vector<Cell> cells;
  std::vector<std::size_t> current;
  auto grow = [&](auto&& self, std::size_t from, std::size_t value) -> void {
    if (!current.empty()) cells.push_back({value, current});
    if (static_cast<int>(current.size()) == max_dimension + 2) return;
    for (std::size_t v = from; v < n; ++v) {
      std::size_t next = value;
      bool ok = true;
      for (std::size_t u : current) {
        if (rank[u][v] == 0) ok = false;
        next = std::max(next, rank[u][v]);
      }
      if (!ok) continue;
      current.push_back(v);
      self(self, v + 1, next);
      current.pop_back();
    }
  };
  grow(grow, 0, 0);
  std::sort(cells.begin(), cells.end(), [](const Cell& a, const Cell& b) {
    if (a.value != b.value) return a.value < b.value;
    if (a.vertices.size() != b.vertices.size()) return a.vertices.size() < b.vertices.size();
    return a.vertices < b.vertices;
  });
  std::map<std::vector<std::size_t>, std::size_t> position;
  for (std::size_t i = 0; i < cells.size(); ++i) position[cells[i].vertices] = i;
  std::vector<std::vector<std::size_t>> column(cells.size());  // sorted row positions
  for (std::size_t i = 0; i < cells.size(); ++i) {
    const auto& v = cells[i].vertices;
    if (v.size() < 2) continue;
    for (std::size_t drop = 0; drop < v.size(); ++drop) {
      std::vector<std::size_t> face;
      for (std::size_t k = 0; k < v.size(); ++k)
        if (k != drop) face.push_back(v[k]);
      column[i].push_back(position.at(face));
    }
    std::sort(column[i].begin(), column[i].end());
  }
  std::map<std::size_t, std::size_t> owner;  // lowest row -> column
  std::vector<bool> paired(cells.size(), false);
  std::multiset<std::tuple<int, std::size_t, std::size_t>> bars;
  const std::size_t infinite = static_cast<std::size_t>(-1);
  for (std::size_t j = 0; j < cells.size(); ++j) {
    auto& c = column[j];
    while (!c.empty() && owner.count(c.back())) {
      const auto& other = column[owner[c.back()]];
      std::vector<std::size_t> sum;
      std::set_symmetric_difference(c.begin(), c.end(), other.begin(), other.end(), std::back_inserter(sum));
      c.swap(sum);
    }
    if (!c.empty()) {
      owner[c.back()] = j;
      paired[c.back()] = paired[j] = true;
      const int dim = static_cast<int>(cells[c.back()].vertices.size()) - 1;
      if (cells[j].value > cells[c.back()].value && dim <= max_dimension)
        bars.insert({dim, cells[c.back()].value, cells[j].value});
    }
  }
  for (std::size_t j = 0; j < cells.size(); ++j) {
    const int dim = static_cast<int>(cells[j].vertices.size()) - 1;
    if (!paired[j] && dim <= max_dimension) bars.insert({dim, cells[j].value, infinite});
  }
  return bars;
}

std::multiset<std::tuple<int, std::size_t, std::size_t>> engine_bars(const homology::Result& r) {
  std::multiset<std::tuple<int, std::size_t, std::size_t>> bars;
  for (const auto& b : r.bars)
    bars.insert({b.dimension, b.birth_rank, b.essential ? static_cast<std::size_t>(-1) : b.death_rank});
  return bars;
}

Edges random_graph(int n, double p, std::mt19937_64& rng) {
  std::bernoulli_distribution keep(p);
  Edges e;
  for (int a = 0; a < n; ++a)
    for (int b = a + 1; b < n; ++b)
      if (keep(rng)) e.emplace_back(a, b);
  return e;
}

}  // namespace

// reference: Betti numbers over Z/2 of the circle (1,1), the 2-sphere (1,0,1), the
// torus (1,2,1) and the real projective plane (1,1,1): standard algebraic topology
// (Hatcher, Algebraic Topology, 2002, Examples 2.3-2.4 and 3.1-3.2; docs/methods.md).
TEST_CASE("circles of 4 to 9 nodes have Betti numbers (1, 1)", "[homology][known]") {
  for (int n = 4; n <= 9; ++n) {
    Edges e;
    for (int i = 0; i < n; ++i) e.emplace_back(i, (i + 1) % n);
    CHECK(final_betti(matrix_of(n, e, static_cast<unsigned>(n)), 2) == std::vector<long long>{1, 1, 0});
  }
}

TEST_CASE("the octahedron is a 2-sphere: Betti numbers (1, 0, 1)", "[homology][known]") {
  // K_{2,2,2}: every pair except the three antipodal ones (0,1), (2,3), (4,5).
  Edges e;
  for (int a = 0; a < 6; ++a)
    for (int b = a + 1; b < 6; ++b)
      if (!(a % 2 == 0 && b == a + 1)) e.emplace_back(a, b);
  for (unsigned seed = 1; seed <= 5; ++seed)
    CHECK(final_betti(matrix_of(6, e, seed), 3) == std::vector<long long>{1, 0, 1, 0});
}

TEST_CASE("a 4 x 4 grid torus with diagonals has Betti numbers (1, 2, 1)", "[homology][known]") {
  // Nodes (i, j) mod 4; steps (1,0), (0,1), (1,1). With 4 >= 4 rows no extra
  // triangles wrap around, so its flag complex is the triangulated torus.
  auto id = [](int i, int j) { return ((i + 4) % 4) * 4 + (j + 4) % 4; };
  Edges e;
  for (int i = 0; i < 4; ++i)
    for (int j = 0; j < 4; ++j) {
      e.emplace_back(std::min(id(i, j), id(i + 1, j)), std::max(id(i, j), id(i + 1, j)));
      e.emplace_back(std::min(id(i, j), id(i, j + 1)), std::max(id(i, j), id(i, j + 1)));
      e.emplace_back(std::min(id(i, j), id(i + 1, j + 1)), std::max(id(i, j), id(i + 1, j + 1)));
    }
  REQUIRE(e.size() == 48);
  for (unsigned seed = 1; seed <= 3; ++seed)
    CHECK(final_betti(matrix_of(16, e, seed), 3) == std::vector<long long>{1, 2, 1, 0});
}

TEST_CASE("the subdivided 6-vertex projective plane has Z/2 Betti numbers (1, 1, 1)", "[homology][known]") {
  // The 6-vertex real projective plane (10 triangles, each edge in exactly two of
  // them; from memory, checked below), subdivided so it becomes a flag complex.
  const std::vector<std::vector<int>> triangles = {{1, 2, 3}, {1, 3, 4}, {1, 4, 5}, {1, 5, 6}, {1, 2, 6},
                                                   {2, 3, 5}, {3, 4, 6}, {2, 4, 5}, {3, 5, 6}, {2, 4, 6}};
  std::map<std::pair<int, int>, int> on_edge;
  for (const auto& t : triangles)
    for (int a = 0; a < 3; ++a)
      for (int b = a + 1; b < 3; ++b) ++on_edge[{t[a], t[b]}];
  REQUIRE(on_edge.size() == 15);
  for (const auto& [edge, count] : on_edge) REQUIRE(count == 2);
  auto [n, e] = barycentric_subdivision(triangles);
  REQUIRE(n == 31);
  REQUIRE(e.size() == 90);
  CHECK(final_betti(matrix_of(n, e, 7), 2) == std::vector<long long>{1, 1, 1});
  CHECK(final_betti(matrix_of(n, e, 8), 3) == std::vector<long long>{1, 1, 1, 0});
}

TEST_CASE("barcodes equal a textbook boundary-matrix reduction on random graphs", "[homology][property]") {
  std::mt19937_64 rng(2024);
  for (int trial = 0; trial < 40; ++trial) {
    const int n = 7 + trial % 6;
    const double p = 0.35 + 0.1 * (trial % 5);
    const int k = 1 + trial % 3;
    const auto m = matrix_of(n, random_graph(n, p, rng), static_cast<unsigned>(trial + 100));
    const auto f = filtration::build(m, filtration::WeightMode::positive);
    INFO("trial " << trial << ", " << n << " nodes, dimension " << k);
    CHECK(engine_bars(run(m, k)) == textbook_bars(f, k));
  }
}

TEST_CASE("results do not depend on the thread count", "[homology][threads]") {
  std::mt19937_64 rng(99);
  const auto m = matrix_of(40, random_graph(40, 0.3, rng), 5);
  const auto one = run(m, 3, 1), two = run(m, 3, 2), four = run(m, 3, 4);
  CHECK(engine_bars(one) == engine_bars(two));
  CHECK(engine_bars(one) == engine_bars(four));
  CHECK(one.betti == two.betti);
  CHECK(one.work == two.work);
}

TEST_CASE("Betti curves on a grid with ties count bars alive after whole tie groups", "[homology][grid]") {
  // A 4-cycle whose edges all tie: the loop appears after the tie group, not halfway.
  Eigen::MatrixXd m = Eigen::MatrixXd::Zero(4, 4);
  for (int i = 0; i < 4; ++i) m(i, (i + 1) % 4) = m((i + 1) % 4, i) = 0.5;
  const auto f = filtration::build(m, filtration::WeightMode::positive);
  filtration::GridSpec spec;
  spec.kind = "every";
  const auto grid = filtration::make_grid(f, spec);
  REQUIRE(grid.size() == 2);  // before any edge and after the tie group of four
  homology::Options o;
  const auto r = homology::compute(f, grid, o, {});
  CHECK(r.betti[0] == std::vector<long long>{4, 0, 0});
  CHECK(r.betti[1] == std::vector<long long>{1, 1, 0});
  // The dying components end at ranks 1..3, all in the one tie group: density 4/6.
  for (const auto& b : r.bars)
    if (b.dimension == 0 && !b.essential) CHECK(homology::rank_density(f, b.death_rank) == Approx(4.0 / 6.0));
  pipeline::SweepResult sweep;
  sweep.filtration = f;
  sweep.grid = grid;
  sweep.homology = r;
  const auto json = output::homology_section(sweep);
  CHECK(json["bar_counts"] == Json::array({4, 1, 0}));
  CHECK(json["betti"][1] == Json::array({0, 1}));
}

TEST_CASE("a work budget stops the run and says what is complete", "[homology][budget]") {
  std::mt19937_64 rng(3);
  const auto m = matrix_of(30, random_graph(30, 0.5, rng), 11);
  const auto full = run(m, 3);
  REQUIRE(full.stopped_by.empty());
  REQUIRE(full.complete_dimension == 3);
  const auto cut = run(m, 3, 1, 50);
  CHECK(cut.stopped_by == "max_work");
  CHECK(cut.complete_dimension < 3);
  for (const auto& b : cut.bars) CHECK(b.dimension <= cut.complete_dimension);
  for (const auto& point : cut.betti) CHECK(static_cast<int>(point.size()) == cut.complete_dimension + 1);
  // What it does report agrees with the full run.
  for (std::size_t g = 0; g < cut.betti.size(); ++g)
    for (std::size_t k = 0; k < cut.betti[g].size(); ++k) CHECK(cut.betti[g][k] == full.betti[g][k]);
  pipeline::SweepResult sweep;
  sweep.grid.resize(cut.betti.size());
  sweep.homology = cut;
  const auto columns = output::curve_columns(sweep);
  CHECK(columns.back().name == "betti_3");
  CHECK(!columns.back().exact.back().has_value());  // written as n/a
}

TEST_CASE("the progress callback can cancel", "[homology][progress]") {
  std::mt19937_64 rng(4);
  const auto m = matrix_of(30, random_graph(30, 0.5, rng), 12);
  const auto f = filtration::build(m, filtration::WeightMode::positive);
  const auto grid = filtration::make_grid(f, filtration::GridSpec{});
  homology::Options o;
  double last = -1;
  bool monotone = true;
  homology::compute(f, grid, o, [&](double x) {
    if (x < last) monotone = false;
    last = x;
    return false;
  });
  CHECK(monotone);
  CHECK(last == 1.0);
  try {
    homology::compute(f, grid, o, [](double) { return true; });
    FAIL("not cancelled");
  } catch (const Error& e) {
    CHECK(e.kind() == ErrorKind::cancelled);
  }
}

TEST_CASE("options are checked and index overflow fails loudly", "[homology][errors]") {
  CHECK(homology::parse_options(Json::parse(R"({"max_dimension": 3, "threads": 2})")).max_dimension == 3);
  CHECK_ERROR_KIND_WITH(homology::parse_options(Json::parse(R"({"max_dim": 3})")), ErrorKind::argument, Catch::Contains("max_dim"));
  CHECK_ERROR_KIND_WITH(homology::parse_options(Json::parse(R"({"max_dimension": -1})")), ErrorKind::argument, Catch::Contains("max_dimension"));
  CHECK_ERROR_KIND_WITH(homology::parse_options(Json::parse(R"({"max_work": -5})")), ErrorKind::argument, Catch::Contains("max_work"));
  // C(400, 32) does not fit 62 bits: the engine refuses rather than wrap.
  Eigen::MatrixXd m = Eigen::MatrixXd::Zero(400, 400);
  m(0, 1) = m(1, 0) = 0.5;
  const auto f = filtration::build(m, filtration::WeightMode::positive);
  homology::Options o;
  o.max_dimension = 30;
  try {
    homology::compute(f, filtration::make_grid(f, filtration::GridSpec{}), o, {});
    FAIL("no overflow error");
  } catch (const Error& e) {
    CHECK(e.kind() == ErrorKind::overflow);
  }
}

// reference: the Euler-Poincare formula chi = sum_k (-1)^k beta_k (docs/methods.md), with chi
// from the clique engine's exact counts (core/cliques), on every grid point where no
// simplex lies above the computed dimensions.
TEST_CASE("Euler-Poincare holds against the clique engine", "[homology][cliques]") {
  std::mt19937_64 rng(17);
  for (int trial = 0; trial < 6; ++trial) {
    const auto m = matrix_of(24, random_graph(24, 0.4, rng), static_cast<unsigned>(trial + 40));
    const auto f = filtration::build(m, filtration::WeightMode::positive);
    filtration::GridSpec spec;
    spec.kind = "every";
    const auto grid = filtration::make_grid(f, spec);
    homology::Options o;
    o.max_dimension = 3;
    const auto bars = homology::compute(f, grid, o, {});
    const auto counts = cliques::count_on_grid(f, grid, cliques::Options{}, {});
    REQUIRE(counts.complete_points == grid.size());
    const std::size_t checked = homology::check_euler_poincare(bars, counts.counts, counts.chi, counts.complete_points);
    CHECK(checked > grid.size() / 2);
    // A wrong chi is caught, not passed on.
    auto wrong = counts.chi;
    wrong[1] += 1;
    CHECK_ERROR_KIND(homology::check_euler_poincare(bars, counts.counts, wrong, counts.complete_points), ErrorKind::internal);
  }
}

TEST_CASE("large sparse graphs (ranks from the neighbour lists) give the same bars", "[homology][sparse]") {
  // 1100 nodes: the N x N rank table would exceed its budget, so ranks are looked up in
  // the sorted neighbour lists. A random graph on 60 nodes spread over the 1100 ids,
  // against the textbook reduction; then the torus spread the same way.
  std::mt19937_64 rng(21);
  const int big = 1100;
  std::vector<int> ids(big);
  for (int i = 0; i < big; ++i) ids[static_cast<std::size_t>(i)] = i;
  std::shuffle(ids.begin(), ids.end(), rng);
  Edges spread;
  for (auto [a, b] : random_graph(60, 0.3, rng))
    spread.emplace_back(std::min(ids[static_cast<std::size_t>(a)], ids[static_cast<std::size_t>(b)]),
                        std::max(ids[static_cast<std::size_t>(a)], ids[static_cast<std::size_t>(b)]));
  const auto m = matrix_of(big, spread, 31);
  const auto f = filtration::build(m, filtration::WeightMode::positive);
  CHECK(engine_bars(run(m, 2)) == textbook_bars(f, 2));

  // reference: torus Betti numbers (1, 2, 1) (Hatcher 2002), plus one component per
  // isolated node.
  auto id = [&](int i, int j) { return ids[static_cast<std::size_t>(((i + 4) % 4) * 4 + (j + 4) % 4)]; };
  Edges torus;
  for (int i = 0; i < 4; ++i)
    for (int j = 0; j < 4; ++j)
      for (auto [di, dj] : {std::pair{1, 0}, std::pair{0, 1}, std::pair{1, 1}})
        torus.emplace_back(std::min(id(i, j), id(i + di, j + dj)), std::max(id(i, j), id(i + di, j + dj)));
  CHECK(final_betti(matrix_of(big, torus, 32), 2) == std::vector<long long>{1 + big - 16, 2, 1});
}
