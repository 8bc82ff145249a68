// Unit tests of the curvature stage: Gauss-Bonnet node curvature, Forman-Ricci edge
// curvature, distributions, and the engine on a sweep grid.
#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <random>
#include <set>

#include "base/error.hpp"
#include "clique_fixtures.hpp"
#include "cliques/counts.hpp"
#include "curvature/curvature.hpp"
#include "curvature/on_grid.hpp"
#include "curvature/static_count.hpp"
#include "filtration/filtration.hpp"
#include "output/sweep.hpp"
#include "pipeline/sweep.hpp"
#include "check_error.hpp"

using namespace critplex;
using namespace critplex::curvature;

namespace {

using test::EdgeList;

// A 256-bit numerator that the test expects to fit 128 bits.
int128 small(const cliques::Int256& x) {
  REQUIRE(x.fits_int128());
  return static_cast<int128>(x.lo);
}

// Brute force: list every clique and count, per node, the cliques of each size that
// contain it (node_counts[i][k]: cliques of k + 1 nodes). Independent of the clique engine.
struct Brute {
  std::vector<std::vector<int128>> node_counts;
  int128 chi = 0;
};
Brute brute_force(std::size_t n, const EdgeList& edges) {
  std::vector<std::vector<bool>> adj(n, std::vector<bool>(n, false));
  for (auto [u, v] : edges) adj[u][v] = adj[v][u] = true;
  Brute b;
  b.node_counts.assign(n, {});
  std::vector<std::uint32_t> clique;
  auto record = [&] {
    const std::size_t k = clique.size() - 1;
    b.chi += (k % 2 == 0) ? 1 : -1;
    for (auto i : clique) {
      if (b.node_counts[i].size() <= k) b.node_counts[i].resize(k + 1, 0);
      b.node_counts[i][k] += 1;
    }
  };
  auto extend = [&](auto&& self, std::uint32_t from) -> void {
    record();
    for (std::uint32_t w = from; w < n; ++w) {
      bool ok = true;
      for (auto c : clique) ok = ok && adj[c][w];
      if (!ok) continue;
      clique.push_back(w);
      self(self, w + 1);
      clique.pop_back();
    }
  };
  for (std::uint32_t v = 0; v < n; ++v) {
    clique = {v};
    extend(extend, v + 1);
  }
  return b;
}

// Octahedron graph: K_{2,2,2}, every pair except the antipodes (0,1), (2,3), (4,5).
EdgeList octahedron() {
  EdgeList e;
  for (std::uint32_t u = 0; u < 6; ++u)
    for (std::uint32_t v = u + 1; v < 6; ++v)
      if (!(u % 2 == 0 && v == u + 1)) e.emplace_back(u, v);
  return e;
}

// Icosahedron graph: apex 0, upper ring 1..5, lower ring 6..10, apex 11.
EdgeList icosahedron() {
  EdgeList e;
  for (std::uint32_t i = 0; i < 5; ++i) {
    const std::uint32_t up = 1 + i, up_next = 1 + (i + 1) % 5, low = 6 + i, low_next = 6 + (i + 1) % 5;
    e.emplace_back(0, up);
    e.emplace_back(std::min(up, up_next), std::max(up, up_next));
    e.emplace_back(up, low);
    e.emplace_back(up, low_next);
    e.emplace_back(std::min(low, low_next), std::max(low, low_next));
    e.emplace_back(low, 11);
  }
  return e;
}

EdgeList random_graph(std::size_t n, double p, std::mt19937_64& rng) {
  std::bernoulli_distribution coin(p);
  EdgeList e;
  for (std::uint32_t u = 0; u < n; ++u)
    for (std::uint32_t v = u + 1; v < n; ++v)
      if (coin(rng)) e.emplace_back(u, v);
  return e;
}

// A brain-like matrix: correlations of a few shared smooth signals plus noise (invented
// data, property test only), so the graph has modules and many cliques.
Eigen::MatrixXd brain_like(std::size_t n, std::size_t frames, std::mt19937_64& rng) {
  std::normal_distribution<double> gauss;
  const std::size_t modules = 3;
  Eigen::MatrixXd shared(frames, modules), x(frames, n);
  for (std::size_t m = 0; m < modules; ++m) {
    double s = 0.0;
    for (std::size_t t = 0; t < frames; ++t) shared(static_cast<Eigen::Index>(t), static_cast<Eigen::Index>(m)) = s = 0.9 * s + gauss(rng);
  }
  for (std::size_t i = 0; i < n; ++i)
    for (std::size_t t = 0; t < frames; ++t)
      x(static_cast<Eigen::Index>(t), static_cast<Eigen::Index>(i)) =
          shared(static_cast<Eigen::Index>(t), static_cast<Eigen::Index>(i % modules)) + 1.2 * gauss(rng);
  Eigen::MatrixXd centred = x.rowwise() - x.colwise().mean();
  Eigen::MatrixXd cov = centred.transpose() * centred;
  Eigen::VectorXd sd = cov.diagonal().cwiseSqrt();
  return cov.cwiseQuotient(sd * sd.transpose());
}

}  // namespace

