// Null models and simulation: surrogate series, degree-preserving rewiring, and the
// demo cohort's generative model.
#include "base/options.hpp"
#include "guard.hpp"
#include "handles.hpp"
#include "simulate/cohort_model.hpp"
#include "simulate/rewire.hpp"
#include "simulate/surrogates.hpp"

using namespace critplex;
using namespace critplex::capi;

extern "C" {

cpx_status cpx_surrogate(const cpx_series* series, const char* options_json, cpx_series** out) {
  return guard("cpx_surrogate", [&] {
    require_pointer(series, "series");
    require_pointer(out, "out");
    const std::string where = "options of cpx_surrogate";
    const simulate::SurrogateOptions o = simulate::parse_surrogate_options(parse_options(options_json, where), where);
    auto h = std::make_unique<cpx_series>();
    h->value.values = simulate::make_surrogate(series->value.values, o).values;
    h->value.names = series->value.names;
    h->value.sampling_interval = series->value.sampling_interval;
    h->value.source = std::string(simulate::surrogate_method_name(o.method)) + " surrogate of " +
                      (series->value.source.empty() ? std::string("a series") : series->value.source);
    *out = h.release();
  });
}

cpx_status cpx_rewire_edges(size_t nodes, const uint32_t* edges, size_t edge_count, const char* options_json,
                            uint32_t* rewired, size_t rewired_length) {
  return guard("cpx_rewire_edges", [&] {
    if (edge_count > 0) {
      require_pointer(edges, "edges");
      require_pointer(rewired, "rewired");
    }
    if (rewired_length < 2 * edge_count)
      fail(ErrorKind::argument, "argument 'rewired_length' is " + std::to_string(rewired_length) + " but " +
                                    std::to_string(2 * edge_count) + " values are needed");
    const std::string where = "options of cpx_rewire_edges";
    const simulate::RewireOptions o = simulate::parse_rewire_options(parse_options(options_json, where), where);
    simulate::EdgeList list;
    for (std::size_t i = 0; i < edge_count; ++i) list.emplace_back(edges[2 * i], edges[2 * i + 1]);
    const auto result = simulate::rewire(nodes, list, o);
    for (std::size_t i = 0; i < edge_count; ++i) {
      rewired[2 * i] = result.edges[i].first;
      rewired[2 * i + 1] = result.edges[i].second;
    }
  });
}

cpx_status cpx_simulate_plan(const char* options_json, char** plan_json) {
  return guard("cpx_simulate_plan", [&] {
    require_pointer(plan_json, "plan_json");
    const std::string where = "options of cpx_simulate_plan";
    const auto model = simulate::cohort_model_from_json(parse_options(options_json, where), where);
    const auto plan = simulate::plan_cohort(model);
    Json subjects = Json::array();
    for (const auto& s : plan.subjects)
      subjects.push_back({{"subject", s.id}, {"group", s.group}, {"seed", s.seed},
                          {"global_strength", s.global_strength}, {"age", s.age}});
    const Json out = {{"model", simulate::to_json(model)}, {"subjects", subjects}, {"module", plan.module},
                      {"base_loading", plan.base_loading}, {"region_names", plan.region_names}};
    *plan_json = copy_string(out.dump());
  });
}

cpx_status cpx_simulate_subject(const char* options_json, size_t index, cpx_series** out) {
  return guard("cpx_simulate_subject", [&] {
    require_pointer(out, "out");
    const std::string where = "options of cpx_simulate_subject";
    const auto model = simulate::cohort_model_from_json(parse_options(options_json, where), where);
    auto h = std::make_unique<cpx_series>();
    h->value = simulate::simulate_subject(model, simulate::plan_cohort(model), index);
    *out = h.release();
  });
}

}  // extern "C"
