// Curvature and transitions: per-node curvature curves and the transitions summary of a
// sweep, transitions of curves a host computed, and the Erdos-Renyi closed forms.
#include <cmath>
#include <memory>

#include "guard.hpp"
#include "handles.hpp"
#include "output/sweep.hpp"
#include "transitions/analysis.hpp"
#include "transitions/random_graph.hpp"

using namespace critplex;
using namespace critplex::capi;

extern "C" {

cpx_status cpx_sweep_node_curvature(const cpx_sweep* sweep, cpx_layout layout, double* buffer, size_t buffer_length,
                                    size_t* points, size_t* nodes) {
  return guard("cpx_sweep_node_curvature", [&] {
    require_pointer(sweep, "sweep");
    check_layout(layout);
    if (!sweep->value.curvature) engine_missing("a \"curvature\" section");
    const curvature::OnGrid& c = *sweep->value.curvature;
    if (!c.options.node_curves)
      fail(ErrorKind::argument, "argument 'sweep' has no node curvature (run it with a \"curvature\" section and "
                                "\"node_curves\": true)");
    const std::size_t n = sweep->value.nodes;
    const std::size_t g = c.points.size();
    if (points) *points = g;
    if (nodes) *nodes = n;
    if (buffer == nullptr) return;
    if (buffer_length < g * n)
      fail(ErrorKind::argument, "argument 'buffer_length' is " + std::to_string(buffer_length) + " but " +
                                    std::to_string(g) + " points x " + std::to_string(n) + " nodes are needed");
    for (std::size_t p = 0; p < g; ++p) {
      const curvature::PointCurvature& point = c.points[p];
      for (std::size_t i = 0; i < n; ++i)
        buffer[layout == CPX_ROW_MAJOR ? p * n + i : i * g + p] =
            point.computed && i < point.kappa.size() ? point.kappa[i] : std::nan("");
    }
  });
}

cpx_status cpx_sweep_transitions_tsv(const cpx_sweep* sweep, char** tsv) {
  return guard("cpx_sweep_transitions_tsv", [&] {
    require_pointer(sweep, "sweep");
    require_pointer(tsv, "tsv");
    if (!sweep->value.transitions) engine_missing("transitions (they need chi or Betti curves)");
    *tsv = copy_string(output::transitions_tsv(*sweep->value.transitions, sweep->value.densities()));
  });
}

cpx_status cpx_transitions_from_curves(const double* density, const double* chi, size_t points, const double* betti,
                                       size_t dimensions, cpx_layout layout, size_t nodes, const char* options_json,
                                       char** json) {
  return guard("cpx_transitions_from_curves", [&] {
    require_pointer(density, "density");
    require_pointer(json, "json");
    if (points == 0) fail(ErrorKind::argument, "argument 'points' is 0");
    if (betti != nullptr) check_layout(layout);
    if (betti != nullptr && dimensions == 0) fail(ErrorKind::argument, "argument 'dimensions' is 0 but 'betti' is given");
    const transitions::Options options = transitions::parse_options(
        parse_options(options_json, "options of cpx_transitions_from_curves"), "options of cpx_transitions_from_curves", "");
    transitions::Curves cv;
    cv.density.assign(density, density + points);
    if (chi != nullptr) cv.chi.assign(chi, chi + points);
    if (betti != nullptr) {
      cv.betti.assign(points, std::vector<double>(dimensions));
      for (std::size_t p = 0; p < points; ++p)
        for (std::size_t k = 0; k < dimensions; ++k)
          cv.betti[p][k] = betti[layout == CPX_ROW_MAJOR ? p * dimensions + k : k * points + p];
    }
    const Json result =
        options.enabled ? output::transitions_section(transitions::analyse(cv, nodes, options), cv.density) : Json::object();
    *json = copy_string(result.dump());
  });
}

cpx_status cpx_random_graph_expectations(size_t nodes, const double* p, size_t count, const char* options_json,
                                         char** json) {
  return guard("cpx_random_graph_expectations", [&] {
    require_pointer(json, "json");
    if (count > 0) require_pointer(p, "p");
    if (nodes < 1) fail(ErrorKind::argument, "argument 'nodes' must be at least 1");
    const std::string where = "options of cpx_random_graph_expectations";
    const transitions::ExpectationOptions options = transitions::parse_expectation_options(parse_options(options_json, where), where);
    Json out{{"nodes", nodes}, {"arithmetic", transitions::random_graph_arithmetic()}};
    Json values = Json::array();
    for (std::size_t i = 0; i < count; ++i) {
      if (!(p[i] >= 0.0 && p[i] <= 1.0))
        fail(ErrorKind::argument, "argument 'p': element " + std::to_string(i) + " is outside [0, 1]");
      const auto c = transitions::expected_chi(nodes, p[i]);
      const auto k = transitions::expected_kappa(nodes, p[i]);
      values.push_back({{"p", p[i]},
                        {"chi", c.value},
                        {"chi_decimal", c.decimal},
                        {"chi_relative_error_bound", c.relative_error_bound},
                        {"chi_reliable", c.reliable},
                        {"kappa", k.value},
                        {"kappa_decimal", k.decimal},
                        {"kappa_relative_error_bound", k.relative_error_bound},
                        {"kappa_reliable", k.reliable}});
    }
    out["values"] = std::move(values);
    if (options.zeros && nodes >= 2) {
      const auto z = transitions::random_graph_zeros(nodes, options.max_p, options.scan_points);
      out["zeros"] = {{"chi", z.chi_zeros},         {"chi_directions", z.chi_directions},
                      {"kappa", z.kappa_zeros},     {"kappa_directions", z.kappa_directions},
                      {"reliable_up_to", z.reliable_up_to}, {"scan_points", z.scan_points}};
    } else {
      out["zeros"] = nullptr;
    }
    *json = copy_string(out.dump());
  });
}

}  // extern "C"
