// Gathers a sweep's curves (exact chi from the clique engine, Betti columns from the
// homology engine, curvature moments) into transitions::Curves, and adds log|chi|.
#pragma once

#include <string>
#include <vector>

#include "cliques/counts.hpp"
#include "curvature/on_grid.hpp"
#include "filtration/filtration.hpp"
#include "transitions/report.hpp"

namespace critplex::transitions {

// counts and curvature may be null. Betti curves are read from the columns betti_0,
// betti_1, ... ("NA" cells are unknown). chi is known up to counts->complete_points.
Curves gather(const std::vector<filtration::GridPoint>& grid, const cliques::GridCounts* counts,
              const curvature::OnGrid* curvature, const std::vector<std::string>& columns,
              const std::vector<std::vector<std::string>>& rows);

// Adds the column log_abs_chi (natural log; "-Infinity" where chi = 0, NaN where unknown).
void add_columns(const Curves& curves, std::vector<std::string>& columns, std::vector<std::vector<std::string>>& rows);

}  // namespace critplex::transitions
