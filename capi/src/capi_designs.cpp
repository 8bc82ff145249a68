// Study designs on plain data (paired, several groups, regression; covariates by
// Freedman-Lane; exchangeability blocks). Results come back as JSON text.
#include "base/options.hpp"
#include "cohort/designs.hpp"
#include "guard.hpp"
#include "handles.hpp"
#include "output/design.hpp"

using namespace critplex;
using namespace critplex::capi;

extern "C" {

cpx_status cpx_stats_design_test(const char* data_json, const char* design_json, char** result_json) {
  return guard("cpx_stats_design_test", [&] {
    require_pointer(data_json, "data_json");
    require_pointer(design_json, "design_json");
    require_pointer(result_json, "result_json");
    const std::string where = "design of cpx_stats_design_test";
    const auto spec = cohort::parse_design(parse_options(design_json, where), where);
    const std::string data_where = "data of cpx_stats_design_test";
    const auto data = output::design_data_from_json(parse_options(data_json, data_where), data_where);
    *result_json = copy_string(output::design_result_json(cohort::run_design(data, spec)).dump());
  });
}

}  // extern "C"
