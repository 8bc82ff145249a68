// Exact integers for clique counts and Euler characteristics. Counts are kept in
// 128 bits; every narrowing is checked so nothing ever wraps silently.
#pragma once

#include <cstdint>
#include <string>

#include "base/error.hpp"

namespace critplex {

__extension__ typedef __int128 int128;
__extension__ typedef unsigned __int128 uint128;

// Exact decimal text of a 128-bit value (JSON carries counts as such strings).
std::string to_decimal(int128 value);
std::string to_decimal(uint128 value);
// Parses what to_decimal wrote; throws ErrorKind::parse on bad text or overflow.
int128 int128_from_decimal(const std::string& text);

// Adds with an overflow check that fails loudly (ErrorKind::overflow).
inline int128 checked_add(int128 a, int128 b, const char* what) {
  int128 r;
  if (__builtin_add_overflow(a, b, &r)) fail(ErrorKind::overflow, std::string(what) + ": exceeds 128-bit range");
  return r;
}
inline int128 checked_mul(int128 a, int128 b, const char* what) {
  int128 r;
  if (__builtin_mul_overflow(a, b, &r)) fail(ErrorKind::overflow, std::string(what) + ": exceeds 128-bit range");
  return r;
}

// True when the value fits a signed 64-bit integer.
inline bool fits_int64(int128 v) { return v >= INT64_MIN && v <= INT64_MAX; }
// Nearest double (counts above 2^53 lose their low digits; the decimal text does not).
inline double to_double(int128 v) { return static_cast<double>(v); }

}  // namespace critplex
