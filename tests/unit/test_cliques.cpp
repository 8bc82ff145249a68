// Unit tests of the clique engine: worked values, identities, budgets, threads.
// Checks against outside libraries (networkx, igraph, gudhi) are in
// tests/reference/test_cliques_*.py.
#include <catch2/catch.hpp>

#include <cmath>
#include <random>
#include <utility>

#include "base/error.hpp"
#include "cliques/counts.hpp"
#include "clique_fixtures.hpp"
#include "cliques/pivot_tree.hpp"
#include "check_error.hpp"

using namespace critplex;
using namespace critplex::cliques;
using filtration::Edge;
using filtration::Filtration;

namespace {

using test::EdgeList;
using test::every;
using test::in_order;

GridCounts run(const Filtration& f, Options o = {}) { return count_on_grid(f, every(f), o, {}); }

std::vector<long long> as_ll(const std::vector<int128>& v) {
  std::vector<long long> r;
  for (int128 x : v) r.push_back(static_cast<long long>(x));
  return r;
}

EdgeList octahedron() {  // every pair except the antipodes (0,1), (2,3), (4,5)
  EdgeList e;
  for (std::uint32_t a = 0; a < 6; ++a)
    for (std::uint32_t b = a + 1; b < 6; ++b)
      if (!(a % 2 == 0 && b == a + 1)) e.push_back({a, b});
  return e;
}

EdgeList icosahedron() {  // poles 0 and 11, upper ring 1..5, lower ring 6..10 (an antiprism)
  EdgeList e;
  for (std::uint32_t i = 0; i < 5; ++i) {
    const std::uint32_t up = 1 + i, up_next = 1 + (i + 1) % 5, low = 6 + i, low_next = 6 + (i + 1) % 5;
    e.push_back({0, up});
    e.push_back({up, up_next});
    e.push_back({up, low});
    e.push_back({up, low_next});
    e.push_back({low, low_next});
    e.push_back({low, 11});
  }
  return e;
}

EdgeList complete(std::uint32_t n, std::uint32_t offset = 0) {
  EdgeList e;
  for (std::uint32_t a = 0; a < n; ++a)
    for (std::uint32_t b = a + 1; b < n; ++b) e.push_back({offset + a, offset + b});
  return e;
}

// Random graph with dense blocks (brain-like modules) and sparse links between them.
EdgeList modular(std::uint32_t n, std::uint32_t modules, double inside, double between, std::uint64_t seed) {
  std::mt19937_64 rng(seed);
  std::uniform_real_distribution<double> u(0.0, 1.0);
  EdgeList e;
  for (std::uint32_t a = 0; a < n; ++a)
    for (std::uint32_t b = a + 1; b < n; ++b)
      if (u(rng) < (a % modules == b % modules ? inside : between)) e.push_back({a, b});
  std::shuffle(e.begin(), e.end(), rng);
  return e;
}

// Plain enumeration of all cliques (small graphs only): an independent count.
void enumerate(const std::vector<std::vector<char>>& adj, std::vector<std::uint32_t>& clique, std::uint32_t next,
               std::vector<long long>& counts) {
  const std::size_t k = clique.size() - 1;
  if (counts.size() <= k) counts.resize(k + 1, 0);
  ++counts[k];
  for (std::uint32_t x = next; x < adj.size(); ++x) {
    bool ok = true;
    for (std::uint32_t y : clique) ok = ok && adj[x][y];
    if (!ok) continue;
    clique.push_back(x);
    enumerate(adj, clique, x + 1, counts);
    clique.pop_back();
  }
}
std::vector<long long> enumerate_all(std::size_t n, const EdgeList& edges, std::size_t m) {
  std::vector<std::vector<char>> adj(n, std::vector<char>(n, 0));
  for (std::size_t i = 0; i < m; ++i) adj[edges[i].first][edges[i].second] = adj[edges[i].second][edges[i].first] = 1;
  std::vector<long long> counts;
  std::vector<std::uint32_t> clique;
  for (std::uint32_t x = 0; x < n; ++x) {
    clique = {x};
    enumerate(adj, clique, x + 1, counts);
  }
  return counts;
}

}  // namespace

// reference: Euler's polyhedron formula V - E + F = 2 (docs/methods.md); octahedron 6, 12, 8.
TEST_CASE("octahedron: counts 6, 12, 8 and chi = 2", "[cliques]") {
  GridCounts r = run(in_order(6, octahedron()));
  REQUIRE(r.complete_points == r.counts.size());
  CHECK(r.stopped_by.empty());
  CHECK(as_ll(r.counts.back()) == std::vector<long long>{6, 12, 8});
  CHECK(r.chi.back() == 2);
  CHECK(r.chi.front() == 6);  // empty graph: chi = N
}

