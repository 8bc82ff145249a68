// The study-design flags of `critplex compare` (--design, --score, --blocks) and the
// printed design table; the tests themselves run in the library (cpx_cohort_compare).
#pragma once

#include <nlohmann/json.hpp>

#include "cli.hpp"

namespace critplex_cli {

// The flags as they appear in `critplex compare --help`.
std::vector<Flag> design_flags();
// Puts the "design" section into the compare options: --design is a JSON file or one of
// two_groups, paired, groups, regression; --score and --blocks fill those keys; the
// --covariates list becomes the design's covariates unless the file names its own.
void add_design_options(const Args& args, nlohmann::json& options);
// One line per measure of the comparison's "design_tests", when present.
void print_design_tests(const nlohmann::json& comparison, const std::string& dir);

}  // namespace critplex_cli
