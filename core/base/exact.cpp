#include "base/exact.hpp"

#include <algorithm>

namespace critplex {

std::string to_decimal(uint128 value) {
  if (value == 0) return "0";
  std::string s;
  while (value > 0) {
    s.push_back(static_cast<char>('0' + static_cast<int>(value % 10)));
    value /= 10;
  }
  std::reverse(s.begin(), s.end());
  return s;
}

std::string to_decimal(int128 value) {
  if (value >= 0) return to_decimal(static_cast<uint128>(value));
  // Negate in unsigned arithmetic so the most negative value does not overflow.
  return "-" + to_decimal(static_cast<uint128>(0) - static_cast<uint128>(value));
}

int128 int128_from_decimal(const std::string& text) {
  std::size_t i = 0;
  bool negative = false;
  if (!text.empty() && (text[0] == '-' || text[0] == '+')) {
    negative = text[0] == '-';
    i = 1;
  }
  if (i >= text.size()) fail(ErrorKind::parse, "not an integer: \"" + text + "\"");
  int128 v = 0;
  for (; i < text.size(); ++i) {
    char c = text[i];
    if (c < '0' || c > '9') fail(ErrorKind::parse, "not an integer: \"" + text + "\"");
    int digit = c - '0';
    if (__builtin_mul_overflow(v, static_cast<int128>(10), &v) ||
        __builtin_add_overflow(v, static_cast<int128>(negative ? -digit : digit), &v))
      fail(ErrorKind::overflow, "integer exceeds 128-bit range: \"" + text + "\"");
  }
  return v;
}

}  // namespace critplex