TEST_CASE("octahedron: every node has curvature 1/3, sum 2", "[curvature]") {
  // reference: worked values in docs/methods.md (1 - 4/2 + 4/3 = 1/3; V - E + F = 2), Knill 2011
  Brute b = brute_force(6, octahedron());
  REQUIRE(b.chi == 2);
  NodeCurvature c = node_curvature(b.node_counts);
  REQUIRE(c.exact);
  for (std::size_t i = 0; i < 6; ++i) {
    CHECK(c.kappa[i] == Approx(1.0 / 3.0).epsilon(1e-15));
    CHECK(small(c.numerators[i]) * 3 == c.denominator);  // exactly 1/3
  }
  GaussBonnet g = check_gauss_bonnet(c, b.chi);
  CHECK(g.exact);
  CHECK(g.method == "exact rational");
  CHECK(g.sum_kappa == Approx(2.0).epsilon(1e-15));
}

TEST_CASE("icosahedron: every node has curvature 1/6, sum 2", "[curvature]") {
  // reference: worked values in docs/methods.md (1 - 5/2 + 5/3 = 1/6), Knill 2011
  EdgeList e = icosahedron();
  REQUIRE(std::set<std::pair<std::uint32_t, std::uint32_t>>(e.begin(), e.end()).size() == 30);
  Brute b = brute_force(12, e);
  REQUIRE(b.chi == 2);
  NodeCurvature c = node_curvature(b.node_counts);
  for (std::size_t i = 0; i < 12; ++i) {
    CHECK(c.kappa[i] == Approx(1.0 / 6.0).epsilon(1e-15));
    CHECK(small(c.numerators[i]) * 6 == c.denominator);
  }
  CHECK(check_gauss_bonnet(c, b.chi).exact);
}

TEST_CASE("Gauss-Bonnet holds exactly on random and brain-like graphs", "[curvature]") {
  // reference: Gauss-Bonnet sum_i kappa_i = chi (Knill 2011), chi from brute-force listing
  std::mt19937_64 rng(20261202);
  for (int trial = 0; trial < 40; ++trial) {
    const std::size_t n = 5 + static_cast<std::size_t>(trial % 12);
    const double p = 0.1 + 0.02 * trial;
    Brute b = brute_force(n, random_graph(n, std::min(p, 0.9), rng));
    NodeCurvature c = node_curvature(b.node_counts);
    GaussBonnet g = check_gauss_bonnet(c, b.chi);
    CHECK(g.exact);
    CHECK(g.relative_error < 1e-12);
  }
  for (int trial = 0; trial < 5; ++trial) {
    const std::size_t n = 18;
    filtration::Filtration f = filtration::build(brain_like(n, 120, rng), filtration::WeightMode::positive);
    for (double rho : {0.1, 0.3, 0.5, 0.7}) {
      const std::size_t m = std::min(f.edges.size(), static_cast<std::size_t>(rho * static_cast<double>(f.pairs())));
      EdgeList e;
      for (std::size_t i = 0; i < m; ++i) e.emplace_back(f.edges[i].u, f.edges[i].v);
      Brute b = brute_force(n, e);
      GaussBonnet g = check_gauss_bonnet(node_curvature(b.node_counts), b.chi);
      CHECK(g.exact);
      CHECK(g.relative_error < 1e-12);
    }
  }
}

TEST_CASE("Gauss-Bonnet fails loudly on inconsistent counts", "[curvature]") {
  // A triangle's node counts (1, 2, 1) each give kappa = 1 - 1 + 1/3 = 1/3, sum 1 = chi.
  std::vector<std::vector<int128>> triangle(3, std::vector<int128>{1, 2, 1});
  NodeCurvature c = node_curvature(triangle);
  CHECK(check_gauss_bonnet(c, 1).exact);
  CHECK_ERROR_KIND(check_gauss_bonnet(c, 2), ErrorKind::internal);
  std::vector<std::vector<int128>> bad{{2, 1}};
  CHECK_ERROR_KIND(node_curvature(bad), ErrorKind::internal);
}

TEST_CASE("huge counts fall back to binary128 and still satisfy Gauss-Bonnet", "[curvature]") {
  // Complete graph K_n: each node lies in C(n-1,k) k-simplices; chi = 1 (a simplex).
  // reference: chi of a simplex is 1 (common practice); n = 120 overflows lcm(1..120) in 128 bits.
  const std::size_t n = 120;
  std::vector<int128> row(n, 0);
  row[0] = 1;
  for (std::size_t k = 1; k < n; ++k) row[k] = row[k - 1] * static_cast<int128>(n - k) / static_cast<int128>(k);
  // C(119, 59) ~ 1.6e35 fits 128 bits; the common denominator does not.
  std::vector<std::vector<int128>> counts(n, row);
  NodeCurvature c = node_curvature(counts);
  CHECK_FALSE(c.exact);
  // kappa of a node of a simplex on n nodes is 1/n: sum_k (-1)^k C(n-1,k)/(k+1) = 1/n.
  // Cancellation from 1e35 terms leaves no digit in binary128 either; check that the
  // check itself notices rather than accepting garbage.
  bool threw = false;
  try {
    check_gauss_bonnet(c, 1);
  } catch (const Error&) {
    threw = true;
  }
  // Either the values are right to 1e-12, or the mismatch is reported.
  if (!threw) CHECK(std::fabs(c.kappa[0] - 1.0 / 120.0) < 1e-12);
}

