// The permutation engine of the study designs: a linear model refitted for every
// rearrangement of the reduced-model residuals (Freedman & Lane 1983; Winkler et al. 2014).
#include <algorithm>
#include <cmath>
#include <map>

#include "base/error.hpp"
#include "base/random.hpp"
#include "cohort/designs.hpp"
#include "cohort/statistics.hpp"

namespace critplex::cohort {

namespace {

// Values equal in exact arithmetic may differ in the last bits after a refit.
double tolerance(double observed) { return 1e-10 * std::max(1.0, std::fabs(observed)); }

// The full model [X Z], fitted once: every rearranged y is a new right-hand side.
struct Fit {
  Eigen::MatrixXd design, pseudo_inverse;  // (M'M)^-1 M'
  Eigen::MatrixXd covariance;              // (M'M)^-1
  Eigen::MatrixXd interest_inverse;        // [(M'M)^-1 restricted to X]^-1, for F
  Eigen::Index interest = 1;
  double df2 = 0.0;

  Fit(const Eigen::MatrixXd& x, const Eigen::MatrixXd& z) : interest(x.cols()) {
    design.resize(x.rows(), x.cols() + z.cols());
    design << x, z;
    Eigen::ColPivHouseholderQR<Eigen::MatrixXd> qr(design);
    qr.setThreshold(1e-10);
    if (qr.rank() < design.cols())
      fail(ErrorKind::data, "the design is rank deficient (rank " + std::to_string(qr.rank()) + " < " +
                                std::to_string(design.cols()) +
                                " columns): a constant, duplicated or collinear covariate, or an empty level");
    df2 = static_cast<double>(design.rows() - design.cols());
    if (df2 < 1.0)
      fail(ErrorKind::data, "the design has " + std::to_string(design.cols()) + " columns for " +
                                std::to_string(design.rows()) + " observations: no degrees of freedom left");
    covariance = (design.transpose() * design).inverse();
    pseudo_inverse = covariance * design.transpose();
    interest_inverse = covariance.topLeftCorner(interest, interest).inverse();
  }

  // t of the one column of interest, or F of all of them.
  double statistic(const Eigen::VectorXd& y, Eigen::VectorXd* beta_out = nullptr, double* rss_out = nullptr) const {
    const Eigen::VectorXd beta = pseudo_inverse * y;
    const double rss = (y - design * beta).squaredNorm();
    if (beta_out) *beta_out = beta;
    if (rss_out) *rss_out = rss;
    const double sigma2 = rss / df2;
    if (interest == 1) return beta(0) / std::sqrt(sigma2 * covariance(0, 0));
    const Eigen::VectorXd b = beta.head(interest);
    return b.dot(interest_inverse * b) / static_cast<double>(interest) / sigma2;
  }

