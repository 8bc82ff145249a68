// Seeded random numbers whose sequence is the same on every platform.
// std::uniform_int_distribution, std::normal_distribution and std::shuffle are
// implementation-defined, so results would differ between standard libraries; these
// helpers use only the raw std::mt19937_64 output, which the standard fixes.
#pragma once

#include <cmath>
#include <cstdint>
#include <random>
#include <vector>

namespace critplex {

// The output function of splitmix64 (Steele, Lea & Flood 2014): a well-mixed 64-bit
// value from x.
constexpr std::uint64_t mix64(std::uint64_t x) {
  x = (x ^ (x >> 30)) * 0xbf58476d1ce4e5b9ULL;
  x = (x ^ (x >> 27)) * 0x94d049bb133111ebULL;
  return x ^ (x >> 31);
}

// One step of splitmix64: the state advanced by the golden-ratio increment, then mixed.
constexpr std::uint64_t splitmix64(std::uint64_t x) { return mix64(x + 0x9e3779b97f4a7c15ULL); }

// Independent, reproducible seed of stream `stream` derived from `seed` (e.g. the j-th
// null draw): the splitmix64 state after `stream` steps from `seed`, mixed.
constexpr std::uint64_t derived_seed(std::uint64_t seed, std::uint64_t stream) {
  return mix64(seed + 0x9e3779b97f4a7c15ULL * stream);
}

class Random {
 public:
  explicit Random(std::uint64_t seed) : engine_(seed) {}

  // Uniform integer in [0, n), n >= 1, by rejection (no modulo bias).
  std::uint64_t below(std::uint64_t n) {
    const std::uint64_t limit = UINT64_MAX - UINT64_MAX % n;
    std::uint64_t x;
    do x = engine_(); while (x >= limit);
    return x % n;
  }
  // Uniform double in [0, 1) with 53 random bits.
  double uniform() { return static_cast<double>(engine_() >> 11) * 0x1.0p-53; }
  // Standard normal by the polar Box-Muller method (Marsaglia & Bray 1964).
  double normal() {
    if (has_spare_) {
      has_spare_ = false;
      return spare_;
    }
    double u, v, s;
    do {
      u = 2.0 * uniform() - 1.0;
      v = 2.0 * uniform() - 1.0;
      s = u * u + v * v;
    } while (s >= 1.0 || s == 0.0);
    const double factor = std::sqrt(-2.0 * std::log(s) / s);
    spare_ = v * factor;
    has_spare_ = true;
    return u * factor;
  }
  // Fisher-Yates shuffle.
  template <class T>
  void shuffle(std::vector<T>& items) {
    for (std::size_t i = items.size(); i > 1; --i) {
      const std::size_t j = static_cast<std::size_t>(below(i));
      std::swap(items[i - 1], items[j]);
    }
  }
  std::uint64_t next() { return engine_(); }

 private:
  std::mt19937_64 engine_;
  double spare_ = 0.0;
  bool has_spare_ = false;
};

}  // namespace critplex
