#include "output/format.hpp"

#include <cmath>

#include "base/error.hpp"
#include "io/files.hpp"

namespace critplex::output {

std::string cell(double x) {
  if (std::isnan(x)) return missing;
  if (std::isinf(x)) return x > 0 ? "inf" : "-inf";
  return io::format_double(x);
}
std::string cell(int128 x) { return to_decimal(x); }
std::string cell(long long x) { return std::to_string(x); }
std::string cell(std::size_t x) { return std::to_string(x); }
std::string cell(bool x) { return x ? "true" : "false"; }

Json number_or_null(double x) { return std::isfinite(x) ? Json(x) : Json(nullptr); }

Json numbers_or_null(const std::vector<double>& x) {
  Json a = Json::array();
  for (double v : x) a.push_back(number_or_null(v));
  return a;
}

Tsv::Tsv(std::vector<std::string> header) : header_(std::move(header)) {}

void Tsv::add(std::vector<std::string> row) {
  if (row.size() != header_.size())
    fail(ErrorKind::internal, "TSV row of " + std::to_string(row.size()) + " cells under a header of " +
                                  std::to_string(header_.size()));
  rows_.push_back(std::move(row));
}

std::string Tsv::text() const {
  std::string s;
  auto line = [&](const std::vector<std::string>& cells) {
    for (std::size_t c = 0; c < cells.size(); ++c) {
      if (c) s += '\t';
      s += cells[c];
    }
    s += '\n';
  };
  line(header_);
  for (const auto& row : rows_) line(row);
  return s;
}

}  // namespace critplex::output
