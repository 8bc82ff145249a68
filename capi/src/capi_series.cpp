// Time series and matrices: creation from buffers and files, copies out, writing.
#include <limits>

#include "base/options.hpp"
#include "guard.hpp"
#include "handles.hpp"
#include "io/files.hpp"

namespace critplex::capi {

Eigen::MatrixXd import_array(const double* data, std::size_t rows, std::size_t columns, cpx_layout layout) {
  require_pointer(data, "data");
  check_layout(layout);
  if (rows != 0 && columns > std::numeric_limits<std::size_t>::max() / rows)
    fail(ErrorKind::argument, "array size overflows");
  Eigen::MatrixXd m(static_cast<Eigen::Index>(rows), static_cast<Eigen::Index>(columns));
  for (std::size_t i = 0; i < rows; ++i)
    for (std::size_t j = 0; j < columns; ++j)
      m(static_cast<Eigen::Index>(i), static_cast<Eigen::Index>(j)) =
          layout == CPX_ROW_MAJOR ? data[i * columns + j] : data[j * rows + i];
  return m;
}

void export_array(const Eigen::MatrixXd& m, double* buffer, std::size_t length, cpx_layout layout) {
  require_pointer(buffer, "buffer");
  check_layout(layout);
  const auto rows = static_cast<std::size_t>(m.rows()), columns = static_cast<std::size_t>(m.cols());
  if (length < rows * columns)
    fail(ErrorKind::argument, "argument 'buffer_length' is " + std::to_string(length) + " but " +
                                  std::to_string(rows * columns) + " values are needed");
  for (std::size_t i = 0; i < rows; ++i)
    for (std::size_t j = 0; j < columns; ++j)
      (layout == CPX_ROW_MAJOR ? buffer[i * columns + j] : buffer[j * rows + i]) =
          m(static_cast<Eigen::Index>(i), static_cast<Eigen::Index>(j));
}

std::vector<std::string> import_names(const char* const* names, std::size_t n) {
  if (names == nullptr) return series::default_names(n);
  std::vector<std::string> out;
  for (std::size_t i = 0; i < n; ++i) {
    if (names[i] == nullptr) fail(ErrorKind::argument, "region name " + std::to_string(i) + " is NULL");
    out.emplace_back(names[i]);
  }
  return out;
}

}  // namespace critplex::capi

using namespace critplex;
using namespace critplex::capi;

extern "C" {

cpx_status cpx_series_create(const double* data, size_t frames, size_t regions, cpx_layout layout,
                             const char* const* region_names, cpx_series** out) {
  return guard("cpx_series_create", [&] {
    require_pointer(out, "out");
    auto h = std::make_unique<cpx_series>();
    h->value.values = import_array(data, frames, regions, layout);
    h->value.names = import_names(region_names, regions);
    series::validate(h->value);
    *out = h.release();
  });
}

cpx_status cpx_series_read(const char* path, const char* options_json, cpx_series** out) {
  return guard("cpx_series_read", [&] {
    require_pointer(path, "path");
    require_pointer(out, "out");
    auto options = parse_options(options_json, "options of cpx_series_read");
    auto h = std::make_unique<cpx_series>();
    h->value = io::read_series(path, options);
    *out = h.release();
  });
}

void cpx_series_free(cpx_series* series) { delete series; }

cpx_status cpx_series_shape(const cpx_series* series, size_t* frames, size_t* regions) {
  return guard("cpx_series_shape", [&] {
    require_pointer(series, "series");
    if (frames) *frames = static_cast<size_t>(series->value.frames());
    if (regions) *regions = static_cast<size_t>(series->value.regions());
  });
}

cpx_status cpx_series_copy(const cpx_series* series, double* buffer, size_t buffer_length, cpx_layout layout) {
  return guard("cpx_series_copy", [&] {
    require_pointer(series, "series");
    export_array(series->value.values, buffer, buffer_length, layout);
  });
}

cpx_status cpx_series_region_name(const cpx_series* series, size_t index, char** name) {
  return guard("cpx_series_region_name", [&] {
    require_pointer(series, "series");
    require_pointer(name, "name");
    if (index >= series->value.names.size())
      fail(ErrorKind::argument, "argument 'index' is " + std::to_string(index) + " but there are " +
                                    std::to_string(series->value.names.size()) + " regions");
    *name = copy_string(series->value.names[index]);
  });
}

cpx_status cpx_matrix_create(const double* data, size_t n, cpx_layout layout, const char* const* names,
                             cpx_matrix** out) {
  return guard("cpx_matrix_create", [&] {
    require_pointer(out, "out");
    if (n < 2) fail(ErrorKind::argument, "argument 'n' must be at least 2, got " + std::to_string(n));
    auto h = std::make_unique<cpx_matrix>();
    h->value.values = import_array(data, n, n, layout);
    h->value.names = import_names(names, n);
    *out = h.release();
  });
}

cpx_status cpx_matrix_read(const char* path, const char* options_json, cpx_matrix** out) {
  return guard("cpx_matrix_read", [&] {
    require_pointer(path, "path");
    require_pointer(out, "out");
    auto options = parse_options(options_json, "options of cpx_matrix_read");
    auto h = std::make_unique<cpx_matrix>();
    h->value = io::read_matrix(path, options);
    *out = h.release();
  });
}

void cpx_matrix_free(cpx_matrix* matrix) { delete matrix; }

cpx_status cpx_matrix_size(const cpx_matrix* matrix, size_t* n) {
  return guard("cpx_matrix_size", [&] {
    require_pointer(matrix, "matrix");
    require_pointer(n, "n");
    *n = static_cast<size_t>(matrix->value.values.rows());
  });
}

cpx_status cpx_matrix_copy(const cpx_matrix* matrix, double* buffer, size_t buffer_length, cpx_layout layout) {
  return guard("cpx_matrix_copy", [&] {
    require_pointer(matrix, "matrix");
    export_array(matrix->value.values, buffer, buffer_length, layout);
  });
}

cpx_status cpx_matrix_name(const cpx_matrix* matrix, size_t index, char** name) {
  return guard("cpx_matrix_name", [&] {
    require_pointer(matrix, "matrix");
    require_pointer(name, "name");
    if (index >= matrix->value.names.size())
      fail(ErrorKind::argument, "argument 'index' is " + std::to_string(index) + " but the matrix has " +
                                    std::to_string(matrix->value.names.size()) + " nodes");
    *name = copy_string(matrix->value.names[index]);
  });
}

cpx_status cpx_matrix_info(const cpx_matrix* matrix, char** json) {
  return guard("cpx_matrix_info", [&] {
    require_pointer(matrix, "matrix");
    require_pointer(json, "json");
    *json = copy_string(matrix->value.info.dump());
  });
}

cpx_status cpx_matrix_write(const cpx_matrix* matrix, const char* path, const char* options_json) {
  return guard("cpx_matrix_write", [&] {
    require_pointer(matrix, "matrix");
    require_pointer(path, "path");
    const std::string where = "options of cpx_matrix_write";
    io::write_matrix(matrix->value, path, io::parse_matrix_write_format(parse_options(options_json, where), path, where));
  });
}

}  // extern "C"