TEST_CASE("Forman-Ricci curvature on small graphs", "[curvature]") {
  // reference: F(uv) = 4 - deg(u) - deg(v) + 3 t(uv) (Sreejith et al. 2016; Samal et al. 2018), by hand
  // Triangle 0-1-2 plus pendant 2-3.
  EdgeList e{{0, 1}, {0, 2}, {1, 2}, {2, 3}};
  Forman f = forman_ricci(5, e, e.size());
  CHECK(f.edge_values[0] == 4 - 2 - 2 + 3);  // 01: one triangle
  CHECK(f.edge_values[1] == 4 - 2 - 3 + 3);  // 02
  CHECK(f.edge_values[2] == 4 - 2 - 3 + 3);  // 12
  CHECK(f.edge_values[3] == 4 - 3 - 1);      // 23: no triangle
  CHECK(f.node_mean[0] == Approx((3.0 + 2.0) / 2));
  CHECK(f.node_mean[2] == Approx((2.0 + 2.0 - 0.0) / 3));
  CHECK(std::isnan(f.node_mean[4]));  // isolated
  // Only a prefix of the edges.
  Forman g = forman_ricci(5, e, 1);
  REQUIRE(g.edge_values.size() == 1);
  CHECK(g.edge_values[0] == 2);  // 4 - 1 - 1
}

TEST_CASE("distributions: moments, quantiles, histogram", "[curvature]") {
  // reference: values worked by hand with the definitions of numpy.percentile (linear),
  // scipy.stats.skew and scipy.stats.kurtosis (biased, Fisher) for {1, 2, 3, 4, 10}
  std::vector<double> v{4, 1, 10, 3, 2};
  Distribution d = describe(v, {0.0, 0.5, 0.9, 1.0}, fixed_bins(0.0, 10.0, 5));
  CHECK(d.count == 5);
  CHECK(d.mean == Approx(4.0));
  // deviations -3 -2 -1 0 6: m2 = 50/5 = 10, m3 = (-27-8-1+216)/5 = 36, m4 = (81+16+1+1296)/5 = 278.8
  CHECK(d.sd == Approx(std::sqrt(10.0)));
  CHECK(d.skewness == Approx(36.0 / std::pow(10.0, 1.5)));
  CHECK(d.kurtosis == Approx(278.8 / 100.0 - 3.0));
  CHECK(d.quantiles[0] == 1.0);
  CHECK(d.quantiles[1] == 3.0);
  CHECK(d.quantiles[2] == Approx(4.0 + 0.6 * 6.0));  // h = 3.6 between 4 and 10
  CHECK(d.quantiles[3] == 10.0);
  // bins [0,2) [2,4) [4,6) [6,8) [8,10]
  CHECK(d.histogram == std::vector<std::size_t>{1, 2, 1, 0, 1});
  Distribution c = describe({2, 2, 2}, {0.5}, {});
  CHECK(c.sd == 0.0);
  CHECK(std::isnan(c.skewness));
  Distribution e = describe({}, {0.5}, {});
  CHECK(std::isnan(e.mean));
  auto fd = freedman_diaconis_bins({0, 1, 2, 3, 4, 5, 6, 7}, 100);
  // IQR (type 7) = 5.25 - 1.75 = 3.5, width 2 * 3.5 / 2 = 3.5, 7 / 3.5 = 2 bins
  CHECK(fd.size() == 3);
  CHECK(fd.front() == 0.0);
  CHECK(fd.back() == 7.0);
}

TEST_CASE("the engine on a sweep grid agrees with brute force", "[curvature]") {
  // reference: brute-force clique listing above (independent of the clique engine)
  std::mt19937_64 rng(7);
  const std::size_t n = 14;
  filtration::Filtration f = filtration::build(brain_like(n, 100, rng), filtration::WeightMode::absolute);
  filtration::GridSpec spec;
  spec.step = 0.1;
  auto grid = filtration::make_grid(f, spec);
  cliques::Options co;
  co.node_counts = true;
  co.threads = 1;
  cliques::GridCounts counts = cliques::count_on_grid(f, grid, co, {});
  REQUIRE(counts.complete_points == grid.size());
  OnGrid c = on_grid(f, grid, counts, Options{});
  CHECK(c.all_exact);
  for (std::size_t g = 0; g < grid.size(); ++g) {
    EdgeList e;
    for (std::size_t i = 0; i < grid[g].edges; ++i) e.emplace_back(f.edges[i].u, f.edges[i].v);
    Brute b = brute_force(n, e);
    NodeCurvature expect = node_curvature(b.node_counts);
    REQUIRE(c.points[g].computed);
    CHECK(c.points[g].gauss_bonnet.chi == b.chi);
    for (std::size_t i = 0; i < n; ++i) CHECK(c.points[g].kappa[i] == expect.kappa[i]);
    std::size_t histogram_total = 0;
    for (auto h : c.points[g].node.histogram) histogram_total += h;
    CHECK(histogram_total + c.points[g].node.below + c.points[g].node.above == n);
    CHECK(c.points[g].forman.count == grid[g].edges);
  }
}

