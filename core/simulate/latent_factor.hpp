// A brain-like generator: regional time series driven by a few slow shared factors.
// Each region belongs to one module and reads that module's factor plus a weaker
// global factor, with its own noise. Factors and noise are AR(1) processes, so the
// series are autocorrelated like resting-state signals, and the correlation matrix
// is strongly modular and highly clustered: the regime where clique counts explode.
// Used by the demo and the benchmarks; it is invented data, never a test reference.
#pragma once

#include <cstdint>
#include <vector>

#include "series/series.hpp"

namespace critplex::simulate {

struct LatentFactorOptions {
  std::size_t regions = 200;
  std::size_t frames = 1200;
  std::size_t modules = 7;
  double factor_ar = 0.9;        // AR(1) coefficient of the module and global factors
  double noise_ar = 0.3;         // AR(1) coefficient of each region's own noise
  double loading_min = 0.35;     // module loadings are uniform in [loading_min, loading_max]
  double loading_max = 0.95;
  double global_loading = 0.25;  // every region's loading on the global factor
  std::uint64_t seed = 1;
};

struct LatentFactorData {
  series::Series series;              // frames x regions, unit-variance components
  std::vector<std::size_t> module;    // module of each region (regions are shuffled)
  std::vector<double> loading;        // each region's module loading
};

// Deterministic for a given seed (own normal sampler, so the same on every platform).
LatentFactorData latent_factor(const LatentFactorOptions& options);

}  // namespace critplex::simulate
