// A group comparison as text: the comparison document (JSON) and the table of tests
// (TSV), and the document read back, so `critplex report` can draw a comparison made
// earlier without running it again.
#pragma once

#include <string>

#include "base/options.hpp"
#include "pipeline/compare.hpp"

namespace critplex::output {

Json comparison_json(const pipeline::Comparison& comparison);
Json compare_options_json(const pipeline::CompareOptions& options);  // every option, resolved
std::string group_tests_tsv(const pipeline::Comparison& comparison);
// Sentences stated beside the tables (and in the report): which tests form the
// Benjamini-Hochberg family, the covariate model, and the effect-size interval.
std::string multiple_comparison_family(const pipeline::Comparison& comparison);
std::string covariate_model(const pipeline::Comparison& comparison);  // "" without covariates
std::string effect_size_method(const pipeline::Comparison& comparison);
// The document comparison_json wrote; `path` names it in errors.
pipeline::Comparison read_comparison(const Json& document, const std::string& path);

}  // namespace critplex::output