TEST_CASE("curvature options are checked", "[curvature]") {
  CHECK_ERROR_KIND(parse_options(Json{{"bins", 0}}), ErrorKind::argument);
  CHECK_ERROR_KIND(parse_options(Json{{"quantiles", {1.5}}}), ErrorKind::argument);
  CHECK_ERROR_KIND(parse_options(Json{{"range", {1, 0}}, {"bins", 5}}), ErrorKind::argument);
  CHECK_ERROR_KIND(parse_options(Json{{"range", {0, 1}}}), ErrorKind::argument);  // range needs fixed bins
  CHECK_ERROR_KIND(parse_options(Json{{"colour", "red"}}), ErrorKind::argument);
  Options o = parse_options(Json{{"bins", 7}, {"range", {-1, 1}}, {"forman", false}});
  CHECK_FALSE(o.auto_bins);
  CHECK(o.bins == 7);
  CHECK_FALSE(o.forman);
}

namespace {

using test::in_order;

EdgeList prefix(const filtration::Filtration& f, std::size_t m) {
  EdgeList e;
  for (std::size_t i = 0; i < m; ++i) e.emplace_back(f.edges[i].u, f.edges[i].v);
  return e;
}

}  // namespace

TEST_CASE("curvature summed from the pivoting tree's leaves equals the brute-force node counts", "[curvature]") {
  // reference: brute-force clique listing above, kappa_i = sum_k (-1)^k Cl_{i,k} / (k+1)
  // (Knill 2011) in exact rationals; the engine sums closed-form leaf shares instead.
  std::mt19937_64 rng(41);
  std::vector<filtration::Filtration> cases;
  for (int trial = 0; trial < 6; ++trial) {
    const std::size_t n = 8 + 2 * static_cast<std::size_t>(trial);
    EdgeList e = random_graph(n, 0.35 + 0.08 * trial, rng);
    std::shuffle(e.begin(), e.end(), rng);
    cases.push_back(in_order(n, e));
  }
  cases.push_back(in_order(6, octahedron()));
  cases.push_back(in_order(12, icosahedron()));
  for (int trial = 0; trial < 3; ++trial)
    cases.push_back(filtration::build(brain_like(15, 100, rng), filtration::WeightMode::positive, 0.8));
  for (const auto& f : cases) {
    filtration::GridSpec spec;
    spec.step = 0.05;
    const auto grid = filtration::make_grid(f, spec);
    std::vector<NodeCurvature> expected;
    std::vector<int128> chi;
    for (const auto& point : grid) {
      Brute b = brute_force(f.nodes, prefix(f, point.edges));
      expected.push_back(node_curvature(b.node_counts));
      REQUIRE(expected.back().exact);
      chi.push_back(b.chi);
    }
    for (bool fixed : {false, true}) {
      cliques::GridCounts first;
      for (int threads : {1, 2}) {
        cliques::Options o;
        o.node_curvature = true;
        o.curvature_fixed_point = fixed;
        o.threads = threads;
        cliques::GridCounts gc = cliques::count_on_grid(f, grid, o, {});
        REQUIRE(gc.complete_points == grid.size());
        CHECK(gc.curvature_exact == !fixed);
        CHECK(gc.node_counts.empty());  // curvature does not need the per-size counts
        if (threads == 1) first = gc;
        else CHECK(gc.curvature_numerators == first.curvature_numerators);  // identical whatever the threads
        for (std::size_t g = 0; g < grid.size(); ++g) {
          CHECK(gc.chi[g] == chi[g]);
          const NodeCurvature got = node_curvature_from_sums(gc.curvature_numerators[g], gc.curvature_denominator,
                                                             gc.curvature_exact);
          const NodeCurvature& want = expected[g];
          for (std::size_t i = 0; i < f.nodes; ++i) {
            if (fixed) {
              CHECK(got.kappa[i] == Approx(want.kappa[i]).margin(1e-15));
            } else {
              // Same rational: got / D_got == want / D_want.
              CHECK(cliques::Int256::product(small(got.numerators[i]), want.denominator) ==
                    cliques::Int256::product(small(want.numerators[i]), got.denominator));
              CHECK(got.kappa[i] == want.kappa[i]);
            }
          }
          const GaussBonnet gb = check_gauss_bonnet(got, gc.chi[g]);
          CHECK(gb.exact == !fixed);
          CHECK(gb.method == (fixed ? "fixed point" : "exact rational"));
          CHECK(gb.relative_error < 1e-12);
        }
      }
    }
  }
}

TEST_CASE("Gauss-Bonnet on the engine's sums fails loudly when a sum is off", "[curvature]") {
  // A triangle: kappa = 1/3 per node (1 - 2/2 + 1/3), chi = 1; D = 6.
  std::vector<cliques::Int256> sums(3, cliques::Int256::of(2));
  CHECK(check_gauss_bonnet(node_curvature_from_sums(sums, 6, true), 1).exact);
  CHECK_ERROR_KIND(check_gauss_bonnet(node_curvature_from_sums(sums, 6, true), 2), ErrorKind::internal);
  sums[0] += int128{1};  // off by 1/6
  CHECK_ERROR_KIND(check_gauss_bonnet(node_curvature_from_sums(sums, 6, true), 1), ErrorKind::internal);
  CHECK_ERROR_KIND(check_gauss_bonnet(node_curvature_from_sums(sums, 6, false), 1), ErrorKind::internal);
}

