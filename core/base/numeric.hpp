// Small numeric helpers shared by every stage: binary128 floating point, gcd and lcm of
// exact integers, Pascal's triangle, and the type-7 quantile. Each lives here once.
#pragma once

#include <algorithm>
#include <cmath>
#include <cstddef>
#include <limits>
#include <optional>
#include <type_traits>
#include <vector>

#include "base/exact.hpp"

namespace critplex {

// IEEE binary128 (GCC's __float128, libquadmath): 113-bit significand.
__extension__ typedef __float128 quad;

// Greatest common divisor of |a| and |b|.
inline int128 gcd(int128 a, int128 b) {
  if (a < 0) a = -a;
  if (b < 0) b = -b;
  while (b != 0) {
    const int128 t = a % b;
    a = b;
    b = t;
  }
  return a;
}

// lcm(1, 2, ..., n), or nothing when it does not fit a signed 128-bit integer (n > 88).
inline std::optional<int128> lcm_up_to(std::size_t n) {
  int128 l = 1;
  for (std::size_t d = 2; d <= n; ++d) {
    int128 next;
    if (__builtin_mul_overflow(l / gcd(l, static_cast<int128>(d)), static_cast<int128>(d), &next)) return std::nullopt;
    l = next;
  }
  return l;
}

// Binomial coefficients C(n, k) for n up to a bound that can grow, k up to k_max. An
// entry too large for Int holds BinomialTable::too_large (the type's maximum), and so
// does every entry computed from it, so a caller tests one value, never a wrapped one.
// Stored k-major (all n for k = 0, then k = 1, ...), the order the combinatorial number
// system reads them in.
template <class Int>
class BinomialTable {
 public:
  static constexpr Int too_large = std::numeric_limits<Int>::max();

  BinomialTable(std::size_t n_max, std::size_t k_max) : k_max_(k_max) { grow(n_max); }

  // C(n, k), 0 when k > n (stored, so no branch on the hot path). n must be at most
  // n_max() and k at most k_max().
  Int operator()(std::size_t n, std::size_t k) const { return table_[k * stride_ + n]; }
  std::size_t n_max() const { return stride_ - 1; }
  std::size_t k_max() const { return k_max_; }

  // Makes rows up to n_max available (keeps the existing ones).
  void grow(std::size_t n_max) {
    if (n_max + 1 <= stride_) return;
    const std::size_t stride = n_max + 1;
    std::vector<Int> table((k_max_ + 1) * stride, Int{0});
    for (std::size_t n = 0; n <= n_max; ++n) table[n] = 1;
    for (std::size_t k = 1; k <= k_max_; ++k)
      for (std::size_t n = k; n <= n_max; ++n) {
        const Int a = table[(k - 1) * stride + n - 1], b = n - 1 >= k ? table[k * stride + n - 1] : Int{0};
        Int sum;
        table[k * stride + n] = a == too_large || b == too_large || __builtin_add_overflow(a, b, &sum) ? too_large : sum;
      }
    table_ = std::move(table);
    stride_ = stride;
  }

 private:
  std::size_t k_max_ = 0;
  std::size_t stride_ = 0;
  std::vector<Int> table_;
};

// Quantile of n sorted values by linear interpolation between order statistics
// (Hyndman & Fan 1996, type 7; numpy's default "linear" method), q in [0, 1]; the k-th
// smallest value is read by at(k). The interpolation is written as numpy writes it
// (from the nearer end), so results agree with numpy.percentile to the last bit.
// NaN for n = 0.
template <class At>
double quantile_type7(std::size_t n, double q, const At& at) {
  if (n == 0) return std::numeric_limits<double>::quiet_NaN();
  const double h = q * static_cast<double>(n - 1);
  const auto lo = static_cast<std::size_t>(std::floor(h));
  const std::size_t hi = std::min(lo + 1, n - 1);
  const double w = h - static_cast<double>(lo);
  const double a = at(lo), b = hi == lo ? a : at(hi);
  return w >= 0.5 ? b - (b - a) * (1.0 - w) : a + (b - a) * w;
}

inline double quantile_sorted(const std::vector<double>& sorted, double q) {
  return quantile_type7(sorted.size(), q, [&](std::size_t k) { return sorted[k]; });
}

}  // namespace critplex