// reference: Euler's polyhedron formula; icosahedron 12 vertices, 30 edges, 20 faces.
TEST_CASE("icosahedron: counts 12, 30, 20 and chi = 2", "[cliques]") {
  for (bool chi_only : {false, true}) {
    Options o;
    o.chi_only = chi_only;
    GridCounts r = run(in_order(12, icosahedron()), o);
    CHECK(r.chi.back() == 2);
    if (!chi_only) CHECK(as_ll(r.counts.back()) == std::vector<long long>{12, 30, 20});
  }
}

// reference: a complete graph's flag complex is a simplex (contractible), chi = 1;
// Cl_k = C(n, k+1) (common practice).
TEST_CASE("complete graph: binomial counts, chi = 1 at the end", "[cliques]") {
  GridCounts r = run(in_order(9, complete(9)));
  CHECK(as_ll(r.counts.back()) == std::vector<long long>{9, 36, 84, 126, 126, 84, 36, 9, 1});
  CHECK(r.chi.back() == 1);
}

// reference: chi is additive over disjoint unions (common practice).
TEST_CASE("disjoint union: chi adds", "[cliques]") {
  EdgeList e = octahedron();
  for (auto [a, b] : icosahedron()) e.push_back({a + 6, b + 6});
  for (auto [a, b] : complete(5, 18)) e.push_back({a, b});
  GridCounts r = run(in_order(23, e));
  CHECK(r.chi.back() == 2 + 2 + 1);
}

TEST_CASE("every edge agrees with plain enumeration; chi_only agrees with the counts", "[cliques]") {
  const std::uint32_t n = 40;
  EdgeList e = modular(n, 4, 0.7, 0.08, 7);
  Filtration f = in_order(n, e);
  GridCounts full = run(f);
  Options chi_opt;
  chi_opt.chi_only = true;
  GridCounts chi = run(f, chi_opt);
  auto grid = every(f);
  REQUIRE(full.complete_points == grid.size());
  for (std::size_t g = 0; g < grid.size(); g += 7) {
    std::vector<long long> expect = enumerate_all(n, e, grid[g].edges);
    CHECK(as_ll(full.counts[g]) == expect);
    long long alt = 0;
    for (std::size_t k = 0; k < expect.size(); ++k) alt += (k % 2 ? -1 : 1) * expect[k];
    CHECK(static_cast<long long>(full.chi[g]) == alt);
  }
  for (std::size_t g = 0; g < grid.size(); ++g) REQUIRE(chi.chi[g] == full.chi[g]);
}

TEST_CASE("results do not depend on the thread count", "[cliques]") {
  const std::uint32_t n = 90;
  Filtration f = in_order(n, modular(n, 5, 0.8, 0.05, 11));
  Options one;
  one.threads = 1;
  one.node_counts = true;
  GridCounts a = run(f, one);
  for (int t : {2, 3, 8}) {
    Options o = one;
    o.threads = t;
    GridCounts b = run(f, o);
    CHECK(b.counts == a.counts);
    CHECK(b.chi == a.chi);
    CHECK(b.node_counts == a.node_counts);
    CHECK(b.work == a.work);
  }
}

// reference: each k-simplex has k+1 nodes, so sum_i Cl_{i,k} = (k+1) Cl_k (common practice);
// octahedron: every node is in 4 edges and 4 triangles (docs/methods.md, curvature check values).
TEST_CASE("node counts: octahedron and the handshake identity", "[cliques]") {
  Options o;
  o.node_counts = true;
  GridCounts oct = run(in_order(6, octahedron()), o);
  for (const auto& row : oct.node_counts.back()) CHECK(as_ll(row) == std::vector<long long>{1, 4, 4});

  const std::uint32_t n = 60;
  GridCounts r = run(in_order(n, modular(n, 3, 0.75, 0.1, 3)), o);
  for (std::size_t g = 0; g < r.counts.size(); g += 13) {
    for (std::size_t k = 0; k < r.counts[g].size(); ++k) {
      int128 sum = 0;
      for (const auto& row : r.node_counts[g]) sum += row[k];
      CHECK(sum == static_cast<int128>(k + 1) * r.counts[g][k]);
    }
  }
}