TEST_CASE("a sweep with curvature no longer carries node counts; asked for, they still come", "[curvature]") {
  // reference: the octahedron's node counts 1, 4, 4 and kappa 1/3 (docs/methods.md, Knill 2011)
  connectivity::Matrix m;
  m.values = Eigen::MatrixXd::Constant(6, 6, -1.0);  // only the octahedron's edges are positive
  for (auto [u, v] : octahedron()) m.values(u, v) = m.values(v, u) = 1.0;
  m.values.diagonal().setOnes();
  for (int i = 0; i < 6; ++i) m.names.push_back("r" + std::to_string(i));
  for (bool ask_counts : {false, true}) {
    Json options{{"grid", "every"}, {"curvature", Json::object()}};
    if (ask_counts) options["cliques"] = Json{{"node_counts", true}};
    const pipeline::SweepResult r = pipeline::run_sweep(m, pipeline::parse_sweep_options(options), {});
    const Json sections = output::sweep_json(r);
    const Json& last = sections.at("cliques")["points"].back();
    CHECK(last.contains("node_counts") == ask_counts);
    if (ask_counts)
      for (const auto& row : last["node_counts"]) CHECK(row == Json{"1", "4", "4"});
    const Json& kappa = sections.at("curvature")["node_kappa"]["values"];
    for (const auto& curve : kappa) CHECK(curve.back().get<double>() == Approx(1.0 / 3.0).epsilon(1e-15));
    CHECK(sections.at("curvature")["gauss_bonnet"]["all_exact"].get<bool>());
  }
}

TEST_CASE("Forman-Ricci edge by edge equals the recomputation at every prefix", "[curvature]") {
  // reference: forman_ricci above (checked by hand against F = 4 - deg u - deg v + 3 t),
  // recomputed from scratch at every prefix of random and brain-like filtrations
  std::mt19937_64 rng(53);
  std::vector<std::pair<std::size_t, EdgeList>> cases;
  for (int trial = 0; trial < 4; ++trial) {
    const std::size_t n = 6 + 5 * static_cast<std::size_t>(trial);
    EdgeList e = random_graph(n, 0.6, rng);
    std::shuffle(e.begin(), e.end(), rng);
    cases.emplace_back(n, e);
  }
  filtration::Filtration b = filtration::build(brain_like(70, 100, rng), filtration::WeightMode::positive, 0.5);
  cases.emplace_back(70, prefix(b, b.edges.size()));  // 70 nodes: rows of two words
  {
    // Above 2048 nodes the pair -> edge index is a hash map: a dense corner of a big graph.
    EdgeList e = random_graph(40, 0.7, rng);
    for (auto& [u, v] : e) u += 2000, v += 2000;
    e.emplace_back(3, 2099);
    std::shuffle(e.begin(), e.end(), rng);
    cases.emplace_back(2100, e);
  }
  for (const auto& [n, e] : cases) {
    FormanSweep sweep(n, e);
    for (std::size_t m = 0; m <= e.size(); m += (m < 40 ? 1 : 7)) {
      sweep.advance(m);
      const Forman want = forman_ricci(n, e, m);
      std::vector<double> got_values;
      for (std::size_t i = 0; i < m; ++i) got_values.push_back(sweep.value(i));
      CHECK(got_values == want.edge_values);
      const std::vector<double> got_mean = sweep.node_mean();
      for (std::size_t i = 0; i < n; ++i)
        CHECK((std::isnan(want.node_mean[i]) ? std::isnan(got_mean[i]) : got_mean[i] == want.node_mean[i]));
      // The tally's distribution equals the one of the listed values.
      const std::vector<double> levels{0.0, 0.1, 0.5, 0.9, 1.0};
      const auto edges_of_bins = fixed_bins(-20.0, 10.0, 7);
      const Distribution d = describe(want.edge_values, levels, edges_of_bins);
      const Distribution t = describe_tally(sweep.tally(), levels, edges_of_bins);
      CHECK(t.count == d.count);
      if (m == 0) continue;
      CHECK(t.mean == Approx(d.mean).epsilon(1e-14));
      CHECK(t.min == d.min);
      CHECK(t.max == d.max);
      CHECK(t.quantiles == d.quantiles);
      CHECK(t.histogram == d.histogram);
      CHECK(t.below == d.below);
      CHECK(t.above == d.above);
      CHECK(t.sd == Approx(d.sd).epsilon(1e-12).margin(1e-12));
      if (std::isnan(d.skewness)) {
        CHECK(std::isnan(t.skewness));
      } else {
        CHECK(t.skewness == Approx(d.skewness).epsilon(1e-9).margin(1e-9));
        CHECK(t.kurtosis == Approx(d.kurtosis).epsilon(1e-9).margin(1e-9));
      }
      if (m >= 4) CHECK(freedman_diaconis_bins_tally(sweep.tally(), 60) == freedman_diaconis_bins(want.edge_values, 60));
    }
  }
}

