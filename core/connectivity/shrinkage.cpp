#include "connectivity/shrinkage.hpp"

#include <Eigen/Cholesky>

#include <algorithm>
#include <cmath>

#include "base/error.hpp"

namespace critplex::connectivity {

namespace {

Eigen::MatrixXd centred(const Eigen::MatrixXd& values) { return values.rowwise() - values.colwise().mean(); }

// X^T X through a rank update of the lower triangle (half the work of a full product).
Eigen::MatrixXd gram(const Eigen::MatrixXd& x) {
  Eigen::MatrixXd g = Eigen::MatrixXd::Zero(x.cols(), x.cols());
  g.selfadjointView<Eigen::Lower>().rankUpdate(x.transpose());
  g = g.selfadjointView<Eigen::Lower>();
  return g;
}

}  // namespace

Shrunk ledoit_wolf(const Eigen::MatrixXd& values) {
  const Eigen::MatrixXd x = centred(values);
  const double n = static_cast<double>(x.rows()), p = static_cast<double>(x.cols());
  Eigen::MatrixXd s = gram(x) / n;
  const double mu = s.trace() / p;
  // sum_k ||x_k||^4 equals the sum of all entries of (X.^2)^T (X.^2), the term sklearn
  // forms with a second matrix product; here it costs one pass over the data.
  double fourth = 0.0;
  for (Eigen::Index t = 0; t < x.rows(); ++t) {
    const double r = x.row(t).squaredNorm();
    fourth += r * r;
  }
  const double s_norm2 = s.squaredNorm();
  double beta = (fourth / n - s_norm2) / (p * n);
  const double delta = (s_norm2 - 2.0 * mu * s.trace() + p * mu * mu) / p;
  beta = std::min(beta, delta);
  const double intensity = beta == 0.0 ? 0.0 : beta / delta;
  Shrunk out;
  out.intensity = intensity;
  out.matrix = (1.0 - intensity) * s;
  out.matrix.diagonal().array() += intensity * mu;
  return out;
}

Shrunk oracle_approximating(const Eigen::MatrixXd& values) {
  const Eigen::MatrixXd x = centred(values);
  const double n = static_cast<double>(x.rows()), p = static_cast<double>(x.cols());
  Eigen::MatrixXd s = gram(x) / n;
  const double mu = s.trace() / p;
  const double alpha = s.squaredNorm() / (p * p);
  const double num = alpha + mu * mu;
  const double den = (n + 1.0) * (alpha - mu * mu / p);
  const double intensity = den == 0.0 ? 1.0 : std::min(num / den, 1.0);
  Shrunk out;
  out.intensity = intensity;
  out.matrix = (1.0 - intensity) * s;
  out.matrix.diagonal().array() += intensity * mu;
  return out;
}

Shrunk schafer_strimmer(const Eigen::MatrixXd& values) {
  Eigen::MatrixXd x = centred(values);
  const Eigen::Index T = x.rows(), N = x.cols();
  const double n = static_cast<double>(T);
  for (Eigen::Index j = 0; j < N; ++j) x.col(j) /= std::sqrt(x.col(j).squaredNorm() / (n - 1.0));
  // Mean products E2R = X^T X / n (so r = n/(n-1) E2R) and mean squared products
  // ER2 = (X.^2)^T (X.^2) / n; lambda = sum_{i!=j} Var(r_ij) / sum_{i!=j} r_ij^2.
  const Eigen::MatrixXd e2r = gram(x) / n;
  const Eigen::MatrixXd x2 = x.array().square().matrix();
  const Eigen::MatrixXd er2 = gram(x2) / n;
  const double s_e2r = e2r.squaredNorm() - e2r.diagonal().squaredNorm();
  const double s_er2 = er2.sum() - er2.diagonal().sum();
  double lambda = s_e2r == 0.0 ? 1.0 : (s_er2 - s_e2r) / s_e2r / (n - 1.0);
  lambda = std::clamp(lambda, 0.0, 1.0);
  Shrunk out;
  out.intensity = lambda;
  out.matrix = (1.0 - lambda) * (e2r * (n / (n - 1.0)));
  out.matrix.diagonal().setOnes();
  for (Eigen::Index j = 0; j < N; ++j)
    for (Eigen::Index i = j + 1; i < N; ++i) {
      const double v = std::clamp(out.matrix(i, j), -1.0, 1.0);
      out.matrix(i, j) = v;
      out.matrix(j, i) = v;
    }
  return out;
}

Eigen::MatrixXd covariance_to_correlation(const Eigen::MatrixXd& c) {
  const Eigen::VectorXd inv_sd = c.diagonal().array().sqrt().inverse();
  Eigen::MatrixXd r = inv_sd.asDiagonal() * c * inv_sd.asDiagonal();
  for (Eigen::Index j = 0; j < r.cols(); ++j) {
    r(j, j) = 1.0;
    for (Eigen::Index i = j + 1; i < r.rows(); ++i) {
      const double v = std::clamp(0.5 * (r(i, j) + r(j, i)), -1.0, 1.0);
      r(i, j) = v;
      r(j, i) = v;
    }
  }
  return r;
}

Eigen::MatrixXd partial_from(const Eigen::MatrixXd& covariance, const char* hint) {
  Eigen::LLT<Eigen::MatrixXd> llt(covariance);
  if (llt.info() != Eigen::Success)
    fail(ErrorKind::data, std::string("the covariance matrix is not positive definite, so it has no inverse") + hint);
  const Eigen::MatrixXd precision = llt.solve(Eigen::MatrixXd::Identity(covariance.rows(), covariance.cols()));
  Eigen::MatrixXd r(precision.rows(), precision.cols());
  for (Eigen::Index j = 0; j < r.cols(); ++j) {
    r(j, j) = 1.0;
    for (Eigen::Index i = j + 1; i < r.rows(); ++i) {
      const double v = std::clamp(-0.5 * (precision(i, j) + precision(j, i)) /
                                      std::sqrt(precision(i, i) * precision(j, j)), -1.0, 1.0);
      r(i, j) = v;
      r(j, i) = v;
    }
  }
  return r;
}

}  // namespace critplex::connectivity
