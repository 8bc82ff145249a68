// Connectivity estimation: series -> matrix.
#include "base/options.hpp"
#include "connectivity/pearson.hpp"
#include "guard.hpp"
#include "handles.hpp"

using namespace critplex;
using namespace critplex::capi;

extern "C" {

cpx_status cpx_connect(const cpx_series* series, const char* options_json, cpx_matrix** out) {
  return guard("cpx_connect", [&] {
    require_pointer(series, "series");
    require_pointer(out, "out");
    auto options = parse_options(options_json, "options of cpx_connect");
    OptionReader r(options, "options of cpx_connect");
    const std::string method = r.choice("method", "pearson", {"pearson"});
    const bool fisher = r.boolean("fisher_z", false);
    r.finish();
    series::validate(series->value);
    auto h = std::make_unique<cpx_matrix>();
    h->value.names = series->value.names;
    h->value.values = connectivity::pearson(series->value.values);
    if (fisher) h->value.values = connectivity::fisher_z(h->value.values);
    h->value.info = {{"method", method},
                     {"fisher_z", fisher},
                     {"frames", series->value.frames()},
                     {"regions", series->value.regions()}};
    if (!series->value.source.empty()) h->value.info["source"] = series->value.source;
    *out = h.release();
  });
}

}  // extern "C"