TEST_CASE("max_dimension truncates and says so", "[cliques]") {
  Filtration f = in_order(9, complete(9));
  GridCounts full = run(f);
  Options o;
  o.max_dimension = 3;
  GridCounts cut = run(f, o);
  CHECK(cut.stopped_by == "max_dimension");
  // The first 4-simplex needs a 5-clique: complete up to the point before it forms.
  REQUIRE(cut.complete_points > 0);
  REQUIRE(cut.complete_points < full.counts.size());
  CHECK(full.counts[cut.complete_points].size() > 4);
  CHECK(full.counts[cut.complete_points - 1].size() <= 4);
  for (std::size_t g = 0; g < full.counts.size(); ++g)
    for (std::size_t k = 0; k <= 3 && k < full.counts[g].size(); ++k) CHECK(cut.counts[g][k] == full.counts[g][k]);
}

TEST_CASE("max_work stops at the same point whatever the thread count", "[cliques]") {
  const std::uint32_t n = 120;
  Filtration f = in_order(n, modular(n, 4, 0.85, 0.05, 5));
  GridCounts full = run(f);
  Options o;
  o.max_work = full.work / 3;
  o.threads = 1;
  GridCounts a = run(f, o);
  CHECK(a.stopped_by == "max_work");
  CHECK(a.complete_points > 0);
  CHECK(a.complete_points < full.counts.size());
  CHECK(a.work <= o.max_work);
  for (std::size_t g = 0; g < a.complete_points; ++g) CHECK(a.counts[g] == full.counts[g]);
  o.threads = 2;
  GridCounts b = run(f, o);
  CHECK(b.complete_points == a.complete_points);
  CHECK(b.work == a.work);
}

TEST_CASE("cancellation through the progress callback", "[cliques]") {
  Filtration f = in_order(60, modular(60, 3, 0.8, 0.1, 1));
  auto grid = every(f);
  bool called = false;
  CHECK_ERROR_KIND(count_on_grid(f, grid, Options{}, [&](double) { called = true; return true; }), ErrorKind::cancelled);
  CHECK(called);
}

TEST_CASE("counts above 2^64 stay exact", "[cliques]") {
  // One planted 70-clique: Cl_34 = C(70, 35) = 112186277816662845432 > 2^64
  // (value from Python's math.comb(70, 35)).
  Filtration f = in_order(70, complete(70));
  filtration::GridPoint end;
  end.edges = f.edges.size();
  GridCounts r = count_on_grid(f, {end}, Options{}, {});
  REQUIRE(r.complete_points == 1);
  CHECK(to_decimal(r.counts[0][34]) == "112186277816662845432");
  CHECK(r.chi[0] == 1);
}

TEST_CASE("options: unknown keys and bad values are refused", "[cliques]") {
  CHECK_ERROR_KIND(parse_options(Json{{"max_dimensions", 3}}), ErrorKind::argument);
  CHECK_ERROR_KIND(parse_options(Json{{"max_dimension", -2}}), ErrorKind::argument);
  CHECK_ERROR_KIND(parse_options(Json{{"max_work", -1}}), ErrorKind::argument);
  CHECK_ERROR_KIND(parse_options(Json{{"chi_only", true}, {"node_counts", true}}), ErrorKind::argument);
  Options o = parse_options(Json{{"max_dimension", 4}, {"threads", 2}});
  CHECK(o.max_dimension == 4);
  CHECK(o.threads == 2);
}

// --- node curvature from the leaves (Options::node_curvature) ---------------------

TEST_CASE("leaf shares: the closed form equals the direct sum over the leaf's simplices", "[cliques][curvature]") {
  // reference: Knill 2011 gives each node of a k-simplex (-1)^k / (k+1); a leaf with h
  // holds and p pivots holds C(p, j) simplices of dimension 1 + h + j (docs/methods.md). The
  // direct sum, times D, must equal the table's integer: for u, v and a hold node
  // sum_j C(p, j) (-1)^(1+h+j) D / (2+h+j); for a pivot node sum_{j>=1} C(p-1, j-1) (same term).
  const std::size_t m = 30;
  const CurvatureShares s = curvature_shares(m, false);
  REQUIRE(s.exact);
  LinkCounter pascal(0, 0, false);
  for (std::size_t h = 0; h + 2 <= m; ++h)
    for (std::size_t p = 0; h + p + 2 <= m; ++p) {
      int128 own = 0, pivot = 0;
      for (std::size_t j = 0; j <= p; ++j) {
        REQUIRE(s.denominator % static_cast<int128>(2 + h + j) == 0);
        const int128 term = ((1 + h + j) % 2 == 0 ? 1 : -1) * (s.denominator / static_cast<int128>(2 + h + j));
        own += pascal.binomial(p, j) * term;
        if (j >= 1) pivot += pascal.binomial(p - 1, j - 1) * term;
      }
      CHECK(s.hold(h, p) == own);
      if (p >= 1) CHECK(s.hold(h + 1, p - 1) == pivot);
    }
  // Fixed point: the same shares over 2^126, rounded (error at most one unit, plus the
  // binary128 rounding of the share, 2^-113 relative).
  const CurvatureShares fixed = curvature_shares(m, true);
  REQUIRE_FALSE(fixed.exact);
  REQUIRE(fixed.denominator == int128{1} << 126);
  for (std::size_t h = 0; h + 2 <= m; ++h)
    for (std::size_t p = 0; h + p + 2 <= m; ++p) {
      const Int256 a = Int256::product(fixed.hold(h, p), s.denominator);
      const Int256 b = Int256::product(s.hold(h, p), fixed.denominator);
      const double relative = std::fabs((a.ratio(1) - b.ratio(1)) / b.ratio(1));
      CHECK(relative < 1e-30);
    }
  // lcm(1..88) < 2^127 < lcm(1..89) (89 is prime; values from Python's math.lcm).
  CHECK(curvature_shares(88, false).exact);
  CHECK_FALSE(curvature_shares(89, false).exact);
}

