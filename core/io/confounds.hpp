// Confounds tables (TSV with a header row, "n/a" for undefined cells, as preprocessing
// pipelines commonly write them) and frame masks: the file side of series cleaning.
#pragma once

#include <string>
#include <vector>

#include "series/clean.hpp"

namespace critplex::io {

// True when `name` matches `pattern`: '*' any run of characters, '?' one character,
// everything else literally.
bool matches_pattern(const std::string& pattern, const std::string& name);

// Loads what CleanOptions names: the selected confound columns (n/a replaced as
// options.regressor_missing says), the motion column and the frame mask. Errors name the
// file, the column and the line.
series::CleanInputs load_clean_inputs(const series::CleanOptions& options);

}  // namespace critplex::io
