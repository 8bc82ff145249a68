// Group statistics on plain arrays: permutation tests, bootstrap bands, cluster tests,
// false discovery rate and covariate removal. Results come back as JSON text.
#include <cmath>
#include <limits>

#include "base/options.hpp"
#include "cohort/options.hpp"
#include "cohort/statistics.hpp"
#include "guard.hpp"
#include "output/statistics.hpp"
#include "handles.hpp"

using namespace critplex;
using namespace critplex::capi;

namespace {

std::vector<double> import_vector(const double* data, std::size_t n, const char* name) {
  if (n > 0) require_pointer(data, name);
  return std::vector<double>(data, data + n);
}

void put_json(const Json& value, char** out) { *out = copy_string(value.dump()); }

}  // namespace

extern "C" {

cpx_status cpx_stats_permutation_test(const double* a, size_t n_a, const double* b, size_t n_b,
                                      const char* options_json, char** result_json) {
  return guard("cpx_stats_permutation_test", [&] {
    require_pointer(result_json, "result_json");
    const std::string where = "options of cpx_stats_permutation_test";
    const auto options = cohort::permutation_options_from_json(parse_options(options_json, where), where);
    const auto result = cohort::permutation_test(import_vector(a, n_a, "a"), import_vector(b, n_b, "b"), options);
    put_json(output::permutation_json(result, options), result_json);
  });
}

cpx_status cpx_stats_bootstrap_band(const double* curves, size_t subjects, size_t points, cpx_layout layout,
                                    const char* options_json, char** result_json) {
  return guard("cpx_stats_bootstrap_band", [&] {
    require_pointer(result_json, "result_json");
    const std::string where = "options of cpx_stats_bootstrap_band";
    const auto options = cohort::bootstrap_options_from_json(parse_options(options_json, where), where);
    const auto band = cohort::bootstrap_mean_band(import_array(curves, subjects, points, layout), options);
    put_json(output::band_json(band), result_json);
  });
}

cpx_status cpx_stats_cluster_test(const double* a, size_t n_a, const double* b, size_t n_b, size_t points,
                                  cpx_layout layout, const char* options_json, char** result_json) {
  return guard("cpx_stats_cluster_test", [&] {
    require_pointer(result_json, "result_json");
    const std::string where = "options of cpx_stats_cluster_test";
    const auto options = cohort::cluster_options_from_json(parse_options(options_json, where), where);
    const auto result =
        cohort::cluster_permutation_test(import_array(a, n_a, points, layout), import_array(b, n_b, points, layout), options);
    put_json(output::cluster_json(result), result_json);
  });
}

cpx_status cpx_stats_fdr(const double* p_values, size_t n, double* adjusted, size_t adjusted_length) {
  return guard("cpx_stats_fdr", [&] {
    require_pointer(adjusted, "adjusted");
    if (adjusted_length < n)
      fail(ErrorKind::argument, "argument 'adjusted_length' is " + std::to_string(adjusted_length) + " but " +
                                    std::to_string(n) + " values are needed");
    const auto result = cohort::benjamini_hochberg(import_vector(p_values, n, "p_values"));
    std::copy(result.begin(), result.end(), adjusted);
  });
}

cpx_status cpx_stats_residualise(const double* values, size_t subjects, const double* covariates, size_t columns,
                                 cpx_layout layout, double* residuals, size_t residuals_length) {
  return guard("cpx_stats_residualise", [&] {
    require_pointer(residuals, "residuals");
    if (residuals_length < subjects)
      fail(ErrorKind::argument, "argument 'residuals_length' is " + std::to_string(residuals_length) + " but " +
                                    std::to_string(subjects) + " values are needed");
    const auto y = import_vector(values, subjects, "values");
    const Eigen::MatrixXd x = import_array(covariates, subjects, columns, layout);
    const Eigen::VectorXd r = cohort::residualise(Eigen::Map<const Eigen::VectorXd>(y.data(), static_cast<Eigen::Index>(y.size())), x);
    for (Eigen::Index i = 0; i < r.size(); ++i) residuals[i] = r(i);
  });
}

cpx_status cpx_stats_compare_summaries(const char* input_json, const char* options_json, char** result_json) {
  return guard("cpx_stats_compare_summaries", [&] {
    require_pointer(input_json, "input_json");
    require_pointer(result_json, "result_json");
    const std::string where = "options of cpx_stats_compare_summaries";
    const auto options = cohort::permutation_options_from_json(parse_options(options_json, where), where);
    const std::string input_where = "input of cpx_stats_compare_summaries";
    const Json input = parse_options(input_json, input_where);
    const auto rows = cohort::compare_summaries(cohort::summaries_from_json(input, input_where), options);
    // A summary that cannot be tested is an error here: the caller gave the values.
    for (const auto& row : rows)
      if (!row.tested) fail(ErrorKind::data, "summary '" + row.summary + "': " + row.note);
    put_json(Json{{"tests", output::summary_rows_json(rows, options)}}, result_json);
  });
}

cpx_status cpx_stats_t_quantile(double probability, double degrees_of_freedom, double* quantile) {
  return guard("cpx_stats_t_quantile", [&] {
    require_pointer(quantile, "quantile");
    if (!(degrees_of_freedom > 0.0)) fail(ErrorKind::argument, "argument 'degrees_of_freedom' must be positive");
    *quantile = cohort::student_t_quantile(probability, degrees_of_freedom);
  });
}

}  // extern "C"
