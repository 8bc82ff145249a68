// Closed forms for the Erdos-Renyi random graph G(N, p) (docs/methods.md, "Random-graph
// references"): the random baseline a subject's transitions are read against.
//
//   E[chi]     = sum_{k>=1} (-1)^(k-1) C(N,k)   p^(k(k-1)/2)
//   E[kappa_i] = sum_{k>=0} (-1)^k     C(N-1,k) p^(k(k+1)/2) / (k+1)      (= E[chi] / N)
//
// These alternating sums cancel badly: for N = 1000, p = 0.9 the largest term is about
// 10^30 times the result, so double precision keeps no digit. We evaluate them in
// "paired binary128" arithmetic: each number is an unevaluated sum hi + lo of two IEEE
// binary128 (__float128, libquadmath) values, about 225 significant bits (67 decimal
// digits), with error-free transformations (two-sum, fused multiply-add). Each value is
// first summed in plain binary128 (113 bits, much faster); the pair is used only when
// the error estimate of that sum is not far below double rounding. Alongside each
// value we carry a conservative estimate of the rounding error (a multiple of the unit
// roundoff times the sum of |terms|); when that bound is not small against the value,
// the value is reported as unreliable and the zero search stops there.
//
// Zeros in p are found by scanning a grid (log-spaced below 0.1, linear above) for sign
// changes and refining each bracket by bisection on the extended-precision function to
// the resolution of a double. Two zeros closer than the scan spacing can be missed.
#pragma once

#include <cstddef>
#include <string>
#include <vector>

#include "base/option_schema.hpp"

namespace critplex::transitions {

struct RandomGraphValue {
  double value = 0.0;              // rounded to double
  std::string decimal;             // about 34 significant digits (the high binary128 part)
  double relative_error_bound = 0.0;
  bool reliable = true;            // relative_error_bound < 1e-15
};

RandomGraphValue expected_chi(std::size_t nodes, double p);
RandomGraphValue expected_kappa(std::size_t nodes, double p);

struct RandomGraphZeros {
  std::vector<double> chi_zeros;      // zeros of E[chi] in (0, max_p]
  std::vector<int> chi_directions;    // -1: E[chi] goes from positive to negative
  std::vector<double> kappa_zeros;    // zeros of E[kappa]
  std::vector<int> kappa_directions;
  double reliable_up_to = 0.0;        // the scan is trustworthy up to this p
  std::size_t scan_points = 0;
};
// Throws ErrorKind::argument for nodes < 2, max_p outside (0, 1] or scan_points < 10.
RandomGraphZeros random_graph_zeros(std::size_t nodes, double max_p, std::size_t scan_points = 2000);

// Name of the arithmetic, for reports.
const char* random_graph_arithmetic();

// The options of cpx_random_graph_expectations and their table.
struct ExpectationOptions {
  bool zeros = true;               // also the zeros of E[chi] and E[kappa]
  double max_p = 1.0;              // largest p of the zero search
  std::size_t scan_points = 2000;  // scan grid of the zero search
};
const OptionSection& expectation_option_section();
ExpectationOptions parse_expectation_options(const Json& options, const std::string& where);

}  // namespace critplex::transitions
