// Results of a study design (core/cohort/designs.hpp) as JSON and as the TSV table
// design_tests.tsv; missing values are `n/a` in the table and null in JSON.
#pragma once

#include <string>

#include "base/options.hpp"
#include "cohort/designs.hpp"

namespace critplex::output {

Json design_spec_json(const cohort::DesignSpec& spec);
// {"kind": "critplex design tests", "design": {...}, "levels", "tests": [...],
//  "permutations_used" (only when recorded)}.
Json design_result_json(const cohort::DesignResult& result);
// One row per measure: measure, design, levels, n, missing, statistic, value, df1, df2,
// p_value, p_adjusted, p_parametric, exact, null_size, estimate and interval, effect and
// interval, spearman_rho, spearman_p, note.
std::string design_tests_tsv(const cohort::DesignResult& result);

// {"subject": [...], "session": [...], "group": [...], "columns": {"age": [...]},
//  "measures": [{"name", "values": [...]}]} (session, group, columns optional; null marks a
// missing value). `where` names the argument in messages.
cohort::DesignData design_data_from_json(const Json& data, const std::string& where);

}  // namespace critplex::output
