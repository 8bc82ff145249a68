// Whole subjects and cohorts.
#include <filesystem>

#include "guard.hpp"
#include "output/subject.hpp"
#include "pipeline/cohort.hpp"
#include "pipeline/methods.hpp"
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
    *document_json = copy_string(output::subject_document(result).dump());
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

#include "io/files.hpp"
#include "output/comparison.hpp"
#include "pipeline/compare.hpp"
#include "pipeline/methods.hpp"
#include "pipeline/study.hpp"

extern "C" {

cpx_status cpx_cohort_compare(const char* dir, const char* options_json, char** comparison_json) {
  return guard("cpx_cohort_compare", [&] {
    require_pointer(dir, "dir");
    require_pointer(comparison_json, "comparison_json");
    const auto options = pipeline::parse_compare_options(parse_options(options_json, "options of cpx_cohort_compare"));
    *comparison_json = copy_string(output::comparison_json(pipeline::compare_and_write(dir, options)).dump());
  });
}

cpx_status cpx_cohort_report(const char* dir, const char* options_json, char** report_path) {
  return guard("cpx_cohort_report", [&] {
    require_pointer(dir, "dir");
    require_pointer(report_path, "report_path");
    const auto options = pipeline::parse_report_options(parse_options(options_json, "options of cpx_cohort_report"),
                                                        "options of cpx_cohort_report");
    const std::string out = options.out.empty() ? std::string(dir) + "/report.html" : options.out;
    const std::string& created = options.created;
    const std::string source = std::string(dir) + "/group_comparison.json";
    const Json comparison = parse_json_text(io::read_file(source), "'" + source + "'", ErrorKind::parse);
    // Both texts first, then the files: a failure leaves neither.
    const pipeline::Comparison c = output::read_comparison(comparison, source);
    const std::string html = pipeline::report_html(c, created);
    const std::string methods = pipeline::methods_markdown(pipeline::methods_text(c));
    const std::string folder = std::filesystem::path(out).parent_path().string();
    io::write_file_atomically(out, html);
    io::write_file_atomically((folder.empty() ? std::string(".") : folder) + "/methods.md", methods);
    *report_path = copy_string(out);
  });
}

cpx_status cpx_simulate_study(const char* options_json, const char* dir, char** summary_json) {
  return guard("cpx_simulate_study", [&] {
    require_pointer(dir, "dir");
    require_pointer(summary_json, "summary_json");
    const Json options = parse_options(options_json, "options of cpx_simulate_study");
    *summary_json = copy_string(pipeline::write_simulated_study(options, dir).dump());
  });
}

}  // extern "C"
