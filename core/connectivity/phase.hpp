// Coupling of oscillations from the analytic signal z_i(t) = a_i(t) exp(i phi_i(t)) of each
// band-limited region (series/fft.hpp). All matrices are symmetric with unit diagonal.
//
//  - phase locking value |<exp(i (phi_i - phi_j))>_t|           (Lachaux et al. 1999)
//  - phase lag index     |<sign(Im(z_i conj z_j))>_t|            (Stam, Nolte & Daffertshofer 2007)
//  - weighted PLI        |<Im(z_i conj z_j)>_t| / <|Im(z_i conj z_j)|>_t   (Vinck et al. 2011;
//    0 when every product is real)
//  - amplitude envelope correlation: Pearson of a_i and a_j      (common practice)
//  - with pairwise orthogonalisation (Hipp et al. 2012): the part of z_j orthogonal to z_i,
//    Im(z_j conj(z_i) / |z_i|), has envelope |.|; r(a_i, that envelope) and the same with i
//    and j swapped are averaged, which makes the matrix symmetric.
#pragma once

#include <Eigen/Dense>

namespace critplex::connectivity {

enum class PhaseMeasure { locking_value, lag_index, weighted_lag_index, envelope, envelope_orthogonalised };

// `analytic` is T x N complex (column = region).
Eigen::MatrixXd phase_coupling(const Eigen::MatrixXcd& analytic, PhaseMeasure measure);

}  // namespace critplex::connectivity
