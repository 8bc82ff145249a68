// The one place where results become text. Every TSV the library writes spells a
// missing value `n/a` (as the neuroimaging data standards do) and every JSON document
// `null`; numbers are written as the shortest text that reads back to the same double,
// exact integers in full decimal.
#pragma once

#include <string>
#include <vector>

#include "base/exact.hpp"
#include "base/options.hpp"

namespace critplex::output {

// The missing-value token of every TSV output.
inline constexpr const char* missing = "n/a";

std::string cell(double x);        // n/a for NaN; inf and -inf for infinities (values, not missing)
std::string cell(int128 x);        // exact decimal
std::string cell(long long x);
std::string cell(std::size_t x);
std::string cell(bool x);          // true / false
inline std::string cell(const std::string& x) { return x; }

Json number_or_null(double x);     // null for NaN and infinities (JSON has no infinity)
Json numbers_or_null(const std::vector<double>& x);

// A TSV table: a header row, then rows of cells; cells must not contain tabs or newlines.
class Tsv {
 public:
  explicit Tsv(std::vector<std::string> header);
  void add(std::vector<std::string> row);  // ErrorKind::internal when the width differs
  std::string text() const;

 private:
  std::vector<std::string> header_;
  std::vector<std::vector<std::string>> rows_;
};

}  // namespace critplex::output
