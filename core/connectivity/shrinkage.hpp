// Shrinkage estimators and partial correlation.
//
//  - Ledoit-Wolf: covariance shrunk toward a scaled identity mu I with the intensity of
//    Ledoit & Wolf 2004 (J. Multivariate Anal. 88:365), in the form sklearn.covariance
//    implements (biased sample covariance, intensity clipped to [0, 1]).
//  - OAS: oracle approximating shrinkage (Chen, Wiesel, Eldar & Hero 2010, IEEE Trans.
//    Signal Process. 58:5016), again in sklearn.covariance's form.
//  - Schafer-Strimmer: correlation shrunk toward the identity with the analytic lambda of
//    Schafer & Strimmer 2005 (Stat. Appl. Genet. Mol. Biol. 4:32), as R corpcor::cor.shrink.
//  - Partial correlation: -P_ij / sqrt(P_ii P_jj) from a precision matrix P.
#pragma once

#include <Eigen/Dense>

namespace critplex::connectivity {

struct Shrunk {
  Eigen::MatrixXd matrix;   // the shrunk covariance (or correlation for Schafer-Strimmer)
  double intensity = 0.0;   // shrinkage intensity in [0, 1]
};

// `values` is T x N; columns are centred inside.
Shrunk ledoit_wolf(const Eigen::MatrixXd& values);
Shrunk oracle_approximating(const Eigen::MatrixXd& values);
Shrunk schafer_strimmer(const Eigen::MatrixXd& values);

// Correlation from a covariance: D^-1/2 C D^-1/2, unit diagonal, exactly symmetric.
Eigen::MatrixXd covariance_to_correlation(const Eigen::MatrixXd& covariance);

// Partial correlation from the inverse of a symmetric positive definite matrix (covariance
// or correlation). Not positive definite is ErrorKind::data with `hint` appended.
Eigen::MatrixXd partial_from(const Eigen::MatrixXd& covariance, const char* hint);

}  // namespace critplex::connectivity