// ---- Node curvature at chosen points (curvature.at): one static count per point ----

namespace {

// A matrix whose positive-mode filtration enters `edges` in list order (weights 1, 1 -
// 1/E, ...) and nothing else (every other pair is -1).
connectivity::Matrix matrix_entering(std::size_t n, const EdgeList& edges) {
  connectivity::Matrix m;
  m.values = Eigen::MatrixXd::Constant(static_cast<Eigen::Index>(n), static_cast<Eigen::Index>(n), -1.0);
  for (std::size_t k = 0; k < edges.size(); ++k) {
    const double w = 1.0 - static_cast<double>(k) / static_cast<double>(edges.size() + 1);
    m.values(edges[k].first, edges[k].second) = m.values(edges[k].second, edges[k].first) = w;
  }
  m.values.diagonal().setOnes();
  for (std::size_t i = 0; i < n; ++i) m.names.push_back("r" + std::to_string(i));
  return m;
}

// K_{a,b} (parts 0..a-1 and a..a+b-1), edges shuffled: triangle-free.
EdgeList complete_bipartite(std::uint32_t a, std::uint32_t b, std::mt19937_64& rng) {
  EdgeList e;
  for (std::uint32_t u = 0; u < a; ++u)
    for (std::uint32_t v = a; v < a + b; ++v) e.emplace_back(u, v);
  std::shuffle(e.begin(), e.end(), rng);
  return e;
}

}  // namespace

TEST_CASE("static counts give the walk's node curvature and the brute-force listing's", "[curvature]") {
  // reference: brute-force clique listing above, kappa_i = sum_k (-1)^k Cl_{i,k} / (k+1)
  // (Knill 2011) in exact rationals, and Gauss-Bonnet sum_i kappa_i = chi (Knill 2011)
  std::mt19937_64 rng(67);
  std::vector<filtration::Filtration> cases;
  for (int trial = 0; trial < 5; ++trial) {
    const std::size_t n = 9 + 3 * static_cast<std::size_t>(trial);
    EdgeList e = random_graph(n, 0.3 + 0.1 * trial, rng);
    std::shuffle(e.begin(), e.end(), rng);
    cases.push_back(in_order(n, e));
  }
  cases.push_back(in_order(6, octahedron()));
  cases.push_back(in_order(12, icosahedron()));
  for (int trial = 0; trial < 3; ++trial)
    cases.push_back(filtration::build(brain_like(16, 100, rng), filtration::WeightMode::positive));
  for (const auto& f : cases) {
    filtration::GridSpec spec;
    spec.step = 0.1;
    const auto grid = filtration::make_grid(f, spec);
    cliques::Options walk_options;
    walk_options.node_curvature = true;
    const cliques::GridCounts walk = cliques::count_on_grid(f, grid, walk_options, {});
    REQUIRE(walk.complete_points == grid.size());
    for (std::size_t g = 0; g < grid.size(); ++g) {
      const std::size_t m = grid[g].edges;
      // The reordered filtration holds the same edges.
      const filtration::Filtration ordered = static_order(f, m);
      std::set<std::pair<std::uint32_t, std::uint32_t>> same, reordered;
      for (std::size_t i = 0; i < m; ++i) same.emplace(f.edges[i].u, f.edges[i].v);
      for (const auto& e : ordered.edges) reordered.emplace(e.u, e.v);
      CHECK(same == reordered);
      CHECK(ordered.edges.size() == m);

      const Brute b = brute_force(f.nodes, prefix(f, m));
      const NodeCurvature want = node_curvature(b.node_counts);
      for (int threads : {1, 2}) {
        cliques::Options base;
        base.threads = threads;
        const cliques::GridCounts s = static_count(f, m, base, {});
        REQUIRE(s.complete_points == 1);
        CHECK(s.chi[0] == b.chi);
        CHECK(s.chi[0] == walk.chi[g]);
        const NodeCurvature got = node_curvature_from_sums(s.curvature_numerators[0], s.curvature_denominator,
                                                           s.curvature_exact);
        const NodeCurvature walked = node_curvature_from_sums(walk.curvature_numerators[g], walk.curvature_denominator,
                                                              walk.curvature_exact);
        for (std::size_t i = 0; i < f.nodes; ++i) {
          CHECK(got.kappa[i] == want.kappa[i]);
          CHECK(got.kappa[i] == walked.kappa[i]);
        }
        const GaussBonnet gb = check_gauss_bonnet(got, s.chi[0]);
        CHECK(gb.exact);
      }
    }
  }
}

