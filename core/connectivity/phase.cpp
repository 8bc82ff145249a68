#include "connectivity/phase.hpp"

#include <algorithm>
#include <cmath>

#include "base/error.hpp"
#include "connectivity/pearson.hpp"

namespace critplex::connectivity {

namespace {

Eigen::MatrixXd symmetric_from_lower(Eigen::MatrixXd m) {
  for (Eigen::Index j = 0; j < m.cols(); ++j) {
    m(j, j) = 1.0;
    for (Eigen::Index i = j + 1; i < m.rows(); ++i) m(j, i) = m(i, j);
  }
  return m;
}

// Lag indices from the imaginary parts of the cross products, Im(z_i conj z_j) =
// y_i x_j - x_i y_j with z = x + i y. Time runs in blocks that stay in cache while every
// pair visits them (pair-by-pair over whole columns is bound by memory traffic); within a
// block real and imaginary parts sit in separate contiguous columns and Eigen's vectorised
// reductions do the sums (plain loops would not vectorise: floating-point sums are not
// reassociated without -ffast-math). The order of the sums is fixed, so results are too.
Eigen::MatrixXd lag_indices(const Eigen::MatrixXcd& z, bool weighted) {
  const Eigen::Index T = z.rows(), N = z.cols();
  const Eigen::Index block = std::min<Eigen::Index>(1024, T);
  Eigen::ArrayXXd re(block, N), im(block, N);
  Eigen::ArrayXd w(block);
  Eigen::MatrixXd sum = Eigen::MatrixXd::Zero(N, N), sum_abs = Eigen::MatrixXd::Zero(N, N);
  Eigen::Matrix<Eigen::Index, Eigen::Dynamic, Eigen::Dynamic> sign_sum =
      Eigen::Matrix<Eigen::Index, Eigen::Dynamic, Eigen::Dynamic>::Zero(N, N);
  for (Eigen::Index t0 = 0; t0 < T; t0 += block) {
    const Eigen::Index n = std::min(block, T - t0);
    re.topRows(n) = z.middleRows(t0, n).real();
    im.topRows(n) = z.middleRows(t0, n).imag();
    for (Eigen::Index j = 0; j < N; ++j) {
      for (Eigen::Index i = j + 1; i < N; ++i) {
        auto v = w.head(n);
        v = im.col(i).head(n) * re.col(j).head(n) - re.col(i).head(n) * im.col(j).head(n);
        if (weighted) {
          sum(i, j) += v.sum();
          sum_abs(i, j) += v.abs().sum();
        } else {
          sign_sum(i, j) += (v > 0.0).count() - (v < 0.0).count();
        }
      }
    }
  }
  Eigen::MatrixXd out(N, N);
  for (Eigen::Index j = 0; j < N; ++j)
    for (Eigen::Index i = j + 1; i < N; ++i)
      out(i, j) = weighted ? (sum_abs(i, j) > 0.0 ? std::fabs(sum(i, j)) / sum_abs(i, j) : 0.0)
                           : static_cast<double>(sign_sum(i, j) < 0 ? -sign_sum(i, j) : sign_sum(i, j)) /
                                 static_cast<double>(T);
  return symmetric_from_lower(out);
}

Eigen::MatrixXd locking_values(const Eigen::MatrixXcd& z) {
  const Eigen::Index T = z.rows();
  Eigen::MatrixXcd u(z.rows(), z.cols());
  for (Eigen::Index j = 0; j < z.cols(); ++j)
    for (Eigen::Index t = 0; t < T; ++t) {
      const double a = std::abs(z(t, j));
      // A zero amplitude has no phase; it adds nothing to the sum but still counts in T.
      u(t, j) = a > 0.0 ? z(t, j) / a : std::complex<double>(0.0, 0.0);
    }
  // sum_t u_i conj(u_j) for every pair is one complex matrix product.
  const Eigen::MatrixXcd g = u.transpose() * u.conjugate();
  Eigen::MatrixXd out(z.cols(), z.cols());
  for (Eigen::Index j = 0; j < z.cols(); ++j)
    for (Eigen::Index i = j + 1; i < z.cols(); ++i)
      out(i, j) = std::min(1.0, std::abs(g(i, j)) / static_cast<double>(T));
  return symmetric_from_lower(out);
}

double correlation(const Eigen::VectorXd& a, const Eigen::VectorXd& b) {
  const Eigen::VectorXd ca = a.array() - a.mean(), cb = b.array() - b.mean();
  const double den = std::sqrt(ca.squaredNorm() * cb.squaredNorm());
  if (!(den > 0)) return 0.0;
  return std::clamp(ca.dot(cb) / den, -1.0, 1.0);
}

Eigen::MatrixXd orthogonalised_envelopes(const Eigen::MatrixXcd& z) {
  const Eigen::Index T = z.rows(), N = z.cols();
  const Eigen::MatrixXd amplitude = z.cwiseAbs();
  Eigen::MatrixXd out(N, N);
  Eigen::VectorXd env(T);
  // Envelope of z_b orthogonalised on z_a, correlated with the envelope of z_a.
  auto directed = [&](Eigen::Index a, Eigen::Index b) {
    for (Eigen::Index t = 0; t < T; ++t) {
      const double amp = amplitude(t, a);
      env(t) = amp > 0.0 ? std::fabs((z(t, b) * std::conj(z(t, a))).imag() / amp) : 0.0;
    }
    return correlation(amplitude.col(a), env);
  };
  for (Eigen::Index j = 0; j < N; ++j)
    for (Eigen::Index i = j + 1; i < N; ++i) out(i, j) = 0.5 * (directed(i, j) + directed(j, i));
  return symmetric_from_lower(out);
}

}  // namespace

Eigen::MatrixXd phase_coupling(const Eigen::MatrixXcd& analytic, PhaseMeasure measure) {
  switch (measure) {
    case PhaseMeasure::locking_value: return locking_values(analytic);
    case PhaseMeasure::lag_index: return lag_indices(analytic, false);
    case PhaseMeasure::weighted_lag_index: return lag_indices(analytic, true);
    case PhaseMeasure::envelope: {
      const Eigen::MatrixXd amplitude = analytic.cwiseAbs();
      for (Eigen::Index j = 0; j < amplitude.cols(); ++j)
        if (!(amplitude.col(j).maxCoeff() > amplitude.col(j).minCoeff()))
          fail(ErrorKind::data, "the amplitude envelope of region " + std::to_string(j + 1) +
                                    " is constant, so its correlation is undefined");
      return pearson(amplitude);
    }
    case PhaseMeasure::envelope_orthogonalised: return orthogonalised_envelopes(analytic);
  }
  fail(ErrorKind::internal, "unknown phase measure");
}

}  // namespace critplex::connectivity
