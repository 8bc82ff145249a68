// Persistent homology of the clique (flag) complex along the density filtration,
// over Z/2: barcodes in dimensions 0..K and Betti curves on the reporting grid.
//
// The filtration value of a simplex is the rank of its last edge to enter (edge m,
// 0-based in entry order, enters at rank m + 1; vertices are there from rank 0), so
// no rounding ever enters. The computation is persistent cohomology with clearing,
// apparent and emergent pairs, and coboundaries enumerated on the fly from the
// combinatorial number system (de Silva, Morozov & Vejdemo-Johansson 2011; Chen &
// Kerber 2011; Bauer 2021): no boundary matrix is ever stored.
#pragma once

#include <cstddef>
#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "base/exact.hpp"
#include "base/option_schema.hpp"
#include "filtration/filtration.hpp"

namespace critplex::homology {

struct Options {
  int max_dimension = 2;  // bars in dimensions 0..max_dimension
  double max_work = 0;    // budget in cofacets visited; 0 = no limit
  int threads = 0;        // threads for enumerating simplices; 0 = every core
  std::optional<double> max_density;  // the engine's own range (pipeline/sweep.cpp cuts the filtration)
};

// Reads the "homology" section of the sweep options: {"max_dimension", "max_work",
// "threads"}; unknown keys are errors. Its table: option_section().
const OptionSection& option_section();
Options parse_options(const Json& section);

struct Bar {
  int dimension = 0;
  std::size_t birth_rank = 0;  // edges entered when the class is born (0: at the start)
  std::size_t death_rank = 0;  // edges entered when it dies (unused when essential)
  bool essential = false;      // still alive after the last edge of the filtration
};

struct Result {
  int max_dimension = 0;
  // Bars of positive length in rank units (birth_rank < death_rank), sorted by
  // dimension, birth, death; only dimensions 0..complete_dimension.
  std::vector<Bar> bars;
  // betti[g][k]: bars of dimension k alive at grid point g (k = 0..complete_dimension).
  std::vector<std::vector<long long>> betti;
  int complete_dimension = -1;     // every dimension up to this one is exact
  double complete_to_density = 0;  // ... over densities up to this one
  std::string stopped_by;          // empty when complete, else the budget that stopped it
  double work = 0;                 // cofacets visited (the unit of max_work)
};

// Progress in [0, 1]; returning true cancels (ErrorKind::cancelled).
Result compute(const filtration::Filtration& filtration, const std::vector<filtration::GridPoint>& grid,
               const Options& options, const std::function<bool(double)>& progress);

// Number of bars of each dimension 0..dimensions-1 alive after `edges` edges entered.
std::vector<std::vector<long long>> betti_on_grid(const std::vector<Bar>& bars, int dimensions,
                                                  const std::vector<filtration::GridPoint>& grid);

// Density of a rank: after the whole tie group of edge `rank` (as the grid reports).
double rank_density(const filtration::Filtration& filtration, std::size_t rank);


// Euler-Poincare against the clique engine: at each grid point g < complete_points
// whose clique counts show no simplex above the computed dimensions, chi must equal
// sum_k (-1)^k beta_k exactly; a mismatch throws ErrorKind::internal. Returns the
// number of points checked.
std::size_t check_euler_poincare(const Result& result, const std::vector<std::vector<int128>>& counts,
                                 const std::vector<int128>& chi, std::size_t complete_points);

}  // namespace critplex::homology
