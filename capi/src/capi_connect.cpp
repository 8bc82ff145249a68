// Connectivity estimation (series -> matrix, one per band) and reading NIfTI images.
#include <memory>
#include <vector>

#include "base/options.hpp"
#include "connectivity/connect.hpp"
#include "guard.hpp"
#include "handles.hpp"
#include "io/confounds.hpp"
#include "io/image_file.hpp"
#include "io/nifti.hpp"

using namespace critplex;
using namespace critplex::capi;

struct cpx_matrix_set {
  std::vector<connectivity::BandMatrix> items;
};

namespace {

std::vector<connectivity::BandMatrix> run_connect(const cpx_series* series, const char* options_json,
                                                  const char* function) {
  const std::string where = std::string("options of ") + function;
  const auto options = parse_options(options_json, where);
  const auto parsed = connectivity::parse_connect_options(options, where);
  const auto inputs = io::load_clean_inputs(parsed.clean);
  return connectivity::connect(series->value, parsed, inputs);
}

}  // namespace

extern "C" {

cpx_status cpx_connect(const cpx_series* series, const char* options_json, cpx_matrix** out) {
  return guard("cpx_connect", [&] {
    require_pointer(series, "series");
    require_pointer(out, "out");
    auto results = run_connect(series, options_json, "cpx_connect");
    if (results.size() != 1)
      fail(ErrorKind::argument, "options ask for " + std::to_string(results.size()) +
                                    " bands; use cpx_connect_bands to get one matrix per band");
    auto h = std::make_unique<cpx_matrix>();
    h->value = std::move(results[0].matrix);
    *out = h.release();
  });
}

cpx_status cpx_connect_bands(const cpx_series* series, const char* options_json, cpx_matrix_set** out) {
  return guard("cpx_connect_bands", [&] {
    require_pointer(series, "series");
    require_pointer(out, "out");
    auto h = std::make_unique<cpx_matrix_set>();
    h->items = run_connect(series, options_json, "cpx_connect_bands");
    *out = h.release();
  });
}

void cpx_matrix_set_free(cpx_matrix_set* set) { delete set; }

cpx_status cpx_matrix_set_count(const cpx_matrix_set* set, size_t* count) {
  return guard("cpx_matrix_set_count", [&] {
    require_pointer(set, "set");
    require_pointer(count, "count");
    *count = set->items.size();
  });
}

static void check_index(const cpx_matrix_set* set, size_t index) {
  if (index >= set->items.size())
    fail(ErrorKind::argument, "argument 'index' is " + std::to_string(index) + " but the set holds " +
                                  std::to_string(set->items.size()) + " matrices");
}

cpx_status cpx_matrix_set_band(const cpx_matrix_set* set, size_t index, char** name) {
  return guard("cpx_matrix_set_band", [&] {
    require_pointer(set, "set");
    require_pointer(name, "name");
    check_index(set, index);
    *name = copy_string(set->items[index].band);
  });
}

cpx_status cpx_matrix_set_get(const cpx_matrix_set* set, size_t index, cpx_matrix** out) {
  return guard("cpx_matrix_set_get", [&] {
    require_pointer(set, "set");
    require_pointer(out, "out");
    check_index(set, index);
    auto h = std::make_unique<cpx_matrix>();
    h->value = set->items[index].matrix;
    *out = h.release();
  });
}

cpx_status cpx_series_read_image(const char* image_path, const char* labels_path, const char* options_json,
                                 cpx_series** out) {
  if (out) *out = nullptr;
  return guard("cpx_series_read_image", [&] {
    require_pointer(image_path, "image_path");
    require_pointer(out, "out");
    const io::ImageOptions o =
        io::parse_image_options(parse_options(options_json, "options of cpx_series_read_image"), "options of cpx_series_read_image");
    auto h = std::make_unique<cpx_series>();
    h->value = io::read_image_series(image_path, labels_path ? labels_path : "", o);
    *out = h.release();
  });
}

cpx_status cpx_series_clean(const cpx_series* series, const char* options_json, cpx_series** out) {
  return guard("cpx_series_clean", [&] {
    require_pointer(series, "series");
    require_pointer(out, "out");
    const std::string where = "options of cpx_series_clean";
    const auto options = parse_options(options_json, where);
    for (const char* key : {"method", "fisher_z", "partial_basis"})
      if (options.contains(key))
        fail(ErrorKind::argument, where + ": option \"" + key + "\" belongs to cpx_connect, not to cleaning");
    const auto parsed = connectivity::parse_connect_options(options, where);
    const auto inputs = io::load_clean_inputs(parsed.clean);
    auto h = std::make_unique<cpx_series>();
    h->value = connectivity::clean_series(series->value, parsed, inputs);
    *out = h.release();
  });
}

cpx_status cpx_series_sampling_interval(const cpx_series* series, double* seconds) {
  return guard("cpx_series_sampling_interval", [&] {
    require_pointer(series, "series");
    require_pointer(seconds, "seconds");
    *seconds = series->value.sampling_interval;
  });
}

}  // extern "C"