TEST_CASE("curvature at the transitions: the grid points around the zero of a known chi curve", "[curvature]") {
  // reference: the flag complex of a triangle-free graph is the graph itself, so
  // chi = N - m (Euler's formula for a graph); on K_{5,5} (N = 10, 25 edges) chi is
  // positive for m < 10, zero at m = 10 and negative after: one zero, bracketed by the
  // grid points m = 9 and m = 11 on the "every" grid.
  std::mt19937_64 rng(71);
  const connectivity::Matrix m = matrix_entering(10, complete_bipartite(5, 5, rng));
  for (std::size_t window : {0u, 2u, 10u}) {
    Json options{{"grid", "every"}, {"curvature", Json{{"at", "transitions"}, {"window", window}}}};
    const pipeline::SweepResult r = pipeline::run_sweep(m, pipeline::parse_sweep_options(options), {});
    REQUIRE(r.grid.size() == 26);
    for (std::size_t g = 0; g < r.grid.size(); ++g) REQUIRE(r.cliques->chi[g] == int128(10) - int128(g));
    const std::size_t first = window >= 9 ? 0 : 9 - window, last = 11 + window;
    std::vector<std::size_t> expected;
    for (std::size_t g = first; g <= last; ++g) expected.push_back(g);
    CHECK(r.curvature->selection.points == expected);
    REQUIRE(r.curvature->selection.zeros.size() == 1);
    CHECK(r.curvature->selection.zeros[0].left == 9);
    CHECK(r.curvature->selection.zeros[0].right == 11);
    CHECK(r.curvature->selection.zeros[0].density == Approx(10.0 / 45.0));
    for (std::size_t g = 0; g < r.grid.size(); ++g) {
      const bool chosen = g >= first && g <= last;
      CHECK(r.curvature->points[g].computed == chosen);
      CHECK(r.curvature->points[g].forman_computed);  // Forman-Ricci stays on every point
      if (!chosen) continue;
      // Triangle-free: kappa_i = 1 - deg(i) / 2 (Knill 2011 with Cl_{i,1} = deg i only).
      std::vector<std::size_t> degree(10, 0);
      for (std::size_t e = 0; e < r.grid[g].edges; ++e) ++degree[r.filtration.edges[e].u], ++degree[r.filtration.edges[e].v];
      for (std::size_t i = 0; i < 10; ++i)
        CHECK(r.curvature->points[g].kappa[i] == 1.0 - static_cast<double>(degree[i]) / 2.0);
      CHECK(r.curvature->points[g].gauss_bonnet.exact);
    }
    // Columns: values at the chosen points, missing elsewhere; the JSON says why.
    const Json j = output::sweep_json(r);
    const Json& at = j.at("curvature")["node_curvature_at"];
    CHECK(at["mode"] == "transitions");
    CHECK(at["window"] == window);
    CHECK(at["points"] == Json(expected));
    CHECK(at["chi_zeros"].size() == 1);
    CHECK(at["chi_zeros"][0]["direction"] == "down");
    for (const auto& column : output::curve_columns(r))
      if (column.name == "kappa_mean")
        for (std::size_t g = 0; g < r.grid.size(); ++g) CHECK(std::isnan(column.values[g]) == !(g >= first && g <= last));
  }
}

TEST_CASE("curvature at listed densities snaps to the last grid point at or below", "[curvature]") {
  // reference: the walk over the whole grid (at "grid") at the same points, and the
  // grid's own rule m = floor(rho N (N - 1) / 2) (filtration::make_grid)
  std::mt19937_64 rng(73);
  connectivity::Matrix m;
  m.values = brain_like(20, 120, rng);
  for (int i = 0; i < 20; ++i) m.names.push_back("r" + std::to_string(i));
  const Json grid_options{{"grid", 0.1}, {"weights", "absolute"}, {"curvature", Json::object()}};
  const pipeline::SweepResult all = pipeline::run_sweep(m, pipeline::parse_sweep_options(grid_options), {});
  const Json listed{{"grid", 0.1}, {"weights", "absolute"}, {"curvature", Json{{"at", {0.25, 0.3, 0.2999, 0.05}}}}};
  const pipeline::SweepResult r = pipeline::run_sweep(m, pipeline::parse_sweep_options(listed), {});
  // 0.25 and 0.2999 -> 0.2 (index 2), 0.3 -> index 3, 0.05 -> density 0 (index 0).
  CHECK(r.curvature->selection.points == std::vector<std::size_t>{0, 2, 3});
  REQUIRE(r.curvature->selection.snapped.size() == 4);
  CHECK(r.curvature->selection.snapped[0].index == 2);
  CHECK(r.curvature->selection.snapped[1].index == 3);
  CHECK(r.curvature->selection.snapped[2].index == 2);
  CHECK(r.curvature->selection.snapped[3].index == 0);
  for (std::size_t g = 0; g < r.grid.size(); ++g) {
    const bool chosen = g == 0 || g == 2 || g == 3;
    CHECK(r.curvature->points[g].computed == chosen);
    if (chosen) CHECK(r.curvature->points[g].kappa == all.curvature->points[g].kappa);
  }
  const Json j = output::sweep_json(r);
  CHECK(j.at("curvature")["node_curvature_at"]["mode"] == "list");
  CHECK(j.at("curvature")["node_curvature_at"]["snapped"].size() == 4);
  CHECK(j.at("curvature")["gauss_bonnet"]["points_checked"] == 3);

  // A density below every grid point: a list grid starting at 0.2.
  const Json below{{"grid", {0.2, 0.4}}, {"curvature", Json{{"at", {0.1}}}}};
  CHECK_ERROR_KIND_WITH(pipeline::run_sweep(m, pipeline::parse_sweep_options(below), {}), ErrorKind::argument,
                        "curvature.at");
}

