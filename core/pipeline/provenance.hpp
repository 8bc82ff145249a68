// Provenance and quality of a cohort comparison, gathered from the run's folder: the
// configuration as given (cohort_config.json, the compare options) and as resolved with
// every default filled in, the versions, each subject's input checksums, and a quality
// row per subject (frames used of total, frames censored, shrinkage intensity, regions,
// failures with their messages). Everything is JSON, so it travels inside
// group_comparison.json and the report can be drawn from that document alone.
#pragma once

#include <string>

#include "base/option_schema.hpp"

namespace critplex::pipeline {

// Every option of `given` with the defaults of `section` filled in (recursing into the
// connect sections clean, clean.censor and filter). Keys without a default are left out
// unless given.
Json with_defaults(const Json& given, const OptionSection& section);

// {"config_given": {...}, "config_resolved": {...}, "versions": {...}, "inputs": [...],
//  "quality": [...]} for the cohort folder `dir` and the compared `band` ("" = first).
// compare_given / compare_resolved: the compare options as given and as parsed.
Json cohort_provenance(const std::string& dir, const std::string& band, const Json& compare_given,
                       const Json& compare_resolved);

}  // namespace critplex::pipeline
