// critplex dataset DERIVATIVES_DIR OUT participant|group: a preprocessed BIDS derivatives
// folder in, a BIDS derivatives dataset of topology results out.
#include <nlohmann/json.hpp>

#include <cstdio>
#include <fstream>
#include <sstream>

#include "cli.hpp"

namespace critplex_cli {
namespace {

nlohmann::json read_json_file(const std::string& path) {
  std::ifstream in(path);
  if (!in) throw Failure("cannot open '" + path + "'");
  std::ostringstream ss;
  ss << in.rdbuf();
  try {
    return nlohmann::json::parse(ss.str());
  } catch (const nlohmann::json::parse_error& e) {
    throw Failure("'" + path + "': not valid JSON (" + e.what() + ")");
  }
}

nlohmann::json list_of(const std::string& joined) {
  nlohmann::json list = nlohmann::json::array();
  std::size_t start = 0;
  while (true) {
    const auto tab = joined.find('\t', start);
    list.push_back(joined.substr(start, tab == std::string::npos ? std::string::npos : tab - start));
    if (tab == std::string::npos) return list;
    start = tab + 1;
  }
}

nlohmann::json participant_options(const Args& args) {
  nlohmann::json o = nlohmann::json::object();
  if (auto v = args.value("atlas")) o["atlas"] = *v;
  if (auto v = args.value("atlas-labels")) o["atlas_labels"] = *v;
  if (auto v = args.value("atlas-label")) o["atlas_label"] = *v;
  if (auto v = args.value("participant-label")) o["participant_label"] = list_of(*v);
  if (auto v = args.value("session")) o["session"] = list_of(*v);
  if (auto v = args.value("task")) o["task"] = *v;
  if (auto v = args.value("space")) o["space"] = *v;
  if (auto v = args.value("config")) o["config"] = read_json_file(*v);
  o["dry_run"] = args.has("dry-run");
  o["force"] = args.has("force");
  return o;
}

int print_participant(const nlohmann::json& s, const std::string& out) {
  for (const auto& w : s["warnings"]) std::fprintf(stderr, "warning: %s\n", w.get<std::string>().c_str());
  if (s["dry_run"].get<bool>()) {
    for (const auto& r : s["runs"]) {
      std::printf("%s (TR %g s from %s)\n", r["image"].get<std::string>().c_str(), r["repetition_time"].get<double>(),
                  r["sidecar"].get<std::string>().c_str());
      if (!r["confounds"].get<std::string>().empty()) std::printf("  confounds %s\n", r["confounds"].get<std::string>().c_str());
      for (const auto& o : r["outputs"]) std::printf("  -> %s/%s\n", out.c_str(), o.get<std::string>().c_str());
    }
    std::printf("dataset: %zu runs would run (dry run, nothing written)\n", s["runs"].size());
    return 0;
  }
  for (const auto& r : s["runs"])
    if (r["status"] == "failed")
      std::fprintf(stderr, "  failed: %s: %s\n", r["image"].get<std::string>().c_str(), r["message"].get<std::string>().c_str());
  std::printf("dataset participant: %d done, %d skipped (unchanged), %d failed; results in %s\n", s["done"].get<int>(),
              s["skipped"].get<int>(), s["failed"].get<int>(), out.c_str());
  return s["failed"].get<int>() == 0 ? 0 : 1;
}

int run_dataset(const Args& args) {
  const std::string derivatives = args.positional[0], out = args.positional[1], level = args.positional[2];
  nlohmann::json options;
  if (level == "participant") {
    options = participant_options(args);
  } else if (level == "group") {
    for (const char* flag : {"atlas", "atlas-labels", "atlas-label", "participant-label", "session", "task", "space", "config",
                             "dry-run", "force"})
      if (args.has(flag)) throw Failure(std::string("--") + flag + " applies to the participant level only", 2);
    options = nlohmann::json::object();
    if (auto v = args.value("compare-options")) options["compare"] = read_json_file(*v);
    if (auto v = args.value("compare-session")) options["compare_session"] = *v;
  } else {
    throw Failure("LEVEL must be participant or group, got '" + level + "'", 2);
  }
  if (level == "participant" && (args.has("compare-options") || args.has("compare-session")))
    throw Failure("--compare-options and --compare-session apply to the group level only", 2);
  void* bar = progress_state("dataset");
  char* text = nullptr;
  const cpx_status status = cpx_dataset_run(derivatives.c_str(), out.c_str(), level.c_str(), options.dump().c_str(),
                                            progress_bar_if_terminal(), bar, &text);
  progress_done(bar);
  check(status);
  const auto summary = nlohmann::json::parse(text);
  cpx_string_free(text);
  if (level == "participant") return print_participant(summary, out);
  std::printf("dataset group: %zu runs; wrote", summary["runs"].get<std::size_t>());
  for (const auto& f : summary["files"]) std::printf(" %s/%s", out.c_str(), f.get<std::string>().c_str());
  std::printf("\n");
  if (summary.contains("note")) std::fprintf(stderr, "note: %s\n", summary["note"].get<std::string>().c_str());
  return 0;
}

const Registration registration{Command{
    "dataset",
    "critplex dataset DERIVATIVES_DIR OUT participant|group [options]",
    "Analyse a preprocessed BIDS derivatives folder; results as a BIDS derivatives dataset.",
    "participant: finds sub-<l>/[ses-<l>/]func/*_desc-preproc_bold runs (.nii, .nii.gz,\n"
    ".dtseries.nii, .ptseries.nii), takes RepetitionTime from each run's JSON sidecar (it wins\n"
    "over the image header; a disagreement is a warning) and, when the config selects confound\n"
    "columns, the run's *_desc-confounds_timeseries.tsv; writes OUT/dataset_description.json and\n"
    "OUT/sub-<l>/[ses-<l>/]func/<run>_atlas-<a>_desc-<band>_{connectivity,curves,transitions}.tsv\n"
    "(+ .json sidecars) and <run>_atlas-<a>_topology.json. Unchanged runs are skipped.\n"
    "group: OUT/group/curves_long.tsv and summaries.tsv (+ sidecars), and the group comparison\n"
    "(group_comparison.json, group_tests.tsv; draw it with critplex report OUT/group) when\n"
    "participants.tsv has a group column.\n"
    "Research software, not a medical device: not for clinical decisions.",
    {{"atlas", "FILE", "label image on the runs' grid, or a CIFTI dense label file"},
     {"atlas-labels", "TSV", "label index and name table of the atlas"},
     {"atlas-label", "LABEL", "atlas- entity of output names (default: from the atlas file name)"},
     {"participant-label", "LABEL..", "participants to run (default all)", true},
     {"session", "LABEL..", "sessions to run (default all)", true},
     {"task", "LABEL", "task to run (default any)"},
     {"space", "LABEL", "space to run (default any)"},
     {"config", "FILE", "shared subject config (JSON: connect, sweep, null, read)"},
     {"dry-run", "", "list the runs, their inputs and outputs; write nothing"},
     {"force", "", "recompute unchanged runs too"},
     {"compare-options", "FILE", "group level: compare options (JSON)"},
     {"compare-session", "LABEL", "group level: compare the runs of this session (one run per participant)"}},
    3,
    3,
    run_dataset}};

}  // namespace
}  // namespace critplex_cli
