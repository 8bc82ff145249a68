// Sweeps: matrix -> curves.
#include <cmath>
#include <cstdlib>

#include "guard.hpp"
#include "handles.hpp"
#include "output/sweep.hpp"
#include "pipeline/sweep.hpp"

using namespace critplex;
using namespace critplex::capi;

namespace critplex::capi {

void engine_missing(const std::string& needed_option) {
  fail(ErrorKind::argument, "argument 'sweep' was run without " + needed_option + " in its options");
}

}  // namespace critplex::capi

namespace {
const output::CurveColumn& column_named(const cpx_sweep* sweep, const std::string& name) {
  for (const auto& c : sweep->columns)
    if (c.name == name) return c;
  std::string list;
  for (const auto& c : sweep->columns) list += (list.empty() ? "" : ", ") + c.name;
  fail(ErrorKind::argument, "argument 'column': no curve named \"" + name + "\" (available: " + list + ")");
}
}  // namespace

extern "C" {

cpx_status cpx_sweep_run(const cpx_matrix* matrix, const char* options_json, cpx_progress_fn progress, void* user,
                         cpx_sweep** out) {
  return guard("cpx_sweep_run", [&] {
    require_pointer(matrix, "matrix");
    require_pointer(out, "out");
    auto options = pipeline::parse_sweep_options(parse_options(options_json, "options of cpx_sweep_run"));
    Progress p{progress, user};
    auto h = std::make_unique<cpx_sweep>();
    h->value = pipeline::run_sweep(matrix->value, options, [p](double f) { return p(f); });
    h->columns = output::curve_columns(h->value);
    *out = h.release();
  });
}

void cpx_sweep_free(cpx_sweep* sweep) { delete sweep; }

cpx_status cpx_sweep_json(const cpx_sweep* sweep, char** json) {
  return guard("cpx_sweep_json", [&] {
    require_pointer(sweep, "sweep");
    require_pointer(json, "json");
    *json = copy_string(output::sweep_json(sweep->value).dump());
  });
}

cpx_status cpx_sweep_curves_tsv(const cpx_sweep* sweep, char** tsv) {
  return guard("cpx_sweep_curves_tsv", [&] {
    require_pointer(sweep, "sweep");
    require_pointer(tsv, "tsv");
    *tsv = copy_string(output::curves_tsv(sweep->columns));
  });
}

cpx_status cpx_sweep_shape(const cpx_sweep* sweep, size_t* points, size_t* columns) {
  return guard("cpx_sweep_shape", [&] {
    require_pointer(sweep, "sweep");
    if (points) *points = sweep->value.grid.size();
    if (columns) *columns = sweep->columns.size();
  });
}

cpx_status cpx_sweep_column_name(const cpx_sweep* sweep, size_t index, char** name) {
  return guard("cpx_sweep_column_name", [&] {
    require_pointer(sweep, "sweep");
    require_pointer(name, "name");
    if (index >= sweep->columns.size())
      fail(ErrorKind::argument, "argument 'index' is " + std::to_string(index) + " but there are " +
                                    std::to_string(sweep->columns.size()) + " columns");
    *name = copy_string(sweep->columns[index].name);
  });
}

cpx_status cpx_sweep_curve(const cpx_sweep* sweep, const char* column, double* buffer, size_t buffer_length) {
  return guard("cpx_sweep_curve", [&] {
    require_pointer(sweep, "sweep");
    require_pointer(column, "column");
    require_pointer(buffer, "buffer");
    const output::CurveColumn& c = column_named(sweep, column);
    if (buffer_length < c.values.size())
      fail(ErrorKind::argument, "argument 'buffer_length' is " + std::to_string(buffer_length) + " but the grid has " +
                                    std::to_string(c.values.size()) + " points");
    std::copy(c.values.begin(), c.values.end(), buffer);
  });
}

}  // extern "C"