  // The statistic of every column of y (observations x points) at once.
  Eigen::RowVectorXd statistics(const Eigen::MatrixXd& y) const {
    const Eigen::MatrixXd beta = pseudo_inverse * y;
    const Eigen::RowVectorXd sigma2 = (y - design * beta).colwise().squaredNorm() / df2;
    if (interest == 1) return beta.row(0).array() / (sigma2.array() * covariance(0, 0)).sqrt();
    Eigen::RowVectorXd out(y.cols());
    for (Eigen::Index j = 0; j < y.cols(); ++j) {
      const Eigen::VectorXd b = beta.col(j).head(interest);
      out(j) = b.dot(interest_inverse * b) / static_cast<double>(interest) / sigma2(j);
    }
    return out;
  }
};

// Runs of points beyond the threshold with one sign (t), or above it (F); mass = sum.
std::vector<Cluster> clusters_of(const Eigen::RowVectorXd& s, double threshold, bool signed_statistic) {
  std::vector<Cluster> out;
  auto sign_of = [&](double v) { return v > threshold ? 1 : (signed_statistic && v < -threshold ? -1 : 0); };
  for (Eigen::Index p = 0; p < s.size();) {
    const int sign = sign_of(s(p));
    if (sign == 0) {
      ++p;
      continue;
    }
    Cluster c;
    c.first = static_cast<std::size_t>(p);
    c.sign = sign;
    while (p < s.size() && sign_of(s(p)) == sign) c.mass += s(p++);
    c.last = static_cast<std::size_t>(p - 1);
    out.push_back(c);
  }
  return out;
}

// Threshold-free cluster enhancement along one axis (Smith & Nichols 2009, NeuroImage
// 44:83-98): at each point the sum over heights h = dh, 2dh, ... up to its value of
// extent(h)^E h^H dh, extent = points in its run at or above h; negative values likewise
// for a signed statistic (with a negative sign).
std::vector<double> tfce_along(const Eigen::RowVectorXd& s, bool signed_statistic) {
  const double dh = 0.1, e_power = 0.5, h_power = 2.0;
  const auto n = static_cast<std::size_t>(s.size());
  std::vector<double> out(n, 0.0);
  for (int sign : {1, -1}) {
    if (sign < 0 && !signed_statistic) break;
    double top = 0.0;
    for (std::size_t p = 0; p < n; ++p) top = std::max(top, sign * s(static_cast<Eigen::Index>(p)));
    for (std::size_t k = 1; static_cast<double>(k) * dh <= top; ++k) {
      const double h = static_cast<double>(k) * dh;
      for (std::size_t p = 0; p < n;) {
        if (sign * s(static_cast<Eigen::Index>(p)) < h) {
          ++p;
          continue;
        }
        std::size_t end = p;
        while (end < n && sign * s(static_cast<Eigen::Index>(end)) >= h) ++end;
        const double gain = std::pow(static_cast<double>(end - p), e_power) * std::pow(h, h_power) * dh;
        for (std::size_t q = p; q < end; ++q) out[q] += sign * gain;
        p = end;
      }
    }
  }
  return out;
}

double largest_abs(const std::vector<double>& v) {
  double m = 0.0;
  for (double x : v) m = std::max(m, std::fabs(x));
  return m;
}

double largest_mass(const std::vector<Cluster>& clusters) {
  double m = 0.0;
  for (const auto& c : clusters) m = std::max(m, std::fabs(c.mass));
  return m;
}

// n! capped: returns limit + 1 once the product passes limit.
std::uint64_t capped_product_of_factorials(const std::vector<std::vector<std::size_t>>& blocks, std::uint64_t limit) {
  std::uint64_t total = 1;
  for (const auto& b : blocks)
    for (std::size_t k = 2; k <= b.size(); ++k) {
      if (total > limit / k) return limit + 1;
      total *= k;
    }
  return total;
}

// Row indices grouped by block label, blocks in order of first appearance.
std::vector<std::vector<std::size_t>> block_members(const std::vector<double>& labels, std::size_t n) {
  if (labels.empty()) {
    std::vector<std::size_t> all(n);
    for (std::size_t i = 0; i < n; ++i) all[i] = i;
    return {all};
  }
  std::vector<std::vector<std::size_t>> blocks;
  std::vector<double> seen;
  for (std::size_t i = 0; i < n; ++i) {
    const auto it = std::find(seen.begin(), seen.end(), labels[i]);
    if (it == seen.end()) {
      seen.push_back(labels[i]);
      blocks.push_back({i});
    } else {
      blocks[static_cast<std::size_t>(it - seen.begin())].push_back(i);
    }
  }
  return blocks;
}

// Calls visit(perm) for every rearrangement; perm[i] is the source row of position i for
// permutations, +1/-1 per row for sign flips. The identity comes first when exact.
template <class Visit>
std::pair<bool, std::uint64_t> for_each_rearrangement(std::size_t n, const LinearTestOptions& o, Visit visit) {
  std::vector<long long> perm(n);
  if (o.sign_flip) {
    if (n < 63 && (std::uint64_t{1} << n) <= o.permutations) {
      const std::uint64_t count = std::uint64_t{1} << n;
      for (std::uint64_t mask = 0; mask < count; ++mask) {
        for (std::size_t i = 0; i < n; ++i) perm[i] = (mask >> i) & 1U ? -1 : 1;
        visit(perm);
      }
      return {true, count};
    }
    Random random(o.seed);
    for (std::uint64_t k = 0; k < o.permutations; ++k) {
      std::uint64_t bits = 0;
      for (std::size_t i = 0; i < n; ++i) {
        if (i % 64 == 0) bits = random.next();
        perm[i] = (bits >> (i % 64)) & 1U ? -1 : 1;
      }
      visit(perm);
    }
    return {false, o.permutations};
  }
  // positions: each block's rows (fixed); sources: the rows moved into them.
  const auto positions = block_members(o.blocks, n);
  auto sources = positions;
  const std::uint64_t count = capped_product_of_factorials(positions, o.permutations);
  if (count <= o.permutations) {
    // Odometer over each block's permutations in lexicographic order (identity first).
    for (;;) {
      for (std::size_t bi = 0; bi < positions.size(); ++bi)
        for (std::size_t k = 0; k < positions[bi].size(); ++k)
          perm[positions[bi][k]] = static_cast<long long>(sources[bi][k]);
      visit(perm);
      std::size_t bi = 0;
      while (bi < sources.size() && !std::next_permutation(sources[bi].begin(), sources[bi].end())) ++bi;
      if (bi == sources.size()) break;
    }
    return {true, count};
  }
  Random random(o.seed);
  for (std::uint64_t k = 0; k < o.permutations; ++k) {
    for (std::size_t bi = 0; bi < positions.size(); ++bi) {
      sources[bi] = positions[bi];
      random.shuffle(sources[bi]);
      for (std::size_t j = 0; j < positions[bi].size(); ++j)
        perm[positions[bi][j]] = static_cast<long long>(sources[bi][j]);
    }
    visit(perm);
  }
  return {false, o.permutations};
}

double permutation_p(std::uint64_t count, std::uint64_t extreme, bool exact) {
  const double adjustment = exact ? 0.0 : 1.0;
  return (static_cast<double>(extreme) + adjustment) / (static_cast<double>(count) + adjustment);
}

}  // namespace

LinearTestResult freedman_lane(const Eigen::VectorXd& y, const Eigen::MatrixXd& x, const Eigen::MatrixXd& z,
                               const LinearTestOptions& options) {
  const auto n = static_cast<std::size_t>(y.size());
  if (x.rows() != y.size() || z.rows() != y.size() || (!options.blocks.empty() && options.blocks.size() != n))
    fail(ErrorKind::internal, "linear test: the model's rows do not match the data");
  if (x.cols() < 1) fail(ErrorKind::internal, "linear test: no column of interest");
  if (!y.allFinite() || !x.allFinite() || !z.allFinite()) fail(ErrorKind::data, "linear test: values must be finite");
  const Fit fit(x, z);
  LinearTestResult r;
  double rss = 0.0;
  r.statistic = fit.statistic(y, &r.coefficients, &rss);
  r.standard_errors = (fit.covariance.diagonal() * (rss / fit.df2)).cwiseSqrt();
  r.residual_sd = std::sqrt(rss / fit.df2);
  r.df1 = static_cast<double>(x.cols());
  r.df2 = fit.df2;
  r.p_parametric = x.cols() == 1 ? std::min(1.0, 2.0 * student_t_cdf(-std::fabs(r.statistic), fit.df2))
                                 : f_upper_tail(r.statistic, r.df1, r.df2);
  // Reduced model y ~ Z: its fit stays, its residuals are rearranged.
  Eigen::VectorXd fitted = Eigen::VectorXd::Zero(y.size());
  if (z.cols() > 0) fitted = z * z.colPivHouseholderQr().solve(y);
  const Eigen::VectorXd residuals = y - fitted;
  const double gamma = tolerance(r.statistic);
  const bool with_companion = static_cast<bool>(options.companion);
  if (with_companion) r.companion = options.companion(y);
  const double companion_gamma = tolerance(r.companion);
  std::uint64_t at_least = 0, at_most = 0, companion_at_least = 0, companion_at_most = 0;
  Eigen::VectorXd rearranged(y.size());
  const auto [exact, count] = for_each_rearrangement(n, options, [&](const std::vector<long long>& perm) {
    for (std::size_t i = 0; i < n; ++i)
      rearranged(static_cast<Eigen::Index>(i)) =
          fitted(static_cast<Eigen::Index>(i)) +
          (options.sign_flip ? static_cast<double>(perm[i]) * residuals(static_cast<Eigen::Index>(i))
                             : residuals(static_cast<Eigen::Index>(perm[i])));
    if (options.on_rearrangement) options.on_rearrangement(perm);
    const double s = fit.statistic(rearranged);
    if (s >= r.statistic - gamma) ++at_least;
    if (s <= r.statistic + gamma) ++at_most;
    if (with_companion) {
      const double c = options.companion(rearranged);
      if (c >= r.companion - companion_gamma) ++companion_at_least;
      if (c <= r.companion + companion_gamma) ++companion_at_most;
    }
  });
  r.exact = exact;
  r.null_size = count;
  const double p_greater = permutation_p(count, at_least, exact);
  r.p_value = x.cols() == 1 ? std::min(1.0, 2.0 * std::min(p_greater, permutation_p(count, at_most, exact))) : p_greater;
  if (with_companion)
    r.companion_p = std::min(1.0, 2.0 * std::min(permutation_p(count, companion_at_least, exact),
                                                 permutation_p(count, companion_at_most, exact)));
  return r;
}

double f_quantile(double probability, double df1, double df2) {
  double lo = 0.0, hi = 1.0;
  while (1.0 - f_upper_tail(hi, df1, df2) < probability) hi *= 2.0;
  for (int i = 0; i < 200 && hi - lo > 1e-14 * hi; ++i) {
    const double mid = 0.5 * (lo + hi);
    (1.0 - f_upper_tail(mid, df1, df2) < probability ? lo : hi) = mid;
  }
  return 0.5 * (lo + hi);
}

CurveTestResult freedman_lane_curves(const Eigen::MatrixXd& y, const Eigen::MatrixXd& x, const Eigen::MatrixXd& z,
                                     const LinearTestOptions& options, double threshold, bool tfce) {
  const auto n = static_cast<std::size_t>(y.rows());
  if (x.rows() != y.rows() || z.rows() != y.rows() || (!options.blocks.empty() && options.blocks.size() != n))
    fail(ErrorKind::internal, "curve test: the model's rows do not match the data");
  if (!y.allFinite()) fail(ErrorKind::data, "curve test: values must be finite");
  const Fit fit(x, z);
  const bool signed_statistic = x.cols() == 1;
  CurveTestResult r;
  r.threshold = !std::isnan(threshold) ? threshold
                : signed_statistic     ? student_t_quantile(0.975, fit.df2)
                                       : f_quantile(0.95, static_cast<double>(x.cols()), fit.df2);
  const Eigen::RowVectorXd observed = fit.statistics(y);
  r.statistic.assign(observed.data(), observed.data() + observed.size());
  r.clusters = clusters_of(observed, r.threshold, signed_statistic);
  if (tfce) r.tfce = tfce_along(observed, signed_statistic);
  std::vector<std::uint64_t> tfce_at_least(r.tfce.size(), 0);
  Eigen::MatrixXd fitted = Eigen::MatrixXd::Zero(y.rows(), y.cols());
  if (z.cols() > 0) fitted = z * z.colPivHouseholderQr().solve(y);
  const Eigen::MatrixXd residuals = y - fitted;
  std::vector<std::uint64_t> at_least(r.clusters.size(), 0);
  Eigen::MatrixXd rearranged(y.rows(), y.cols());
  const auto [exact, count] = for_each_rearrangement(n, options, [&](const std::vector<long long>& perm) {
    for (std::size_t i = 0; i < n; ++i)
      rearranged.row(static_cast<Eigen::Index>(i)) =
          fitted.row(static_cast<Eigen::Index>(i)) +
          (options.sign_flip ? static_cast<double>(perm[i]) * residuals.row(static_cast<Eigen::Index>(i))
                             : Eigen::RowVectorXd(residuals.row(static_cast<Eigen::Index>(perm[i]))));
    const Eigen::RowVectorXd statistic = fit.statistics(rearranged);
    const double m = largest_mass(clusters_of(statistic, r.threshold, signed_statistic));
    for (std::size_t c = 0; c < r.clusters.size(); ++c)
      if (m >= std::fabs(r.clusters[c].mass) - tolerance(r.clusters[c].mass)) ++at_least[c];
    if (tfce) {
      const double largest = largest_abs(tfce_along(statistic, signed_statistic));
      for (std::size_t p = 0; p < r.tfce.size(); ++p)
        if (largest >= std::fabs(r.tfce[p]) - tolerance(r.tfce[p])) ++tfce_at_least[p];
    }
  });
  r.exact = exact;
  r.null_size = count;
  for (std::size_t c = 0; c < r.clusters.size(); ++c) r.clusters[c].p_value = permutation_p(count, at_least[c], exact);
  for (std::size_t p = 0; p < r.tfce.size(); ++p) r.tfce_p.push_back(permutation_p(count, tfce_at_least[p], exact));
  return r;
}

}  // namespace critplex::cohort
