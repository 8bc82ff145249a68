#include "series/series.hpp"

#include <cmath>

#include "base/error.hpp"

namespace critplex::series {

std::vector<std::string> default_names(std::size_t n) {
  std::vector<std::string> names;
  names.reserve(n);
  for (std::size_t i = 0; i < n; ++i) names.push_back("R" + std::to_string(i + 1));
  return names;
}

static std::string origin(const Series& s) { return s.source.empty() ? std::string("time series") : s.source; }

void validate(const Series& s) {
  if (s.frames() < 3)
    fail(ErrorKind::data, origin(s) + ": needs at least 3 time points, got " + std::to_string(s.frames()));
  if (s.regions() < 2)
    fail(ErrorKind::data, origin(s) + ": needs at least 2 regions, got " + std::to_string(s.regions()));
  if (static_cast<Eigen::Index>(s.names.size()) != s.regions())
    fail(ErrorKind::internal, origin(s) + ": region names do not match the columns");
  for (Eigen::Index j = 0; j < s.regions(); ++j) {
    const auto col = s.values.col(j);
    for (Eigen::Index t = 0; t < s.frames(); ++t)
      if (!std::isfinite(col(t)))
        fail(ErrorKind::data, origin(s) + ": region '" + s.names[j] + "' (column " + std::to_string(j + 1) +
                                  ") has a " + (std::isnan(col(t)) ? "NaN" : "infinite") + " value at time point " +
                                  std::to_string(t + 1));
    const double first = col(0);
    bool constant = true;
    for (Eigen::Index t = 1; t < s.frames() && constant; ++t) constant = col(t) == first;
    if (constant)
      fail(ErrorKind::data, origin(s) + ": region '" + s.names[j] + "' (column " + std::to_string(j + 1) +
                                ") is constant (zero variance); remove it or check the extraction");
  }
}

}  // namespace critplex::series
