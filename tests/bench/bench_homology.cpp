// Times the homology engine on one matrix file (driven by tests/bench/homology.py,
// which runs the reference tools on the same input in the same run).
//   bench_homology --ranks FILE --threshold M --dim K [--threads T] [--bars FILE]
// --ranks: the very file given to ripser (lower-distance matrix of edge ranks 1..M,
// larger numbers for absent edges), read into the filtration directly, so both
// programs start from the same bytes (and this program links only the filtration and
// homology stages, no matrix reader).
// Prints "seconds <s>" and the bar counts; with --bars writes "dim birth death" lines
// in rank units ("inf" for essential bars) for the driver's comparison.
#include <chrono>
#include <cstdio>
#include <cstdlib>
#include <fstream>
#include <iostream>
#include <string>
#include <vector>

#include "base/error.hpp"
#include "filtration/filtration.hpp"
#include "homology/persistence.hpp"

namespace {
// Edges of rank 1..threshold from a lower-distance text file (rows i = 1..N-1 hold
// the distances to j = 0..i-1, separated by commas or blanks).
critplex::filtration::Filtration read_ranks(const std::string& path, std::size_t threshold) {
  std::FILE* file = std::fopen(path.c_str(), "r");
  if (!file) throw std::runtime_error("cannot open " + path);
  std::vector<std::pair<std::uint32_t, std::uint32_t>> by_rank(threshold + 1, {0, 0});
  std::uint32_t row = 1, column = 0;
  unsigned long long value = 0;
  bool in_number = false;
  std::size_t found = 0;
  auto finish_number = [&] {
    if (!in_number) return;
    if (value >= 1 && value <= threshold) {
      by_rank[value] = {column, row};
      ++found;
    }
    in_number = false;
    value = 0;
    ++column;
  };
  for (int c; (c = std::fgetc(file)) != EOF;) {
    if (c >= '0' && c <= '9') {
      value = value * 10 + static_cast<unsigned>(c - '0');
      in_number = true;
    } else {
      finish_number();
      if (c == '\n') {
        if (column > 0) ++row;
        column = 0;
      }
    }
  }
  finish_number();
  std::fclose(file);
  if (found != threshold) throw std::runtime_error(path + ": ranks 1.." + std::to_string(threshold) + " not all present");
  critplex::filtration::Filtration f;
  f.nodes = column > 0 ? row + 1 : row;
  for (std::size_t r = 1; r <= threshold; ++r)
    f.edges.push_back({by_rank[r].first, by_rank[r].second, -static_cast<double>(r), -static_cast<double>(r)});
  return f;
}
}  // namespace

int main(int argc, char** argv) {
  std::string bars_path, ranks_path;
  std::size_t threshold = 0;
  critplex::homology::Options options;
  for (int i = 1; i + 1 < argc; i += 2) {
    const std::string flag = argv[i], value = argv[i + 1];
    if (flag == "--ranks") ranks_path = value;
    else if (flag == "--threshold") threshold = std::stoul(value);
    else if (flag == "--dim") options.max_dimension = std::stoi(value);
    else if (flag == "--threads") options.threads = std::stoi(value);
    else if (flag == "--bars") bars_path = value;
    else {
      std::cerr << "unknown option " << flag << "\n";
      return 2;
    }
  }
  try {
    const auto start = std::chrono::steady_clock::now();
    if (ranks_path.empty() || threshold == 0) {
      std::cerr << "usage: bench_homology --ranks FILE --threshold M --dim K [--threads T] [--bars FILE]\n";
      return 2;
    }
    const critplex::filtration::Filtration f = read_ranks(ranks_path, threshold);
    critplex::filtration::GridSpec spec;
    const auto grid = critplex::filtration::make_grid(f, spec);
    const auto result = critplex::homology::compute(f, grid, options, {});
    const double seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
    std::printf("seconds %.4f\nedges %zu\n", seconds, f.edges.size());
    std::vector<std::size_t> counts(static_cast<std::size_t>(options.max_dimension + 1), 0);
    for (const auto& b : result.bars) ++counts[static_cast<std::size_t>(b.dimension)];
    for (std::size_t k = 0; k < counts.size(); ++k) std::printf("bars_%zu %zu\n", k, counts[k]);
    if (!bars_path.empty()) {
      std::ofstream out(bars_path);
      for (const auto& b : result.bars) {
        out << b.dimension << ' ' << b.birth_rank << ' ';
        if (b.essential) out << "inf\n";
        else out << b.death_rank << '\n';
      }
    }
  } catch (const std::exception& e) {
    std::cerr << "bench_homology: " << e.what() << "\n";
    return 1;
  }
  return 0;
}
