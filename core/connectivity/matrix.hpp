// A connectivity matrix with its region names and what the estimator reports.
#pragma once

#include <Eigen/Dense>
#include <nlohmann/json.hpp>

#include <string>
#include <vector>

namespace critplex::connectivity {

struct Matrix {
  Eigen::MatrixXd values;            // N x N, symmetric
  std::vector<std::string> names;    // N names
  nlohmann::json info = nlohmann::json::object();  // method, shrinkage intensity, frames used, ...
};

}  // namespace critplex::connectivity
