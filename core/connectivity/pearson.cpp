#include "connectivity/pearson.hpp"

#include <cmath>

namespace critplex::connectivity {

Eigen::MatrixXd pearson(const Eigen::MatrixXd& values) {
  // Each column first brought to a largest magnitude in [1, 2) by a power of two (exact,
  // and the correlation does not depend on it) so that 1e160 or 1e-170 neither overflow nor
  // underflow; then centred (two passes: mean, then deviations) and scaled to unit norm:
  // the Gram matrix is the correlation.
  Eigen::MatrixXd z = values;
  for (Eigen::Index j = 0; j < z.cols(); ++j) {
    const double m = z.col(j).cwiseAbs().maxCoeff();
    if (m > 0 && std::isfinite(m)) z.col(j) *= std::ldexp(1.0, -std::ilogb(m));
  }
  z = z.rowwise() - z.colwise().mean();
  Eigen::VectorXd norms = z.colwise().norm();
  for (Eigen::Index j = 0; j < z.cols(); ++j) z.col(j) /= norms(j);
  Eigen::MatrixXd r(z.cols(), z.cols());
  r.setZero();
  r.selfadjointView<Eigen::Lower>().rankUpdate(z.transpose());
  r = r.selfadjointView<Eigen::Lower>();
  for (Eigen::Index j = 0; j < r.cols(); ++j) {
    r(j, j) = 1.0;
    for (Eigen::Index i = j + 1; i < r.rows(); ++i) {
      double x = std::fmax(-1.0, std::fmin(1.0, r(i, j)));
      r(i, j) = x;
      r(j, i) = x;
    }
  }
  return r;
}

Eigen::MatrixXd fisher_z(const Eigen::MatrixXd& r) {
  Eigen::MatrixXd z(r.rows(), r.cols());
  for (Eigen::Index j = 0; j < r.cols(); ++j)
    for (Eigen::Index i = 0; i < r.rows(); ++i) z(i, j) = i == j ? 0.0 : std::atanh(r(i, j));
  return z;
}

}  // namespace critplex::connectivity
