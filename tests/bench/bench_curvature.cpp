// Benchmark: what curvature on the grid costs on top of the clique counts themselves.
//   bench_curvature N [max_density] [step] [seed] [matrix_out.npy] [--old-route]
// Times, on one invented brain-like matrix (a few modules of shared smooth signals plus
// noise): (a) exact clique counts and chi on the grid, (b) the same with the per-node
// curvature sums taken from the pivoting tree's leaves (what a sweep with curvature
// runs), (c) node curvature and Gauss-Bonnet checks from (b), alone and with Forman-Ricci
// and the distributions. factor_node = (b + c node only) / a, factor_all = (b + c all) / a.
// --old-route also times the route used before the leaf sums: per-node, per-size clique
// counts, then curvature from them (old_factor_node; it can fail the Gauss-Bonnet check
// where the counts are too large for exact sums). Prints one line of key=value pairs.
// Single thread, so the numbers do not depend on the machine's other load as much; each
// time is the best of 3.
#include <algorithm>
#include <chrono>
#include <cstring>
#include <cstdio>
#include <cstdlib>
#include <random>
#include <string>

#include "cliques/counts.hpp"
#include "curvature/on_grid.hpp"
#include "filtration/filtration.hpp"
#include "io/files.hpp"

using namespace critplex;

static Eigen::MatrixXd brain_like(std::size_t n, std::size_t frames, std::uint64_t seed) {
  std::mt19937_64 rng(seed);
  std::normal_distribution<double> gauss;
  const std::size_t modules = 6;
  Eigen::MatrixXd shared(static_cast<Eigen::Index>(frames), static_cast<Eigen::Index>(modules));
  Eigen::MatrixXd x(static_cast<Eigen::Index>(frames), static_cast<Eigen::Index>(n));
  for (Eigen::Index m = 0; m < shared.cols(); ++m) {
    double s = 0.0;
    for (Eigen::Index t = 0; t < shared.rows(); ++t) shared(t, m) = s = 0.9 * s + gauss(rng);
  }
  for (Eigen::Index i = 0; i < x.cols(); ++i)
    for (Eigen::Index t = 0; t < x.rows(); ++t)
      x(t, i) = shared(t, i % static_cast<Eigen::Index>(modules)) + 1.5 * gauss(rng);
  Eigen::MatrixXd centred = x.rowwise() - x.colwise().mean();
  Eigen::MatrixXd cov = centred.transpose() * centred;
  Eigen::VectorXd sd = cov.diagonal().cwiseSqrt();
  return cov.cwiseQuotient(sd * sd.transpose());
}

// Best of three runs: the machine is shared, the minimum is the least disturbed.
template <class F>
static double seconds(F&& f) {
  double best = 1e300;
  for (int run = 0; run < 3; ++run) {
    const auto start = std::chrono::steady_clock::now();
    f();
    best = std::min(best, std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count());
  }
  return best;
}

int main(int argc, char** argv) {
  if (argc < 2) {
    std::fprintf(stderr, "usage: bench_curvature N [max_density] [step] [seed] [matrix_out.npy]\n");
    return 2;
  }
  const std::size_t n = std::strtoul(argv[1], nullptr, 10);
  auto positional = [&](int i) { return argc > i && std::strcmp(argv[i], "--old-route") != 0; };
  const double max_density = positional(2) ? std::atof(argv[2]) : 0.3;
  const double step = positional(3) ? std::atof(argv[3]) : 0.01;
  const std::uint64_t seed = positional(4) ? std::strtoull(argv[4], nullptr, 10) : 1;
  const Eigen::MatrixXd m = brain_like(n, 300, seed);
  bool old_route = false;
  for (int a = 2; a < argc; ++a) old_route = old_route || std::strcmp(argv[a], "--old-route") == 0;
  if (argc > 5 && std::strcmp(argv[5], "--old-route") != 0) io::write_file_atomically(argv[5], io::encode_npy(m));

  filtration::Filtration f = filtration::build(m, filtration::WeightMode::positive, max_density);
  filtration::GridSpec spec;
  spec.step = step;
  spec.max_density = max_density;
  const auto grid = filtration::make_grid(f, spec);

  cliques::Options plain;
  plain.threads = 1;
  cliques::Options with_curvature = plain;
  with_curvature.node_curvature = true;
  cliques::GridCounts a, b;
  curvature::OnGrid c;
  curvature::Options node_only;
  node_only.forman = false;
  const double ta = seconds([&] { a = cliques::count_on_grid(f, grid, plain, {}); });
  const double tb = seconds([&] { b = cliques::count_on_grid(f, grid, with_curvature, {}); });
  const double tc_nodes = seconds([&] { c = curvature::on_grid(f, grid, b, node_only); });
  const double tc = seconds([&] { c = curvature::on_grid(f, grid, b, curvature::Options{}); });
  std::size_t dims = 0;
  for (const auto& row : a.counts) dims = std::max(dims, row.size());
  std::printf("N=%zu max_density=%g points=%zu max_dimension=%zu chi_at_end=%s counts_s=%.4f "
              "counts_with_curvature_s=%.4f node_curvature_s=%.4f curvature_all_s=%.4f factor_node=%.3f "
              "factor_all=%.3f gauss_bonnet_exact=%d arithmetic=%s",
              n, max_density, grid.size(), dims == 0 ? 0 : dims - 1, to_decimal(a.chi.back()).c_str(), ta, tb,
              tc_nodes, tc, (tb + tc_nodes) / ta, (tb + tc) / ta, c.all_exact ? 1 : 0,
              b.curvature_exact ? "exact" : "fixed_point");
  if (old_route) {
    cliques::Options with_nodes = plain;
    with_nodes.node_counts = true;
    cliques::GridCounts old;
    const double t_old = seconds([&] { old = cliques::count_on_grid(f, grid, with_nodes, {}); });
    double t_old_nodes = 0.0;
    bool ok = true;
    try {
      t_old_nodes = seconds([&] { curvature::on_grid(f, grid, old, node_only); });
    } catch (const std::exception&) {
      ok = false;  // the counts were too large for a reliable sum
    }
    std::printf(" old_counts_with_nodes_s=%.4f old_node_curvature_s=%s old_factor_node=%s", t_old,
                ok ? std::to_string(t_old_nodes).c_str() : "failed",
                ok ? std::to_string((t_old + t_old_nodes) / ta).c_str() : "failed");
  }
  std::printf("\n");
  return 0;
}
