#include "transitions/from_sweep.hpp"

#include <cmath>
#include <cstdlib>

#include "io/files.hpp"
#include "transitions/transitions.hpp"

namespace critplex::transitions {

Curves gather(const std::vector<filtration::GridPoint>& grid, const cliques::GridCounts* counts,
              const curvature::OnGrid* curvature, const std::vector<std::string>& columns,
              const std::vector<std::vector<std::string>>& rows) {
  Curves cv;
  const std::size_t n = grid.size();
  for (const auto& p : grid) cv.density.push_back(p.density);
  if (counts != nullptr) {
    cv.chi.assign(n, std::nan(""));
    cv.chi_exact.assign(n, "NA");
    for (std::size_t g = 0; g < n && g < counts->complete_points && g < counts->chi.size(); ++g) {
      cv.chi[g] = to_double(counts->chi[g]);  // sign and zero are exact; the magnitude is only for interpolation
      cv.chi_exact[g] = to_decimal(counts->chi[g]);
    }
  }
  std::vector<std::size_t> betti_columns;
  for (std::size_t k = 0;; ++k) {
    std::size_t found = columns.size();
    for (std::size_t c = 0; c < columns.size(); ++c)
      if (columns[c] == "betti_" + std::to_string(k)) found = c;
    if (found == columns.size()) break;
    betti_columns.push_back(found);
  }
  if (!betti_columns.empty()) {
    cv.betti.assign(n, std::vector<double>(betti_columns.size(), std::nan("")));
    for (std::size_t g = 0; g < n && g < rows.size(); ++g)
      for (std::size_t k = 0; k < betti_columns.size(); ++k) {
        const std::string& cell = rows[g][betti_columns[k]];
        char* end = nullptr;
        const double v = std::strtod(cell.c_str(), &end);
        if (!cell.empty() && end != nullptr && *end == '\0') cv.betti[g][k] = v;
      }
  }
  if (curvature != nullptr) {
    const double nan = std::nan("");
    for (const auto& p : curvature->points) {
      cv.kappa_mean.push_back(p.computed ? p.node.mean : nan);
      cv.kappa_sd.push_back(p.computed ? p.node.sd : nan);
      cv.kappa_skewness.push_back(p.computed ? p.node.skewness : nan);
      cv.kappa_kurtosis.push_back(p.computed ? p.node.kurtosis : nan);
      cv.forman_mean.push_back(p.forman_computed ? p.forman.mean : nan);
    }
  }
  return cv;
}

void add_columns(const Curves& cv, std::vector<std::string>& columns, std::vector<std::vector<std::string>>& rows) {
  if (cv.chi.size() != rows.size()) return;
  columns.push_back("log_abs_chi");
  const std::vector<double> l = log_abs(cv.chi);
  for (std::size_t g = 0; g < rows.size(); ++g) rows[g].push_back(io::format_double(l[g]));
}

}  // namespace critplex::transitions