TEST_CASE("curvature.at and curvature.window are checked", "[curvature]") {
  CHECK(parse_options(Json::object()).at == Options::At::grid);
  CHECK(parse_options(Json::object()).window == 2);
  CHECK(parse_options(Json{{"at", "transitions"}}).at == Options::At::transitions);
  const Options listed = parse_options(Json{{"at", {0.1, 1.0}}});
  CHECK(listed.at == Options::At::list);
  CHECK(listed.at_densities == std::vector<double>{0.1, 1.0});
  CHECK_ERROR_KIND_WITH(parse_options(Json{{"at", "transitions"}, {"window", -1}}), ErrorKind::argument, "curvature.window");
  CHECK_ERROR_KIND_WITH(parse_options(Json{{"at", "transitions"}, {"window", 1.5}}), ErrorKind::argument, "curvature.window");
  CHECK_ERROR_KIND_WITH(parse_options(Json{{"window", 3}}), ErrorKind::argument, "curvature.window");  // needs transitions
  CHECK_ERROR_KIND_WITH(parse_options(Json{{"at", "sometimes"}}), ErrorKind::argument, "curvature.at");
  CHECK_ERROR_KIND_WITH(parse_options(Json{{"at", {0.0}}}), ErrorKind::argument, "curvature.at");
  CHECK_ERROR_KIND_WITH(parse_options(Json{{"at", {1.5}}}), ErrorKind::argument, "curvature.at");
  CHECK_ERROR_KIND_WITH(parse_options(Json{{"at", {-0.2}}}), ErrorKind::argument, "curvature.at");
  CHECK_ERROR_KIND_WITH(parse_options(Json{{"at", Json::array()}}), ErrorKind::argument, "curvature.at");
  CHECK_ERROR_KIND_WITH(parse_options(Json{{"at", {"0.1"}}}), ErrorKind::argument, "curvature.at");
  CHECK_ERROR_KIND_WITH(parse_options(Json{{"at", 0.1}}), ErrorKind::argument, "curvature.at");
  // Beyond the sweep's (or the engine's) range.
  CHECK_ERROR_KIND_WITH(pipeline::parse_sweep_options(Json{{"max_density", 0.5}, {"curvature", Json{{"at", {0.6}}}}}),
                        ErrorKind::argument, "curvature.at");
  CHECK_ERROR_KIND_WITH(pipeline::parse_sweep_options(Json{{"curvature", Json{{"at", {0.6}}, {"max_density", 0.4}}}}),
                        ErrorKind::argument, "curvature.at");
}

TEST_CASE("chosen points counted by a walk or by static counts agree; the automatic rule", "[curvature]") {
  // reference: brute-force clique listing above (Knill 2011 curvature, exact rationals)
  std::mt19937_64 rng(79);
  connectivity::Matrix m;
  m.values = brain_like(18, 120, rng);
  for (int i = 0; i < 18; ++i) m.names.push_back("r" + std::to_string(i));
  std::vector<pipeline::SweepResult> runs;
  for (const char* count : {"static", "walk"}) {
    const Json options{{"grid", 0.05}, {"weights", "absolute"},
                       {"curvature", Json{{"at", {0.15, 0.4, 0.7}}, {"count", count}}}};
    runs.push_back(pipeline::run_sweep(m, pipeline::parse_sweep_options(options), {}));
  }
  CHECK_FALSE(runs[0].curvature->selection.walk);
  CHECK(runs[1].curvature->selection.walk);
  CHECK(runs[0].curvature->selection.points == std::vector<std::size_t>{3, 8, 14});
  for (std::size_t g = 0; g < runs[0].grid.size(); ++g) {
    REQUIRE(runs[0].curvature->points[g].computed == runs[1].curvature->points[g].computed);
    if (!runs[0].curvature->points[g].computed) continue;
    const Brute b = brute_force(18, prefix(runs[0].filtration, runs[0].grid[g].edges));
    CHECK(runs[0].curvature->points[g].kappa == node_curvature(b.node_counts).kappa);
    CHECK(runs[1].curvature->points[g].kappa == node_curvature(b.node_counts).kappa);
  }
  // The rule: sum (m_i / m_last)^8 <= 2 keeps static counts.
  CHECK(static_counts_cheaper({1000}));
  CHECK(static_counts_cheaper({250, 500, 750, 1000}));  // 0.25^8 + 0.5^8 + 0.75^8 + 1 = 1.104
  CHECK(static_counts_cheaper({990, 1000}));            // 0.923 + 1
  CHECK(static_counts_cheaper({1000, 1000, 1000}));     // one count
  CHECK_FALSE(static_counts_cheaper({900, 950, 1000}));  // 0.43 + 0.66 + 1 = 2.09
  CHECK_ERROR_KIND_WITH(parse_options(Json{{"count", "walk"}}), ErrorKind::argument, "curvature.count");
  CHECK_ERROR_KIND_WITH(parse_options(Json{{"at", "transitions"}, {"count", "fast"}}), ErrorKind::argument,
                        "curvature.count");
}
