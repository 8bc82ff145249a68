// Sweeps: matrix -> curves.
#include <cmath>
#include <cstdlib>

#include "guard.hpp"
#include "handles.hpp"
#include "pipeline/sweep.hpp"

using namespace critplex;
using namespace critplex::capi;

namespace critplex::capi {

Json sweep_document(const cpx_sweep* sweep) {
  require_pointer(sweep, "sweep");
  return pipeline::sweep_to_json(sweep->value);
}

const Json& sweep_section(const cpx_sweep* sweep, const std::string& engine, const std::string& needed_option) {
  require_pointer(sweep, "sweep");
  const auto& sections = sweep->value.sections;
  if (!sections.contains(engine))
    fail(ErrorKind::argument, "argument 'sweep' was run without " + needed_option + " in its options");
  return sections.at(engine);
}

}  // namespace critplex::capi

namespace {
std::size_t column_index(const pipeline::SweepResult& r, const std::string& name) {
  for (std::size_t i = 0; i < r.columns.size(); ++i)
    if (r.columns[i] == name) return i;
  std::string list;
  for (const auto& c : r.columns) list += (list.empty() ? "" : ", ") + c;
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
    *out = h.release();
  });
}

void cpx_sweep_free(cpx_sweep* sweep) { delete sweep; }

cpx_status cpx_sweep_json(const cpx_sweep* sweep, char** json) {
  return guard("cpx_sweep_json", [&] {
    require_pointer(sweep, "sweep");
    require_pointer(json, "json");
    *json = copy_string(pipeline::sweep_to_json(sweep->value).dump());
  });
}

cpx_status cpx_sweep_curves_tsv(const cpx_sweep* sweep, char** tsv) {
  return guard("cpx_sweep_curves_tsv", [&] {
    require_pointer(sweep, "sweep");
    require_pointer(tsv, "tsv");
    *tsv = copy_string(pipeline::sweep_curves_tsv(sweep->value));
  });
}

cpx_status cpx_sweep_shape(const cpx_sweep* sweep, size_t* points, size_t* columns) {
  return guard("cpx_sweep_shape", [&] {
    require_pointer(sweep, "sweep");
    if (points) *points = sweep->value.rows.size();
    if (columns) *columns = sweep->value.columns.size();
  });
}

cpx_status cpx_sweep_column_name(const cpx_sweep* sweep, size_t index, char** name) {
  return guard("cpx_sweep_column_name", [&] {
    require_pointer(sweep, "sweep");
    require_pointer(name, "name");
    if (index >= sweep->value.columns.size())
      fail(ErrorKind::argument, "argument 'index' is " + std::to_string(index) + " but there are " +
                                    std::to_string(sweep->value.columns.size()) + " columns");
    *name = copy_string(sweep->value.columns[index]);
  });
}

cpx_status cpx_sweep_curve(const cpx_sweep* sweep, const char* column, double* buffer, size_t buffer_length) {
  return guard("cpx_sweep_curve", [&] {
    require_pointer(sweep, "sweep");
    require_pointer(column, "column");
    require_pointer(buffer, "buffer");
    const auto& r = sweep->value;
    const std::size_t c = column_index(r, column);
    if (buffer_length < r.rows.size())
      fail(ErrorKind::argument, "argument 'buffer_length' is " + std::to_string(buffer_length) + " but the grid has " +
                                    std::to_string(r.rows.size()) + " points");
    for (std::size_t i = 0; i < r.rows.size(); ++i) {
      buffer[i] = pipeline::curve_cell_value(r.rows[i][c]);
    }
  });
}

}  // extern "C"
