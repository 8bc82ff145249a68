// A cohort run: every subject of a manifest through run_subject, both cores busy,
// resumable (a subject whose inputs and options are unchanged is skipped), every file
// written atomically, a failing subject recorded with its reason without stopping the
// others.
#pragma once

#include <string>
#include <vector>

#include "base/option_schema.hpp"
#include "pipeline/subject.hpp"

namespace critplex::pipeline {

// One manifest row: subject, group, inputs and covariates.
struct ManifestRow {
  std::size_t line = 0;  // 1-based line in the manifest file
  std::string subject, session, group;  // session: "" when the study has none
  std::string timeseries, confounds, image, labels, label_names;
  Json covariates = Json::object();
};

// Reads a manifest TSV: header with "subject" and "group", and "timeseries" (or "image"
// and "labels", optionally "label_names": the atlas's index/name table); optional
// "confounds"; every other column is a numeric covariate.
// Relative paths are taken relative to the manifest's folder.
std::vector<ManifestRow> read_manifest(const std::string& path);

struct CohortOptions {
  int workers = 0;       // subjects run at once (0: one per core)
  bool force = false;    // recompute finished subjects
};
const OptionSection& cohort_option_section();
CohortOptions parse_cohort_options(const Json& options);

struct SubjectOutcome {
  std::string subject, session, group;  // session: "" when the study has none
  std::string status;    // "done", "skipped" (unchanged since last run) or "failed"
  std::string message;   // the reason when failed
  double seconds = 0.0;
};

struct CohortSummary {
  std::vector<SubjectOutcome> outcomes;
  std::size_t done = 0, skipped = 0, failed = 0;
  double seconds = 0.0;
};

// `config` is the shared subject config without id, group and input paths.
CohortSummary run_cohort(const std::string& manifest_path, const Json& config, const std::string& out_dir,
                         const CohortOptions& options, const ProgressFn& progress);

Json cohort_summary_json(const CohortSummary& summary);

}  // namespace critplex::pipeline
