// Whole subjects and cohorts.
#include "guard.hpp"
#include "pipeline/cohort.hpp"
#include "pipeline/subject.hpp"

using namespace critplex;
using namespace critplex::capi;

extern "C" {

cpx_status cpx_subject_run(const char* config_json, const char* out_dir, cpx_progress_fn progress, void* user,
                           char** document_json) {
  return guard("cpx_subject_run", [&] {
    require_pointer(config_json, "config_json");
    require_pointer(document_json, "document_json");
    const Json config = parse_options(config_json, "subject config");
    const auto parsed = pipeline::parse_subject_config(config, "");
    Progress p{progress, user};
    const auto result = pipeline::run_subject(parsed, [p](double f) { return p(f); });
    if (out_dir != nullptr) pipeline::write_subject_outputs(result, out_dir);
    *document_json = copy_string(pipeline::subject_document(result).dump());
  });
}

cpx_status cpx_cohort_run(const char* manifest_path, const char* config_json, const char* out_dir,
                          const char* options_json, cpx_progress_fn progress, void* user, char** summary_json) {
  return guard("cpx_cohort_run", [&] {
    require_pointer(manifest_path, "manifest_path");
    require_pointer(out_dir, "out_dir");
    require_pointer(summary_json, "summary_json");
    const Json config = parse_options(config_json, "cohort config");
    const auto options = pipeline::parse_cohort_options(parse_options(options_json, "options of cpx_cohort_run"));
    Progress p{progress, user};
    const auto summary = pipeline::run_cohort(manifest_path, config, out_dir, options, [p](double f) { return p(f); });
    *summary_json = copy_string(pipeline::cohort_summary_json(summary).dump());
  });
}

}  // extern "C"
