#include "series/clean.hpp"

#include <Eigen/QR>

#include <cmath>

#include "base/error.hpp"

namespace critplex::series {

Regression::Regression(Eigen::Index frames, const Eigen::MatrixXd& confounds, int trend_order,
                       const std::vector<bool>& keep)
    : keep_(keep) {
  const Eigen::Index T = frames;
  if (confounds.rows() != T && confounds.cols() > 0)
    fail(ErrorKind::data, "the confounds have " + std::to_string(confounds.rows()) + " rows but the series has " +
                              std::to_string(T) + " frames");
  const Eigen::Index trend = trend_order > 0 ? trend_order : 0;
  const Eigen::Index p = 1 + confounds.cols() + trend;
  design_.resize(T, p);
  design_.col(0).setOnes();
  if (confounds.cols() > 0) design_.middleCols(1, confounds.cols()) = confounds;
  // Trend terms on a centred, scaled time axis in [-1, 1] keep the columns well conditioned.
  for (Eigen::Index k = 1; k <= trend; ++k)
    for (Eigen::Index t = 0; t < T; ++t) {
      const double u = T > 1 ? 2.0 * static_cast<double>(t) / static_cast<double>(T - 1) - 1.0 : 0.0;
      design_(t, confounds.cols() + k) = std::pow(u, static_cast<double>(k));
    }
  const Eigen::MatrixXd fit_design = keep.empty() ? design_ : keep_rows(design_, keep);
  if (fit_design.rows() <= p)
    fail(ErrorKind::data, "confound regression has " + std::to_string(p) + " columns (intercept, " +
                              std::to_string(confounds.cols()) + " confounds, " + std::to_string(trend) +
                              " trend terms) but only " + std::to_string(fit_design.rows()) +
                              " frames to fit them; use fewer confounds");
  Eigen::ColPivHouseholderQR<Eigen::MatrixXd> qr(fit_design);
  if (qr.rank() < p)
    fail(ErrorKind::data, "the confounds are linearly dependent (rank " + std::to_string(qr.rank()) + " of " +
                              std::to_string(p) + " columns including the intercept and trend terms); "
                              "drop duplicated or constant confound columns");
  // beta = P R^-1 Q^T y with a thin Q: two matrix products instead of applying every
  // Householder reflection to every region, and still no squared condition number.
  q_ = qr.householderQ() * Eigen::MatrixXd::Identity(fit_design.rows(), p);
  r_ = qr.matrixR().topLeftCorner(p, p).triangularView<Eigen::Upper>();
  columns_ = qr.colsPermutation();
}

Eigen::MatrixXd Regression::residuals(const Eigen::MatrixXd& values) const {
  if (values.rows() != design_.rows())
    fail(ErrorKind::internal, "regression set up for " + std::to_string(design_.rows()) + " frames, given " +
                                  std::to_string(values.rows()));
  const Eigen::MatrixXd fit_values = keep_.empty() ? values : keep_rows(values, keep_);
  const Eigen::MatrixXd qty = q_.transpose() * fit_values;
  const Eigen::MatrixXd z = r_.triangularView<Eigen::Upper>().solve(qty);
  const Eigen::MatrixXd beta = columns_ * z;
  Eigen::MatrixXd residuals = values;
  residuals.noalias() -= design_ * beta;
  return residuals;
}

Eigen::MatrixXd regress_out(const Eigen::MatrixXd& values, const Eigen::MatrixXd& confounds, int trend_order,
                            const std::vector<bool>& keep) {
  return Regression(values.rows(), confounds, trend_order, keep).residuals(values);
}

std::vector<bool> frames_to_keep(Eigen::Index frames, const Eigen::VectorXd& motion, double limit,
                                 const Eigen::VectorXd& mask, Eigen::Index min_frames) {
  std::vector<bool> keep(static_cast<std::size_t>(frames), true);
  if (motion.size() > 0) {
    if (motion.size() != frames)
      fail(ErrorKind::data, "the motion column has " + std::to_string(motion.size()) + " rows but the series has " +
                                std::to_string(frames) + " frames");
    for (Eigen::Index t = 0; t < frames; ++t)
      if (std::isfinite(motion(t)) && motion(t) > limit) keep[static_cast<std::size_t>(t)] = false;
  }
  if (mask.size() > 0) {
    if (mask.size() != frames)
      fail(ErrorKind::data, "the frame mask has " + std::to_string(mask.size()) + " entries but the series has " +
                                std::to_string(frames) + " frames");
    for (Eigen::Index t = 0; t < frames; ++t) {
      if (mask(t) != 0.0 && mask(t) != 1.0)
        fail(ErrorKind::data, "the frame mask must hold 0 (drop) or 1 (keep); entry " + std::to_string(t + 1) +
                                  " is " + std::to_string(mask(t)));
      if (mask(t) == 0.0) keep[static_cast<std::size_t>(t)] = false;
    }
  }
  Eigen::Index kept = 0;
  for (bool k : keep) kept += k;
  if (kept < min_frames)
    fail(ErrorKind::data, "censoring keeps " + std::to_string(kept) + " of " + std::to_string(frames) +
                              " frames, fewer than the minimum of " + std::to_string(min_frames));
  return keep;
}

Eigen::MatrixXd keep_rows(const Eigen::MatrixXd& values, const std::vector<bool>& keep) {
  Eigen::Index kept = 0;
  for (bool k : keep) kept += k;
  Eigen::MatrixXd out(kept, values.cols());
  Eigen::Index r = 0;
  for (Eigen::Index t = 0; t < values.rows(); ++t)
    if (keep[static_cast<std::size_t>(t)]) out.row(r++) = values.row(t);
  return out;
}

Eigen::MatrixXd standardise(const Eigen::MatrixXd& values, const std::vector<std::string>& names) {
  // A power of two first (exact; the result does not depend on it) so that squares of
  // values near 1e160 or 1e-170 neither overflow nor underflow; then two passes.
  Eigen::MatrixXd out = values;
  for (Eigen::Index j = 0; j < out.cols(); ++j) {
    const double m = out.col(j).cwiseAbs().maxCoeff();
    if (m > 0 && std::isfinite(m)) out.col(j) *= std::ldexp(1.0, -std::ilogb(m));
  }
  out = out.rowwise() - out.colwise().mean();
  const double denom = static_cast<double>(values.rows() - 1);
  for (Eigen::Index j = 0; j < out.cols(); ++j) {
    const double sd = std::sqrt(out.col(j).squaredNorm() / denom);
    if (!(sd > 0))
      fail(ErrorKind::data, "region '" + (j < static_cast<Eigen::Index>(names.size()) ? names[j] : std::to_string(j + 1)) +
                                "' has zero variance after cleaning");
    out.col(j) /= sd;
  }
  return out;
}

}  // namespace critplex::series
