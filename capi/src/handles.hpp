// The opaque handles of the C interface: thin owners of core value types.
#pragma once

#include <critplex/critplex.h>

#include "connectivity/matrix.hpp"
#include "output/sweep.hpp"
#include "pipeline/sweep.hpp"
#include "series/series.hpp"

struct cpx_series {
  critplex::series::Series value;
};

struct cpx_matrix {
  critplex::connectivity::Matrix value;
};

struct cpx_sweep {
  critplex::pipeline::SweepResult value;
  std::vector<critplex::output::CurveColumn> columns;  // the curves, made once when the sweep ran
};

namespace critplex::capi {

// An argument error naming `needed_option` when the sweep ran without that engine.
[[noreturn]] void engine_missing(const std::string& needed_option);

// Copies a rows x columns array given in `layout` into an Eigen matrix.
Eigen::MatrixXd import_array(const double* data, std::size_t rows, std::size_t columns, cpx_layout layout);
// Copies an Eigen matrix into a caller's buffer of `length` doubles, in `layout`.
void export_array(const Eigen::MatrixXd& m, double* buffer, std::size_t length, cpx_layout layout);
// Names from a C array of strings (NULL: default names R1..Rn).
std::vector<std::string> import_names(const char* const* names, std::size_t n);

}  // namespace critplex::capi
