// Dataset mode, group level: the participant level's finished runs (OUT/sub-*/.../
// *_topology.json) as tidy tables, and the group comparison when the dataset's
// participants.tsv has a group column:
//   OUT/group/curves_long.tsv   one row per subject, session, task, run, group, band, density, measure
//   OUT/group/summaries.tsv     one row per subject, session, task, run and band; a column per summary
//   (each with a JSON sidecar describing its columns)
//   OUT/group/group_comparison.json, group_tests.tsv (as critplex compare writes them; critplex
//   report OUT/group draws them)
#pragma once

#include <string>

#include "base/option_schema.hpp"

namespace critplex::dataset {

const OptionSection& group_option_section();

// options: {"compare": compare options (section compare)}. Returns a summary:
// {"level", "runs", "files": [...], "compared": bool, "note"}.
Json run_group_level(const std::string& derivatives_dir, const std::string& out_dir, const Json& options);

}  // namespace critplex::dataset