TEST_CASE("256-bit sums: wrap-free additions and exact products", "[cliques][curvature]") {
  // reference: arithmetic by hand (2^100 * 2^100 = 2^200; -3 * 5 = -15)
  const int128 two100 = int128{1} << 100;
  const Int256 big = Int256::product(two100, two100);
  CHECK(big.lo == 0);
  CHECK(big.hi == uint128{1} << 72);
  CHECK(Int256::product(-3, 5) == Int256::of(-15));
  CHECK(Int256::product(-two100, -two100) == big);
  Int256 s = Int256::of(-1);
  s += int128{1};
  CHECK(s == Int256{});
  Int256 t;
  for (int i = 0; i < 4; ++i) t += Int256::of(two100 << 26);  // 4 * 2^126 = 2^128 overflows int128
  CHECK_FALSE(t.fits_int128());
  CHECK(t.ratio(int128{1} << 100) == 268435456.0);  // 2^128 / 2^100 = 2^28
  t += -Int256::product(two100 << 26, 4);
  CHECK(t == Int256{});
}

TEST_CASE("curvature sums: threads, fixed point and the node-count route agree", "[cliques][curvature]") {
  // reference: kappa_i = sum_k (-1)^k Cl_{i,k} / (k+1) (Knill 2011) from the node counts,
  // which the test above checks by the handshake identity; and the same sums whatever the threads.
  const std::uint32_t n = 90;
  Filtration f = in_order(n, modular(n, 5, 0.8, 0.05, 11));
  const auto grid = every(f);
  Options o;
  o.threads = 1;
  o.node_curvature = true;
  o.node_counts = true;
  GridCounts a = count_on_grid(f, grid, o, {});
  REQUIRE(a.complete_points == grid.size());
  REQUIRE(a.curvature_exact);
  for (int t : {2, 3}) {
    Options p = o;
    p.threads = t;
    GridCounts b = count_on_grid(f, grid, p, {});
    CHECK(b.curvature_numerators == a.curvature_numerators);
    CHECK(b.counts == a.counts);
  }
  Options fixed = o;
  fixed.curvature_fixed_point = true;
  fixed.threads = 2;
  GridCounts c = count_on_grid(f, grid, fixed, {});
  fixed.threads = 1;
  CHECK(count_on_grid(f, grid, fixed, {}).curvature_numerators == c.curvature_numerators);
  for (std::size_t g = 0; g < grid.size(); g += 17) {
    for (std::size_t i = 0; i < n; ++i) {
      // From the node counts, over lcm(1..K+1).
      const auto& row = a.node_counts[g][i];
      int128 d = 1;
      for (std::size_t k = 1; k <= row.size(); ++k) {
        int128 x = d, y = static_cast<int128>(k);
        while (y != 0) x = std::exchange(y, x % y);
        d = d / x * static_cast<int128>(k);
      }
      int128 num = 0;
      for (std::size_t k = 0; k < row.size(); ++k) num += (k % 2 == 0 ? 1 : -1) * row[k] * (d / static_cast<int128>(k + 1));
      const Int256& sum = a.curvature_numerators[g][i];
      REQUIRE(sum.fits_int128());
      CHECK(Int256::product(static_cast<int128>(sum.lo), d) == Int256::product(num, a.curvature_denominator));
      CHECK(c.curvature_numerators[g][i].ratio(c.curvature_denominator) == Approx(sum.ratio(a.curvature_denominator)).margin(1e-14));
    }
  }
}

TEST_CASE("curvature is refused with chi_only", "[cliques][curvature]") {
  Filtration f = in_order(6, octahedron());
  Options o;
  o.chi_only = true;
  o.node_curvature = true;
  CHECK_ERROR_KIND(count_on_grid(f, every(f), o, {}), ErrorKind::internal);
}
