// A 256-bit two's-complement integer for the curvature sums of the clique engine.
// Additions wrap modulo 2^256, so a sum comes out the same in any order and any split
// over threads; the sums it holds (fewer than 2^64 terms of at most 2^127 each) stay far
// inside its range, so no true value is ever lost.
#pragma once

#include "base/exact.hpp"

namespace critplex::cliques {

struct Int256 {
  uint128 lo = 0;
  uint128 hi = 0;  // the top bit is the sign

  static Int256 of(int128 x) { return Int256{static_cast<uint128>(x), x < 0 ? ~uint128{0} : uint128{0}}; }

  Int256& operator+=(int128 x) {
    const uint128 sum = lo + static_cast<uint128>(x);
    hi += (sum < lo ? uint128{1} : uint128{0}) + (x < 0 ? ~uint128{0} : uint128{0});
    lo = sum;
    return *this;
  }
  Int256& operator+=(const Int256& b) {
    const uint128 sum = lo + b.lo;
    hi += b.hi + (sum < lo ? uint128{1} : uint128{0});
    lo = sum;
    return *this;
  }
  Int256 operator-() const {
    Int256 r{~lo, ~hi};
    r += int128{1};
    return r;
  }
  bool operator==(const Int256&) const = default;
  bool negative() const { return (hi >> 127) != 0; }
  // True when the value fits a signed 128-bit integer (then it is static_cast<int128>(lo)).
  bool fits_int128() const { return hi == (static_cast<int128>(lo) < 0 ? ~uint128{0} : uint128{0}); }

  // The exact product of two 128-bit integers.
  static Int256 product(int128 a, int128 b) {
    const uint128 ua = a < 0 ? uint128{0} - static_cast<uint128>(a) : static_cast<uint128>(a);
    const uint128 ub = b < 0 ? uint128{0} - static_cast<uint128>(b) : static_cast<uint128>(b);
    const uint128 mask = ~std::uint64_t{0};
    const uint128 a0 = ua & mask, a1 = ua >> 64, b0 = ub & mask, b1 = ub >> 64;
    const uint128 p00 = a0 * b0, p01 = a0 * b1, p10 = a1 * b0, p11 = a1 * b1;
    const uint128 mid = (p00 >> 64) + (p01 & mask) + (p10 & mask);  // < 3 * 2^64
    Int256 r{(p00 & mask) | (mid << 64), p11 + (p01 >> 64) + (p10 >> 64) + (mid >> 64)};
    return (a < 0) != (b < 0) ? -r : r;
  }

  // value / denominator (> 0) as a double, through binary128 (113-bit) arithmetic.
  double ratio(int128 denominator) const {
    __extension__ typedef __float128 quad;
    if (fits_int128()) return static_cast<double>(static_cast<quad>(static_cast<int128>(lo)) / static_cast<quad>(denominator));
    const Int256 m = negative() ? -*this : *this;
    const quad two64 = static_cast<quad>(uint128{1} << 64);
    const quad q = (static_cast<quad>(m.hi) * two64 * two64 + static_cast<quad>(m.lo)) / static_cast<quad>(denominator);
    return static_cast<double>(negative() ? -q : q);
  }
};

}  // namespace critplex::cliques
