// Unit tests of the chi-only path of the clique engine (core/cliques/link_euler):
// dense graphs whose links are wider than one 64-bit word, against an independent
// computation and against the full counts.
#include <catch2/catch.hpp>

#include <algorithm>
#include <bit>
#include <random>

#include "cliques/counts.hpp"
#include "clique_fixtures.hpp"

using namespace critplex;
using namespace critplex::cliques;
using filtration::Filtration;

namespace {

using test::EdgeList;
using test::every;
using test::in_order;

// sum over the independent sets I of a small graph (nodes 0..k-1) of (-1)^|I|, by
// trying every subset: the independence polynomial at -1.
long long independence_at_minus_one(std::size_t k, const EdgeList& edges) {
  long long total = 0;
  for (std::uint32_t subset = 0; subset < (1u << k); ++subset) {
    bool independent = true;
    for (auto [a, b] : edges)
      if (((subset >> a) & 1) && ((subset >> b) & 1)) independent = false;
    if (independent) total += (std::popcount(subset) % 2) ? -1 : 1;
  }
  return total;
}

}  // namespace

// reference: the clique complex of G is the independence complex of its complement H,
// so chi = 1 - I(H, -1), and the independence polynomial I is a product over the
// connected components of H (both common practice). The graph here is the complete
// graph minus small random connected graphs on disjoint node sets, its edges entered
// in a random order; the expected chi comes from brute force over each small piece.
TEST_CASE("chi alone on nearly complete graphs: 1 - product of the pieces' I(H, -1)", "[cliques][euler]") {
  std::mt19937_64 rng(20261202);
  std::uniform_int_distribution<std::uint32_t> size(2, 6);
  std::uniform_real_distribution<double> coin(0.0, 1.0);
  for (int trial = 0; trial < 6; ++trial) {
    std::vector<EdgeList> pieces;  // complement edges, in global node numbers
    int128 product = 1;
    std::uint32_t n = 0;
    // Random edge order makes mid-filtration links hard (random dense graphs): keep
    // those trials smaller; the others enter edges by node number, links span words
    // (trial 4 has about 600 nodes: links up to ten words wide, so the walk renumbers
    // through every narrower width on its way down).
    const bool random_order = trial < 2;
    for (int piece = 0; piece < (random_order ? 18 : trial == 4 ? 150 : 32); ++piece) {
      const std::uint32_t k = size(rng);
      EdgeList local;
      for (std::uint32_t b = 1; b < k; ++b)  // a random tree keeps the piece connected
        local.push_back({static_cast<std::uint32_t>(coin(rng) * b), b});
      for (std::uint32_t a = 0; a < k; ++a)
        for (std::uint32_t b = a + 2; b < k; ++b)
          if (coin(rng) < 0.3 && std::find(local.begin(), local.end(), std::make_pair(a, b)) == local.end())
            local.push_back({a, b});
      product *= independence_at_minus_one(k, local);
      for (auto& [a, b] : local) a += n, b += n;
      pieces.push_back(local);
      n += k;
    }
    // Odd trials add nodes joined to everyone: each is a piece with I = 1 - 1 = 0 (a cone).
    const std::uint32_t extra = trial % 2 ? 3 : 0;
    if (extra) product = 0;
    n += extra;
    std::vector<std::vector<char>> missing(n, std::vector<char>(n, 0));
    for (const auto& piece : pieces)
      for (auto [a, b] : piece) missing[a][b] = missing[b][a] = 1;
    // Shuffle the node numbers too, so pieces do not sit in one bitset word.
    std::vector<std::uint32_t> label(n);
    for (std::uint32_t i = 0; i < n; ++i) label[i] = i;
    std::shuffle(label.begin(), label.end(), rng);
    EdgeList edges;
    for (std::uint32_t a = 0; a < n; ++a)
      for (std::uint32_t b = a + 1; b < n; ++b)
        if (!missing[a][b]) edges.push_back({label[a], label[b]});
    if (random_order) std::shuffle(edges.begin(), edges.end(), rng);
    else std::sort(edges.begin(), edges.end(), [](auto x, auto y) { return std::minmax(x.first, x.second) < std::minmax(y.first, y.second); });
    const Filtration f = in_order(n, edges);
    Options o;
    o.chi_only = true;
    const GridCounts r = count_on_grid(f, every(f), o, {});
    INFO("trial " << trial << ", " << n << " nodes");
    REQUIRE(r.complete_points == r.chi.size());
    CHECK(r.chi.back() == 1 - product);
    CHECK(r.chi.front() == static_cast<int128>(n));
  }
}

// The chi-only path (pivot-free branches of renumbered links) against the alternating
// sum of the full counts at every edge, on modular graphs dense enough that links span
// several words and are rarely cones.
TEST_CASE("chi alone equals the alternating sum of the full counts at every edge", "[cliques][euler]") {
  for (std::uint64_t seed : {3u, 4u}) {
    std::mt19937_64 rng(seed);
    std::uniform_real_distribution<double> u(0.0, 1.0);
    const std::uint32_t n = 140;
    // Weights: strong inside three modules, weak and noisy between them.
    std::vector<std::pair<double, std::pair<std::uint32_t, std::uint32_t>>> weighted;
    for (std::uint32_t a = 0; a < n; ++a)
      for (std::uint32_t b = a + 1; b < n; ++b)
        weighted.push_back({(a % 3 == b % 3 ? 1.0 : 0.0) + 0.8 * u(rng), {a, b}});
    std::sort(weighted.begin(), weighted.end(), [](const auto& x, const auto& y) { return x.first > y.first; });
    EdgeList edges;
    for (std::size_t i = 0; i < weighted.size() * 55 / 100; ++i) edges.push_back(weighted[i].second);
    const Filtration f = in_order(n, edges);
    const auto grid = every(f);
    Options full_opt, chi_opt;
    full_opt.threads = 2;
    chi_opt.chi_only = true;
    const GridCounts full = count_on_grid(f, grid, full_opt, {});
    for (int threads : {1, 2}) {
      chi_opt.threads = threads;
      const GridCounts chi = count_on_grid(f, grid, chi_opt, {});
      REQUIRE(chi.complete_points == grid.size());
      for (std::size_t g = 0; g < grid.size(); ++g) REQUIRE(chi.chi[g] == full.chi[g]);
    }
  }
}
