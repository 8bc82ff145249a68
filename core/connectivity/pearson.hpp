#pragma once

#include "connectivity/matrix.hpp"
#include "series/series.hpp"

namespace critplex::connectivity {

// Pearson correlation of the columns of values (T x N), unit diagonal, exactly symmetric.
Eigen::MatrixXd pearson(const Eigen::MatrixXd& values);

// Fisher z = atanh(r) off the diagonal; the diagonal (r = 1) is set to 0 since
// atanh(1) is infinite and a node is never its own edge.
Eigen::MatrixXd fisher_z(const Eigen::MatrixXd& r);

}  // namespace critplex::connectivity
