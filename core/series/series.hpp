// Regional time series: frames down the rows, regions across the columns.
#pragma once

#include <Eigen/Dense>

#include <limits>
#include <string>
#include <vector>

namespace critplex::series {

struct Series {
  Eigen::MatrixXd values;              // T frames x N regions
  std::vector<std::string> names;      // N region names
  double sampling_interval = std::numeric_limits<double>::quiet_NaN();  // seconds; NaN if unknown
  std::string source;                  // file it came from, for messages ("" for buffers)

  Eigen::Index frames() const { return values.rows(); }
  Eigen::Index regions() const { return values.cols(); }
};

// Default names "R1", "R2", ... for n regions.
std::vector<std::string> default_names(std::size_t n);

// Checks what every estimator needs: at least 3 frames, at least 2 regions, finite values,
// no constant region. Errors name the source, the region and (for bad values) the frame.
void validate(const Series& s);

}  // namespace critplex::series
