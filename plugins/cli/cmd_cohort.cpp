// critplex cohort MANIFEST.tsv --config CONFIG.json --out DIR: every subject of a study.
#include <nlohmann/json.hpp>

#include <fstream>
#include <sstream>

#include "cli.hpp"

namespace critplex_cli {
namespace {

int run_cohort(const Args& args) {
  const std::string manifest = args.positional[0];
  const auto out = args.value("out");
  if (!out) throw Failure("--out DIR is required", 2);
  nlohmann::json config = nlohmann::json::object();
  if (auto path = args.value("config")) {
    std::ifstream in(*path);
    if (!in) throw Failure("cannot open '" + *path + "'");
    std::ostringstream ss;
    ss << in.rdbuf();
    config = parse_json_input(ss.str(), "'" + *path + "'", 1);
  }
  nlohmann::json options = {{"workers", args.integer("workers", 0)}, {"force", args.has("force")}};

  void* bar = progress_state("cohort", true);
  char* summary_text = nullptr;
  cpx_status status = cpx_cohort_run(manifest.c_str(), config.dump().c_str(), out->c_str(), options.dump().c_str(),
                                     progress_bar_if_terminal(), bar, &summary_text);
  progress_done(bar);
  check(status);
  auto summary = nlohmann::json::parse(summary_text);
  cpx_string_free(summary_text);
  std::printf("cohort: %d done, %d skipped (unchanged), %d failed, in %.1f s; results in %s\n",
              summary["done"].get<int>(), summary["skipped"].get<int>(), summary["failed"].get<int>(),
              summary["seconds"].get<double>(), out->c_str());
  for (const auto& s : summary["subjects"])
    if (s["status"] == "failed")
      std::fprintf(stderr, "  failed: subject %s: %s\n", s["subject"].get<std::string>().c_str(),
                   s["message"].get<std::string>().c_str());
  return summary["failed"].get<int>() == 0 ? 0 : 1;
}

const Registration registration{Command{
    "cohort",
    "critplex cohort MANIFEST.tsv --config CONFIG.json --out DIR [options]",
    "Run every subject of a manifest; resumable; failures reported at the end.",
    "MANIFEST.tsv has a header with subject, group and timeseries (or image and labels,\n"
    "optionally label_names: the atlas's index/name table), optionally confounds, and any\n"
    "numeric covariate columns (e.g. age; n/a = missing).\n"
    "CONFIG.json is the shared subject config (connect, sweep, null; docs/options.md). Subjects\n"
    "whose inputs and options are unchanged since the last run are skipped. A failing\n"
    "subject does not stop the others; the exit status is 1 when any failed.",
    {{"out", "DIR", "output folder (created if missing)"},
     {"config", "FILE", "shared subject config (JSON)"},
     {"workers", "N", "subjects at once (default: one per core)"},
     {"force", "", "recompute finished subjects too"}},
    1,
    1,
    run_cohort}};

}  // namespace
}  // namespace critplex_cli
