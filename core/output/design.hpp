// Results of a study design (core/cohort/designs.hpp) as JSON and as the TSV table
// design_tests.tsv; missing values are `n/a` in the table and null in JSON.
#pragma once

#include <string>
#include <utility>
#include <vector>

#include "base/options.hpp"
#include "cohort/designs.hpp"
#include "output/subject.hpp"
#include "output/subject_record.hpp"

namespace critplex::output {

Json design_spec_json(const cohort::DesignSpec& spec);
// {"kind": "critplex design tests", "design": {...}, "levels", "tests": [...],
//  "permutations_used" (only when recorded)}.
Json design_result_json(const cohort::DesignResult& result);
// The tests and notes of design_result_json read back (for the report); `spec` is the
// design as the comparison's options give it. Curve tests and recorded rearrangements are
// not read.
cohort::DesignResult design_result_from_json(const Json& doc, const cohort::DesignSpec& spec);
// One row per measure: measure, design, levels, n, missing, statistic, value, df1, df2,
// p_value, p_adjusted, p_parametric, exact, null_size, estimate and interval, effect and
// interval, spearman_rho, spearman_p, note.
std::string design_tests_tsv(const cohort::DesignResult& result);

// {"subject": [...], "session": [...], "group": [...], "columns": {"age": [...]},
//  "measures": [{"name", "values": [...]}]} (session, group, columns optional; null marks a
// missing value). `where` names the argument in messages.
cohort::DesignData design_data_from_json(const Json& data, const std::string& where);

// The rows of a design from finished subjects: subject, session, group, every covariate
// column (NaN where a subject lacks it) and the named summaries as measures.
cohort::DesignData design_data(const std::vector<SubjectRecord>& subjects, const std::vector<std::string>& summaries);

// design_tests.tsv and design_tests.json, as texts (the caller writes them).
std::vector<NamedText> design_files(const cohort::DesignResult& result);

}  // namespace critplex::output
