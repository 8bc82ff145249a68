// Benchmark of the clique engine on the latent-factor model of brain-like data.
//   bench_cliques --regions N --max-density R [--chi-only] [--threads T] [--seed S]
//                 [--frames T] [--write-matrix FILE] [--repeat K]
// Prints one JSON line: the engine's time (best of --repeat), the clique counts at the
// last grid point and the largest clique. --write-matrix saves the correlation matrix
// (TSV) so the driver (tests/bench/cliques.py) gives the same input to the peers.
#include <chrono>
#include <ctime>
#include <cstdio>
#include <cstdlib>
#include <iostream>
#include <string>

#include "cliques/counts.hpp"
#include "connectivity/pearson.hpp"
#include "io/files.hpp"
#include "simulate/latent_factor.hpp"

using namespace critplex;

int main(int argc, char** argv) {
  simulate::LatentFactorOptions model;
  double max_density = 0.1;
  cliques::Options o;
  o.threads = 1;
  std::string matrix_path;
  int repeat = 1;
  bool every = true;
  for (int i = 1; i < argc; ++i) {
    const std::string a = argv[i];
    auto next = [&]() -> std::string {
      if (i + 1 >= argc) { std::cerr << "missing value after " << a << "\n"; std::exit(2); }
      return argv[++i];
    };
    if (a == "--regions") model.regions = std::stoul(next());
    else if (a == "--frames") model.frames = std::stoul(next());
    else if (a == "--seed") model.seed = std::stoull(next());
    else if (a == "--max-density") max_density = std::stod(next());
    else if (a == "--chi-only") o.chi_only = true;
    else if (a == "--node-counts") o.node_counts = true;
    else if (a == "--threads") o.threads = std::stoi(next());
    else if (a == "--write-matrix") matrix_path = next();
    else if (a == "--repeat") repeat = std::stoi(next());
    else if (a == "--grid-step") every = false, (void)next();
    else { std::cerr << "unknown argument " << a << "\n"; return 2; }
  }

  const auto t0 = std::chrono::steady_clock::now();
  const auto data = simulate::latent_factor(model);
  connectivity::Matrix m;
  m.values = connectivity::pearson(data.series.values);
  m.names = data.series.names;
  const auto t1 = std::chrono::steady_clock::now();
  if (!matrix_path.empty()) io::write_matrix(m, matrix_path, "tsv");

  double best = 1e300, best_cpu = 1e300;  // wall and processor seconds (the machine may be shared)
  cliques::GridCounts r;
  std::size_t edges = 0, points = 0;
  for (int k = 0; k < repeat; ++k) {
    const auto s = std::chrono::steady_clock::now();
    const std::clock_t cpu_start = std::clock();
    // Timed: the filtration (order the edges) and the counts at every edge.
    const auto f = filtration::build(m.values, filtration::WeightMode::positive, max_density);
    filtration::GridSpec spec;
    spec.kind = every ? "every" : "step";
    spec.max_density = max_density;
    const auto grid = filtration::make_grid(f, spec);
    r = cliques::count_on_grid(f, grid, o, {});
    const auto e = std::chrono::steady_clock::now();
    best = std::min(best, std::chrono::duration<double>(e - s).count());
    best_cpu = std::min(best_cpu, static_cast<double>(std::clock() - cpu_start) / CLOCKS_PER_SEC);
    edges = f.edges.size();
    points = grid.size();
  }
  const auto& last = r.counts[r.complete_points - 1];
  int128 total = 0;
  for (std::size_t k = 1; k < last.size(); ++k) total += last[k];
  std::printf("{\"regions\": %zu, \"max_density\": %g, \"chi_only\": %s, \"threads\": %d, \"edges\": %zu, "
              "\"grid_points\": %zu, \"seconds\": %.6f, \"cpu_seconds\": %.6f, \"model_seconds\": %.3f, \"work\": %.0f, "
              "\"largest_clique\": %zu, \"cliques_nonempty_edges_up\": \"%s\", \"chi\": \"%s\", \"counts\": [",
              model.regions, max_density, o.chi_only ? "true" : "false", o.threads, edges, points, best, best_cpu,
              std::chrono::duration<double>(t1 - t0).count(), r.work, o.chi_only ? 0 : last.size(),
              to_decimal(total).c_str(), to_decimal(r.chi[r.complete_points - 1]).c_str());
  for (std::size_t k = 0; k < last.size(); ++k) std::printf("%s\"%s\"", k ? ", " : "", to_decimal(last[k]).c_str());
  std::printf("], \"stopped_by\": \"%s\"}\n", r.stopped_by.c_str());
  return 0;
}
